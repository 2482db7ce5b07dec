// The parts of compare that need no services: changed definition paths and the per-check metric.
import { describe, expect, it } from 'vitest';
import { changedPaths, compareChecks, metricOf } from '../../src/lib/server/registry/compare';

describe('changedPaths', () => {
  const a = {
    name: 'quad4',
    shape: ['a', 'b', 'c', 'd'],
    quadrature: { rule: 'gauss', points: 2 },
    material: { E: 1, nu: 0.3 },
    derivatives: [['x'], ['y']]
  };

  it('names the paths whose values differ, in the format of diagnostics (shape[2], material.nu)', () => {
    const b = { ...a, shape: ['a', 'b', 'C', 'd'], material: { E: 1, nu: 0.25 } };
    expect(changedPaths(a, b)).toEqual(['material.nu', 'shape[2]']);
  });

  it('reports added and removed fields and list entries', () => {
    const b = { ...a, shape: ['a', 'b', 'c'], thickness: 0.01 };
    expect(changedPaths(a, b)).toEqual(['shape[3]', 'thickness']);
  });

  it('reports a change of kind (a number becoming a block) at its path', () => {
    const b = { ...a, quadrature: { rule: 'simplex', degree: 2 } };
    expect(changedPaths(a, b)).toEqual(['quadrature.degree', 'quadrature.points', 'quadrature.rule']);
    expect(changedPaths({ strain: 'bar' }, { strain: { dofs: ['u'] } })).toEqual(['strain']);
  });

  it('leaves out the derived derivatives and finds nothing between equal definitions', () => {
    expect(changedPaths(a, { ...a, derivatives: [['z']] })).toEqual([]);
    expect(changedPaths(a, structuredClone(a))).toEqual([]);
  });
});

describe('check metrics before and after', () => {
  it('takes metric, else the spurious-mode count, else the observed energy-norm order', () => {
    expect(metricOf({ id: 'kronecker-delta', status: 'pass', metric: 1e-16 })).toBe(1e-16);
    expect(metricOf({ id: 'zero-energy-modes', status: 'fail', spurious: 2 })).toBe(2);
    expect(metricOf({ id: 'convergence', status: 'pass', observed: { l2: 2.01, energy: 0.99 } })).toBe(0.99);
    expect(metricOf({ id: 'patch-membrane', status: 'pass' })).toBeNull();
  });

  it('pairs checks by id and keeps a check present on one side only', () => {
    const before = [
      { id: 'kronecker-delta', required: true, status: 'pass', metric: 0 },
      { id: 'zero-energy-modes', required: true, status: 'fail', spurious: 2 }
    ];
    const after = [
      { id: 'zero-energy-modes', required: true, status: 'pass', spurious: 0 },
      { id: 'bending-accuracy', required: false, status: 'pass' }
    ];
    expect(compareChecks(before, after)).toEqual([
      { id: 'kronecker-delta', required: true, before: { status: 'pass', metric: 0 }, after: null },
      {
        id: 'zero-energy-modes',
        required: true,
        before: { status: 'fail', metric: 2 },
        after: { status: 'pass', metric: 0 }
      },
      { id: 'bending-accuracy', required: false, before: null, after: { status: 'pass', metric: null } }
    ]);
  });
});
