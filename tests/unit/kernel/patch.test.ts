import { describe, expect, it } from 'vitest';
import {
  AXISYMMETRIC_PATCH,
  BAR_PATCH,
  CANTILEVER_STRIP,
  MACNEAL_HARDER_MEMBRANE_PATCH,
  MACNEAL_HARDER_SOLID_PATCH,
  type MacroPatch,
  type Material,
  type Mesh,
  type QuadratureRule,
  type StrainKind,
  TAPERED_MEMBRANE,
  dofsPerNode,
  gaussRule,
  macroPatchMesh,
  nodesWhere,
  refinePatch,
  simplexRule,
  solveWithDirichlet,
  strainComponents
} from '../../../packages/kernel/src/index';
import {
  BAR2,
  type FixtureElement,
  HEX8,
  Q4,
  T3,
  T4,
  T6,
  assembleMesh,
  maxAbs,
  meshStresses,
  nodalField,
  tractionLoad
} from './fixtures';

/** Patch-test tolerance, relative (verification.md). */
const PATCH_TOLERANCE = 1e-8;

interface PatchCase {
  kind: StrainKind;
  el: FixtureElement;
  rule: QuadratureRule;
  patch: MacroPatch;
  field: (x: Float64Array) => number[];
  stress: number[];
  opts?: { thickness?: number; area?: number };
  /** dofs to hold in variant C: [node predicate, components] */
  supports: [(x: Float64Array) => boolean, number[]][];
}

const membrane = (el: FixtureElement, rule: QuadratureRule): PatchCase => ({
  kind: 'plane-stress',
  el,
  rule,
  patch: MACNEAL_HARDER_MEMBRANE_PATCH,
  field: ([x, y]) => [1e-3 * (x + y / 2), 1e-3 * (y + x / 2)],
  // MacNeal & Harder 1985: σx = σy = 1333.33, τxy = 400
  stress: [1333.33, 1333.33, 400],
  opts: { thickness: 0.001 },
  supports: [
    [([x, y]) => x === 0 && y === 0, [0, 1]],
    [([x, y]) => x === 0.24 && y === 0, [1]]
  ]
});

const solid = (el: FixtureElement, rule: QuadratureRule): PatchCase => ({
  kind: 'solid',
  el,
  rule,
  patch: MACNEAL_HARDER_SOLID_PATCH,
  field: ([x, y, z]) => [
    (1e-3 * (2 * x + y + z)) / 2,
    (1e-3 * (x + 2 * y + z)) / 2,
    (1e-3 * (x + y + 2 * z)) / 2
  ],
  // MacNeal & Harder 1985: σx = σy = σz = 2000, τxy = τyz = τzx = 400
  stress: [2000, 2000, 2000, 400, 400, 400],
  supports: [
    [([x, y, z]) => x === 0 && y === 0 && z === 0, [0, 1, 2]],
    [([x, y, z]) => x === 1 && y === 0 && z === 0, [1, 2]],
    [([x, y, z]) => x === 0 && y === 1 && z === 0, [2]]
  ]
});

/** Published stresses are printed to 6 digits (1333.33); compare against the exact 4000/3 then. */
function exactStress(c: PatchCase): number[] {
  return c.stress.map((s) => (s === 1333.33 ? 4000 / 3 : s));
}

function runPatch(c: PatchCase, variant: 'A' | 'B' | 'C') {
  const mesh = macroPatchMesh(c.el.nodes, c.el.cell, c.patch);
  const material = c.patch.material as Material;
  const dpn = dofsPerNode(c.kind);
  const { K, ndof } = assembleMesh(c.kind, c.el, c.rule, mesh, material, c.opts ?? {});
  const exact = nodalField(mesh, dpn, c.field);
  const boundary = new Set(mesh.boundary.nodes);
  const fixed: number[] = [];
  let f: Float64Array = new Float64Array(ndof);
  if (variant === 'A') for (let d = 0; d < ndof; d++) fixed.push(d);
  else if (variant === 'B') for (const n of boundary) for (let k = 0; k < dpn; k++) fixed.push(n * dpn + k);
  else {
    for (const [where, comps] of c.supports) {
      const ids = nodesWhere(mesh, (x) => where(x));
      expect(ids.length).toBe(1);
      for (const k of comps) fixed.push(ids[0] * dpn + k);
    }
    // consistent tractions t = σ n of the exact stress state on the whole boundary
    const s = exactStress(c);
    f = tractionLoad(
      c.kind,
      c.el,
      mesh,
      (_x, n, out) => {
        if (dpn === 2) out.set([s[0] * n[0] + s[2] * n[1], s[2] * n[0] + s[1] * n[1]]);
        else
          out.set([
            s[0] * n[0] + s[3] * n[1] + s[5] * n[2],
            s[3] * n[0] + s[1] * n[1] + s[4] * n[2],
            s[5] * n[0] + s[4] * n[1] + s[2] * n[2]
          ]);
      },
      c.opts
    );
  }
  const fixedIds = Int32Array.from(fixed);
  const { u, reactions } = solveWithDirichlet(
    K,
    f,
    fixedIds,
    Float64Array.from(fixed, (d) => exact[d])
  );
  const uScale = maxAbs(exact);
  const dispError = maxAbs(u.map((v, i) => v - exact[i])) / uScale;
  const sig = meshStresses(c.kind, c.el, c.rule, mesh, u, material);
  const s = exactStress(c);
  const ncomp = strainComponents(c.kind);
  let stressError = 0;
  for (const se of sig)
    for (let q = 0; q < se.length / ncomp; q++)
      for (let k = 0; k < ncomp; k++)
        stressError = Math.max(stressError, Math.abs(se[q * ncomp + k] - s[k]) / Math.max(...s));
  // variant A: the residual forces at interior nodes vanish (relative to the boundary reactions)
  let interior = 0;
  for (let nd = 0; nd < mesh.nodeCount; nd++)
    if (!boundary.has(nd))
      for (let k = 0; k < dpn; k++) interior = Math.max(interior, Math.abs(reactions[nd * dpn + k]));
  return { mesh, dispError, stressError, interiorResidual: interior / maxAbs(reactions), sig };
}

describe('patch tests on the published geometries', () => {
  const cases: [string, PatchCase][] = [
    ['Q4 membrane', membrane(Q4, gaussRule('quadrilateral', 2))],
    ['T3 membrane', membrane(T3, simplexRule('triangle', 1))],
    ['T6 membrane', membrane(T6, simplexRule('triangle', 2))],
    ['Hex8 solid', solid(HEX8, gaussRule('hexahedron', 2))],
    ['T4 solid', solid(T4, simplexRule('tetrahedron', 1))]
  ];
  for (const [name, c] of cases) {
    it(`${name}: reproduces the published stresses ${c.stress.slice(0, 3).join(' / ')} in variants A, B and C to 1e-8 (MacNeal & Harder 1985)`, () => {
      const a = runPatch(c, 'A');
      expect(a.interiorResidual).toBeLessThan(PATCH_TOLERANCE);
      expect(a.stressError).toBeLessThan(PATCH_TOLERANCE);
      const b = runPatch(c, 'B');
      expect(b.dispError).toBeLessThan(PATCH_TOLERANCE);
      expect(b.stressError).toBeLessThan(PATCH_TOLERANCE);
      const cc = runPatch(c, 'C');
      expect(cc.dispError).toBeLessThan(PATCH_TOLERANCE);
      expect(cc.stressError).toBeLessThan(PATCH_TOLERANCE);
      // the printed values themselves, to their printed precision
      const first = cc.sig[0];
      expect(first[0]).toBeCloseTo(c.stress[0], 2);
      expect(first[c.kind === 'solid' ? 3 : 2]).toBeCloseTo(400, 8);
    });
  }

  it('bar: three unequal two-node bars carry εx = 1e-3 exactly (variant B and C)', () => {
    const mesh = macroPatchMesh(BAR2.nodes, 'interval', BAR_PATCH);
    const rule = gaussRule('interval', 1);
    const { K, ndof } = assembleMesh('bar', BAR2, rule, mesh, BAR_PATCH.material!, { area: 1 });
    const ends = nodesWhere(mesh, ([x]) => x === 0 || x === 1);
    const { u } = solveWithDirichlet(
      K,
      new Float64Array(ndof),
      ends,
      Float64Array.from(ends, (n) => 1e-3 * mesh.coords[n])
    );
    for (let n = 0; n < mesh.nodeCount; n++)
      expect(Math.abs(u[n] - 1e-3 * mesh.coords[n])).toBeLessThan(1e-18);
    // variant C: hold x = 0, pull the end with σ A = E εx A = 1e-3
    const f = new Float64Array(ndof);
    const tip = nodesWhere(mesh, ([x]) => x === 1)[0];
    f[tip] = 1e-3;
    const c = solveWithDirichlet(
      K,
      f,
      nodesWhere(mesh, ([x]) => x === 0),
      Float64Array.of(0)
    );
    for (let n = 0; n < mesh.nodeCount; n++)
      expect(Math.abs(c.u[n] - 1e-3 * mesh.coords[n])).toBeLessThan(1e-15);
    expect(c.reactions[0]).toBeCloseTo(-1e-3, 15);
  });

  it('axisymmetric: u = 1e-3 r, w = 2e-3 z gives εr = εθ = 1e-3 and εz = 2e-3 on a distorted ring patch (variant B)', () => {
    const c: PatchCase = {
      kind: 'axisymmetric',
      el: Q4,
      rule: gaussRule('quadrilateral', 2),
      patch: AXISYMMETRIC_PATCH,
      field: ([r, z]) => [1e-3 * r, 2e-3 * z],
      stress: [0, 0, 0, 0],
      supports: []
    };
    const mesh = macroPatchMesh(Q4.nodes, 'quadrilateral', AXISYMMETRIC_PATCH);
    const { K, ndof } = assembleMesh('axisymmetric', Q4, c.rule, mesh, AXISYMMETRIC_PATCH.material!);
    const exact = nodalField(mesh, 2, c.field);
    const fixed = Int32Array.from([...mesh.boundary.nodes].flatMap((n) => [2 * n, 2 * n + 1]));
    const { u } = solveWithDirichlet(
      K,
      new Float64Array(ndof),
      fixed,
      Float64Array.from(fixed, (d) => exact[d])
    );
    expect(maxAbs(u.map((v, i) => v - exact[i])) / maxAbs(exact)).toBeLessThan(PATCH_TOLERANCE);
    const inner = nodesWhere(mesh, ([r, z]) => r > 1 && r < 2 && z > 0 && z < 1);
    expect(inner.length).toBe(1);
  });
});

describe('informative accuracy problems', () => {
  it('reports the cantilever-strip tip deflection against the theoretical 0.1081 (MacNeal & Harder 1985): Q4 is stiff in bending and converges on refinement', () => {
    const rule = gaussRule('quadrilateral', 2);
    const tipDeflection = (patch: MacroPatch, divisions: number) => {
      const mesh = macroPatchMesh(Q4.nodes, 'quadrilateral', refinePatch(patch, divisions));
      const { K } = assembleMesh('plane-stress', Q4, rule, mesh, patch.material!, {
        thickness: patch.thickness
      });
      // the parallelogram strip's end edges lean 45°: x = y at the root, x = 6 + y at the tip
      const skew = (y: number) => (patch.name.endsWith('parallelogram') ? y : 0);
      const root = nodesWhere(mesh, ([x, y]) => Math.abs(x - skew(y)) < 1e-9);
      const clamped = Int32Array.from([...root].flatMap((n) => [2 * n, 2 * n + 1]));
      // unit total shear on the tip, uniform over its height: traction 1 / (h t)
      const tipX = (y: number) => 6 + skew(y);
      const f = tractionLoad(
        'plane-stress',
        Q4,
        mesh,
        (_x, _n, out) => out.set([0, 1 / (0.2 * patch.thickness!)]),
        { thickness: patch.thickness },
        ([x, y]) => Math.abs(x - tipX(y)) < 1e-9
      );
      const { u } = solveWithDirichlet(K, f, clamped, new Float64Array(clamped.length));
      const tip = nodesWhere(mesh, ([x, y]) => Math.abs(x - tipX(y)) < 1e-9);
      return tip.reduce((s, n) => s + u[2 * n + 1], 0) / tip.length;
    };
    const reference = CANTILEVER_STRIP.rectangular.reference!.tipShearDeflection; // 0.1081, MacNeal & Harder 1985
    const ratios = Object.fromEntries(
      (['rectangular', 'trapezoidal', 'parallelogram'] as const).map((shape) => [
        shape,
        tipDeflection(CANTILEVER_STRIP[shape], 1) / reference
      ])
    );
    console.log('cantilever strip, Q4 tip deflection / 0.1081:', ratios);
    // full-integration Q4 locks in bending (shear locking): every shape is too stiff
    for (const r of Object.values(ratios)) {
      expect(r).toBeGreaterThan(0);
      expect(r).toBeLessThan(1);
    }
    // refining the rectangular strip converges monotonically; Richardson extrapolation of the last two
    // meshes (error ∝ h²) lands on the theoretical value within 1 %
    const series = [2, 4, 8, 16].map((n) => tipDeflection(CANTILEVER_STRIP.rectangular, n) / reference);
    console.log(
      'cantilever strip, rectangular, 12 × 2 … 96 × 16 Q4 meshes, tip deflection / 0.1081:',
      series
    );
    for (let i = 1; i < series.length; i++) expect(series[i]).toBeGreaterThan(series[i - 1]);
    const extrapolated = series[3] + (series[3] - series[2]) / 3;
    expect(Math.abs(extrapolated - 1)).toBeLessThan(0.01);
  });

  it("converges monotonically on Cook's tapered membrane toward about 23.96 at the loaded edge's midpoint (value from memory of the published benchmark literature)", () => {
    const rule = gaussRule('quadrilateral', 2);
    const values: number[] = [];
    for (const n of [2, 4, 8, 16, 32]) {
      const mesh: Mesh = macroPatchMesh(Q4.nodes, 'quadrilateral', refinePatch(TAPERED_MEMBRANE, n));
      const { K } = assembleMesh('plane-stress', Q4, rule, mesh, TAPERED_MEMBRANE.material!, {
        thickness: 1
      });
      const clamped = Int32Array.from(
        [...nodesWhere(mesh, ([x]) => x === 0)].flatMap((i) => [2 * i, 2 * i + 1])
      );
      const f = tractionLoad(
        'plane-stress',
        Q4,
        mesh,
        (_x, _n, out) => out.set([0, 1 / 16]),
        { thickness: 1 },
        ([x]) => Math.abs(x - 48) < 1e-9
      );
      const { u } = solveWithDirichlet(K, f, clamped, new Float64Array(clamped.length));
      // the midpoint (48, 52) of the loaded edge is a node of every mesh of even division
      const mid = nodesWhere(mesh, ([x, y]) => Math.abs(x - 48) < 1e-9 && Math.abs(y - 52) < 1e-9)[0];
      values.push(u[2 * mid + 1]);
    }
    console.log("Cook's membrane, Q4 vertical deflection at (48, 52) for 2, 4, 8, 16, 32 divisions:", values);
    const reference = TAPERED_MEMBRANE.reference!.loadedEdgeMidpointVerticalDisplacement;
    for (let i = 1; i < values.length; i++) {
      expect(values[i]).toBeGreaterThan(values[i - 1]);
      expect(values[i]).toBeLessThan(reference);
    }
    for (let i = 2; i < values.length; i++)
      expect(values[i] - values[i - 1]).toBeLessThan(values[i - 1] - values[i - 2]);
    expect(Math.abs(values[4] - reference) / reference).toBeLessThan(0.01);
  });
});
