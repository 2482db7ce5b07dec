import { KernelError, requireInput } from './errors';
import { seededUniform } from './random';

export type CellName = 'interval' | 'triangle' | 'quadrilateral' | 'tetrahedron' | 'hexahedron';

export const CELL_NAMES: readonly CellName[] = [
  'interval',
  'triangle',
  'quadrilateral',
  'tetrahedron',
  'hexahedron'
];

/** A reference cell: vertices in natural coordinates, its boundary entities and its measure. */
export interface ReferenceCell {
  name: CellName;
  dim: 1 | 2 | 3;
  /** nv × dim, row-major */
  vertices: Float64Array;
  vertexCount: number;
  /** local vertex indices of each edge (1D: the interval itself) */
  edges: number[][];
  /** 3D: local vertex indices of each face; 2D: the same as edges (the facets); 1D: the two end points */
  faces: number[][];
  /** the (dim − 1)-dimensional boundary entities, in the order facet numbers refer to */
  facets: number[][];
  /** 2 for interval, 1/2 triangle, 4 quadrilateral, 1/6 tetrahedron, 8 hexahedron */
  measure: number;
  /** true when the point lies in the closed cell, widened by tol */
  contains(point: ArrayLike<number>, tol?: number): boolean;
  /** count × dim points strictly inside the cell, uniformly distributed, reproducible from the seed */
  sampleInterior(count: number, seed: number): Float64Array;
}

/** Default slack of `contains`: a few hundred ulps at coordinates of order 1, so nodes written as decimals (1/3 ≈ 0.3333333333333333) count as inside. */
export const CONTAINMENT_TOLERANCE = 1e-12;

/** Margin kept from the boundary by `sampleInterior`, so sampled points are strictly interior (common practice, no source). */
const INTERIOR_MARGIN = 1e-9;

interface CellData {
  dim: 1 | 2 | 3;
  vertices: number[][];
  edges: number[][];
  faces: number[][];
  measure: number;
  inside: (p: ArrayLike<number>, tol: number) => boolean;
}

// Vertex order is counter-clockwise in 2D and bottom-then-top (each counter-clockwise seen from +ζ) for the
// hexahedron, so a multilinear map of correctly ordered physical vertices has det J > 0.
const DATA: Record<CellName, CellData> = {
  interval: {
    dim: 1,
    vertices: [[-1], [1]],
    edges: [[0, 1]],
    faces: [[0], [1]],
    measure: 2,
    inside: (p, t) => p[0] >= -1 - t && p[0] <= 1 + t
  },
  triangle: {
    dim: 2,
    vertices: [
      [0, 0],
      [1, 0],
      [0, 1]
    ],
    edges: [
      [0, 1],
      [1, 2],
      [2, 0]
    ],
    faces: [
      [0, 1],
      [1, 2],
      [2, 0]
    ],
    measure: 0.5,
    inside: (p, t) => p[0] >= -t && p[1] >= -t && p[0] + p[1] <= 1 + t
  },
  quadrilateral: {
    dim: 2,
    vertices: [
      [-1, -1],
      [1, -1],
      [1, 1],
      [-1, 1]
    ],
    edges: [
      [0, 1],
      [1, 2],
      [2, 3],
      [3, 0]
    ],
    faces: [
      [0, 1],
      [1, 2],
      [2, 3],
      [3, 0]
    ],
    measure: 4,
    inside: (p, t) => Math.abs(p[0]) <= 1 + t && Math.abs(p[1]) <= 1 + t
  },
  tetrahedron: {
    dim: 3,
    vertices: [
      [0, 0, 0],
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1]
    ],
    edges: [
      [0, 1],
      [1, 2],
      [2, 0],
      [0, 3],
      [1, 3],
      [2, 3]
    ],
    faces: [
      [0, 2, 1],
      [0, 1, 3],
      [1, 2, 3],
      [0, 3, 2]
    ],
    measure: 1 / 6,
    inside: (p, t) => p[0] >= -t && p[1] >= -t && p[2] >= -t && p[0] + p[1] + p[2] <= 1 + t
  },
  hexahedron: {
    dim: 3,
    vertices: [
      [-1, -1, -1],
      [1, -1, -1],
      [1, 1, -1],
      [-1, 1, -1],
      [-1, -1, 1],
      [1, -1, 1],
      [1, 1, 1],
      [-1, 1, 1]
    ],
    edges: [
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
    ],
    faces: [
      [0, 3, 2, 1],
      [0, 1, 5, 4],
      [1, 2, 6, 5],
      [2, 3, 7, 6],
      [3, 0, 4, 7],
      [4, 5, 6, 7]
    ],
    measure: 8,
    inside: (p, t) => Math.abs(p[0]) <= 1 + t && Math.abs(p[1]) <= 1 + t && Math.abs(p[2]) <= 1 + t
  }
};

/** The reference cell of the given name (a fresh object: callers may keep or change it freely). */
export function referenceCell(name: CellName): ReferenceCell {
  if (!Object.hasOwn(DATA, name))
    throw new KernelError(
      'invalid-input',
      `unknown cell '${String(name)}'; expected one of ${CELL_NAMES.join(', ')}`
    );
  return buildCell(name);
}

const SHARED = new Map<CellName, ReferenceCell>();

/**
 * The kernel's own shared copy of a reference cell, built once: read it, never change it (the public
 * `referenceCell` hands out fresh objects that callers may change).
 */
export function sharedCell(name: CellName): ReferenceCell {
  let c = SHARED.get(name);
  if (!c) {
    c = referenceCell(name);
    SHARED.set(name, c);
  }
  return c;
}

function buildCell(name: CellName): ReferenceCell {
  const d = DATA[name];
  const dim = d.dim;
  const vertices = Float64Array.from(d.vertices.flat());
  const facets = d.faces.map((f) => f.slice());
  const margin = INTERIOR_MARGIN;
  return {
    name,
    dim,
    vertices,
    vertexCount: d.vertices.length,
    edges: d.edges.map((e) => e.slice()),
    faces: d.faces.map((f) => f.slice()),
    facets,
    measure: d.measure,
    contains(point: ArrayLike<number>, tol = CONTAINMENT_TOLERANCE): boolean {
      if (point.length !== dim) {
        throw new KernelError(
          'invalid-input',
          `point has ${point.length} coordinates; the ${name} has ${dim}`
        );
      }
      return d.inside(point, tol);
    },
    sampleInterior(count: number, seed: number): Float64Array {
      requireInput(
        Number.isInteger(count) && count >= 0,
        () => `sample count must be a non-negative integer, got ${count}`
      );
      requireInput(Number.isFinite(seed), () => `seed must be a finite number, got ${seed}`);
      const rnd = seededUniform(seed);
      const out = new Float64Array(count * dim);
      const p = new Float64Array(dim);
      for (let i = 0; i < count;) {
        for (let k = 0; k < dim; k++) p[k] = rnd();
        if (name === 'interval' || name === 'quadrilateral' || name === 'hexahedron') {
          for (let k = 0; k < dim; k++) p[k] = 2 * p[k] - 1;
        } else if (name === 'triangle' && p[0] + p[1] > 1) {
          // reflect the upper half of the unit square onto the triangle: uniform on the triangle
          p[0] = 1 - p[0];
          p[1] = 1 - p[1];
        }
        // tetrahedron: rejection from the unit cube (acceptance 1/6); every cell: keep a margin from the boundary
        if (d.inside(p, -margin)) {
          out.set(p, i * dim);
          i++;
        }
      }
      return out;
    }
  };
}

/** Outward unit normal of facet `f` of the reference cell, in natural coordinates. */
export function facetNormal(cell: ReferenceCell, f: number): Float64Array {
  const dim = cell.dim;
  const facet = cell.facets[f];
  if (!facet)
    throw new KernelError(
      'invalid-input',
      `the ${cell.name} has no facet ${f} (it has ${cell.facets.length})`
    );
  const v = (i: number, k: number) => cell.vertices[facet[i] * dim + k];
  const n = new Float64Array(dim);
  if (dim === 1) {
    n[0] = v(0, 0) > 0 ? 1 : -1;
    return n;
  }
  if (dim === 2) {
    n[0] = v(1, 1) - v(0, 1);
    n[1] = -(v(1, 0) - v(0, 0));
  } else {
    const a = [v(1, 0) - v(0, 0), v(1, 1) - v(0, 1), v(1, 2) - v(0, 2)];
    const b = [v(2, 0) - v(0, 0), v(2, 1) - v(0, 1), v(2, 2) - v(0, 2)];
    n[0] = a[1] * b[2] - a[2] * b[1];
    n[1] = a[2] * b[0] - a[0] * b[2];
    n[2] = a[0] * b[1] - a[1] * b[0];
  }
  // orient away from the centroid
  let s = 0;
  let len = 0;
  for (let k = 0; k < dim; k++) {
    let cf = 0;
    let cc = 0;
    for (const i of facet) cf += cell.vertices[i * dim + k] / facet.length;
    for (let i = 0; i < cell.vertexCount; i++) cc += cell.vertices[i * dim + k] / cell.vertexCount;
    s += (cf - cc) * n[k];
    len += n[k] * n[k];
  }
  const scale = (s < 0 ? -1 : 1) / Math.sqrt(len);
  for (let k = 0; k < dim; k++) n[k] *= scale;
  return n;
}
