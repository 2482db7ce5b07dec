import { KernelError, requireInput } from './errors';
import {
  type Material,
  type StrainKind,
  checkMaterial,
  dofsPerNode,
  elasticityMatrix,
  kindDimension,
  lameConstants,
  strainComponents
} from './elasticity';
import type { FacetQuadrature } from './quadrature';

/** Shape values and natural derivatives at points, as tabulated by the sandbox. */
export interface Tabulation {
  nodes: number;
  dim: number;
  points: number;
  /** points × nodes */
  N: Float64Array;
  /** points × nodes × dim: ∂N_i/∂ξ_k at point q is dN[(q * nodes + i) * dim + k] */
  dN: Float64Array;
}

/** Per point geometry: det J, physical derivatives ∂N_i/∂x_k and the physical position. */
export interface PointGeometry {
  detJ: Float64Array;
  /** points × nodes × dim */
  dNdx: Float64Array;
  /** points × dim */
  x: Float64Array;
}

export interface ElementOptions {
  /** plane kinds: the thickness t (default 1) */
  thickness?: number;
  /** bar: the cross-section area A (default 1) */
  area?: number;
  /** index of the element, named in errors */
  element?: number;
}

/** A load given per point (points × dofs per node, row-major) or as a function of the physical position. */
export type BodyLoad = Float64Array | ((x: Float64Array, out: Float64Array) => void);
/** A traction given per point (points × dofs per node) or as a function of the position and the outward unit normal. */
export type SurfaceLoad = Float64Array | ((x: Float64Array, normal: Float64Array, out: Float64Array) => void);

// Scratch for the hot loops. It holds nothing between calls: every entry is written before it is read
// in the same call, and no kernel function that uses it calls back into user code.
let scratch = new Float64Array(1024);
const jacobianScratch = new Float64Array(9);
function scratchOf(size: number): Float64Array {
  if (scratch.length < size) scratch = new Float64Array(Math.max(size, 2 * scratch.length));
  return scratch;
}

function checkTabulation(tab: Tabulation, dim: number, what: string): void {
  requireInput(tab !== null && typeof tab === 'object', () => `${what}: the tabulation is missing`);
  const { nodes, points } = tab;
  requireInput(
    Number.isInteger(nodes) && nodes > 0,
    () => `${what}: tabulation.nodes must be a positive integer, got ${nodes}`
  );
  requireInput(
    Number.isInteger(points) && points >= 0,
    () => `${what}: tabulation.points must be a non-negative integer, got ${points}`
  );
  requireInput(
    tab.dim === dim,
    () => `${what}: the tabulation is ${tab.dim}-dimensional, the strain kind needs ${dim}`
  );
  requireInput(
    tab.N.length === points * nodes,
    `${what}: tabulation.N has ${tab.N.length} values; ${points} points × ${nodes} nodes need ${points * nodes}`
  );
  requireInput(
    tab.dN.length === points * nodes * dim,
    `${what}: tabulation.dN has ${tab.dN.length} values; ${points} points × ${nodes} nodes × ${dim} need ${points * nodes * dim}`
  );
}

function checkCoords(coords: Float64Array, nodes: number, dim: number, what: string): void {
  requireInput(
    coords.length === nodes * dim,
    `${what}: coords has ${coords.length} values; ${nodes} nodes × ${dim} coordinates need ${nodes * dim}`
  );
}

function jacobianError(detJ: number, q: number, element: number | undefined): KernelError {
  const where = element === undefined ? 'the element' : `element ${element}`;
  return new KernelError(
    'jacobian-not-positive',
    `det J = ${detJ} at quadrature point ${q} of ${where}: the element is inverted, degenerate or its node order is wrong`,
    { element, point: q, detJ }
  );
}

/**
 * J = Σ_i x_i ⊗ ∂N_i/∂ξ at point q (J[k][m] = ∂x_k/∂ξ_m, dim × dim row-major into `J`); returns det J.
 * With `dNdx` given, also writes ∂N_i/∂x_k = Σ_m ∂N_i/∂ξ_m (J⁻¹)_mk (nodes × dim) and throws when det J ≤ 0.
 */
export function jacobian(
  tab: Tabulation,
  coords: Float64Array,
  q: number,
  J: Float64Array,
  dNdx?: Float64Array,
  element?: number
): number {
  const { nodes, dim, dN } = tab;
  const base = q * nodes * dim;
  if (dim === 2) {
    let j00 = 0;
    let j01 = 0;
    let j10 = 0;
    let j11 = 0;
    for (let i = 0; i < nodes; i++) {
      const a = dN[base + 2 * i];
      const b = dN[base + 2 * i + 1];
      const x = coords[2 * i];
      const y = coords[2 * i + 1];
      j00 += x * a;
      j01 += x * b;
      j10 += y * a;
      j11 += y * b;
    }
    J[0] = j00;
    J[1] = j01;
    J[2] = j10;
    J[3] = j11;
    const det = j00 * j11 - j01 * j10;
    if (dNdx) {
      if (!(det > 0)) throw jacobianError(det, q, element);
      const i00 = j11 / det;
      const i01 = -j01 / det;
      const i10 = -j10 / det;
      const i11 = j00 / det;
      for (let i = 0; i < nodes; i++) {
        const a = dN[base + 2 * i];
        const b = dN[base + 2 * i + 1];
        dNdx[2 * i] = a * i00 + b * i10;
        dNdx[2 * i + 1] = a * i01 + b * i11;
      }
    }
    return det;
  }
  if (dim === 3) {
    let j00 = 0,
      j01 = 0,
      j02 = 0,
      j10 = 0,
      j11 = 0,
      j12 = 0,
      j20 = 0,
      j21 = 0,
      j22 = 0;
    for (let i = 0; i < nodes; i++) {
      const o = base + 3 * i;
      const a = dN[o];
      const b = dN[o + 1];
      const c = dN[o + 2];
      const x = coords[3 * i];
      const y = coords[3 * i + 1];
      const z = coords[3 * i + 2];
      j00 += x * a;
      j01 += x * b;
      j02 += x * c;
      j10 += y * a;
      j11 += y * b;
      j12 += y * c;
      j20 += z * a;
      j21 += z * b;
      j22 += z * c;
    }
    J[0] = j00;
    J[1] = j01;
    J[2] = j02;
    J[3] = j10;
    J[4] = j11;
    J[5] = j12;
    J[6] = j20;
    J[7] = j21;
    J[8] = j22;
    const c00 = j11 * j22 - j12 * j21;
    const c01 = j12 * j20 - j10 * j22;
    const c02 = j10 * j21 - j11 * j20;
    const det = j00 * c00 + j01 * c01 + j02 * c02;
    if (dNdx) {
      if (!(det > 0)) throw jacobianError(det, q, element);
      const r = 1 / det;
      // inverse = adjugate / det
      const i00 = c00 * r,
        i01 = (j02 * j21 - j01 * j22) * r,
        i02 = (j01 * j12 - j02 * j11) * r;
      const i10 = c01 * r,
        i11 = (j00 * j22 - j02 * j20) * r,
        i12 = (j02 * j10 - j00 * j12) * r;
      const i20 = c02 * r,
        i21 = (j01 * j20 - j00 * j21) * r,
        i22 = (j00 * j11 - j01 * j10) * r;
      for (let i = 0; i < nodes; i++) {
        const o = base + 3 * i;
        const a = dN[o];
        const b = dN[o + 1];
        const c = dN[o + 2];
        dNdx[3 * i] = a * i00 + b * i10 + c * i20;
        dNdx[3 * i + 1] = a * i01 + b * i11 + c * i21;
        dNdx[3 * i + 2] = a * i02 + b * i12 + c * i22;
      }
    }
    return det;
  }
  if (dim === 1) {
    let j = 0;
    for (let i = 0; i < nodes; i++) j += coords[i] * dN[base + i];
    J[0] = j;
    if (dNdx) {
      if (!(j > 0)) throw jacobianError(j, q, element);
      for (let i = 0; i < nodes; i++) dNdx[i] = dN[base + i] / j;
    }
    return j;
  }
  throw new KernelError('invalid-input', `tabulation dimension must be 1, 2 or 3, got ${dim}`);
}

/** Physical position x = Σ_i N_i x_i at point q into out (dim). */
function positionAt(tab: Tabulation, coords: Float64Array, q: number, out: Float64Array, offset = 0): void {
  const { nodes, dim, N } = tab;
  for (let k = 0; k < dim; k++) {
    let s = 0;
    for (let i = 0; i < nodes; i++) s += N[q * nodes + i] * coords[i * dim + k];
    out[offset + k] = s;
  }
}

/** det J, ∂N/∂x and x at every point of the tabulation; throws KernelError naming element and point when det J ≤ 0. */
export function mapPoints(tab: Tabulation, coords: Float64Array, element?: number): PointGeometry {
  const dim = tab.dim;
  checkTabulation(tab, dim, 'mapPoints');
  checkCoords(coords, tab.nodes, dim, 'mapPoints');
  const { nodes, points } = tab;
  const detJ = new Float64Array(points);
  const dNdx = new Float64Array(points * nodes * dim);
  const x = new Float64Array(points * dim);
  const J = new Float64Array(dim * dim);
  for (let q = 0; q < points; q++) {
    detJ[q] = jacobian(tab, coords, q, J, dNdx.subarray(q * nodes * dim, (q + 1) * nodes * dim), element);
    positionAt(tab, coords, q, x, q * dim);
  }
  return { detJ, dNdx, x };
}

/** Integration factor beyond |J| w_q: thickness (plane), area (bar), 1 (solid); axisymmetric 2πr is applied per point. */
function kindFactor(kind: StrainKind, opts: ElementOptions | undefined): number {
  if (kind === 'plane-stress' || kind === 'plane-strain') {
    const t = opts?.thickness ?? 1;
    requireInput(Number.isFinite(t) && t > 0, () => `thickness must be a finite positive number, got ${t}`);
    return t;
  }
  if (kind === 'bar') {
    const a = opts?.area ?? 1;
    requireInput(Number.isFinite(a) && a > 0, () => `area must be a finite positive number, got ${a}`);
    return a;
  }
  return 1;
}

function radiusError(r: number, q: number, element: number | undefined): KernelError {
  const where = element === undefined ? 'the element' : `element ${element}`;
  return new KernelError(
    'radius-not-positive',
    `radius r = ${r} at quadrature point ${q} of ${where}: axisymmetric elements need r > 0`,
    {
      element,
      point: q,
      r
    }
  );
}

/**
 * B (ncomp × ndof, node-major columns: node × dofs + dof) at point q from physical derivatives dNdx (nodes × dim)
 * of that point, shape values N of that point (offset `nOffset`) and radius r (axisymmetric only).
 */
function fillB(
  kind: StrainKind,
  nodes: number,
  dNdx: Float64Array,
  dOffset: number,
  N: Float64Array,
  nOffset: number,
  r: number,
  B: Float64Array
): void {
  const ndof = nodes * dofsPerNode(kind);
  B.fill(0, 0, strainComponents(kind) * ndof);
  switch (kind) {
    case 'bar':
      for (let i = 0; i < nodes; i++) B[i] = dNdx[dOffset + i];
      return;
    case 'plane-stress':
    case 'plane-strain':
      for (let i = 0; i < nodes; i++) {
        const dx = dNdx[dOffset + 2 * i];
        const dy = dNdx[dOffset + 2 * i + 1];
        B[2 * i] = dx;
        B[ndof + 2 * i + 1] = dy;
        B[2 * ndof + 2 * i] = dy;
        B[2 * ndof + 2 * i + 1] = dx;
      }
      return;
    case 'axisymmetric':
      // εr = ∂u/∂r, εz = ∂w/∂z, εθ = u/r, γrz = ∂u/∂z + ∂w/∂r
      for (let i = 0; i < nodes; i++) {
        const dr = dNdx[dOffset + 2 * i];
        const dz = dNdx[dOffset + 2 * i + 1];
        B[2 * i] = dr;
        B[ndof + 2 * i + 1] = dz;
        B[2 * ndof + 2 * i] = N[nOffset + i] / r;
        B[3 * ndof + 2 * i] = dz;
        B[3 * ndof + 2 * i + 1] = dr;
      }
      return;
    case 'solid':
      // εx, εy, εz, γxy, γyz, γzx
      for (let i = 0; i < nodes; i++) {
        const dx = dNdx[dOffset + 3 * i];
        const dy = dNdx[dOffset + 3 * i + 1];
        const dz = dNdx[dOffset + 3 * i + 2];
        const c = 3 * i;
        B[c] = dx;
        B[ndof + c + 1] = dy;
        B[2 * ndof + c + 2] = dz;
        B[3 * ndof + c] = dy;
        B[3 * ndof + c + 1] = dx;
        B[4 * ndof + c + 1] = dz;
        B[4 * ndof + c + 2] = dy;
        B[5 * ndof + c] = dz;
        B[5 * ndof + c + 2] = dx;
      }
      return;
  }
}

/** B at point q (ncomp × ndof) from mapped geometry: the strain rows of the kind (axisymmetric: the N/r hoop row). */
export function strainDisplacement(
  kind: StrainKind,
  geom: PointGeometry,
  q: number,
  nodes: number,
  N: Float64Array,
  out: Float64Array
): Float64Array {
  const dim = kindDimension(kind);
  const ndof = nodes * dofsPerNode(kind);
  requireInput(
    out.length >= strainComponents(kind) * ndof,
    () => `out needs ${strainComponents(kind) * ndof} values, has ${out.length}`
  );
  requireInput(
    q >= 0 && q < geom.detJ.length,
    () => `point ${q} is not among the ${geom.detJ.length} mapped points`
  );
  const r = geom.x[q * dim];
  if (kind === 'axisymmetric' && !(r > 0)) throw radiusError(r, q, undefined);
  fillB(kind, nodes, geom.dNdx, q * nodes * dim, N, q * nodes, r, out);
  return out;
}

/** Mirrors the upper triangle of a row-major n × n matrix into the lower one (exact symmetry). */
function mirrorUpper(K: Float64Array, n: number): void {
  for (let r = 1; r < n; r++) for (let c = 0; c < r; c++) K[r * n + c] = K[c * n + r];
}

/** K = Σ_q Bᵀ D B |J| w_q (× thickness or area; × 2πr for axisymmetric), ndof × ndof row-major. */
export function elementStiffness(
  kind: StrainKind,
  tab: Tabulation,
  weights: Float64Array,
  coords: Float64Array,
  material: Material,
  opts?: ElementOptions,
  out?: Float64Array
): Float64Array {
  const dim = kindDimension(kind);
  checkTabulation(tab, dim, 'elementStiffness');
  checkCoords(coords, tab.nodes, dim, 'elementStiffness');
  requireInput(
    weights.length === tab.points,
    () => `weights has ${weights.length} values; the tabulation has ${tab.points} points`
  );
  checkMaterial(material);
  const nodes = tab.nodes;
  const dpn = dofsPerNode(kind);
  const ndof = nodes * dpn;
  const K = out ?? new Float64Array(ndof * ndof);
  requireInput(K.length === ndof * ndof, () => `out has ${K.length} values; K needs ${ndof} × ${ndof}`);
  K.fill(0);
  const factor = kindFactor(kind, opts);
  const element = opts?.element;
  const points = tab.points;
  if (kind === 'axisymmetric') {
    generalStiffness(kind, tab, weights, coords, elasticityMatrix(kind, material), factor, element, K);
    return K;
  }
  const w0 = jacobianScratch;
  const work = scratchOf(nodes * dim);
  if (kind === 'bar') {
    const E = material.E;
    for (let q = 0; q < points; q++) {
      const det = jacobian(tab, coords, q, w0, work, element);
      const w = weights[q] * det * factor * E;
      for (let a = 0; a < nodes; a++) {
        const wa = w * work[a];
        for (let b = a; b < nodes; b++) K[a * ndof + b] += wa * work[b];
      }
    }
    mirrorUpper(K, ndof);
    return K;
  }
  // isotropic plane and solid kinds: K_ab,ij = ∫ (λ ∂_i N_a ∂_j N_b + μ ∂_j N_a ∂_i N_b + μ δ_ij ∇N_a·∇N_b), which equals B_aᵀ D B_b
  const { lambda, mu } = lameConstants(kind, material);
  for (let q = 0; q < points; q++) {
    const det = jacobian(tab, coords, q, w0, work, element);
    const w = weights[q] * det * factor;
    const wl = w * lambda;
    const wm = w * mu;
    const wlm = wl + wm;
    if (dim === 2) {
      for (let a = 0; a < nodes; a++) {
        const ax = work[2 * a];
        const ay = work[2 * a + 1];
        const r0 = 2 * a * ndof;
        const r1 = r0 + ndof;
        for (let b = a; b < nodes; b++) {
          const bx = work[2 * b];
          const by = work[2 * b + 1];
          const dot = wm * (ax * bx + ay * by);
          const c = 2 * b;
          K[r0 + c] += wlm * ax * bx + dot;
          K[r0 + c + 1] += wl * ax * by + wm * ay * bx;
          K[r1 + c] += wl * ay * bx + wm * ax * by;
          K[r1 + c + 1] += wlm * ay * by + dot;
        }
      }
    } else {
      for (let a = 0; a < nodes; a++) {
        const ax = work[3 * a];
        const ay = work[3 * a + 1];
        const az = work[3 * a + 2];
        const r0 = 3 * a * ndof;
        const r1 = r0 + ndof;
        const r2 = r1 + ndof;
        for (let b = a; b < nodes; b++) {
          const bx = work[3 * b];
          const by = work[3 * b + 1];
          const bz = work[3 * b + 2];
          const dot = wm * (ax * bx + ay * by + az * bz);
          const c = 3 * b;
          K[r0 + c] += wlm * ax * bx + dot;
          K[r0 + c + 1] += wl * ax * by + wm * ay * bx;
          K[r0 + c + 2] += wl * ax * bz + wm * az * bx;
          K[r1 + c] += wl * ay * bx + wm * ax * by;
          K[r1 + c + 1] += wlm * ay * by + dot;
          K[r1 + c + 2] += wl * ay * bz + wm * az * by;
          K[r2 + c] += wl * az * bx + wm * ax * bz;
          K[r2 + c + 1] += wl * az * by + wm * ay * bz;
          K[r2 + c + 2] += wlm * az * bz + dot;
        }
      }
    }
  }
  mirrorUpper(K, ndof);
  return K;
}

/** The B-matrix path: K += Σ_q Bᵀ D B |J| w_q factor (× 2πr for axisymmetric). */
function generalStiffness(
  kind: StrainKind,
  tab: Tabulation,
  weights: Float64Array,
  coords: Float64Array,
  D: Float64Array,
  factor: number,
  element: number | undefined,
  K: Float64Array
): void {
  const { nodes, dim, points, N } = tab;
  const ncomp = strainComponents(kind);
  const ndof = nodes * dofsPerNode(kind);
  const work = scratchOf(nodes * dim + 2 * ncomp * ndof + dim);
  const dNdx = work.subarray(0, nodes * dim);
  const B = work.subarray(nodes * dim, nodes * dim + ncomp * ndof);
  const DB = work.subarray(nodes * dim + ncomp * ndof, nodes * dim + 2 * ncomp * ndof);
  const x = work.subarray(nodes * dim + 2 * ncomp * ndof, nodes * dim + 2 * ncomp * ndof + dim);
  const J = jacobianScratch;
  for (let q = 0; q < points; q++) {
    const det = jacobian(tab, coords, q, J, dNdx, element);
    positionAt(tab, coords, q, x);
    let w = weights[q] * det * factor;
    if (kind === 'axisymmetric') {
      if (!(x[0] > 0)) throw radiusError(x[0], q, element);
      w *= 2 * Math.PI * x[0];
    }
    fillB(kind, nodes, dNdx, 0, N, q * nodes, x[0], B);
    addBtDB(B, D, w, ncomp, ndof, DB, K);
  }
  mirrorUpper(K, ndof);
}

/** Upper triangle of K += w Bᵀ (D B); DB is scratch (ncomp × ndof). */
function addBtDB(
  B: Float64Array,
  D: Float64Array,
  w: number,
  ncomp: number,
  ndof: number,
  DB: Float64Array,
  K: Float64Array,
  bOffset = 0
): void {
  for (let i = 0; i < ncomp; i++) {
    for (let c = 0; c < ndof; c++) {
      let s = 0;
      for (let k = 0; k < ncomp; k++) s += D[i * ncomp + k] * B[bOffset + k * ndof + c];
      DB[i * ndof + c] = s * w;
    }
  }
  for (let k = 0; k < ncomp; k++) {
    const bk = bOffset + k * ndof;
    const dk = k * ndof;
    for (let r = 0; r < ndof; r++) {
      const brk = B[bk + r];
      if (brk === 0) continue;
      const row = r * ndof;
      for (let c = r; c < ndof; c++) K[row + c] += brk * DB[dk + c];
    }
  }
}

/** K = Σ_q Bqᵀ D Bq w_q with caller-evaluated Bq (points × ncomp × ndof), D (ncomp × ncomp) and weights w (already with det J etc.). */
export function stiffnessFromB(
  Bq: Float64Array,
  D: Float64Array,
  w: Float64Array,
  points: number,
  ncomp: number,
  ndof: number,
  out?: Float64Array
): Float64Array {
  requireInput(
    Number.isInteger(points) && points >= 0,
    () => `points must be a non-negative integer, got ${points}`
  );
  requireInput(Number.isInteger(ncomp) && ncomp > 0, () => `ncomp must be a positive integer, got ${ncomp}`);
  requireInput(Number.isInteger(ndof) && ndof > 0, () => `ndof must be a positive integer, got ${ndof}`);
  requireInput(
    Bq.length === points * ncomp * ndof,
    () => `B has ${Bq.length} values; ${points} × ${ncomp} × ${ndof} needed`
  );
  requireInput(D.length === ncomp * ncomp, () => `D has ${D.length} values; ${ncomp} × ${ncomp} needed`);
  requireInput(w.length === points, () => `w has ${w.length} values; ${points} points given`);
  const K = out ?? new Float64Array(ndof * ndof);
  requireInput(K.length === ndof * ndof, () => `out has ${K.length} values; K needs ${ndof} × ${ndof}`);
  K.fill(0);
  const DB = scratchOf(ncomp * ndof);
  for (let q = 0; q < points; q++) addBtDB(Bq, D, w[q], ncomp, ndof, DB, K, q * ncomp * ndof);
  mirrorUpper(K, ndof);
  return K;
}

/** Consistent body-force vector f = ∫ Nᵀ b dΩ (× thickness or area; × 2πr axisymmetric), ndof long. */
export function bodyForceVector(
  kind: StrainKind,
  tab: Tabulation,
  weights: Float64Array,
  coords: Float64Array,
  b: BodyLoad,
  opts?: ElementOptions,
  out?: Float64Array
): Float64Array {
  const dim = kindDimension(kind);
  checkTabulation(tab, dim, 'bodyForceVector');
  checkCoords(coords, tab.nodes, dim, 'bodyForceVector');
  requireInput(
    weights.length === tab.points,
    () => `weights has ${weights.length} values; the tabulation has ${tab.points} points`
  );
  const { nodes, points, N } = tab;
  const dpn = dofsPerNode(kind);
  if (typeof b !== 'function') {
    requireInput(
      b.length === points * dpn,
      () => `body force has ${b.length} values; ${points} points × ${dpn} components needed`
    );
  }
  const f = out ?? new Float64Array(nodes * dpn);
  requireInput(f.length === nodes * dpn, () => `out has ${f.length} values; f needs ${nodes * dpn}`);
  f.fill(0);
  const factor = kindFactor(kind, opts);
  const J = new Float64Array(dim * dim);
  const x = new Float64Array(dim);
  const bq = new Float64Array(dpn);
  for (let q = 0; q < points; q++) {
    const det = jacobian(tab, coords, q, J);
    if (!(det > 0)) throw jacobianError(det, q, opts?.element);
    positionAt(tab, coords, q, x);
    let w = weights[q] * det * factor;
    if (kind === 'axisymmetric') {
      if (!(x[0] > 0)) throw radiusError(x[0], q, opts?.element);
      w *= 2 * Math.PI * x[0];
    }
    if (typeof b === 'function') b(x.slice(), bq);
    else for (let c = 0; c < dpn; c++) bq[c] = b[q * dpn + c];
    for (let i = 0; i < nodes; i++) {
      const ni = N[q * nodes + i] * w;
      for (let c = 0; c < dpn; c++) f[i * dpn + c] += ni * bq[c];
    }
  }
  return f;
}

/**
 * Consistent traction vector of one facet, f = ∫_Γ Nᵀ t dΓ, with dΓ = det J |J⁻ᵀ n̂| dΓ̂ (Nanson's relation),
 * × thickness (plane), × area (bar end), × 2πr (axisymmetric). `tab` is the element's tabulation at `facet.points`.
 */
export function tractionVector(
  kind: StrainKind,
  tab: Tabulation,
  facet: Pick<FacetQuadrature, 'weights' | 'normal'>,
  coords: Float64Array,
  t: SurfaceLoad,
  opts?: ElementOptions,
  out?: Float64Array
): Float64Array {
  const dim = kindDimension(kind);
  checkTabulation(tab, dim, 'tractionVector');
  checkCoords(coords, tab.nodes, dim, 'tractionVector');
  const { nodes, points, N } = tab;
  requireInput(
    facet.weights.length === points,
    () => `facet weights have ${facet.weights.length} values; the tabulation has ${points} points`
  );
  requireInput(
    facet.normal.length === dim,
    () => `facet normal has ${facet.normal.length} components; ${dim} needed`
  );
  const dpn = dofsPerNode(kind);
  if (typeof t !== 'function') {
    requireInput(
      t.length === points * dpn,
      () => `traction has ${t.length} values; ${points} points × ${dpn} components needed`
    );
  }
  const f = out ?? new Float64Array(nodes * dpn);
  requireInput(f.length === nodes * dpn, () => `out has ${f.length} values; f needs ${nodes * dpn}`);
  f.fill(0);
  const factor = kindFactor(kind, opts);
  const J = new Float64Array(dim * dim);
  const dNdx = new Float64Array(nodes * dim);
  const x = new Float64Array(dim);
  const n = new Float64Array(dim);
  const tq = new Float64Array(dpn);
  const Jinv = new Float64Array(dim * dim);
  for (let q = 0; q < points; q++) {
    const det = jacobian(tab, coords, q, J, dNdx, opts?.element);
    invert(J, dim, det, Jinv);
    // J⁻ᵀ n̂: component k = Σ_m (J⁻¹)_mk n̂_m
    let len = 0;
    for (let k = 0; k < dim; k++) {
      let s = 0;
      for (let m = 0; m < dim; m++) s += Jinv[m * dim + k] * facet.normal[m];
      n[k] = s;
      len += s * s;
    }
    len = Math.sqrt(len);
    for (let k = 0; k < dim; k++) n[k] /= len;
    positionAt(tab, coords, q, x);
    let w = facet.weights[q] * det * len * factor;
    if (kind === 'axisymmetric') {
      if (!(x[0] > 0)) throw radiusError(x[0], q, opts?.element);
      w *= 2 * Math.PI * x[0];
    }
    if (typeof t === 'function') t(x.slice(), n.slice(), tq);
    else for (let c = 0; c < dpn; c++) tq[c] = t[q * dpn + c];
    for (let i = 0; i < nodes; i++) {
      const ni = N[q * nodes + i] * w;
      for (let c = 0; c < dpn; c++) f[i * dpn + c] += ni * tq[c];
    }
  }
  return f;
}

function invert(J: Float64Array, dim: number, det: number, out: Float64Array): void {
  if (dim === 1) out[0] = 1 / J[0];
  else if (dim === 2) {
    out[0] = J[3] / det;
    out[1] = -J[1] / det;
    out[2] = -J[2] / det;
    out[3] = J[0] / det;
  } else {
    const [a, b, c, d, e, f, g, h, i] = J;
    out[0] = (e * i - f * h) / det;
    out[1] = (c * h - b * i) / det;
    out[2] = (b * f - c * e) / det;
    out[3] = (f * g - d * i) / det;
    out[4] = (a * i - c * g) / det;
    out[5] = (c * d - a * f) / det;
    out[6] = (d * h - e * g) / det;
    out[7] = (b * g - a * h) / det;
    out[8] = (a * e - b * d) / det;
  }
}

/** Strains ε = B u at every point of the tabulation (points × ncomp), from nodal displacements u (ndof). */
export function strainsAt(
  kind: StrainKind,
  tab: Tabulation,
  coords: Float64Array,
  u: Float64Array,
  opts?: ElementOptions,
  out?: Float64Array
): Float64Array {
  const dim = kindDimension(kind);
  checkTabulation(tab, dim, 'strainsAt');
  checkCoords(coords, tab.nodes, dim, 'strainsAt');
  const { nodes, points, N } = tab;
  const ncomp = strainComponents(kind);
  const ndof = nodes * dofsPerNode(kind);
  requireInput(u.length === ndof, () => `u has ${u.length} values; the element has ${ndof} dofs`);
  const eps = out ?? new Float64Array(points * ncomp);
  requireInput(
    eps.length === points * ncomp,
    () => `out has ${eps.length} values; ${points} × ${ncomp} needed`
  );
  const dNdx = new Float64Array(nodes * dim);
  const B = new Float64Array(ncomp * ndof);
  const J = new Float64Array(dim * dim);
  const x = new Float64Array(dim);
  for (let q = 0; q < points; q++) {
    jacobian(tab, coords, q, J, dNdx, opts?.element);
    positionAt(tab, coords, q, x);
    if (kind === 'axisymmetric' && !(x[0] > 0)) throw radiusError(x[0], q, opts?.element);
    fillB(kind, nodes, dNdx, 0, N, q * nodes, x[0], B);
    for (let i = 0; i < ncomp; i++) {
      let s = 0;
      for (let c = 0; c < ndof; c++) s += B[i * ndof + c] * u[c];
      eps[q * ncomp + i] = s;
    }
  }
  return eps;
}

/** Stresses σ = D B u at every point of the tabulation (points × ncomp). */
export function stressesAt(
  kind: StrainKind,
  tab: Tabulation,
  coords: Float64Array,
  u: Float64Array,
  material: Material,
  opts?: ElementOptions,
  out?: Float64Array
): Float64Array {
  const eps = strainsAt(kind, tab, coords, u, opts);
  const D = elasticityMatrix(kind, material);
  const ncomp = strainComponents(kind);
  const points = tab.points;
  const sig = out ?? new Float64Array(points * ncomp);
  requireInput(
    sig.length === points * ncomp,
    () => `out has ${sig.length} values; ${points} × ${ncomp} needed`
  );
  for (let q = 0; q < points; q++) {
    for (let i = 0; i < ncomp; i++) {
      let s = 0;
      for (let k = 0; k < ncomp; k++) s += D[i * ncomp + k] * eps[q * ncomp + k];
      sig[q * ncomp + i] = s;
    }
  }
  return sig;
}
