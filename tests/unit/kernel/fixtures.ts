// Hand-written shape functions of a few classical elements: the test stand-ins for the tabulations that
// the sandbox produces from formulation documents. Each lists its reference nodes and N, ∂N/∂ξ.
import {
  type CellName,
  type Material,
  type Mesh,
  type QuadratureRule,
  type StrainKind,
  type Tabulation,
  assemble,
  assembleVector,
  dofsPerNode,
  elementCoords,
  elementDofMap,
  elementStiffness,
  facetQuadrature,
  stressesAt,
  tractionVector
} from '../../../packages/kernel/src/index';

export interface FixtureElement {
  name: string;
  cell: CellName;
  dim: number;
  /** nodes × dim */
  nodes: Float64Array;
  /** N (nodes) and dN (nodes × dim) at ξ */
  shape(xi: ArrayLike<number>, N: Float64Array, dN: Float64Array): void;
}

const flat = (a: number[][]) => Float64Array.from(a.flat());

export const BAR2: FixtureElement = {
  name: 'two-node bar',
  cell: 'interval',
  dim: 1,
  nodes: flat([[-1], [1]]),
  shape(xi, N, dN) {
    N[0] = (1 - xi[0]) / 2;
    N[1] = (1 + xi[0]) / 2;
    dN[0] = -0.5;
    dN[1] = 0.5;
  }
};

export const T3: FixtureElement = {
  name: 'three-node triangle',
  cell: 'triangle',
  dim: 2,
  nodes: flat([
    [0, 0],
    [1, 0],
    [0, 1]
  ]),
  shape(xi, N, dN) {
    N[0] = 1 - xi[0] - xi[1];
    N[1] = xi[0];
    N[2] = xi[1];
    dN.set([-1, -1, 1, 0, 0, 1]);
  }
};

export const T6: FixtureElement = {
  name: 'six-node triangle',
  cell: 'triangle',
  dim: 2,
  nodes: flat([
    [0, 0],
    [1, 0],
    [0, 1],
    [0.5, 0],
    [0.5, 0.5],
    [0, 0.5]
  ]),
  shape(xi, N, dN) {
    const [x, y] = [xi[0], xi[1]];
    const l = 1 - x - y;
    N.set([l * (2 * l - 1), x * (2 * x - 1), y * (2 * y - 1), 4 * l * x, 4 * x * y, 4 * y * l]);
    dN.set([
      1 - 4 * l,
      1 - 4 * l,
      4 * x - 1,
      0,
      0,
      4 * y - 1,
      4 * (l - x),
      -4 * x,
      4 * y,
      4 * x,
      -4 * y,
      4 * (l - y)
    ]);
  }
};

export const Q4: FixtureElement = {
  name: 'four-node quadrilateral',
  cell: 'quadrilateral',
  dim: 2,
  nodes: flat([
    [-1, -1],
    [1, -1],
    [1, 1],
    [-1, 1]
  ]),
  shape(xi, N, dN) {
    for (let i = 0; i < 4; i++) {
      const a = this.nodes[2 * i];
      const b = this.nodes[2 * i + 1];
      N[i] = ((1 + a * xi[0]) * (1 + b * xi[1])) / 4;
      dN[2 * i] = (a * (1 + b * xi[1])) / 4;
      dN[2 * i + 1] = (b * (1 + a * xi[0])) / 4;
    }
  }
};

export const T4: FixtureElement = {
  name: 'four-node tetrahedron',
  cell: 'tetrahedron',
  dim: 3,
  nodes: flat([
    [0, 0, 0],
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1]
  ]),
  shape(xi, N, dN) {
    N[0] = 1 - xi[0] - xi[1] - xi[2];
    N[1] = xi[0];
    N[2] = xi[1];
    N[3] = xi[2];
    dN.set([-1, -1, -1, 1, 0, 0, 0, 1, 0, 0, 0, 1]);
  }
};

export const HEX8: FixtureElement = {
  name: 'eight-node hexahedron',
  cell: 'hexahedron',
  dim: 3,
  nodes: flat([
    [-1, -1, -1],
    [1, -1, -1],
    [1, 1, -1],
    [-1, 1, -1],
    [-1, -1, 1],
    [1, -1, 1],
    [1, 1, 1],
    [-1, 1, 1]
  ]),
  shape(xi, N, dN) {
    for (let i = 0; i < 8; i++) {
      const a = this.nodes[3 * i];
      const b = this.nodes[3 * i + 1];
      const c = this.nodes[3 * i + 2];
      const fa = 1 + a * xi[0];
      const fb = 1 + b * xi[1];
      const fc = 1 + c * xi[2];
      N[i] = (fa * fb * fc) / 8;
      dN[3 * i] = (a * fb * fc) / 8;
      dN[3 * i + 1] = (b * fa * fc) / 8;
      dN[3 * i + 2] = (c * fa * fb) / 8;
    }
  }
};

/** Ten-node tetrahedron: corners L_i(2L_i − 1), mid-edge nodes 4 L_a L_b (barycentric L_0 = 1 − ξ − η − ζ). */
export const T10: FixtureElement = {
  name: 'ten-node tetrahedron',
  cell: 'tetrahedron',
  dim: 3,
  nodes: flat([
    [0, 0, 0],
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
    [0.5, 0, 0],
    [0.5, 0.5, 0],
    [0, 0.5, 0],
    [0, 0, 0.5],
    [0.5, 0, 0.5],
    [0, 0.5, 0.5]
  ]),
  shape(xi, N, dN) {
    const L = [1 - xi[0] - xi[1] - xi[2], xi[0], xi[1], xi[2]];
    const dL = [
      [-1, -1, -1],
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1]
    ];
    for (let i = 0; i < 4; i++) {
      N[i] = L[i] * (2 * L[i] - 1);
      for (let k = 0; k < 3; k++) dN[3 * i + k] = (4 * L[i] - 1) * dL[i][k];
    }
    T10_EDGES.forEach(([a, b], e) => {
      N[4 + e] = 4 * L[a] * L[b];
      for (let k = 0; k < 3; k++) dN[3 * (4 + e) + k] = 4 * (L[b] * dL[a][k] + L[a] * dL[b][k]);
    });
  }
};
const T10_EDGES = [
  [0, 1],
  [1, 2],
  [2, 0],
  [0, 3],
  [1, 3],
  [2, 3]
];

/** 27-node hexahedron: tensor products of the quadratic Lagrange polynomials on −1, 0, 1 (nodes lexicographic, ξ fastest). */
export const HEX27: FixtureElement = {
  name: 'twenty-seven-node hexahedron',
  cell: 'hexahedron',
  dim: 3,
  nodes: (() => {
    const pts: number[][] = [];
    for (let c = -1; c <= 1; c++)
      for (let b = -1; b <= 1; b++) for (let a = -1; a <= 1; a++) pts.push([a, b, c]);
    return flat(pts);
  })(),
  shape(xi, N, dN) {
    const l = (t: number, s: number) => (s < 0 ? (t * (t - 1)) / 2 : s > 0 ? (t * (t + 1)) / 2 : 1 - t * t);
    const dl = (t: number, s: number) => (s < 0 ? t - 0.5 : s > 0 ? t + 0.5 : -2 * t);
    for (let i = 0; i < 27; i++) {
      const [a, b, c] = [this.nodes[3 * i], this.nodes[3 * i + 1], this.nodes[3 * i + 2]];
      const [la, lb, lc] = [l(xi[0], a), l(xi[1], b), l(xi[2], c)];
      N[i] = la * lb * lc;
      dN[3 * i] = dl(xi[0], a) * lb * lc;
      dN[3 * i + 1] = la * dl(xi[1], b) * lc;
      dN[3 * i + 2] = la * lb * dl(xi[2], c);
    }
  }
};

/** Node layouts only (for mesh conformity): nine-node quadrilateral and twenty-node hexahedron. */
export const Q9_NODES = flat([
  [-1, -1],
  [1, -1],
  [1, 1],
  [-1, 1],
  [0, -1],
  [1, 0],
  [0, 1],
  [-1, 0],
  [0, 0]
]);

export const HEX20_NODES = (() => {
  const corners = Array.from(HEX8.nodes);
  const pts: number[][] = [];
  for (let i = 0; i < 8; i++) pts.push(corners.slice(3 * i, 3 * i + 3));
  const edges = [
    [0, 1],
    [1, 2],
    [2, 3],
    [3, 0],
    [4, 5],
    [5, 6],
    [6, 7],
    [7, 4],
    [0, 4],
    [1, 5],
    [2, 6],
    [3, 7]
  ];
  for (const [a, b] of edges) pts.push([0, 1, 2].map((k) => (pts[a][k] + pts[b][k]) / 2));
  return flat(pts);
})();

/** Tabulation of an element at points (count × dim). */
export function tabulate(el: FixtureElement, points: Float64Array): Tabulation {
  const nodes = el.nodes.length / el.dim;
  const count = points.length / el.dim;
  const N = new Float64Array(count * nodes);
  const dN = new Float64Array(count * nodes * el.dim);
  for (let q = 0; q < count; q++) {
    el.shape(
      points.subarray(q * el.dim, (q + 1) * el.dim),
      N.subarray(q * nodes, (q + 1) * nodes),
      dN.subarray(q * nodes * el.dim, (q + 1) * nodes * el.dim)
    );
  }
  return { nodes, dim: el.dim, points: count, N, dN };
}

export interface ElementOpts {
  thickness?: number;
  area?: number;
}

/** Global K of a mesh of one fixture element. */
export function assembleMesh(
  kind: StrainKind,
  el: FixtureElement,
  rule: QuadratureRule,
  mesh: Mesh,
  material: Material,
  opts: ElementOpts = {}
) {
  const tab = tabulate(el, rule.points);
  const dpn = dofsPerNode(kind);
  const edof = mesh.elementNodes * dpn;
  const Ke = new Float64Array(mesh.elementCount * edof * edof);
  const x = new Float64Array(mesh.elementNodes * mesh.dim);
  for (let e = 0; e < mesh.elementCount; e++) {
    elementStiffness(
      kind,
      tab,
      rule.weights,
      elementCoords(mesh, e, x),
      material,
      { ...opts, element: e },
      Ke.subarray(e * edof * edof, (e + 1) * edof * edof)
    );
  }
  const map = elementDofMap(mesh.elements, dpn);
  return { K: assemble(mesh.nodeCount * dpn, map, Ke, edof), map, tab, ndof: mesh.nodeCount * dpn };
}

/** Consistent loads of a traction t(x, n) over the boundary facets selected by `which(x of facet centre)`. */
export function tractionLoad(
  kind: StrainKind,
  el: FixtureElement,
  mesh: Mesh,
  traction: (x: Float64Array, n: Float64Array, out: Float64Array) => void,
  opts: ElementOpts = {},
  which: (centre: Float64Array) => boolean = () => true,
  degree = 4
): Float64Array {
  const dpn = dofsPerNode(kind);
  const nn = mesh.elementNodes;
  const f = new Float64Array(mesh.nodeCount * dpn);
  const x = new Float64Array(nn * mesh.dim);
  for (let t = 0; t < mesh.boundary.facetCount; t++) {
    const e = mesh.boundary.facets[2 * t];
    const facet = mesh.boundary.facets[2 * t + 1];
    const fq = facetQuadrature(el.cell, facet, degree);
    const tab = tabulate(el, fq.points);
    elementCoords(mesh, e, x);
    // facet centre: mean of the physical points of its rule
    const centre = new Float64Array(mesh.dim);
    for (let q = 0; q < tab.points; q++)
      for (let k = 0; k < mesh.dim; k++) {
        let s = 0;
        for (let i = 0; i < nn; i++) s += tab.N[q * nn + i] * x[i * mesh.dim + k];
        centre[k] += s / tab.points;
      }
    if (!which(centre)) continue;
    const fe = tractionVector(kind, tab, fq, x, traction, { ...opts, element: e });
    assembleVector(f.length, elementDofMap(mesh.elements.subarray(e * nn, (e + 1) * nn), dpn), fe, f);
  }
  return f;
}

/** Stresses at every quadrature point of every element: elements × points × ncomp. */
export function meshStresses(
  kind: StrainKind,
  el: FixtureElement,
  rule: QuadratureRule,
  mesh: Mesh,
  u: Float64Array,
  material: Material
) {
  const tab = tabulate(el, rule.points);
  const dpn = dofsPerNode(kind);
  const nn = mesh.elementNodes;
  const out: Float64Array[] = [];
  const x = new Float64Array(nn * mesh.dim);
  const ue = new Float64Array(nn * dpn);
  for (let e = 0; e < mesh.elementCount; e++) {
    for (let i = 0; i < nn; i++)
      for (let c = 0; c < dpn; c++) ue[i * dpn + c] = u[mesh.elements[e * nn + i] * dpn + c];
    out.push(stressesAt(kind, tab, elementCoords(mesh, e, x), ue, material, { element: e }));
  }
  return out;
}

/** Nodal values of a vector field u(x) (dpn components). */
export function nodalField(mesh: Mesh, dpn: number, field: (x: Float64Array) => number[]): Float64Array {
  const u = new Float64Array(mesh.nodeCount * dpn);
  for (let i = 0; i < mesh.nodeCount; i++) {
    const v = field(mesh.coords.subarray(i * mesh.dim, (i + 1) * mesh.dim));
    for (let c = 0; c < dpn; c++) u[i * dpn + c] = v[c];
  }
  return u;
}

export const maxAbs = (a: ArrayLike<number>) => {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
  return m;
};
