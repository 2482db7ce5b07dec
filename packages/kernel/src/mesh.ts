import { type CellName, CONTAINMENT_TOLERANCE, sharedCell } from './cells';
import type { Material } from './elasticity';
import { KernelError, requireFinite, requireInput } from './errors';
import { seededUniform } from './random';

export type MacroCellName = 'interval' | 'quadrilateral' | 'hexahedron';

/** A coarse patch of macro cells (straight or multilinear), from which element meshes of any node layout are made. */
export interface MacroPatch {
  name: string;
  cell: MacroCellName;
  dim: 1 | 2 | 3;
  /** vertexCount × dim */
  vertices: Float64Array;
  vertexCount: number;
  /** cellCount × (2 | 4 | 8), in the vertex order of the reference cell */
  cells: Int32Array;
  cellCount: number;
  /** where the geometry comes from */
  source: string;
  /** the problem's material, thickness or area where the source gives them */
  material?: Material;
  thickness?: number;
  area?: number;
  /** published reference results of the problem, with `referenceNote` saying where they come from */
  reference?: Record<string, number>;
  referenceNote?: string;
}

export interface MeshBoundary {
  /** ascending ids of the nodes on the boundary */
  nodes: Int32Array;
  /** facetCount × 2: element, local facet number of its reference cell */
  facets: Int32Array;
  facetCount: number;
}

export interface Mesh {
  dim: number;
  cell: CellName;
  nodeCount: number;
  /** nodeCount × dim */
  coords: Float64Array;
  elementNodes: number;
  elementCount: number;
  /** elementCount × elementNodes, in the order of the element's reference nodes */
  elements: Int32Array;
  /** the macro cell each element lies in */
  macroCell: Int32Array;
  boundary: MeshBoundary;
}

/** Coincident nodes merge within this fraction of the shortest sub-cell edge: far above rounding, far below any node spacing. */
export const MERGE_RELATIVE_TOLERANCE = 1e-8;

/**
 * Largest allowed node perturbation of structured meshes, as a fraction of the cell size: below it every
 * quadrilateral stays strictly convex (a vertex can move at most h/(2√2) toward the opposite diagonal, which moves
 * at most as much toward it); hexahedra are checked by macroPatchMesh and by the elements' own det J.
 */
export const MAX_PERTURBATION = 0.25;

const CORNERS: Record<MacroCellName, number> = { interval: 2, quadrilateral: 4, hexahedron: 8 };
const DIM: Record<MacroCellName, 1 | 2 | 3> = { interval: 1, quadrilateral: 2, hexahedron: 3 };

// reference vertices and edges of the macro cells (constant data)
const MACRO_REF = {
  interval: sharedCell('interval'),
  quadrilateral: sharedCell('quadrilateral'),
  hexahedron: sharedCell('hexahedron')
} as const;

/** Multilinear shape functions of the macro cell's vertices at ξ: N_v = Π_k (1 + ξ_vk ξ_k)/2. */
function multilinear(cell: MacroCellName, xi: ArrayLike<number>, out: Float64Array): void {
  const ref = MACRO_REF[cell];
  const dim = ref.dim;
  for (let v = 0; v < ref.vertexCount; v++) {
    let s = 1;
    for (let k = 0; k < dim; k++) s *= (1 + ref.vertices[v * dim + k] * xi[k]) / 2;
    out[v] = s;
  }
}

/** det J of the multilinear map of the cell with vertex ids `ids` at natural point ξ. */
function multilinearJacobian(
  cell: MacroCellName,
  verts: Float64Array,
  ids: ArrayLike<number>,
  xi: ArrayLike<number>,
  J = new Float64Array(9)
): number {
  const ref = MACRO_REF[cell];
  const dim = ref.dim;
  J.fill(0);
  for (let a = 0; a < ref.vertexCount; a++) {
    for (let m = 0; m < dim; m++) {
      // ∂N_a/∂ξ_m
      let d = ref.vertices[a * dim + m] / 2;
      for (let k = 0; k < dim; k++) if (k !== m) d *= (1 + ref.vertices[a * dim + k] * xi[k]) / 2;
      for (let k = 0; k < dim; k++) J[k * dim + m] += verts[ids[a] * dim + k] * d;
    }
  }
  if (dim === 1) return J[0];
  if (dim === 2) return J[0] * J[3] - J[1] * J[2];
  return (
    J[0] * (J[4] * J[8] - J[5] * J[7]) -
    J[1] * (J[3] * J[8] - J[5] * J[6]) +
    J[2] * (J[3] * J[7] - J[4] * J[6])
  );
}

/** A macro patch from plain lists, checked: every cell is oriented like its reference cell (det J > 0 at its centre). */
export function definePatch(
  name: string,
  cell: MacroCellName,
  vertices: number[][],
  cells: number[][],
  source: string,
  extra: Partial<Pick<MacroPatch, 'material' | 'thickness' | 'area' | 'reference' | 'referenceNote'>> = {}
): MacroPatch {
  const dim = DIM[cell];
  requireInput(
    dim !== undefined,
    () => `macro cells are interval, quadrilateral or hexahedron, not '${String(cell)}'`
  );
  const nc = CORNERS[cell];
  vertices.forEach((v, i) =>
    requireInput(
      v.length === dim,
      () => `patch '${name}': vertex ${i} has ${v.length} coordinates, not ${dim}`
    )
  );
  cells.forEach((c, i) => {
    requireInput(
      c.length === nc,
      () => `patch '${name}': cell ${i} has ${c.length} vertices; a ${cell} has ${nc}`
    );
    c.forEach((v) =>
      requireInput(
        Number.isInteger(v) && v >= 0 && v < vertices.length,
        () => `patch '${name}': cell ${i} refers to vertex ${v}`
      )
    );
  });
  const patch: MacroPatch = {
    name,
    cell,
    dim,
    vertices: Float64Array.from(vertices.flat()),
    vertexCount: vertices.length,
    cells: Int32Array.from(cells.flat()),
    cellCount: cells.length,
    source,
    ...extra
  };
  checkPatch(patch);
  return patch;
}

const CENTRE = [0, 0, 0] as const;

function checkPatch(p: MacroPatch): void {
  const nc = CORNERS[p.cell];
  const J = new Float64Array(9);
  requireInput(
    nc !== undefined,
    () => `macro cells are interval, quadrilateral or hexahedron, not '${String(p.cell)}'`
  );
  requireInput(
    p.vertices.length === p.vertexCount * p.dim,
    () => `patch '${p.name}': vertices hold ${p.vertices.length} values, not ${p.vertexCount} × ${p.dim}`
  );
  requireInput(
    p.cells.length === p.cellCount * nc,
    () => `patch '${p.name}': cells hold ${p.cells.length} ids, not ${p.cellCount} × ${nc}`
  );
  requireFinite(p.vertices, `patch '${p.name}' vertices`);
  for (let c = 0; c < p.cellCount; c++) {
    const ids = p.cells.subarray(c * nc, c * nc + nc);
    for (let v = 0; v < nc; v++) {
      if (!(ids[v] >= 0 && ids[v] < p.vertexCount)) {
        throw new KernelError('invalid-input', `patch '${p.name}': cell ${c} refers to vertex ${ids[v]}`, {
          cell: c
        });
      }
    }
    // the centre decides orientation; elements check det J at their own quadrature points
    const det = multilinearJacobian(p.cell, p.vertices, ids, CENTRE, J);
    if (!(det > 0)) {
      throw new KernelError(
        'macro-cell-inverted',
        `patch '${p.name}': cell ${c} has det J = ${det} at its centre; its vertices must follow the reference ${p.cell}'s order`,
        { cell: c }
      );
    }
  }
}

/** Open-addressing tables start at this many slots and double past half full. */
const MIN_TABLE = 64;

/** Mixes integer coordinates into a table slot; collisions only cost a probe. */
function mix(i: number, j: number, k: number): number {
  return (Math.imul(i | 0, 73856093) ^ Math.imul(j | 0, 19349663) ^ Math.imul(k | 0, 83492791)) >>> 0;
}

/**
 * Merges points closer than `tol` (max-norm), ids in first-seen order. Points fall in cubic cells of edge
 * 4·tol with integer coordinates, kept in an open-addressing table (each cell lists its points in insertion
 * order); a query visits only the neighbouring cells that lie within tol of the point along each axis.
 */
class NodeMerger {
  count = 0;
  coords: Float64Array;
  private readonly size: number;
  /** the integer cell of each point (3 per point) and the next point in the same cell */
  private cell: Float64Array;
  private nextInCell: Int32Array;
  /** table slot → first and last point of its cell, −1 when empty */
  private first: Int32Array;
  private lastOf: Int32Array;
  private used = 0;

  constructor(
    private readonly dim: number,
    private readonly tol: number,
    expected = 64
  ) {
    this.size = 4 * tol;
    const cap = Math.max(16, expected);
    this.coords = new Float64Array(cap * dim);
    this.cell = new Float64Array(cap * 3);
    this.nextInCell = new Int32Array(cap);
    let slots = MIN_TABLE;
    while (slots < 2 * cap) slots *= 2;
    this.first = new Int32Array(slots).fill(-1);
    this.lastOf = new Int32Array(slots).fill(-1);
  }

  /** The integer cell coordinate of x (0 for every point when the tolerance is zero or the quotient is not finite). */
  private cellOf(x: number): number {
    const c = Math.floor(x / this.size);
    return Number.isFinite(c) ? c : 0;
  }

  /** The slot of cell (i, j, k), or of the empty slot where it would go. */
  private slot(i: number, j: number, k: number): number {
    const mask = this.first.length - 1;
    let h = mix(i, j, k) & mask;
    for (;;) {
      const id = this.first[h];
      if (id < 0) return h;
      const c = this.cell;
      if (c[3 * id] === i && c[3 * id + 1] === j && c[3 * id + 2] === k) return h;
      h = (h + 1) & mask;
    }
  }

  private grow(): void {
    const cap = this.nextInCell.length * 2;
    const coords = new Float64Array(cap * this.dim);
    coords.set(this.coords);
    this.coords = coords;
    const cell = new Float64Array(cap * 3);
    cell.set(this.cell);
    this.cell = cell;
    const next = new Int32Array(cap);
    next.set(this.nextInCell);
    this.nextInCell = next;
  }

  private rehash(): void {
    const oldFirst = this.first;
    const oldLast = this.lastOf;
    this.first = new Int32Array(oldFirst.length * 2).fill(-1);
    this.lastOf = new Int32Array(oldFirst.length * 2).fill(-1);
    const c = this.cell;
    for (let h = 0; h < oldFirst.length; h++) {
      const id = oldFirst[h];
      if (id < 0) continue;
      const s = this.slot(c[3 * id], c[3 * id + 1], c[3 * id + 2]);
      this.first[s] = id;
      this.lastOf[s] = oldLast[h];
    }
  }

  /** The range of cells along one axis that can hold a point within tol of x (widened by the rounding of x ± tol). */
  private range(x: number, c: number, out: Int32Array, at: number): void {
    const margin = 2 * this.tol + 4 * Number.EPSILON * Math.abs(x);
    out[at] = Math.max(c - 1, this.cellOf(x - margin)) - c;
    out[at + 1] = Math.min(c + 1, this.cellOf(x + margin)) - c;
  }

  private readonly span = new Int32Array(6);

  /** The id of the point within tol of p (the first found), or a new id. Reads p[offset … offset + dim). */
  add(p: ArrayLike<number>, offset = 0): number {
    const { dim, tol, span } = this;
    const x0 = p[offset];
    const x1 = dim > 1 ? p[offset + 1] : 0;
    const x2 = dim > 2 ? p[offset + 2] : 0;
    const c0 = this.cellOf(x0);
    const c1 = dim > 1 ? this.cellOf(x1) : 0;
    const c2 = dim > 2 ? this.cellOf(x2) : 0;
    this.range(x0, c0, span, 0);
    if (dim > 1) this.range(x1, c1, span, 2);
    else span[2] = span[3] = 0;
    if (dim > 2) this.range(x2, c2, span, 4);
    else span[4] = span[5] = 0;
    const X = this.coords;
    for (let a = span[0]; a <= span[1]; a++)
      for (let b = span[2]; b <= span[3]; b++)
        for (let c = span[4]; c <= span[5]; c++) {
          for (let id = this.first[this.slot(c0 + a, c1 + b, c2 + c)]; id >= 0; id = this.nextInCell[id]) {
            const q = id * dim;
            if (
              !(Math.abs(X[q] - x0) > tol) &&
              (dim < 2 || !(Math.abs(X[q + 1] - x1) > tol)) &&
              (dim < 3 || !(Math.abs(X[q + 2] - x2) > tol))
            )
              return id;
          }
        }
    const id = this.count++;
    if (id === this.nextInCell.length) this.grow();
    for (let k = 0; k < dim; k++) this.coords[id * dim + k] = p[offset + k];
    this.cell[3 * id] = c0;
    this.cell[3 * id + 1] = c1;
    this.cell[3 * id + 2] = c2;
    this.nextInCell[id] = -1;
    const s = this.slot(c0, c1, c2);
    if (this.first[s] < 0) {
      this.first[s] = id;
      this.used++;
    } else this.nextInCell[this.lastOf[s]] = id;
    this.lastOf[s] = id;
    if (2 * this.used > this.first.length) this.rehash();
    return id;
  }

  /** nodeCount × dim coordinates of the merged points. */
  points(): Float64Array {
    return this.coords.slice(0, this.count * this.dim);
  }
}

/**
 * Counts facets given by their sorted corner ids (1 to 4 of them) in an open-addressing table:
 * `add` returns the facet's entry, `uses` how often each entry was added.
 */
class FacetTable {
  private keys: Int32Array;
  private entryOf: Int32Array;
  readonly uses: Int32Array;
  private count = 0;
  constructor(
    private readonly width: number,
    capacity: number
  ) {
    let slots = MIN_TABLE;
    while (slots < 2 * capacity) slots *= 2;
    this.keys = new Int32Array(capacity * width);
    this.entryOf = new Int32Array(slots).fill(-1);
    this.uses = new Int32Array(capacity);
  }

  add(key: Int32Array): number {
    const w = this.width;
    const mask = this.entryOf.length - 1;
    let h =
      (mix(key[0], w > 1 ? key[1] : 0, w > 2 ? key[2] : 0) ^ Math.imul(w > 3 ? key[3] : 0, 2654435761)) &
      mask;
    for (;;) {
      const e = this.entryOf[h];
      if (e < 0) break;
      let same = true;
      for (let t = 0; t < w; t++) if (this.keys[e * w + t] !== key[t]) same = false;
      if (same) {
        this.uses[e]++;
        return e;
      }
      h = (h + 1) & mask;
    }
    const e = this.count++;
    for (let t = 0; t < w; t++) this.keys[e * w + t] = key[t];
    this.entryOf[h] = e;
    this.uses[e] = 1;
    return e;
  }
}

/**
 * A sub-cell of the mesh: its corner vertex ids (for facet identity) and how reference points map into it:
 * the macro cell's own multilinear map (pts null) or the affine map of a simplex with corner coordinates pts.
 */
interface SubCell {
  macro: number;
  corners: number[];
  /** simplex corner coordinates, corners × dim */
  pts: Float64Array | null;
  minEdge: number;
}

function distance(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let k = 0; k < a.length; k++) s += (a[k] - b[k]) ** 2;
  return Math.sqrt(s);
}

/** The distance between vertices ia and ib of V (vertices × dim). */
function vertexDistance(V: Float64Array, dim: number, ia: number, ib: number): number {
  let s = 0;
  for (let k = 0; k < dim; k++) s += (V[ia * dim + k] - V[ib * dim + k]) ** 2;
  return Math.sqrt(s);
}

function simplexVolume(p: Float64Array[]): number {
  if (p.length === 3)
    return ((p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[2][0] - p[0][0]) * (p[1][1] - p[0][1])) / 2;
  const a0 = p[1][0] - p[0][0];
  const a1 = p[1][1] - p[0][1];
  const a2 = p[1][2] - p[0][2];
  const b0 = p[2][0] - p[0][0];
  const b1 = p[2][1] - p[0][1];
  const b2 = p[2][2] - p[0][2];
  const c0 = p[3][0] - p[0][0];
  const c1 = p[3][1] - p[0][1];
  const c2 = p[3][2] - p[0][2];
  return (a0 * (b1 * c2 - b2 * c1) - a1 * (b0 * c2 - b2 * c0) + a2 * (b0 * c1 - b1 * c0)) / 6;
}

function simplexSubCell(macro: number, ids: number[], pts: Float64Array[]): SubCell {
  if (simplexVolume(pts) < 0) {
    [ids[1], ids[2]] = [ids[2], ids[1]];
    [pts[1], pts[2]] = [pts[2], pts[1]];
  }
  const dim = pts[0].length;
  let minEdge = Infinity;
  for (let a = 0; a < pts.length; a++)
    for (let b = a + 1; b < pts.length; b++) minEdge = Math.min(minEdge, distance(pts[a], pts[b]));
  const flat = new Float64Array(pts.length * dim);
  pts.forEach((p, v) => flat.set(p, v * dim));
  return { macro, corners: ids, pts: flat, minEdge };
}

// hexahedron corner bits (x + 2y + 4z) → local vertex (the map is its own inverse)
const HEX_LOCAL = [0, 1, 3, 2, 4, 5, 7, 6];
const AXIS_ORDERS = [
  [1, 2, 4],
  [1, 4, 2],
  [2, 1, 4],
  [2, 4, 1],
  [4, 1, 2],
  [4, 2, 1]
];

/** Sub-cells of the macro patch for elements of `cell`: the macro cells themselves, or their simplex splits. */
function subCells(cell: CellName, macro: MacroPatch): SubCell[] {
  const nc = CORNERS[macro.cell];
  const dim = macro.dim;
  const V = macro.vertices;
  const point = (id: number) => V.slice(id * dim, id * dim + dim);
  const edges = MACRO_REF[macro.cell].edges;
  const out: SubCell[] = [];
  for (let c = 0; c < macro.cellCount; c++) {
    const ids = Array.from(macro.cells.subarray(c * nc, c * nc + nc));
    if (cell === macro.cell) {
      let minEdge = Infinity;
      for (const [a, b] of edges) minEdge = Math.min(minEdge, vertexDistance(V, dim, ids[a], ids[b]));
      out.push({ macro: c, corners: ids, pts: null, minEdge });
    } else if (cell === 'triangle' && macro.cell === 'quadrilateral') {
      // diagonal through the vertex of smallest id: neighbours agree on shared edges, and the split is deterministic
      let p = 0;
      for (let v = 1; v < 4; v++) if (ids[v] < ids[p]) p = v;
      const q = [0, 1, 2, 3].map((k) => ids[(p + k) % 4]);
      for (const tri of [
        [q[0], q[1], q[2]],
        [q[0], q[2], q[3]]
      ]) {
        out.push(simplexSubCell(c, tri, tri.map(point)));
      }
    } else if (cell === 'tetrahedron' && macro.cell === 'hexahedron') {
      out.push(...hexToTets(c, ids, point, macro.vertexCount));
    } else {
      throw new KernelError(
        'invalid-input',
        `elements on the ${cell} cannot be laid on a patch of ${macro.cell} cells (use quadrilateral patches for triangles, hexahedral ones for tetrahedra)`
      );
    }
  }
  return out;
}

/**
 * Splits a hexahedron into tetrahedra whose face diagonals run through each face's vertex of smallest id,
 * so neighbouring cells agree: the 6-tetrahedron Kuhn split when those diagonals meet at two opposite
 * corners (always so on lexicographically numbered grids), otherwise 12 tetrahedra around the centroid.
 */
function hexToTets(
  c: number,
  ids: number[],
  point: (id: number) => Float64Array,
  vertexCount: number
): SubCell[] {
  const faces = MACRO_REF.hexahedron.faces;
  const diag = faces.map((f) => {
    let p = 0;
    for (let v = 1; v < 4; v++) if (ids[f[v]] < ids[f[p]]) p = v;
    return [f[p], f[(p + 2) % 4]];
  });
  for (let corner = 0; corner < 8; corner++) {
    const cl = HEX_LOCAL[corner];
    const ol = HEX_LOCAL[corner ^ 7];
    const fits = faces.every((f, k) => (f.includes(cl) ? diag[k].includes(cl) : diag[k].includes(ol)));
    if (!fits) continue;
    return AXIS_ORDERS.map(([a, b]) => {
      const local = [corner, corner ^ a, corner ^ a ^ b, corner ^ 7].map((bits) => HEX_LOCAL[bits]);
      const tet = local.map((l) => ids[l]);
      return simplexSubCell(c, tet, tet.map(point));
    });
  }
  const centroid = new Float64Array(3);
  for (const id of ids) for (let k = 0; k < 3; k++) centroid[k] += point(id)[k] / 8;
  const cid = vertexCount + c;
  const tets: SubCell[] = [];
  faces.forEach((f, k) => {
    const p = f.indexOf(diag[k][0]);
    const q = [0, 1, 2, 3].map((t) => ids[f[(p + t) % 4]]);
    for (const tri of [
      [q[0], q[1], q[2]],
      [q[0], q[2], q[3]]
    ]) {
      const tet = [...tri, cid];
      tets.push(simplexSubCell(c, tet, [...tri.map(point), centroid]));
    }
  });
  return tets;
}

/** Local node indices of the reference nodes lying on each facet of the cell. */
export function facetNodes(referenceNodes: Float64Array, cell: CellName): number[][] {
  const ref = sharedCell(cell);
  const dim = ref.dim;
  const nn = referenceNodes.length / dim;
  return ref.facets.map((f) => {
    const on: number[] = [];
    for (let i = 0; i < nn; i++) if (onFacet(ref.vertices, dim, f, referenceNodes, i * dim)) on.push(i);
    return on;
  });
}

function onFacet(verts: Float64Array, dim: number, f: number[], P: ArrayLike<number>, o: number): boolean {
  const v = (i: number, k: number) => verts[f[i] * dim + k];
  const tol = CONTAINMENT_TOLERANCE;
  if (dim === 1) return Math.abs(P[o] - v(0, 0)) <= tol;
  if (dim === 2) {
    // distance to the line through the facet's two vertices
    const tx = v(1, 0) - v(0, 0);
    const ty = v(1, 1) - v(0, 1);
    return Math.abs((P[o] - v(0, 0)) * ty - (P[o + 1] - v(0, 1)) * tx) / Math.hypot(tx, ty) <= tol;
  }
  const a0 = v(1, 0) - v(0, 0);
  const a1 = v(1, 1) - v(0, 1);
  const a2 = v(1, 2) - v(0, 2);
  const b0 = v(2, 0) - v(0, 0);
  const b1 = v(2, 1) - v(0, 1);
  const b2 = v(2, 2) - v(0, 2);
  const n0 = a1 * b2 - a2 * b1;
  const n1 = a2 * b0 - a0 * b2;
  const n2 = a0 * b1 - a1 * b0;
  const d = (P[o] - v(0, 0)) * n0 + (P[o + 1] - v(0, 1)) * n1 + (P[o + 2] - v(0, 2)) * n2;
  return Math.abs(d) / Math.hypot(n0, n1, n2) <= tol;
}

/**
 * Maps the element's own reference nodes through every macro cell (multilinear map, or affine maps of
 * its simplex split for triangles and tetrahedra) and merges coincident nodes, so a mesh of any node
 * layout is conforming.
 */
export function macroPatchMesh(referenceNodes: Float64Array, cell: CellName, macro: MacroPatch): Mesh {
  const ref = sharedCell(cell);
  const dim = ref.dim;
  checkPatch(macro);
  requireInput(
    macro.dim === dim,
    () => `the ${cell} is ${dim}-dimensional, the patch '${macro.name}' is ${macro.dim}-dimensional`
  );
  requireInput(
    referenceNodes.length > 0 && referenceNodes.length % dim === 0,
    () => `reference nodes must be a non-empty nodes × ${dim} array`
  );
  requireFinite(referenceNodes, 'reference nodes');
  const nn = referenceNodes.length / dim;
  for (let i = 0; i < nn; i++) {
    const p = referenceNodes.subarray(i * dim, i * dim + dim);
    if (!ref.contains(p)) {
      throw new KernelError(
        'invalid-input',
        `reference node ${i} (${Array.from(p).join(', ')}) lies outside the ${cell}`,
        { node: i }
      );
    }
  }
  const subs = subCells(cell, macro);
  const minEdge = subs.reduce((m, s) => Math.min(m, s.minEdge), Infinity);
  const merger = new NodeMerger(dim, MERGE_RELATIVE_TOLERANCE * minEdge, subs.length * nn);
  const elements = new Int32Array(subs.length * nn);
  const macroCell = new Int32Array(subs.length);
  // the macro cell's multilinear shape functions at every reference node, once
  const nc = CORNERS[macro.cell];
  const shapes = new Float64Array(nn * nc);
  if (cell === macro.cell)
    for (let i = 0; i < nn; i++)
      multilinear(
        macro.cell,
        referenceNodes.subarray(i * dim, i * dim + dim),
        shapes.subarray(i * nc, i * nc + nc)
      );
  const V = macro.vertices;
  const X = referenceNodes;
  const x = new Float64Array(dim);
  for (let e = 0; e < subs.length; e++) {
    const s = subs[e];
    macroCell[e] = s.macro;
    const ids = s.corners;
    const P = s.pts;
    for (let i = 0; i < nn; i++) {
      if (P === null) {
        // x = Σ_v N_v(ξ_i) X_v
        for (let k = 0; k < dim; k++) {
          let v = 0;
          for (let c = 0; c < nc; c++) v += shapes[i * nc + c] * V[ids[c] * dim + k];
          x[k] = v;
        }
      } else {
        // x = P_0 + Σ_v ξ_v (P_v − P_0)
        for (let k = 0; k < dim; k++) {
          let v = P[k];
          for (let c = 1; c <= dim; c++) v += X[i * dim + c - 1] * (P[c * dim + k] - P[k]);
          x[k] = v;
        }
      }
      elements[e * nn + i] = merger.add(x);
    }
  }
  // boundary: facets whose corner vertices appear on one element only
  const nf = ref.facets.length;
  const width = ref.facets[0].length;
  const table = new FacetTable(width, subs.length * nf);
  const entry = new Int32Array(subs.length * nf);
  const key = new Int32Array(width);
  for (let e = 0; e < subs.length; e++) {
    const corners = subs[e].corners;
    for (let f = 0; f < nf; f++) {
      const fv = ref.facets[f];
      for (let t = 0; t < width; t++) {
        // insertion into the sorted key
        const id = corners[fv[t]];
        let r = t;
        while (r > 0 && key[r - 1] > id) {
          key[r] = key[r - 1];
          r--;
        }
        key[r] = id;
      }
      entry[e * nf + f] = table.add(key);
    }
  }
  const onFacets = facetNodes(referenceNodes, cell);
  const facets: number[] = [];
  const onBoundary = new Uint8Array(merger.count);
  for (let t = 0; t < entry.length; t++) {
    if (table.uses[entry[t]] !== 1) continue;
    const e = Math.floor(t / nf);
    const f = t % nf;
    facets.push(e, f);
    for (const i of onFacets[f]) onBoundary[elements[e * nn + i]] = 1;
  }
  let nb = 0;
  for (let i = 0; i < merger.count; i++) nb += onBoundary[i];
  const bnodes = new Int32Array(nb);
  for (let i = 0, w = 0; i < merger.count; i++) if (onBoundary[i]) bnodes[w++] = i;
  return {
    dim,
    cell,
    nodeCount: merger.count,
    coords: merger.points(),
    elementNodes: nn,
    elementCount: subs.length,
    elements,
    macroCell,
    boundary: {
      nodes: bnodes,
      facets: Int32Array.from(facets),
      facetCount: facets.length / 2
    }
  };
}

/** Divides every macro cell into divisions^dim cells through its multilinear map (the vertices of neighbours merge). */
export function refinePatch(macro: MacroPatch, divisions: number): MacroPatch {
  checkPatch(macro);
  requireInput(
    Number.isInteger(divisions) && divisions >= 1,
    () => `divisions must be a positive integer, got ${divisions}`
  );
  const n = divisions;
  const dim = macro.dim;
  const nc = CORNERS[macro.cell];
  let minEdge = Infinity;
  for (let c = 0; c < macro.cellCount; c++)
    for (const [a, b] of MACRO_REF[macro.cell].edges)
      minEdge = Math.min(
        minEdge,
        vertexDistance(macro.vertices, dim, macro.cells[c * nc + a], macro.cells[c * nc + b])
      );
  const side = n + 1;
  const gridCount = side ** dim;
  const merger = new NodeMerger(dim, (MERGE_RELATIVE_TOLERANCE * minEdge) / n, macro.cellCount * gridCount);
  const local = gridCells(dim, n);
  const cells = new Int32Array(macro.cellCount * local.length);
  // the multilinear shape functions at the grid points of the reference cell, once
  const shapes = new Float64Array(gridCount * nc);
  const xi = new Float64Array(dim);
  for (let g = 0; g < gridCount; g++) {
    let rest = g;
    for (let k = 0; k < dim; k++) {
      xi[k] = -1 + (2 * (rest % side)) / n;
      rest = Math.floor(rest / side);
    }
    multilinear(macro.cell, xi, shapes.subarray(g * nc, g * nc + nc));
  }
  const x = new Float64Array(dim);
  const ids = new Int32Array(gridCount);
  for (let c = 0; c < macro.cellCount; c++) {
    for (let g = 0; g < gridCount; g++) {
      for (let k = 0; k < dim; k++) {
        let s = 0;
        for (let v = 0; v < nc; v++)
          s += shapes[g * nc + v] * macro.vertices[macro.cells[c * nc + v] * dim + k];
        x[k] = s;
      }
      ids[g] = merger.add(x);
    }
    for (let t = 0; t < local.length; t++) cells[c * local.length + t] = ids[local[t]];
  }
  return {
    ...macro,
    name: `${macro.name}-${n}`,
    vertices: merger.points(),
    vertexCount: merger.count,
    cells,
    cellCount: cells.length / nc,
    source: n === 1 ? macro.source : `${macro.source}; each cell divided ${Array(dim).fill(n).join(' × ')}`
  };
}

/** Cells of a lexicographic grid of (n + 1)^dim points, in reference vertex order. */
function gridCells(dim: number, n: number): number[] {
  const s = n + 1;
  const out: number[] = [];
  if (dim === 1) for (let i = 0; i < n; i++) out.push(i, i + 1);
  else if (dim === 2) {
    for (let j = 0; j < n; j++)
      for (let i = 0; i < n; i++) out.push(i + s * j, i + 1 + s * j, i + 1 + s * (j + 1), i + s * (j + 1));
  } else {
    for (let k = 0; k < n; k++)
      for (let j = 0; j < n; j++)
        for (let i = 0; i < n; i++) {
          const b = i + s * j + s * s * k;
          const t = b + s * s;
          out.push(b, b + 1, b + 1 + s, b + s, t, t + 1, t + 1 + s, t + s);
        }
  }
  return out;
}

export interface StructuredOptions {
  /** each vertex moves by up to perturbation × h per coordinate (boundary vertices along the boundary only); 0 ≤ p < 0.25 */
  perturbation?: number;
  seed?: number;
}

/** The unit interval, square or cube divided into divisions^dim cells, vertices numbered lexicographically, seeded bounded perturbation. */
export function structuredPatch(dim: 1 | 2 | 3, divisions: number, opts: StructuredOptions = {}): MacroPatch {
  requireInput(dim === 1 || dim === 2 || dim === 3, () => `dimension must be 1, 2 or 3, got ${dim}`);
  requireInput(
    Number.isInteger(divisions) && divisions >= 1,
    () => `divisions must be a positive integer, got ${divisions}`
  );
  const p = opts.perturbation ?? 0;
  requireInput(
    Number.isFinite(p) && p >= 0 && p < MAX_PERTURBATION,
    () => `perturbation must lie in [0, ${MAX_PERTURBATION}), got ${p}`
  );
  const n = divisions;
  const h = 1 / n;
  const s = n + 1;
  const count = s ** dim;
  const vertices = new Float64Array(count * dim);
  const rnd = seededUniform(opts.seed ?? 0);
  for (let g = 0; g < count; g++) {
    let rest = g;
    for (let k = 0; k < dim; k++) {
      const i = rest % s;
      rest = Math.floor(rest / s);
      const d = p > 0 ? (2 * rnd() - 1) * p * h : 0;
      vertices[g * dim + k] = i * h + (i > 0 && i < n ? d : 0);
    }
  }
  const cell: MacroCellName = dim === 1 ? 'interval' : dim === 2 ? 'quadrilateral' : 'hexahedron';
  const cells = Int32Array.from(gridCells(dim, n));
  const patch: MacroPatch = {
    name: `unit-${cell}-${n}`,
    cell,
    dim,
    vertices,
    vertexCount: count,
    cells,
    cellCount: cells.length / CORNERS[cell],
    source: `unit ${dim === 1 ? 'interval' : dim === 2 ? 'square' : 'cube'}, ${n} divisions per side${p > 0 ? `, perturbed by up to ${p} h (seed ${opts.seed ?? 0})` : ''} (common practice, no source)`
  };
  checkPatch(patch);
  return patch;
}

/** A structured mesh of the unit interval, square or cube for elements of `cell` (its vertices, or the given reference nodes). */
export function structuredMesh(
  cell: CellName,
  divisions: number,
  opts: StructuredOptions & { referenceNodes?: Float64Array } = {}
): Mesh {
  const ref = sharedCell(cell);
  return macroPatchMesh(opts.referenceNodes ?? ref.vertices, cell, structuredPatch(ref.dim, divisions, opts));
}

/** Ids of the mesh nodes whose position satisfies the predicate. */
export function nodesWhere(
  mesh: Pick<Mesh, 'dim' | 'nodeCount' | 'coords'>,
  predicate: (x: Float64Array) => boolean
): Int32Array {
  const out: number[] = [];
  for (let i = 0; i < mesh.nodeCount; i++)
    if (predicate(mesh.coords.subarray(i * mesh.dim, (i + 1) * mesh.dim))) out.push(i);
  return Int32Array.from(out);
}

/** Node coordinates of one element (elementNodes × dim). */
export function elementCoords(mesh: Mesh, e: number, out?: Float64Array): Float64Array {
  const { dim, elementNodes: nn } = mesh;
  const x = out ?? new Float64Array(nn * dim);
  for (let i = 0; i < nn; i++) {
    const id = mesh.elements[e * nn + i];
    for (let k = 0; k < dim; k++) x[i * dim + k] = mesh.coords[id * dim + k];
  }
  return x;
}
