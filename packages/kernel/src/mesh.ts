import { type CellName, CONTAINMENT_TOLERANCE, referenceCell } from './cells';
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
  interval: referenceCell('interval'),
  quadrilateral: referenceCell('quadrilateral'),
  hexahedron: referenceCell('hexahedron')
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
  xi: ArrayLike<number>
): number {
  const ref = MACRO_REF[cell];
  const dim = ref.dim;
  const J = new Float64Array(dim * dim);
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

function checkPatch(p: MacroPatch): void {
  const nc = CORNERS[p.cell];
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
    const det = multilinearJacobian(p.cell, p.vertices, ids, [0, 0, 0]);
    if (!(det > 0)) {
      throw new KernelError(
        'macro-cell-inverted',
        `patch '${p.name}': cell ${c} has det J = ${det} at its centre; its vertices must follow the reference ${p.cell}'s order`,
        { cell: c }
      );
    }
  }
}

/** Merges points closer than `tol` (max-norm) through a hash grid of cell 4·tol; ids in first-seen order. */
class NodeMerger {
  readonly coords: number[] = [];
  private readonly buckets = new Map<number, number[]>();
  private readonly size: number;
  constructor(
    private readonly dim: number,
    private readonly tol: number
  ) {
    this.size = 4 * tol;
  }

  get count(): number {
    return this.coords.length / this.dim;
  }

  /** Hash of integer cell coordinates; collisions only cost a distance test. */
  private static key(i: number, j: number, k: number): number {
    return (Math.imul(i | 0, 73856093) ^ Math.imul(j | 0, 19349663) ^ Math.imul(k | 0, 83492791)) >>> 0;
  }

  add(p: ArrayLike<number>): number {
    const { dim, tol, size } = this;
    const c0 = Math.floor(p[0] / size);
    const c1 = dim > 1 ? Math.floor(p[1] / size) : 0;
    const c2 = dim > 2 ? Math.floor(p[2] / size) : 0;
    const r1 = dim > 1 ? 1 : 0;
    const r2 = dim > 2 ? 1 : 0;
    for (let a = -1; a <= 1; a++)
      for (let b = -r1; b <= r1; b++)
        for (let c = -r2; c <= r2; c++) {
          const list = this.buckets.get(NodeMerger.key(c0 + a, c1 + b, c2 + c));
          if (!list) continue;
          for (const id of list) {
            let close = true;
            for (let k = 0; k < dim; k++) if (Math.abs(this.coords[id * dim + k] - p[k]) > tol) close = false;
            if (close) return id;
          }
        }
    const id = this.count;
    for (let k = 0; k < dim; k++) this.coords.push(p[k]);
    const key = NodeMerger.key(c0, c1, c2);
    const list = this.buckets.get(key);
    if (list) list.push(id);
    else this.buckets.set(key, [id]);
    return id;
  }
}

/** A sub-cell of the mesh: its corner vertex ids (for facet identity) and the map of reference points into it. */
interface SubCell {
  macro: number;
  corners: number[];
  map: (xi: ArrayLike<number>, out: Float64Array) => void;
  minEdge: number;
}

function distance(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let k = 0; k < a.length; k++) s += (a[k] - b[k]) ** 2;
  return Math.sqrt(s);
}

function simplexVolume(p: Float64Array[]): number {
  if (p.length === 3)
    return ((p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[2][0] - p[0][0]) * (p[1][1] - p[0][1])) / 2;
  const a = [0, 1, 2].map((k) => p[1][k] - p[0][k]);
  const b = [0, 1, 2].map((k) => p[2][k] - p[0][k]);
  const c = [0, 1, 2].map((k) => p[3][k] - p[0][k]);
  return (
    (a[0] * (b[1] * c[2] - b[2] * c[1]) -
      a[1] * (b[0] * c[2] - b[2] * c[0]) +
      a[2] * (b[0] * c[1] - b[1] * c[0])) /
    6
  );
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
  return {
    macro,
    corners: ids,
    minEdge,
    map: (xi, out) => {
      for (let k = 0; k < dim; k++) {
        let x = pts[0][k];
        for (let v = 1; v < pts.length; v++) x += xi[v - 1] * (pts[v][k] - pts[0][k]);
        out[k] = x;
      }
    }
  };
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
  const out: SubCell[] = [];
  for (let c = 0; c < macro.cellCount; c++) {
    const ids = Array.from(macro.cells.subarray(c * nc, c * nc + nc));
    if (cell === macro.cell) {
      const n = new Float64Array(nc);
      let minEdge = Infinity;
      for (const [a, b] of MACRO_REF[macro.cell].edges)
        minEdge = Math.min(minEdge, distance(point(ids[a]), point(ids[b])));
      out.push({
        macro: c,
        corners: ids,
        minEdge,
        map: (xi, o) => {
          multilinear(macro.cell, xi, n);
          for (let k = 0; k < dim; k++) {
            let x = 0;
            for (let v = 0; v < nc; v++) x += n[v] * V[ids[v] * dim + k];
            o[k] = x;
          }
        }
      });
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
  const ref = referenceCell(cell);
  const dim = ref.dim;
  const nn = referenceNodes.length / dim;
  return ref.facets.map((f) => {
    const on: number[] = [];
    for (let i = 0; i < nn; i++) {
      const p = referenceNodes.subarray(i * dim, i * dim + dim);
      if (onFacet(ref.vertices, dim, f, p)) on.push(i);
    }
    return on;
  });
}

function onFacet(verts: Float64Array, dim: number, f: number[], p: ArrayLike<number>): boolean {
  const v = (i: number, k: number) => verts[f[i] * dim + k];
  const tol = CONTAINMENT_TOLERANCE;
  if (dim === 1) return Math.abs(p[0] - v(0, 0)) <= tol;
  if (dim === 2) {
    // distance to the line through the facet's two vertices
    const tx = v(1, 0) - v(0, 0);
    const ty = v(1, 1) - v(0, 1);
    return Math.abs((p[0] - v(0, 0)) * ty - (p[1] - v(0, 1)) * tx) / Math.hypot(tx, ty) <= tol;
  }
  const a = [v(1, 0) - v(0, 0), v(1, 1) - v(0, 1), v(1, 2) - v(0, 2)];
  const b = [v(2, 0) - v(0, 0), v(2, 1) - v(0, 1), v(2, 2) - v(0, 2)];
  const n = [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
  const d = (p[0] - v(0, 0)) * n[0] + (p[1] - v(0, 1)) * n[1] + (p[2] - v(0, 2)) * n[2];
  return Math.abs(d) / Math.hypot(n[0], n[1], n[2]) <= tol;
}

/**
 * Maps the element's own reference nodes through every macro cell (multilinear map, or affine maps of
 * its simplex split for triangles and tetrahedra) and merges coincident nodes, so a mesh of any node
 * layout is conforming.
 */
export function macroPatchMesh(referenceNodes: Float64Array, cell: CellName, macro: MacroPatch): Mesh {
  const ref = referenceCell(cell);
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
  const merger = new NodeMerger(dim, MERGE_RELATIVE_TOLERANCE * minEdge);
  const elements = new Int32Array(subs.length * nn);
  const macroCell = new Int32Array(subs.length);
  const x = new Float64Array(dim);
  subs.forEach((s, e) => {
    macroCell[e] = s.macro;
    for (let i = 0; i < nn; i++) {
      s.map(referenceNodes.subarray(i * dim, i * dim + dim), x);
      elements[e * nn + i] = merger.add(x);
    }
  });
  // boundary: facets whose corner vertices appear on one element only
  const seen = new Map<string, number>();
  const keys: string[] = [];
  subs.forEach((s) => {
    for (const f of ref.facets) {
      const key = f
        .map((v) => s.corners[v])
        .sort((a, b) => a - b)
        .join(',');
      keys.push(key);
      seen.set(key, (seen.get(key) ?? 0) + 1);
    }
  });
  const nf = ref.facets.length;
  const onFacets = facetNodes(referenceNodes, cell);
  const facets: number[] = [];
  const bnodes = new Set<number>();
  keys.forEach((key, t) => {
    if (seen.get(key) !== 1) return;
    const e = Math.floor(t / nf);
    const f = t % nf;
    facets.push(e, f);
    for (const i of onFacets[f]) bnodes.add(elements[e * nn + i]);
  });
  return {
    dim,
    cell,
    nodeCount: merger.count,
    coords: Float64Array.from(merger.coords),
    elementNodes: nn,
    elementCount: subs.length,
    elements,
    macroCell,
    boundary: {
      nodes: Int32Array.from([...bnodes].sort((a, b) => a - b)),
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
    for (const [a, b] of MACRO_REF[macro.cell].edges) {
      const ia = macro.cells[c * nc + a];
      const ib = macro.cells[c * nc + b];
      minEdge = Math.min(
        minEdge,
        distance(
          macro.vertices.subarray(ia * dim, ia * dim + dim),
          macro.vertices.subarray(ib * dim, ib * dim + dim)
        )
      );
    }
  const merger = new NodeMerger(dim, (MERGE_RELATIVE_TOLERANCE * minEdge) / n);
  const cells: number[] = [];
  const shape = new Float64Array(nc);
  const xi = new Float64Array(dim);
  const x = new Float64Array(dim);
  const side = n + 1;
  const gridCount = side ** dim;
  for (let c = 0; c < macro.cellCount; c++) {
    const ids = new Int32Array(gridCount);
    for (let g = 0; g < gridCount; g++) {
      let rest = g;
      for (let k = 0; k < dim; k++) {
        xi[k] = -1 + (2 * (rest % side)) / n;
        rest = Math.floor(rest / side);
      }
      multilinear(macro.cell, xi, shape);
      for (let k = 0; k < dim; k++) {
        let s = 0;
        for (let v = 0; v < nc; v++) s += shape[v] * macro.vertices[macro.cells[c * nc + v] * dim + k];
        x[k] = s;
      }
      ids[g] = merger.add(x);
    }
    cells.push(...gridCells(dim, n).map((v) => ids[v]));
  }
  return {
    ...macro,
    name: `${macro.name}-${n}`,
    vertices: Float64Array.from(merger.coords),
    vertexCount: merger.count,
    cells: Int32Array.from(cells),
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
  const ref = referenceCell(cell);
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
