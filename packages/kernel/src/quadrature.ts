import { type CellName, CELL_NAMES, facetNormal, sharedCell } from './cells';
import { KernelError, requireInput } from './errors';

/** A quadrature rule on a reference cell: ∫ f dξ ≈ Σ_q w_q f(ξ_q). */
export interface QuadratureRule {
  cell: CellName;
  dim: number;
  count: number;
  /** count × dim natural coordinates */
  points: Float64Array;
  /** count; the sum is the cell measure */
  weights: Float64Array;
  /** degree of exactness: every monomial of total degree ≤ degree is integrated exactly */
  degree: number;
  /** where the rule comes from */
  source: string;
}

/** Largest number of Gauss–Legendre points per direction (the formulation format allows 1–10). */
export const MAX_GAUSS_POINTS = 32;

/**
 * A monomial counts as integrated exactly when the relative error is below this: far above the
 * ~1e-15 rounding of tables printed to 15 digits, far below the error at the first inexact degree.
 */
export const EXACTNESS_TOLERANCE = 1e-12;

/** Highest total degree `explicitRule` tests monomials to (a rule exact beyond it reports this). */
export const MAX_TESTED_DEGREE = 30;

/** Newton iteration stops when the correction falls below this (|x| ≤ 1, so a few ulps). */
const NEWTON_STEP_TOLERANCE = 1e-15;
const NEWTON_MAX_ITERATIONS = 100;

/** Legendre P_n(x) and P'_n(x) by the three-term recurrence (A&S 22.7.10). */
function legendre(n: number, x: number): [number, number] {
  let p0 = 1;
  let p1 = x;
  if (n === 0) return [1, 0];
  for (let k = 2; k <= n; k++) {
    const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
    p0 = p1;
    p1 = p2;
  }
  return [p1, (n * (x * p1 - p0)) / (x * x - 1)];
}

/** Gauss–Legendre nodes (ascending) and weights on [−1, 1]: roots of P_n by Newton's method, w = 2 / ((1 − x²) P'_n(x)²). */
export function gaussLegendre(n: number): { points: Float64Array; weights: Float64Array } {
  requireInput(
    Number.isInteger(n) && n >= 1 && n <= MAX_GAUSS_POINTS,
    `Gauss–Legendre point count must be an integer from 1 to ${MAX_GAUSS_POINTS}, got ${n}`
  );
  const points = new Float64Array(n);
  const weights = new Float64Array(n);
  const half = Math.floor(n / 2);
  for (let i = 0; i < half; i++) {
    // initial guess (A&S 22.16.6 asymptotics): the i-th largest root
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    for (let it = 0; it < NEWTON_MAX_ITERATIONS; it++) {
      const [p, dp] = legendre(n, x);
      const dx = p / dp;
      x -= dx;
      if (Math.abs(dx) < NEWTON_STEP_TOLERANCE) break;
    }
    const [, dp] = legendre(n, x);
    const w = 2 / ((1 - x * x) * dp * dp);
    // mirror so the rule is exactly symmetric
    points[n - 1 - i] = x;
    points[i] = -x;
    weights[n - 1 - i] = w;
    weights[i] = w;
  }
  if (n % 2 === 1) {
    const [, dp] = legendre(n, 0);
    points[half] = 0;
    weights[half] = 2 / (dp * dp);
  }
  return { points, weights };
}

/** Tensor-product Gauss–Legendre rule, n points per direction; the first coordinate runs fastest. */
export function gaussRule(
  cell: 'interval' | 'quadrilateral' | 'hexahedron',
  pointsPerDirection: number
): QuadratureRule {
  const dim = cell === 'interval' ? 1 : cell === 'quadrilateral' ? 2 : cell === 'hexahedron' ? 3 : 0;
  if (dim === 0) {
    throw new KernelError(
      'invalid-input',
      `Gauss–Legendre tensor rules exist for interval, quadrilateral and hexahedron, not '${String(cell)}' (use simplexRule)`
    );
  }
  const n = pointsPerDirection;
  const g = gaussLegendre(n);
  const count = n ** dim;
  const points = new Float64Array(count * dim);
  const weights = new Float64Array(count);
  for (let q = 0; q < count; q++) {
    let rest = q;
    let w = 1;
    for (let k = 0; k < dim; k++) {
      const i = rest % n;
      rest = Math.floor(rest / n);
      points[q * dim + k] = g.points[i];
      w *= g.weights[i];
    }
    weights[q] = w;
  }
  const product = dim === 1 ? '' : `, tensor product ${Array(dim).fill(n).join('×')}`;
  return {
    cell,
    dim,
    count,
    points,
    weights,
    degree: 2 * n - 1,
    source: `Gauss–Legendre ${n}-point (Abramowitz & Stegun 25.4.29, nodes by Newton iteration on P_${n})${product}`
  };
}

// ---------------------------------------------------------------------------------------------
// Symmetric simplex rules, written as orbits of barycentric coordinates.
// Weights are normalised to a cell of unit measure; they are scaled to the reference measure below.

type TriOrbit = { c: number } | { a: number; w: number } | { ab: [number, number]; w: number };
type TetOrbit =
  | { c: number }
  | { a: number; w: number } // (a, a, a, 1 − 3a): 4 points
  | { aabb: number; w: number } // (a, a, b, b), b = 1/2 − a: 6 points
  | { aabc: [number, number]; w: number }; // (a, a, b, c), c = 1 − 2a − b: 12 points

interface TableRule<O> {
  degree: number;
  source: string;
  orbits: O[];
}

/**
 * Triangle rules of Dunavant, D. A. (1985), "High degree efficient symmetrical Gaussian quadrature
 * rules for the triangle", Int. J. Numer. Meth. Engng 21, 1129–1148, Table I (weights for unit area).
 * Degree 2 is also the Strang & Fix (1973) three-point rule.
 */
const TRIANGLE_RULES: TableRule<TriOrbit>[] = [
  { degree: 1, source: 'Dunavant 1985, degree 1 (centroid)', orbits: [{ c: 1 }] },
  { degree: 2, source: 'Dunavant 1985, degree 2 (3 points)', orbits: [{ a: 1 / 6, w: 1 / 3 }] },
  {
    degree: 3,
    source: 'Dunavant 1985, degree 3 (4 points, one negative weight)',
    orbits: [{ c: -27 / 48 }, { a: 0.2, w: 25 / 48 }]
  },
  {
    degree: 4,
    source: 'Dunavant 1985, degree 4 (6 points)',
    orbits: [
      { a: 0.445948490915965, w: 0.223381589678011 },
      { a: 0.091576213509771, w: 0.109951743655322 }
    ]
  },
  {
    degree: 5,
    source: 'Dunavant 1985, degree 5 (7 points)',
    orbits: [
      { c: 0.225 },
      { a: 0.470142064105115, w: 0.132394152788506 },
      { a: 0.101286507323456, w: 0.125939180544827 }
    ]
  },
  {
    degree: 6,
    source: 'Dunavant 1985, degree 6 (12 points)',
    orbits: [
      { a: 0.24928674517091, w: 0.116786275726379 },
      { a: 0.063089014491502, w: 0.050844906370207 },
      { ab: [0.053145049844817, 0.310352451033784], w: 0.082851075618374 }
    ]
  },
  {
    degree: 7,
    source: 'Dunavant 1985, degree 7 (13 points, one negative weight)',
    orbits: [
      { c: -0.149570044467682 },
      { a: 0.26034596607904, w: 0.175615257433208 },
      { a: 0.065130102902216, w: 0.053347235608838 },
      { ab: [0.048690315425316, 0.312865496004874], w: 0.077113760890257 }
    ]
  },
  {
    degree: 8,
    source: 'Dunavant 1985, degree 8 (16 points)',
    orbits: [
      { c: 0.144315607677787 },
      { a: 0.459292588292723, w: 0.095091634267285 },
      { a: 0.17056930775176, w: 0.103217370534718 },
      { a: 0.050547228317031, w: 0.032458497623198 },
      { ab: [0.008394777409958, 0.263112829634638], w: 0.027230314174435 }
    ]
  },
  {
    degree: 9,
    source: 'Dunavant 1985, degree 9 (19 points)',
    orbits: [
      { c: 0.097135796282799 },
      { a: 0.489682519198738, w: 0.031334700227139 },
      { a: 0.437089591492937, w: 0.077827541004774 },
      { a: 0.188203535619033, w: 0.07964773892721 },
      { a: 0.044729513394453, w: 0.025577675658698 },
      { ab: [0.036838412054736, 0.221962989160766], w: 0.043283539377289 }
    ]
  }
];

/**
 * Tetrahedron rules of Keast, P. (1986), "Moderate-degree tetrahedral quadrature formulas",
 * Comput. Methods Appl. Mech. Engrg 55, 339–348 (weights here for unit volume).
 */
const TETRAHEDRON_RULES: TableRule<TetOrbit>[] = [
  { degree: 1, source: 'Keast 1986, degree 1 (centroid)', orbits: [{ c: 1 }] },
  {
    degree: 2,
    source: 'Keast 1986, degree 2 (4 points, a = (5 − √5)/20)',
    orbits: [{ a: (5 - Math.sqrt(5)) / 20, w: 1 / 4 }]
  },
  {
    degree: 3,
    source: 'Keast 1986, degree 3 (5 points, one negative weight)',
    orbits: [{ c: -4 / 5 }, { a: 1 / 6, w: 9 / 20 }]
  },
  {
    degree: 4,
    source: 'Keast 1986, degree 4 (11 points, one negative weight)',
    orbits: [
      { c: (-74 / 5625) * 6 },
      { a: 1 / 14, w: (343 / 45000) * 6 },
      { aabb: (1 - Math.sqrt(5 / 14)) / 4, w: (56 / 2250) * 6 }
    ]
  },
  {
    degree: 5,
    source: 'Keast 1986, degree 5 (15 points)',
    orbits: [
      { c: 0.030283678097089 * 6 },
      { a: 1 / 3, w: 0.006026785714285714 * 6 },
      { a: 1 / 11, w: 0.011645249086029 * 6 },
      { aabb: 0.066550153573664, w: 0.010949141561386 * 6 }
    ]
  },
  {
    degree: 6,
    source: 'Keast 1986, degree 6 (24 points)',
    orbits: [
      { a: 0.214602871259152, w: 0.00665379170969465 * 6 },
      { a: 0.0406739585346113, w: 0.00167953517588678 * 6 },
      { a: 0.322337890142275, w: 0.00922619692394239 * 6 },
      { aabc: [0.0636610018750175, 0.269672331458316], w: (9 / 1120) * 6 }
    ]
  }
];

/** Distinct permutations of a barycentric tuple, in lexicographic order of index patterns. */
function permutations(l: number[]): number[][] {
  const out: number[][] = [];
  const seen = new Set<string>();
  const rec = (prefix: number[], rest: number[]) => {
    if (rest.length === 0) {
      const key = prefix.join(',');
      if (!seen.has(key)) {
        seen.add(key);
        out.push(prefix);
      }
      return;
    }
    for (let i = 0; i < rest.length; i++)
      rec([...prefix, rest[i]], [...rest.slice(0, i), ...rest.slice(i + 1)]);
  };
  rec([], l);
  return out;
}

function expandTriangle(r: TableRule<TriOrbit>): QuadratureRule {
  const pts: number[][] = [];
  for (const o of r.orbits) {
    if ('c' in o) {
      pts.push([1 / 3, 1 / 3, o.c]);
      continue;
    }
    const bary = 'a' in o ? [o.a, o.a, 1 - 2 * o.a] : [o.ab[0], o.ab[1], 1 - o.ab[0] - o.ab[1]];
    // keep the points of an orbit distinct: (a, a, 1 − 2a) has 3 permutations, (a, b, c) has 6
    for (const p of permutations(bary)) pts.push([p[0], p[1], o.w]);
  }
  return tableRule('triangle', 2, pts, 0.5, r);
}

function expandTetrahedron(r: TableRule<TetOrbit>): QuadratureRule {
  const pts: number[][] = [];
  for (const o of r.orbits) {
    let bary: number[];
    if ('c' in o) {
      pts.push([0.25, 0.25, 0.25, o.c]);
      continue;
    } else if ('a' in o) bary = [o.a, o.a, o.a, 1 - 3 * o.a];
    else if ('aabb' in o) bary = [o.aabb, o.aabb, 0.5 - o.aabb, 0.5 - o.aabb];
    else bary = [o.aabc[0], o.aabc[0], o.aabc[1], 1 - 2 * o.aabc[0] - o.aabc[1]];
    for (const p of permutations(bary)) pts.push([p[0], p[1], p[2], o.w]);
  }
  return tableRule('tetrahedron', 3, pts, 1 / 6, r);
}

function tableRule(
  cell: CellName,
  dim: number,
  pts: number[][],
  measure: number,
  r: TableRule<unknown>
): QuadratureRule {
  const count = pts.length;
  const points = new Float64Array(count * dim);
  const weights = new Float64Array(count);
  pts.forEach((p, q) => {
    for (let k = 0; k < dim; k++) points[q * dim + k] = p[k];
    weights[q] = p[dim] * measure;
  });
  return { cell, dim, count, points, weights, degree: r.degree, source: r.source };
}

/** Highest degree of the published simplex rules in the table, per cell. */
export const MAX_SIMPLEX_DEGREE = {
  triangle: TRIANGLE_RULES[TRIANGLE_RULES.length - 1].degree,
  tetrahedron: TETRAHEDRON_RULES[TETRAHEDRON_RULES.length - 1].degree
} as const;

/** The lowest-count published rule in the table exact to at least `degree` (degree 0 gives the centroid rule). */
export function simplexRule(cell: 'triangle' | 'tetrahedron', degree: number): QuadratureRule {
  requireInput(
    Number.isInteger(degree) && degree >= 0,
    () => `quadrature degree must be a non-negative integer, got ${degree}`
  );
  if (cell === 'triangle') {
    const r = TRIANGLE_RULES.find((t) => t.degree >= degree);
    if (!r) {
      throw new KernelError(
        'degree-too-high',
        `no published triangle rule of degree ${degree} in the table; the highest is ${MAX_SIMPLEX_DEGREE.triangle}`,
        { cell, degree, maxDegree: MAX_SIMPLEX_DEGREE.triangle }
      );
    }
    return expandTriangle(r);
  }
  if (cell === 'tetrahedron') {
    const r = TETRAHEDRON_RULES.find((t) => t.degree >= degree);
    if (!r) {
      throw new KernelError(
        'degree-too-high',
        `no published tetrahedron rule of degree ${degree} in the table; the highest is ${MAX_SIMPLEX_DEGREE.tetrahedron}`,
        { cell, degree, maxDegree: MAX_SIMPLEX_DEGREE.tetrahedron }
      );
    }
    return expandTetrahedron(r);
  }
  throw new KernelError(
    'invalid-input',
    `simplex rules exist for triangle and tetrahedron, not '${String(cell)}' (use gaussRule)`
  );
}

/**
 * Conical-product rule on a simplex: Gauss–Legendre in collapsed coordinates
 * ξ = u, η = v(1 − u), ζ = w(1 − u)(1 − v) with the Jacobian folded into the weights (Stroud 1971, §2.5).
 */
export function collapsedGaussRule(
  cell: 'triangle' | 'tetrahedron',
  pointsPerDirection: number
): QuadratureRule {
  const n = pointsPerDirection;
  const g = gaussLegendre(n);
  const u = Array.from(g.points, (x) => (x + 1) / 2);
  const wu = Array.from(g.weights, (w) => w / 2);
  const dim = cell === 'triangle' ? 2 : 3;
  const count = n ** dim;
  const points = new Float64Array(count * dim);
  const weights = new Float64Array(count);
  let q = 0;
  if (dim === 2) {
    for (let j = 0; j < n; j++)
      for (let i = 0; i < n; i++, q++) {
        points[2 * q] = u[i];
        points[2 * q + 1] = u[j] * (1 - u[i]);
        weights[q] = wu[i] * wu[j] * (1 - u[i]);
      }
  } else {
    for (let k = 0; k < n; k++)
      for (let j = 0; j < n; j++)
        for (let i = 0; i < n; i++, q++) {
          points[3 * q] = u[i];
          points[3 * q + 1] = u[j] * (1 - u[i]);
          points[3 * q + 2] = u[k] * (1 - u[i]) * (1 - u[j]);
          weights[q] = wu[i] * wu[j] * wu[k] * (1 - u[i]) ** 2 * (1 - u[j]);
        }
  }
  // the Jacobian adds dim − 1 to the degree in u: exact to 2n − 1 − (dim − 1)
  return {
    cell,
    dim,
    count,
    points,
    weights,
    degree: 2 * n - dim,
    source: `conical product of ${n}-point Gauss–Legendre rules (Stroud 1971)`
  };
}

/** Any rule exact to at least `degree`: tensor Gauss on interval/quadrilateral/hexahedron, a published or conical-product rule on simplices. */
export function ruleOfDegree(cell: CellName, degree: number): QuadratureRule {
  requireInput(
    Number.isInteger(degree) && degree >= 0,
    () => `quadrature degree must be a non-negative integer, got ${degree}`
  );
  if (cell === 'interval' || cell === 'quadrilateral' || cell === 'hexahedron') {
    return gaussRule(cell, Math.max(1, Math.ceil((degree + 1) / 2)));
  }
  if (cell === 'triangle' || cell === 'tetrahedron') {
    if (degree <= MAX_SIMPLEX_DEGREE[cell]) return simplexRule(cell, degree);
    const dim = cell === 'triangle' ? 2 : 3;
    return collapsedGaussRule(cell, Math.ceil((degree + dim) / 2));
  }
  throw new KernelError(
    'invalid-input',
    `unknown cell '${String(cell)}'; expected one of ${CELL_NAMES.join(', ')}`
  );
}

/** A rule from explicit points, each [coords..., weight]; the degree of exactness is found by testing monomials. */
export function explicitRule(cell: CellName, points: number[][]): QuadratureRule {
  const ref = sharedCell(cell);
  const dim = ref.dim;
  requireInput(Array.isArray(points) && points.length > 0, 'an explicit rule needs at least one point');
  const count = points.length;
  const pts = new Float64Array(count * dim);
  const weights = new Float64Array(count);
  points.forEach((p, q) => {
    if (!Array.isArray(p) || p.length !== dim + 1) {
      throw new KernelError(
        'invalid-input',
        `quadrature point ${q} has ${Array.isArray(p) ? p.length : 'no'} entries; the ${cell} needs ${dim} coordinates and a weight`,
        { point: q }
      );
    }
    for (let k = 0; k <= dim; k++) {
      if (!Number.isFinite(p[k])) {
        throw new KernelError(
          'invalid-input',
          `quadrature point ${q} entry ${k} is ${p[k]}, not a finite number`,
          { point: q }
        );
      }
    }
    const coords = p.slice(0, dim);
    if (!ref.contains(coords)) {
      throw new KernelError(
        'invalid-input',
        `quadrature point ${q} (${coords.join(', ')}) lies outside the reference ${cell}`,
        {
          point: q
        }
      );
    }
    pts.set(coords, q * dim);
    weights[q] = p[dim];
  });
  return {
    cell,
    dim,
    count,
    points: pts,
    weights,
    degree: degreeOfExactness(cell, pts, weights),
    source: 'explicit points'
  };
}

function factorial(n: number): number {
  let f = 1;
  for (let k = 2; k <= n; k++) f *= k;
  return f;
}

/** ∫_{−1}^{1} ξ^a dξ */
function intervalMoment(a: number): number {
  return a % 2 === 1 ? 0 : 2 / (a + 1);
}

/** Exact integral of the monomial ∏ ξ_k^{e_k} over the reference cell. */
export function monomialIntegral(cell: CellName, e: ArrayLike<number>): number {
  switch (cell) {
    case 'interval':
      return intervalMoment(e[0]);
    case 'quadrilateral':
      return intervalMoment(e[0]) * intervalMoment(e[1]);
    case 'hexahedron':
      return intervalMoment(e[0]) * intervalMoment(e[1]) * intervalMoment(e[2]);
    case 'triangle': // a! b! / (a + b + 2)!
      return (factorial(e[0]) * factorial(e[1])) / factorial(e[0] + e[1] + 2);
    case 'tetrahedron': // a! b! c! / (a + b + c + 3)!
      return (factorial(e[0]) * factorial(e[1]) * factorial(e[2])) / factorial(e[0] + e[1] + e[2] + 3);
  }
}

/** Every exponent tuple of total degree d in `dim` variables. */
export function exponentsOfDegree(dim: number, d: number): number[][] {
  if (dim === 1) return [[d]];
  const out: number[][] = [];
  for (let a = d; a >= 0; a--) for (const rest of exponentsOfDegree(dim - 1, d - a)) out.push([a, ...rest]);
  return out;
}

/** The largest d ≤ MAX_TESTED_DEGREE such that the rule integrates every monomial of total degree ≤ d exactly (−1 if not even constants). */
export function degreeOfExactness(cell: CellName, points: Float64Array, weights: Float64Array): number {
  const dim = sharedCell(cell).dim;
  const count = weights.length;
  for (let d = 0; d <= MAX_TESTED_DEGREE; d++) {
    for (const e of exponentsOfDegree(dim, d)) {
      let sum = 0;
      let scale = 0;
      for (let q = 0; q < count; q++) {
        let m = weights[q];
        for (let k = 0; k < dim; k++) m *= points[q * dim + k] ** e[k];
        sum += m;
        scale += Math.abs(m);
      }
      const exact = monomialIntegral(cell, e);
      if (Math.abs(sum - exact) > EXACTNESS_TOLERANCE * Math.max(scale, Math.abs(exact))) return d - 1;
    }
  }
  return MAX_TESTED_DEGREE;
}

/** Points and weights for integrating over facet `facet` of a reference cell. */
export interface FacetQuadrature {
  cell: CellName;
  facet: number;
  count: number;
  /** count × dim natural coordinates of the cell (on the facet) */
  points: Float64Array;
  /** count; reference facet measure (sum = facet length or area in natural coordinates) */
  weights: Float64Array;
  /** outward unit normal of the reference facet, natural coordinates */
  normal: Float64Array;
  degree: number;
  source: string;
}

/** A rule on one facet of a cell, exact to `degree` along the facet: the facet's own rule mapped affinely onto it. */
export function facetQuadrature(cell: CellName, facet: number, degree: number): FacetQuadrature {
  const ref = sharedCell(cell);
  const dim = ref.dim;
  const verts = ref.facets[facet];
  if (!Number.isInteger(facet) || !verts) {
    throw new KernelError(
      'invalid-input',
      `the ${cell} has facets 0 to ${ref.facets.length - 1}, not ${facet}`,
      { facet }
    );
  }
  const normal = facetNormal(ref, facet);
  const vx = (i: number, k: number) => ref.vertices[verts[i] * dim + k];
  if (dim === 1) {
    return {
      cell,
      facet,
      count: 1,
      points: Float64Array.of(vx(0, 0)),
      weights: Float64Array.of(1),
      normal,
      degree,
      source: 'end point'
    };
  }
  const facetCell: CellName = dim === 2 ? 'interval' : verts.length === 3 ? 'triangle' : 'quadrilateral';
  const base = ruleOfDegree(facetCell, degree);
  const points = new Float64Array(base.count * dim);
  const weights = new Float64Array(base.count);
  // affine map s ↦ ξ from the facet's reference cell; its Jacobian is constant (every reference facet is flat, and
  // hexahedron faces are squares, whose bilinear map is affine)
  const fref = sharedCell(facetCell);
  const shape = (s: Float64Array, q: number, out: Float64Array) => {
    if (facetCell === 'interval') {
      const t = s[q];
      out[0] = (1 - t) / 2;
      out[1] = (1 + t) / 2;
    } else if (facetCell === 'triangle') {
      const a = s[2 * q];
      const b = s[2 * q + 1];
      out[0] = 1 - a - b;
      out[1] = a;
      out[2] = b;
    } else {
      const a = s[2 * q];
      const b = s[2 * q + 1];
      out[0] = ((1 - a) * (1 - b)) / 4;
      out[1] = ((1 + a) * (1 - b)) / 4;
      out[2] = ((1 + a) * (1 + b)) / 4;
      out[3] = ((1 - a) * (1 + b)) / 4;
    }
  };
  const n = new Float64Array(verts.length);
  for (let q = 0; q < base.count; q++) {
    shape(base.points, q, n);
    for (let k = 0; k < dim; k++) {
      let x = 0;
      for (let i = 0; i < verts.length; i++) x += n[i] * vx(i, k);
      points[q * dim + k] = x;
    }
  }
  // measure ratio: facet measure in the cell's natural coordinates over the facet reference measure
  let ratio: number;
  if (dim === 2) {
    ratio = Math.hypot(vx(1, 0) - vx(0, 0), vx(1, 1) - vx(0, 1)) / fref.measure;
  } else {
    const a = [vx(1, 0) - vx(0, 0), vx(1, 1) - vx(0, 1), vx(1, 2) - vx(0, 2)];
    const b = [vx(2, 0) - vx(0, 0), vx(2, 1) - vx(0, 1), vx(2, 2) - vx(0, 2)];
    const area = Math.hypot(a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]);
    ratio = (verts.length === 3 ? area / 2 : area) / fref.measure;
  }
  for (let q = 0; q < base.count; q++) weights[q] = base.weights[q] * ratio;
  return {
    cell,
    facet,
    count: base.count,
    points,
    weights,
    normal,
    degree: base.degree,
    source: `${base.source} on facet ${facet}`
  };
}
