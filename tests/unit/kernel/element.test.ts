import { describe, expect, it } from 'vitest';
import {
  KernelError,
  type Material,
  type StrainKind,
  bodyForceVector,
  elasticityMatrix,
  elementStiffness,
  facetQuadrature,
  gaussRule,
  lameConstants,
  mapPoints,
  rigidBodyModes,
  seededUniform,
  simplexRule,
  stiffnessFromB,
  strainDisplacement,
  strainComponents,
  strainsAt,
  stressesAt,
  tractionVector
} from '../../../packages/kernel/src/index';
import { BAR2, HEX8, Q4, T3, T4, T6, maxAbs, tabulate } from './fixtures';

/** Entries of element matrices computed two ways agree to this fraction of the largest entry (rounding only). */
const MATRIX_TOLERANCE = 1e-13;
/** Rigid-body residual ‖K r‖ / (‖K‖ ‖r‖) (verification.md uses 1e-10). */
const RIGID_TOLERANCE = 1e-12;

const rnd = seededUniform(7);

function randomTriangle(): Float64Array {
  // a well-shaped random triangle, counter-clockwise
  for (;;) {
    const p = Float64Array.from({ length: 6 }, () => 4 * rnd() - 2);
    const area = ((p[2] - p[0]) * (p[5] - p[1]) - (p[4] - p[0]) * (p[3] - p[1])) / 2;
    if (area > 0.5) return p;
  }
}

function relDiff(a: Float64Array, b: Float64Array): number {
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i] - b[i]));
  return d / maxAbs(b);
}

describe('the linear triangle', () => {
  it('has K = t A Bᵀ D B in closed form for an arbitrary triangle (Zienkiewicz & Taylor, the plane triangle: bᵢ = yⱼ − yₘ, cᵢ = xₘ − xⱼ)', () => {
    const material: Material = { E: 210e3, nu: 0.3 };
    const t = 0.02;
    const rule = simplexRule('triangle', 1);
    const tab = tabulate(T3, rule.points);
    for (let trial = 0; trial < 20; trial++) {
      const x = randomTriangle();
      const [x1, y1, x2, y2, x3, y3] = x;
      const A = ((x2 - x1) * (y3 - y1) - (x3 - x1) * (y2 - y1)) / 2;
      const b = [y2 - y3, y3 - y1, y1 - y2];
      const c = [x3 - x2, x1 - x3, x2 - x1];
      const B = new Float64Array(18);
      for (let i = 0; i < 3; i++) {
        B[2 * i] = b[i] / (2 * A);
        B[6 + 2 * i + 1] = c[i] / (2 * A);
        B[12 + 2 * i] = c[i] / (2 * A);
        B[12 + 2 * i + 1] = b[i] / (2 * A);
      }
      for (const kind of ['plane-stress', 'plane-strain'] as StrainKind[]) {
        const D = elasticityMatrix(kind, material);
        const expected = new Float64Array(36);
        for (let r = 0; r < 6; r++)
          for (let s = 0; s < 6; s++) {
            let v = 0;
            for (let i = 0; i < 3; i++)
              for (let j = 0; j < 3; j++) v += B[i * 6 + r] * D[i * 3 + j] * B[j * 6 + s];
            expected[r * 6 + s] = t * A * v;
          }
        const K = elementStiffness(kind, tab, rule.weights, x, material, { thickness: t });
        expect(relDiff(K, expected)).toBeLessThan(MATRIX_TOLERANCE);
      }
    }
  });

  it('has a constant Jacobian, det J = 2A, at any point (textbook result for the affine map)', () => {
    const x = randomTriangle();
    const A = ((x[2] - x[0]) * (x[5] - x[1]) - (x[4] - x[0]) * (x[3] - x[1])) / 2;
    const pts = referencePoints(12);
    const g = mapPoints(tabulate(T3, pts), x);
    for (let q = 0; q < 12; q++) expect(Math.abs(g.detJ[q] - 2 * A)).toBeLessThan(1e-14 * A);
    for (let q = 1; q < 12; q++)
      for (let k = 0; k < 6; k++) expect(Math.abs(g.dNdx[q * 6 + k] - g.dNdx[k])).toBeLessThan(1e-13);
  });
});

function referencePoints(count: number): Float64Array {
  const p = new Float64Array(2 * count);
  for (let q = 0; q < count; q++) {
    const a = rnd();
    const b = rnd() * (1 - a);
    p[2 * q] = a;
    p[2 * q + 1] = b;
  }
  return p;
}

describe('the bilinear square', () => {
  it('matches the closed-form stiffness of the unit square, E = 1, ν = 0.3, plane stress (Sigmund 2001, "A 99 line topology optimization code", KE)', () => {
    const nu = 0.3;
    const k = [
      1 / 2 - nu / 6,
      1 / 8 + nu / 8,
      -1 / 4 - nu / 12,
      -1 / 8 + (3 * nu) / 8,
      -1 / 4 + nu / 12,
      -1 / 8 - nu / 8,
      nu / 6,
      1 / 8 - (3 * nu) / 8
    ];
    const idx = [
      [0, 1, 2, 3, 4, 5, 6, 7],
      [1, 0, 7, 6, 5, 4, 3, 2],
      [2, 7, 0, 5, 6, 3, 4, 1],
      [3, 6, 5, 0, 7, 2, 1, 4],
      [4, 5, 6, 7, 0, 1, 2, 3],
      [5, 4, 3, 2, 1, 0, 7, 6],
      [6, 3, 4, 1, 2, 7, 0, 5],
      [7, 2, 1, 4, 3, 6, 5, 0]
    ];
    const expected = Float64Array.from(idx.flat().map((i) => k[i] / (1 - nu * nu)));
    const rule = gaussRule('quadrilateral', 2);
    // nodes counter-clockwise from the origin, as in the published element numbering
    const K = elementStiffness(
      'plane-stress',
      tabulate(Q4, rule.points),
      rule.weights,
      Float64Array.of(0, 0, 1, 0, 1, 1, 0, 1),
      { E: 1, nu }
    );
    expect(relDiff(K, expected)).toBeLessThan(MATRIX_TOLERANCE);
  });
});

describe('element matrices', () => {
  const material: Material = { E: 1000, nu: 0.27 };
  const distortedQ4 = Float64Array.of(0.1, -0.05, 2.2, 0.3, 1.9, 1.4, -0.2, 1.1);
  const distortedHex = Float64Array.from(
    Array.from(HEX8.nodes, (v, i) => v * (1 + 0.1 * (i % 3)) + 0.07 * Math.sin(i))
  );
  const cases: { kind: StrainKind; el: typeof Q4; rule: ReturnType<typeof gaussRule>; x: Float64Array }[] = [
    { kind: 'bar', el: BAR2, rule: gaussRule('interval', 1), x: Float64Array.of(0.3, 1.7) },
    { kind: 'plane-stress', el: Q4, rule: gaussRule('quadrilateral', 2), x: distortedQ4 },
    {
      kind: 'plane-strain',
      el: T6,
      rule: simplexRule('triangle', 2),
      x: Float64Array.of(0, 0, 2, 0.2, 0.1, 1.5, 1, 0.1, 1.05, 0.85, 0.05, 0.75)
    },
    {
      kind: 'axisymmetric',
      el: Q4,
      rule: gaussRule('quadrilateral', 2),
      x: Float64Array.from(distortedQ4, (v, i) => (i % 2 ? v : v + 1))
    },
    { kind: 'solid', el: HEX8, rule: gaussRule('hexahedron', 2), x: distortedHex },
    {
      kind: 'solid',
      el: T4,
      rule: simplexRule('tetrahedron', 1),
      x: Float64Array.of(0, 0, 0, 1, 0.1, 0, 0.2, 1, 0.1, 0.1, 0.2, 1.3)
    }
  ];

  it('equal Σ_q Bᵀ D B |J| w_q through the B-matrix path (stiffnessFromB with strainDisplacement)', () => {
    for (const { kind, el, rule, x } of cases) {
      const tab = tabulate(el, rule.points);
      const K = elementStiffness(kind, tab, rule.weights, x, material, { thickness: 0.5, area: 0.25 });
      const geom = mapPoints(tab, x);
      const ncomp = strainComponents(kind);
      const ndof = K.length ** 0.5;
      const Bq = new Float64Array(tab.points * ncomp * ndof);
      const w = new Float64Array(tab.points);
      for (let q = 0; q < tab.points; q++) {
        strainDisplacement(
          kind,
          geom,
          q,
          tab.nodes,
          tab.N,
          Bq.subarray(q * ncomp * ndof, (q + 1) * ncomp * ndof)
        );
        const factor =
          kind === 'axisymmetric'
            ? 2 * Math.PI * geom.x[q * 2]
            : kind === 'bar'
              ? 0.25
              : kind === 'solid'
                ? 1
                : 0.5;
        w[q] = rule.weights[q] * geom.detJ[q] * factor;
      }
      const K2 = stiffnessFromB(Bq, elasticityMatrix(kind, material), w, tab.points, ncomp, ndof);
      expect(relDiff(K, K2), `${kind} ${el.name}`).toBeLessThan(MATRIX_TOLERANCE);
    }
  });

  it('are exactly symmetric and annihilate every rigid-body mode of their kind', () => {
    for (const { kind, el, rule, x } of cases) {
      const tab = tabulate(el, rule.points);
      const K = elementStiffness(kind, tab, rule.weights, x, material);
      const n = K.length ** 0.5;
      for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) expect(K[r * n + c]).toBe(K[c * n + r]);
      const R = rigidBodyModes(kind, x, tab.nodes, el.dim);
      const nm = R.length / n;
      for (let m = 0; m < nm; m++) {
        let res = 0;
        let rn = 0;
        for (let r = 0; r < n; r++) {
          let s = 0;
          for (let c = 0; c < n; c++) s += K[r * n + c] * R[c * nm + m];
          res = Math.max(res, Math.abs(s));
          rn = Math.max(rn, Math.abs(R[r * nm + m]));
        }
        expect(res / (maxAbs(K) * rn), `${kind} ${el.name} mode ${m}`).toBeLessThan(RIGID_TOLERANCE);
      }
    }
  });

  it('reuse a caller buffer and give the same bits on every call (deterministic)', () => {
    const { kind, el, rule, x } = cases[4];
    const tab = tabulate(el, rule.points);
    const out = new Float64Array(576).fill(Number.NaN);
    const a = elementStiffness(kind, tab, rule.weights, x, material, {}, out);
    expect(a).toBe(out);
    const b = elementStiffness(kind, tab, rule.weights, x, material);
    expect(Array.from(a)).toEqual(Array.from(b));
  });

  it('name the element and the point when det J ≤ 0', () => {
    const rule = gaussRule('quadrilateral', 2);
    const clockwise = Float64Array.of(0, 0, 0, 1, 1, 1, 1, 0);
    try {
      elementStiffness('plane-stress', tabulate(Q4, rule.points), rule.weights, clockwise, material, {
        element: 17
      });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(KernelError);
      expect((e as KernelError).code).toBe('jacobian-not-positive');
      expect((e as KernelError).detail).toMatchObject({ element: 17, point: 0 });
      expect((e as Error).message).toMatch(/point 0 of element 17/);
    }
    // a degenerate (zero-area) triangle
    expect(() =>
      mapPoints(tabulate(T3, simplexRule('triangle', 1).points), Float64Array.of(0, 0, 1, 1, 2, 2), 3)
    ).toThrow(/det J = 0 at quadrature point 0 of element 3/);
  });

  it('reject inconsistent input with a message naming it', () => {
    const rule = gaussRule('quadrilateral', 2);
    const tab = tabulate(Q4, rule.points);
    const x = Float64Array.of(0, 0, 1, 0, 1, 1, 0, 1);
    expect(() => elementStiffness('solid', tab, rule.weights, x, material)).toThrow(
      /2-dimensional, the strain kind needs 3/
    );
    expect(() => elementStiffness('plane-stress', tab, rule.weights.subarray(1), x, material)).toThrow(
      /weights has 3 values/
    );
    expect(() => elementStiffness('plane-stress', tab, rule.weights, x.subarray(2), material)).toThrow(
      /coords has 6 values/
    );
    expect(() => elementStiffness('plane-stress', tab, rule.weights, x, { E: 1, nu: 0.5 })).toThrow(
      /material.nu/
    );
    expect(() => elementStiffness('plane-stress', tab, rule.weights, x, { E: -1, nu: 0.3 })).toThrow(
      /material.E/
    );
    expect(() => elementStiffness('plane-stress', tab, rule.weights, x, material, { thickness: 0 })).toThrow(
      /thickness/
    );
    expect(() =>
      elementStiffness('axisymmetric', tab, rule.weights, Float64Array.of(-1, 0, 0, 0, 0, 1, -1, 1), material)
    ).toThrow(/radius r = .* axisymmetric elements need r > 0/);
  });
});

describe('elasticity matrices', () => {
  it('are the isotropic D of each kind (Timoshenko & Goodier 1970: λ = Eν/((1 + ν)(1 − 2ν)), μ = E/(2(1 + ν)))', () => {
    const m = { E: 200, nu: 0.25 };
    const lambda = (200 * 0.25) / (1.25 * 0.5);
    const mu = 200 / 2.5;
    const solid = elasticityMatrix('solid', m);
    expect(solid[0]).toBeCloseTo(lambda + 2 * mu, 12);
    expect(solid[1]).toBeCloseTo(lambda, 12);
    expect(solid[3 * 6 + 3]).toBeCloseTo(mu, 12);
    const ps = elasticityMatrix('plane-stress', m);
    expect(ps[0]).toBeCloseTo(200 / (1 - 0.0625), 12);
    expect(ps[1]).toBeCloseTo((200 * 0.25) / (1 - 0.0625), 12);
    expect(ps[8]).toBeCloseTo(mu, 12);
    const pe = elasticityMatrix('plane-strain', m);
    expect(pe[0]).toBeCloseTo(lambda + 2 * mu, 12);
    const ax = elasticityMatrix('axisymmetric', m);
    expect(ax[2]).toBeCloseTo(lambda, 12); // εθ couples to σr through λ
    expect(ax[10]).toBeCloseTo(lambda + 2 * mu, 12);
    expect(ax[15]).toBeCloseTo(mu, 12);
    expect(Array.from(elasticityMatrix('bar', m))).toEqual([200]);
    const l = lameConstants('plane-stress', m);
    expect(l.lambda + 2 * l.mu).toBeCloseTo(ps[0], 12);
  });
});

describe('loads, strains and stresses', () => {
  const material: Material = { E: 1000, nu: 0.3 };
  const x = Float64Array.of(0, 0, 2, 0, 2.5, 1, 0.5, 1); // a parallelogram of area 2

  it('give the total of a uniform body force, b × area × t, split equally on a parallelogram (consistent loads, textbook)', () => {
    const rule = gaussRule('quadrilateral', 2);
    const f = bodyForceVector(
      'plane-stress',
      tabulate(Q4, rule.points),
      rule.weights,
      x,
      (_p, out) => out.set([0, -3]),
      { thickness: 0.1 }
    );
    for (let i = 0; i < 4; i++) {
      expect(f[2 * i]).toBe(0);
      expect(f[2 * i + 1]).toBeCloseTo((-3 * 2 * 0.1) / 4, 14);
    }
  });

  it('integrate 2πr over an axisymmetric ring: ∫ 2πr dA for r ∈ [1, 2], z ∈ [0, 1] is 3π', () => {
    const rule = gaussRule('quadrilateral', 2);
    const f = bodyForceVector(
      'axisymmetric',
      tabulate(Q4, rule.points),
      rule.weights,
      Float64Array.of(1, 0, 2, 0, 2, 1, 1, 1),
      (_p, out) => out.set([0, 1])
    );
    let total = 0;
    for (let i = 0; i < 4; i++) total += f[2 * i + 1];
    expect(total).toBeCloseTo(3 * Math.PI, 13);
  });

  it('give the consistent edge traction: half of q·L·t at each end node of a linear edge (textbook result)', () => {
    // facet 1 of the quadrilateral runs from node 1 to node 2: here from (2, 0) to (2.5, 1), length √1.25
    const fq = facetQuadrature('quadrilateral', 1, 2);
    const f = tractionVector(
      'plane-stress',
      tabulate(Q4, fq.points),
      fq,
      x,
      (_p, n, out) => out.set([5 * n[0], 5 * n[1]]),
      { thickness: 0.2 }
    );
    const L = Math.sqrt(1.25);
    const n = [1 / L, -0.5 / L]; // outward normal of that edge
    for (const node of [1, 2]) {
      expect(f[2 * node]).toBeCloseTo((5 * n[0] * L * 0.2) / 2, 14);
      expect(f[2 * node + 1]).toBeCloseTo((5 * n[1] * L * 0.2) / 2, 14);
    }
    expect(f[0]).toBe(0);
    expect(f[7]).toBe(0);
    // a face of the hexahedron: quarter of p × area at each of its four nodes
    const hq = facetQuadrature('hexahedron', 5, 2);
    const cube = Float64Array.from(HEX8.nodes, (v) => (v + 1) / 2);
    const fh = tractionVector('solid', tabulate(HEX8, hq.points), hq, cube, (_p, nn, out) =>
      out.set([0, 0, -7 * nn[2]])
    );
    for (const node of [4, 5, 6, 7]) expect(fh[3 * node + 2]).toBeCloseTo(-7 / 4, 14);
    for (const node of [0, 1, 2, 3]) expect(fh[3 * node + 2]).toBe(0);
  });

  it('recover the exact constant strain and stress of a linear displacement field', () => {
    const rule = gaussRule('quadrilateral', 3);
    const tab = tabulate(Q4, rule.points);
    const u = new Float64Array(8);
    for (let i = 0; i < 4; i++) {
      const [px, py] = [x[2 * i], x[2 * i + 1]];
      u[2 * i] = 1e-3 * (px + py / 2);
      u[2 * i + 1] = 1e-3 * (py + px / 2);
    }
    const eps = strainsAt('plane-stress', tab, x, u);
    const sig = stressesAt('plane-stress', tab, x, u, material);
    const D = elasticityMatrix('plane-stress', material);
    for (let q = 0; q < tab.points; q++) {
      for (let c = 0; c < 3; c++) expect(eps[3 * q + c]).toBeCloseTo(1e-3, 15);
      for (let c = 0; c < 3; c++)
        expect(sig[3 * q + c]).toBeCloseTo(1e-3 * (D[3 * c] + D[3 * c + 1] + D[3 * c + 2]), 12);
    }
  });
});
