// Spurious zero-energy modes of reduced integration, on documents made from the catalogue by changing
// only the quadrature. Rank argument: rank K ≤ (quadrature points × strain components), so
// zero eigenvalues ≥ dofs − that; the equality for these elements and rules is the textbook count
// (Cook, Malkus, Plesha & Witt, Concepts and Applications of Finite Element Analysis, 4th ed., §6.8;
// the counts themselves from memory).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { gaussRule, rigidBodyModes, elementStiffness } from '@isoledger/kernel';
import type { Definition } from '@isoledger/formulation';
import { SandboxPool } from '@isoledger/sandbox';
import { type CheckResult, verifyDefinition } from '../../../packages/verify/src/index';
import { type CatalogueEntry, catalogue, elastic2d, pick, withQuadrature } from './helpers';

let pool: SandboxPool;
let entries: CatalogueEntry[];

beforeAll(() => {
  pool = new SandboxPool({ poolSize: 1 });
  entries = catalogue();
});
afterAll(async () => {
  await pool?.dispose();
});

interface Case {
  what: string;
  match: (d: Definition) => boolean;
  quadrature: Record<string, unknown>;
  /** strain samples = points × components; dofs = nodes × dofs per node; rigid-body modes */
  samples: number;
  dofs: number;
  rigid: number;
  spurious: number;
}

const CASES: Case[] = [
  {
    what: 'one-point four-node quadrilateral: 1 × 3 = 3 samples, 8 dofs, 3 rigid → 2 spurious',
    match: (d) =>
      d.cell === 'quadrilateral' &&
      d.nodes.length === 4 &&
      elastic2d(d) &&
      d.quadrature.rule === 'gauss' &&
      d.quadrature.points === 2,
    quadrature: { rule: 'gauss', points: 1 },
    samples: 3,
    dofs: 8,
    rigid: 3,
    spurious: 2
  },
  {
    what: '2 × 2 eight-node quadrilateral: 4 × 3 = 12 samples, 16 dofs, 3 rigid → 1 spurious',
    match: (d) => d.cell === 'quadrilateral' && d.nodes.length === 8 && elastic2d(d),
    quadrature: { rule: 'gauss', points: 2 },
    samples: 12,
    dofs: 16,
    rigid: 3,
    spurious: 1
  },
  {
    what: '2 × 2 nine-node quadrilateral: 4 × 3 = 12 samples, 18 dofs, 3 rigid → 3 spurious',
    match: (d) => d.cell === 'quadrilateral' && d.nodes.length === 9 && elastic2d(d),
    quadrature: { rule: 'gauss', points: 2 },
    samples: 12,
    dofs: 18,
    rigid: 3,
    spurious: 3
  },
  {
    what: 'one-point six-node triangle: 1 × 3 = 3 samples, 12 dofs, 3 rigid → 6 spurious',
    match: (d) => d.cell === 'triangle' && d.nodes.length === 6 && elastic2d(d),
    quadrature: { rule: 'simplex', degree: 1 },
    samples: 3,
    dofs: 12,
    rigid: 3,
    spurious: 6
  },
  {
    what: 'one-point eight-node hexahedron: 1 × 6 = 6 samples, 24 dofs, 6 rigid → 12 spurious',
    match: (d) => d.cell === 'hexahedron' && d.nodes.length === 8 && d.strain === 'solid',
    quadrature: { rule: 'gauss', points: 1 },
    samples: 6,
    dofs: 24,
    rigid: 6,
    spurious: 12
  }
];

describe('reduced integration classified by the zero-energy-modes check', () => {
  for (const c of CASES) {
    it(`counts the spurious modes of the ${c.what}`, async () => {
      const entry = pick(entries, c.what, c.match);
      const { definition, definitionHash } = withQuadrature(entry.source, c.quadrature);
      const r = await verifyDefinition(definition, definitionHash, { sandbox: pool });
      const z = r.checks.find((x) => x.id === 'zero-energy-modes') as CheckResult;
      // the rank bound alone: zero modes ≥ dofs − samples
      expect(z.zeroModes as number).toBeGreaterThanOrEqual(c.dofs - c.samples);
      expect(z.expected).toBe(c.rigid);
      expect(z.spurious).toBe(c.spurious);
      expect(z.zeroModes).toBe(c.rigid + c.spurious);
      expect(z.status).toBe('fail');
      expect(z.message).toMatch(new RegExp(`${c.spurious} spurious`));
      const eig = z.eigenvalues as number[];
      expect(eig.length).toBe(c.dofs);
      const max = eig[eig.length - 1];
      expect(eig.filter((v) => v <= 1e-8 * max).length).toBe(c.rigid + c.spurious);
      const modes = z.spuriousModes as { eigenvalue: number; vector: number[] }[];
      expect(modes.length).toBe(c.spurious);
      for (const m of modes) {
        expect(m.vector.length).toBe(c.dofs);
        expect(Math.max(...m.vector.map(Math.abs))).toBeCloseTo(1, 12);
      }
      expect(r.verdict).toBe('fail');
    });
  }

  it('gives spurious-mode eigenvectors that a hand-written one-point bilinear element confirms: K v = 0 and v ⟂ rigid modes (kernel K, shape functions written out here)', async () => {
    const entry = pick(entries, CASES[0].what, CASES[0].match);
    const { definition, definitionHash } = withQuadrature(entry.source, CASES[0].quadrature);
    const r = await verifyDefinition(definition, definitionHash, { sandbox: pool });
    const z = r.checks.find((x) => x.id === 'zero-energy-modes') as CheckResult;
    const nodes = (z.nodes as number[][]).flat();
    const coords = Float64Array.from(nodes);
    // N_i = (1 + ξ ξ_i)(1 + η η_i)/4 at the centre, in the document's node order (its reference nodes)
    const ref = definition.nodes;
    const rule = gaussRule('quadrilateral', 1);
    const tab = {
      nodes: 4,
      dim: 2,
      points: 1,
      N: Float64Array.from(ref, () => 0.25),
      dN: Float64Array.from(ref.flatMap(([a, b]) => [a / 4, b / 4]))
    };
    const kind = definition.strain as 'plane-stress' | 'plane-strain';
    const K = elementStiffness(kind, tab, rule.weights, coords, definition.material, {
      thickness: definition.thickness ?? 1
    });
    let kmax = 0;
    for (const v of K) kmax = Math.max(kmax, Math.abs(v));
    const R = rigidBodyModes(kind, coords, 4, 2);
    for (const m of z.spuriousModes as { vector: number[] }[]) {
      for (let i = 0; i < 8; i++) {
        let s = 0;
        for (let j = 0; j < 8; j++) s += K[i * 8 + j] * m.vector[j];
        expect(Math.abs(s) / kmax).toBeLessThan(1e-12);
      }
      for (let k = 0; k < 3; k++) {
        let dot = 0;
        let rr = 0;
        for (let i = 0; i < 8; i++) {
          dot += R[i * 3 + k] * m.vector[i];
          rr += R[i * 3 + k] ** 2;
        }
        expect(Math.abs(dot) / Math.sqrt(rr)).toBeLessThan(1e-12);
      }
    }
  });
});
