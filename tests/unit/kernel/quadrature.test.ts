import { describe, expect, it } from 'vitest';
import {
  type CellName,
  KernelError,
  MAX_SIMPLEX_DEGREE,
  collapsedGaussRule,
  degreeOfExactness,
  explicitRule,
  exponentsOfDegree,
  facetQuadrature,
  gaussLegendre,
  gaussRule,
  referenceCell,
  ruleOfDegree,
  simplexRule
} from '../../../packages/kernel/src/index';

/** Abramowitz & Stegun (1964), Table 25.4: abscissae ±x_i and weights w_i of Gauss–Legendre rules, printed to 15 decimals. */
const AS_TABLE_25_4: Record<number, [number, number][]> = {
  2: [[0.577350269189626, 1.0]],
  3: [
    [0.0, 0.888888888888889],
    [0.774596669241483, 0.555555555555556]
  ],
  4: [
    [0.339981043584856, 0.652145154862546],
    [0.861136311594053, 0.347854845137454]
  ],
  5: [
    [0.0, 0.568888888888889],
    [0.538469310105683, 0.478628670499366],
    [0.906179845938664, 0.236926885056189]
  ],
  6: [
    [0.238619186083197, 0.467913934572691],
    [0.661209386466265, 0.360761573048139],
    [0.932469514203152, 0.17132449237917]
  ],
  7: [
    [0.0, 0.417959183673469],
    [0.405845151377397, 0.381830050505119],
    [0.741531185599394, 0.279705391489277],
    [0.949107912342759, 0.12948496616887]
  ],
  8: [
    [0.18343464249565, 0.362683783378362],
    [0.525532409916329, 0.313706645877887],
    [0.796666477413627, 0.222381034453374],
    [0.960289856497536, 0.101228536290376]
  ],
  9: [
    [0.0, 0.33023935500126],
    [0.324253423403809, 0.312347077040003],
    [0.61337143270059, 0.260610696402935],
    [0.836031107326636, 0.180648160694857],
    [0.968160239507626, 0.081274388361574]
  ],
  10: [
    [0.148874338981631, 0.295524224714753],
    [0.433395394129247, 0.269266719309996],
    [0.679409568299024, 0.219086362515982],
    [0.865063366688985, 0.149451349150581],
    [0.973906528517172, 0.066671344308688]
  ]
};

/** Half a unit in the 15th decimal of the printed table, plus rounding of our own values. */
const TABLE_TOLERANCE = 1e-15 * 1.5;

/** Monomial integrals are compared to this relative accuracy (tables printed to 15 digits). */
const MOMENT_TOLERANCE = 1e-13;

function factorial(n: number): number {
  return n <= 1 ? 1 : n * factorial(n - 1);
}

/** Closed-form monomial integrals over the reference cells (independent of the kernel's own). */
function exactMoment(cell: CellName, e: number[]): number {
  const line = (a: number) => (a % 2 ? 0 : 2 / (a + 1)); // ∫_{−1}^{1} ξ^a
  switch (cell) {
    case 'interval':
      return line(e[0]);
    case 'quadrilateral':
      return line(e[0]) * line(e[1]);
    case 'hexahedron':
      return line(e[0]) * line(e[1]) * line(e[2]);
    case 'triangle': // ∫ ξ^a η^b = a! b! / (a + b + 2)!
      return (factorial(e[0]) * factorial(e[1])) / factorial(e[0] + e[1] + 2);
    case 'tetrahedron': // ∫ ξ^a η^b ζ^c = a! b! c! / (a + b + c + 3)!
      return (factorial(e[0]) * factorial(e[1]) * factorial(e[2])) / factorial(e[0] + e[1] + e[2] + 3);
  }
}

function moment(rule: { points: Float64Array; weights: Float64Array; dim: number }, e: number[]): number {
  let s = 0;
  for (let q = 0; q < rule.weights.length; q++) {
    let m = rule.weights[q];
    for (let k = 0; k < rule.dim; k++) m *= rule.points[q * rule.dim + k] ** e[k];
    s += m;
  }
  return s;
}

function expectExactTo(rule: ReturnType<typeof gaussRule>, degree: number) {
  for (let d = 0; d <= degree; d++) {
    for (const e of exponentsOfDegree(rule.dim, d)) {
      const exact = exactMoment(rule.cell, e);
      expect(
        Math.abs(moment(rule, e) - exact),
        `${rule.source}: monomial ${e.join(',')}`
      ).toBeLessThanOrEqual(MOMENT_TOLERANCE * Math.max(1, Math.abs(exact)));
    }
  }
}

describe('Gauss–Legendre rules', () => {
  it('reproduce the nodes and weights of Abramowitz & Stegun Table 25.4 for 2 to 10 points', () => {
    for (const [n, rows] of Object.entries(AS_TABLE_25_4)) {
      const g = gaussLegendre(Number(n));
      const count = Number(n);
      for (const [x, w] of rows) {
        // the table lists x ≥ 0; the rule is ascending and symmetric
        const i = g.points.findIndex((p) => Math.abs(p - x) < 1e-6);
        expect(i, `n = ${n}, x = ${x}`).toBeGreaterThanOrEqual(0);
        expect(Math.abs(g.points[i] - x)).toBeLessThanOrEqual(TABLE_TOLERANCE);
        expect(Math.abs(g.weights[i] - w)).toBeLessThanOrEqual(TABLE_TOLERANCE);
        expect(g.points[count - 1 - i] + g.points[i]).toBe(0);
      }
    }
  });

  it('has the one-point midpoint rule: x = 0, w = 2 (Abramowitz & Stegun 25.4.29)', () => {
    const g = gaussLegendre(1);
    expect(Array.from(g.points)).toEqual([0]);
    expect(Array.from(g.weights)).toEqual([2]);
  });

  it('integrates every monomial to degree 2n − 1 exactly on interval, quadrilateral and hexahedron, and not degree 2n', () => {
    for (const cell of ['interval', 'quadrilateral', 'hexahedron'] as const) {
      for (let n = 1; n <= 10; n++) {
        const r = gaussRule(cell, n);
        expect(r.degree).toBe(2 * n - 1);
        expectExactTo(r, r.degree);
        const e = new Array(r.dim).fill(0);
        e[0] = 2 * n; // ξ^{2n} is the first monomial a Gauss rule misses
        expect(Math.abs(moment(r, e) - exactMoment(cell, e))).toBeGreaterThan(1e-6);
        expect(r.count).toBe(n ** r.dim);
      }
    }
  });

  it('rejects point counts outside its range and cells without a tensor rule', () => {
    expect(() => gaussLegendre(0)).toThrow(KernelError);
    expect(() => gaussLegendre(2.5)).toThrow(/integer/);
    expect(() => gaussRule('triangle' as 'interval', 2)).toThrow(/simplexRule/);
  });
});

describe('published simplex rules', () => {
  it('integrate every monomial up to their degree exactly on the triangle, ∫ ξ^a η^b = a! b!/(a + b + 2)! (Dunavant 1985)', () => {
    for (let d = 1; d <= MAX_SIMPLEX_DEGREE.triangle; d++) {
      const r = simplexRule('triangle', d);
      expect(r.degree).toBeGreaterThanOrEqual(d);
      expectExactTo(r, r.degree);
      expect(r.source).toMatch(/Dunavant 1985/);
    }
    expect(MAX_SIMPLEX_DEGREE.triangle).toBeGreaterThanOrEqual(8);
  });

  it('integrate every monomial up to their degree exactly on the tetrahedron, ∫ ξ^a η^b ζ^c = a! b! c!/(a + b + c + 3)! (Keast 1986)', () => {
    for (let d = 1; d <= MAX_SIMPLEX_DEGREE.tetrahedron; d++) {
      const r = simplexRule('tetrahedron', d);
      expectExactTo(r, r.degree);
      expect(r.source).toMatch(/Keast 1986/);
    }
    expect(MAX_SIMPLEX_DEGREE.tetrahedron).toBeGreaterThanOrEqual(5);
  });

  it('have the point counts of the published tables (Dunavant 1985 Table I; Keast 1986)', () => {
    // Dunavant's counts for degrees 1–9 and Keast's for degrees 1–6
    expect([1, 2, 3, 4, 5, 6, 7, 8, 9].map((d) => simplexRule('triangle', d).count)).toEqual([
      1, 3, 4, 6, 7, 12, 13, 16, 19
    ]);
    expect([1, 2, 3, 4, 5, 6].map((d) => simplexRule('tetrahedron', d).count)).toEqual([1, 4, 5, 11, 15, 24]);
  });

  it('report exactly the degree the monomial test finds', () => {
    for (const cell of ['triangle', 'tetrahedron'] as const) {
      for (let d = 1; d <= MAX_SIMPLEX_DEGREE[cell]; d++) {
        const r = simplexRule(cell, d);
        expect(degreeOfExactness(cell, r.points, r.weights), r.source).toBe(r.degree);
      }
    }
  });

  it('have weights summing to the cell measure and points inside the cell', () => {
    for (const cell of ['triangle', 'tetrahedron'] as const) {
      const ref = referenceCell(cell);
      for (let d = 1; d <= MAX_SIMPLEX_DEGREE[cell]; d++) {
        const r = simplexRule(cell, d);
        const sum = r.weights.reduce((a, b) => a + b, 0);
        expect(Math.abs(sum - ref.measure)).toBeLessThan(MOMENT_TOLERANCE);
        for (let q = 0; q < r.count; q++)
          expect(ref.contains(r.points.subarray(q * r.dim, (q + 1) * r.dim))).toBe(true);
      }
    }
  });

  it('name the highest available degree when asked for more', () => {
    expect(() => simplexRule('triangle', MAX_SIMPLEX_DEGREE.triangle + 1)).toThrow(
      new RegExp(`highest is ${MAX_SIMPLEX_DEGREE.triangle}`)
    );
    try {
      simplexRule('tetrahedron', 40);
      expect.unreachable();
    } catch (e) {
      expect((e as KernelError).code).toBe('degree-too-high');
      expect((e as KernelError).detail?.maxDegree).toBe(MAX_SIMPLEX_DEGREE.tetrahedron);
    }
  });
});

describe('other rules', () => {
  it('conical-product rules on simplices are exact to 2n − dim (Stroud 1971)', () => {
    for (let n = 1; n <= 8; n++) {
      expectExactTo(collapsedGaussRule('triangle', n), 2 * n - 2);
      expectExactTo(collapsedGaussRule('tetrahedron', n), 2 * n - 3);
    }
  });

  it('ruleOfDegree returns a rule exact to any requested degree on every cell', () => {
    for (const cell of ['interval', 'triangle', 'quadrilateral', 'tetrahedron', 'hexahedron'] as const) {
      for (const d of [0, 1, 3, 7, 12, 15]) {
        const r = ruleOfDegree(cell, d);
        expect(r.degree).toBeGreaterThanOrEqual(d);
        expectExactTo(r, d);
      }
    }
  });

  it('explicitRule finds the degree by monomials: the edge-midpoint triangle rule is exact to degree 2 (Strang & Fix 1973)', () => {
    const r = explicitRule('triangle', [
      [0.5, 0, 1 / 6],
      [0.5, 0.5, 1 / 6],
      [0, 0.5, 1 / 6]
    ]);
    expect(r.degree).toBe(2);
    expect(explicitRule('triangle', [[1 / 3, 1 / 3, 0.5]]).degree).toBe(1);
    expect(explicitRule('quadrilateral', [[0, 0, 4]]).degree).toBe(1);
    // a wrong weight is not even exact for constants
    expect(explicitRule('interval', [[0, 1]]).degree).toBe(-1);
  });

  it('explicitRule names the point that is outside the cell or malformed', () => {
    expect(() =>
      explicitRule('triangle', [
        [0.2, 0.2, 0.25],
        [0.8, 0.8, 0.25]
      ])
    ).toThrow(/point 1 .*outside/);
    expect(() => explicitRule('hexahedron', [[0, 0, 0.5]])).toThrow(/point 0 has 3 entries/);
    expect(() => explicitRule('interval', [[Number.NaN, 1]])).toThrow(/point 0 entry 0/);
  });

  it('facet rules lie on the facet and their weights sum to its measure in natural coordinates', () => {
    // measures: triangle edge 1–2 has length √2; tetrahedron face 1–2–3 has area √3/2; hexahedron faces have area 4
    const cases: [CellName, number, number][] = [
      ['triangle', 1, Math.SQRT2],
      ['triangle', 0, 1],
      ['quadrilateral', 2, 2],
      ['tetrahedron', 2, Math.sqrt(3) / 2],
      ['tetrahedron', 0, 0.5],
      ['hexahedron', 5, 4],
      ['interval', 1, 1]
    ];
    for (const [cell, facet, measure] of cases) {
      const fq = facetQuadrature(cell, facet, 3);
      expect(
        Math.abs(fq.weights.reduce((a, b) => a + b, 0) - measure),
        `${cell} facet ${facet}`
      ).toBeLessThan(1e-14);
      const ref = referenceCell(cell);
      for (let q = 0; q < fq.count; q++)
        expect(ref.contains(fq.points.subarray(q * ref.dim, (q + 1) * ref.dim))).toBe(true);
    }
    // outward normal of the hypotenuse of the reference triangle: (1, 1)/√2
    const n = facetQuadrature('triangle', 1, 1).normal;
    expect(n[0]).toBeCloseTo(Math.SQRT1_2, 15);
    expect(n[1]).toBeCloseTo(Math.SQRT1_2, 15);
  });
});
