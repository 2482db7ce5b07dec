/** An assembled mesh of the element under verification: element matrices, dof map, solve and sampling helpers. */
import {
  type ElementOptions,
  type FacetQuadrature,
  type Mesh,
  type SparseSymmetric,
  type StrainKind,
  type Tabulation,
  assemble,
  assembleVector,
  elementCoords,
  elementDofMap,
  jacobian,
  tractionVector
} from '@isoledger/kernel';
import { type BatchOptions, type ElementModel, elementDofs, stiffnessBatch } from './model';

export interface MeshSystem {
  mesh: Mesh;
  ndof: number;
  edof: number;
  /** elements × edof */
  dofMap: Int32Array;
  /** elements × nodes × dim, the node coordinates of every element */
  coords: Float64Array;
  /** elements × edof² */
  Ke: Float64Array;
  K: SparseSymmetric;
}

/** Node coordinates of every element of the mesh, element-major. */
export function allElementCoords(mesh: Mesh): Float64Array {
  const per = mesh.elementNodes * mesh.dim;
  const out = new Float64Array(mesh.elementCount * per);
  for (let e = 0; e < mesh.elementCount; e++) elementCoords(mesh, e, out.subarray(e * per, (e + 1) * per));
  return out;
}

/** K = Σ_e Aeᵀ K_e Ae of the element on the mesh (one batch of element matrices). */
export async function meshSystem(
  model: ElementModel,
  ruleTab: Tabulation,
  mesh: Mesh,
  opts: BatchOptions = {}
): Promise<MeshSystem> {
  const edof = elementDofs(model);
  const ndof = mesh.nodeCount * model.dofsPerNode;
  const dofMap = elementDofMap(mesh.elements, model.dofsPerNode);
  const coords = allElementCoords(mesh);
  const Ke = await stiffnessBatch(model, ruleTab, coords, mesh.elementCount, opts);
  const K = assemble(ndof, dofMap, Ke, edof);
  return { mesh, ndof, edof, dofMap, coords, Ke, K };
}

/** Element values u_e = Ae u (elements × edof). */
export function gather(sys: MeshSystem, u: Float64Array): Float64Array {
  const out = new Float64Array(sys.dofMap.length);
  for (let p = 0; p < out.length; p++) out[p] = u[sys.dofMap[p]];
  return out;
}

/** The dofs of the given nodes (each node's dofs in order). */
export function nodeDofs(nodes: ArrayLike<number>, dofsPerNode: number): Int32Array {
  const out = new Int32Array(nodes.length * dofsPerNode);
  for (let i = 0; i < nodes.length; i++)
    for (let c = 0; c < dofsPerNode; c++) out[i * dofsPerNode + c] = nodes[i] * dofsPerNode + c;
  return out;
}

/**
 * f = Σ over the given boundary facets of ∫_Γ Nᵀ t dΓ for a built-in kind: `traction(x, n, out)`
 * at the facet rule points (tabulated once per reference facet).
 */
export function facetLoads(
  kind: StrainKind,
  sys: MeshSystem,
  facets: { element: number; facet: number }[],
  facetTabs: Tabulation[],
  rules: FacetQuadrature[],
  traction: (x: Float64Array, n: Float64Array, out: Float64Array) => void,
  options: ElementOptions
): Float64Array {
  const per = sys.mesh.elementNodes * sys.mesh.dim;
  const fe = new Float64Array(sys.edof);
  const f = new Float64Array(sys.ndof);
  for (const { element, facet } of facets) {
    tractionVector(
      kind,
      facetTabs[facet],
      rules[facet],
      sys.coords.subarray(element * per, (element + 1) * per),
      traction,
      { ...options, element },
      fe
    );
    assembleVector(sys.ndof, sys.dofMap.subarray(element * sys.edof, (element + 1) * sys.edof), fe, f);
  }
  return f;
}

/** Boundary facets of the mesh as { element, facet } pairs, optionally only those whose nodes all satisfy `on`. */
export function boundaryFacets(
  mesh: Mesh,
  facetNodeLists: number[][],
  on?: (x: Float64Array) => boolean
): { element: number; facet: number }[] {
  const out: { element: number; facet: number }[] = [];
  const { dim, elementNodes: nn } = mesh;
  for (let t = 0; t < mesh.boundary.facetCount; t++) {
    const element = mesh.boundary.facets[2 * t];
    const facet = mesh.boundary.facets[2 * t + 1];
    if (on) {
      const all = facetNodeLists[facet].every((i) => {
        const id = mesh.elements[element * nn + i];
        return on(mesh.coords.subarray(id * dim, (id + 1) * dim));
      });
      if (!all) continue;
    }
    out.push({ element, facet });
  }
  return out;
}

/** Physical positions of the points of `tab` in every element: elements × points × dim. */
export function pointPositions(
  tab: Tabulation,
  coords: Float64Array,
  elements: number,
  dim: number
): Float64Array {
  const { nodes, points, N } = tab;
  const out = new Float64Array(elements * points * dim);
  for (let e = 0; e < elements; e++) {
    for (let q = 0; q < points; q++) {
      for (let k = 0; k < dim; k++) {
        let s = 0;
        for (let i = 0; i < nodes; i++) s += N[q * nodes + i] * coords[(e * nodes + i) * dim + k];
        out[(e * points + q) * dim + k] = s;
      }
    }
  }
  return out;
}

/** Positions (elements × points × dim) and det J (elements × points) at the points of `tab`, without derivatives. */
export function pointGeometry(
  tab: Tabulation,
  coords: Float64Array,
  elements: number,
  dim: number
): { x: Float64Array; detJ: Float64Array } {
  const P = tab.points;
  const per = tab.nodes * dim;
  const x = pointPositions(tab, coords, elements, dim);
  const detJ = new Float64Array(elements * P);
  const J = new Float64Array(dim * dim);
  for (let e = 0; e < elements; e++) {
    const c = coords.subarray(e * per, (e + 1) * per);
    for (let q = 0; q < P; q++) detJ[e * P + q] = jacobian(tab, c, q, J);
  }
  return { x, detJ };
}
