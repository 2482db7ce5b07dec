/** §2 of verification.md: element checks on one physical element, a regular and a distorted shape. */
import { type Tabulation, jacobian, symmetricEigen } from '@isoledger/kernel';
import { type ElementModel, elementDofs, rigidModes, stiffnessBatch } from './model';
import type { CheckResult } from './record';
import {
  FRAME_INVARIANCE_TOLERANCE,
  NEGATIVE_EIGENVALUE_RATIO,
  RIGID_MODE_TOLERANCE,
  SYMMETRY_TOLERANCE,
  ZERO_EIGENVALUE_RATIO
} from './tolerances';

/** Lower and upper corner of the reference cell's bounding box, per coordinate. */
function boundingBox(model: ElementModel): { lo: number[]; hi: number[] } {
  const { cell, dim } = model;
  const lo = new Array(dim).fill(Infinity);
  const hi = new Array(dim).fill(-Infinity);
  for (let v = 0; v < cell.vertexCount; v++) {
    for (let k = 0; k < dim; k++) {
      lo[k] = Math.min(lo[k], cell.vertices[v * dim + k]);
      hi[k] = Math.max(hi[k], cell.vertices[v * dim + k]);
    }
  }
  return { lo, hi };
}

/** Edge lengths of the regular test shape per coordinate (unequal, so no symmetry hides a defect). */
const REGULAR_SIZE = [2, 1, 1.5];

/**
 * The mild multilinear distortion δ(s) of the unit box s ∈ [0, 1]^dim (1D: a quadratic term, the
 * only way to move an interior node): small enough that det J stays well above zero.
 */
function distortion(dim: number, s: ArrayLike<number>, out: number[]): void {
  if (dim === 1) {
    out[0] = 0.15 * s[0] * (1 - s[0]);
  } else if (dim === 2) {
    out[0] = 0.1 * s[1] - 0.15 * s[0] * s[1];
    out[1] = 0.08 * s[0] + 0.2 * s[0] * s[1];
  } else {
    out[0] = 0.1 * s[1] - 0.12 * s[0] * s[1] + 0.05 * s[1] * s[2];
    out[1] = 0.08 * s[2] + 0.15 * s[0] * s[1] - 0.06 * s[0] * s[1] * s[2];
    out[2] = 0.06 * s[0] + 0.1 * s[1] * s[2] + 0.08 * s[0] * s[2];
  }
}

/**
 * Physical node positions of the test element: the reference nodes scaled to the unit box, then
 * x = x0 + a ⊙ (s + δ(s)) (δ = 0 for the regular shape). Axisymmetric elements sit at r ∈ [1, 2].
 */
export function testShape(model: ElementModel, distorted: boolean): Float64Array {
  const { dim, nodes, refNodes } = model;
  const { lo, hi } = boundingBox(model);
  const axisymmetric = model.kind === 'axisymmetric';
  const x0 = axisymmetric ? [1, 0] : new Array(dim).fill(0);
  const a = axisymmetric ? [1, 1] : REGULAR_SIZE.slice(0, dim);
  const out = new Float64Array(nodes * dim);
  const s = new Array(dim);
  const d = new Array(dim).fill(0);
  for (let i = 0; i < nodes; i++) {
    for (let k = 0; k < dim; k++) s[k] = (refNodes[i * dim + k] - lo[k]) / (hi[k] - lo[k]);
    if (distorted) distortion(dim, s, d);
    for (let k = 0; k < dim; k++) out[i * dim + k] = x0[k] + a[k] * (s[k] + d[k]);
  }
  return out;
}

/** The rigid motion x ↦ R x + t of the frame-invariance check, and what it covers for this kind. */
interface FrameMotion {
  /** false when no rigid motion is expected to leave the element unchanged (a custom block naming every coordinate) */
  testable: boolean;
  rotate: boolean;
  translate: number[];
  description: string;
}

const SYMBOL = (name: string) => new RegExp(`(^|[^A-Za-z0-9_])${name}([^A-Za-z0-9_]|$)`);

function frameMotion(model: ElementModel): FrameMotion {
  const dim = model.dim;
  const t = [3.1, -1.7, 2.3].slice(0, dim);
  if (model.kind === 'axisymmetric') {
    return {
      testable: true,
      rotate: false,
      translate: [0, 0.75],
      description: 'translation along the axis (axisymmetric)'
    };
  }
  if (model.kind === 'bar')
    return { testable: true, rotate: false, translate: t, description: 'translation along the bar' };
  if (model.kind)
    return { testable: true, rotate: true, translate: t, description: 'rotation and translation' };
  // a custom block may depend on position or orientation on purpose: translate along the axes its B and weight do not name
  const text = `${model.custom!.B} ${model.custom!.weight}`;
  const axes = ['x', 'y', 'z'].slice(0, dim);
  const free = axes.map((a) => !SYMBOL(a).test(text));
  const translate = t.map((v, k) => (free[k] ? v : 0));
  const named = axes.filter((_, k) => free[k]);
  return {
    testable: named.length > 0,
    rotate: false,
    translate,
    description: named.length
      ? `translation along ${named.join(', ')} (custom strain block: rotation is not implied by the document, its D may be anisotropic)`
      : `the custom strain block names every coordinate (${axes.join(', ')}) in its B or weight, so no rigid motion of the frame is expected to leave it unchanged`
  };
}

/** Rotation of the frame-invariance check: 0.7 rad in the plane; 0.9 rad about (1, 2, 3)/√14 in space (Rodrigues). */
function rotationMatrix(dim: number): number[] {
  if (dim === 2) {
    const c = Math.cos(0.7);
    const s = Math.sin(0.7);
    return [c, -s, s, c];
  }
  if (dim === 3) {
    const n = Math.hypot(1, 2, 3);
    const [x, y, z] = [1 / n, 2 / n, 3 / n];
    const c = Math.cos(0.9);
    const s = Math.sin(0.9);
    const C = 1 - c;
    return [
      c + x * x * C,
      x * y * C - z * s,
      x * z * C + y * s,
      y * x * C + z * s,
      c + y * y * C,
      y * z * C - x * s,
      z * x * C - y * s,
      z * y * C + x * s,
      c + z * z * C
    ];
  }
  return [1];
}

function moved(coords: Float64Array, dim: number, m: FrameMotion): Float64Array {
  const R = m.rotate ? rotationMatrix(dim) : null;
  const out = new Float64Array(coords.length);
  for (let i = 0; i < coords.length / dim; i++) {
    for (let k = 0; k < dim; k++) {
      let v = 0;
      if (R) for (let l = 0; l < dim; l++) v += R[k * dim + l] * coords[i * dim + l];
      else v = coords[i * dim + k];
      out[i * dim + k] = v + m.translate[k];
    }
  }
  return out;
}

function frobenius(A: Float64Array): number {
  let s = 0;
  for (let i = 0; i < A.length; i++) s += A[i] * A[i];
  return Math.sqrt(s);
}

function symmetricPart(K: Float64Array, n: number): Float64Array {
  const S = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) S[i * n + j] = 0.5 * (K[i * n + j] + K[j * n + i]);
  return S;
}

const fmt = (v: number) => +v.toPrecision(6);

/** Spurious modes: the part of the zero-eigenvalue space orthogonal to the rigid-body modes, one unit vector each. */
function spuriousModes(
  vectors: Float64Array,
  n: number,
  zero: number,
  R: Float64Array,
  m: number,
  count: number,
  K: Float64Array
): { eigenvalue: number; vector: number[] }[] {
  if (count <= 0) return [];
  // orthonormal basis Q of the rigid modes (modified Gram–Schmidt)
  const Q: Float64Array[] = [];
  for (let j = 0; j < m; j++) {
    const v = Float64Array.from({ length: n }, (_, i) => R[i * m + j]);
    for (const q of Q) {
      let d = 0;
      for (let i = 0; i < n; i++) d += q[i] * v[i];
      for (let i = 0; i < n; i++) v[i] -= d * q[i];
    }
    const len = Math.hypot(...v);
    if (len > 1e-12) Q.push(v.map((x) => x / len));
  }
  // P Z: the zero-space vectors with the rigid part removed
  const PZ: Float64Array[] = [];
  for (let k = 0; k < zero; k++) {
    const z = Float64Array.from({ length: n }, (_, i) => vectors[i * n + k]);
    for (const q of Q) {
      let d = 0;
      for (let i = 0; i < n; i++) d += q[i] * z[i];
      for (let i = 0; i < n; i++) z[i] -= d * q[i];
    }
    PZ.push(z);
  }
  // principal directions of span(PZ): eigenvectors of the Gram matrix, largest first
  const G = new Float64Array(zero * zero);
  for (let a = 0; a < zero; a++) {
    for (let b = 0; b < zero; b++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += PZ[a][i] * PZ[b][i];
      G[a * zero + b] = s;
    }
  }
  const g = symmetricEigen(symmetricPart(G, zero), zero);
  const modes: { eigenvalue: number; vector: number[] }[] = [];
  for (let t = 0; t < Math.min(count, zero); t++) {
    const c = zero - 1 - t;
    const v = new Float64Array(n);
    for (let a = 0; a < zero; a++) {
      const w = g.vectors[a * zero + c];
      for (let i = 0; i < n; i++) v[i] += w * PZ[a][i];
    }
    // scale to max |v_i| = 1 with the largest component positive, so the drawing is the same in every run
    let big = 0;
    for (let i = 0; i < n; i++) if (Math.abs(v[i]) > Math.abs(big)) big = v[i];
    for (let i = 0; i < n; i++) v[i] = v[i] / big;
    let vKv = 0;
    let vv = 0;
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let j = 0; j < n; j++) s += K[i * n + j] * v[j];
      vKv += v[i] * s;
      vv += v[i] * v[i];
    }
    modes.push({ eigenvalue: vKv / vv, vector: Array.from(v) });
  }
  return modes;
}

export interface ElementOutcome {
  checks: CheckResult[];
}

/** jacobian-positive, stiffness-symmetry, rigid-body-modes, zero-energy-modes, positive-semidefinite, frame-invariance. */
export async function elementChecks(model: ElementModel, ruleTab: Tabulation): Promise<ElementOutcome> {
  const { dim, nodes } = model;
  const ndof = elementDofs(model);
  const regular = testShape(model, false);
  const distorted = testShape(model, true);
  const motion = frameMotion(model);
  const shapes = [
    { name: 'regular', coords: regular },
    { name: 'distorted', coords: distorted }
  ];
  const checks: CheckResult[] = [];

  // jacobian-positive: det J at every stiffness quadrature point of both shapes
  let minDet = Infinity;
  let worstDet = '';
  const J = new Float64Array(dim * dim);
  for (const s of shapes) {
    for (let q = 0; q < ruleTab.points; q++) {
      const d = jacobian(ruleTab, s.coords, q, J);
      if (!(d >= minDet)) {
        minDet = d;
        worstDet = `${s.name} shape, quadrature point ${q + 1} at ξ = (${Array.from(model.rule.points.subarray(q * dim, (q + 1) * dim), fmt).join(', ')})`;
      }
    }
  }
  const jacobianOk = minDet > 0;
  checks.push({
    id: 'jacobian-positive',
    required: true,
    status: jacobianOk ? 'pass' : 'fail',
    metric: minDet,
    tolerance: 0,
    ...(jacobianOk
      ? {}
      : { message: `det J = ${minDet} ≤ 0 at the ${worstDet}: the isoparametric map folds the element` })
  });
  if (!jacobianOk) {
    const reason = `not run: det J ≤ 0 at the ${worstDet}, so no stiffness exists`;
    for (const id of [
      'stiffness-symmetry',
      'rigid-body-modes',
      'zero-energy-modes',
      'positive-semidefinite',
      'frame-invariance'
    ]) {
      checks.push({ id, required: true, status: 'error', message: reason });
    }
    return { checks };
  }

  const movedCoords = moved(distorted, dim, motion);
  const Ks = await stiffnessBatch(model, ruleTab, concat(regular, distorted, movedCoords), 3);
  const K = [0, 1, 2].map((e) => Ks.subarray(e * ndof * ndof, (e + 1) * ndof * ndof));

  // stiffness-symmetry
  let asym = 0;
  for (const e of [0, 1]) {
    const k = K[e];
    let s = 0;
    for (let i = 0; i < ndof; i++)
      for (let j = 0; j < ndof; j++) s += (k[i * ndof + j] - k[j * ndof + i]) ** 2;
    asym = Math.max(asym, Math.sqrt(s) / frobenius(k));
  }
  const symOk = asym <= SYMMETRY_TOLERANCE;
  checks.push({
    id: 'stiffness-symmetry',
    required: true,
    status: symOk ? 'pass' : 'fail',
    metric: asym,
    tolerance: SYMMETRY_TOLERANCE,
    ...(symOk
      ? {}
      : {
          message: `‖K − Kᵀ‖ / ‖K‖ = ${asym.toPrecision(3)}: the stiffness is not symmetric (is D symmetric?)`
        })
  });

  // rigid-body-modes: K r = 0
  const m = model.rigidCount;
  const Rs = await Promise.all([rigidModes(model, regular, nodes), rigidModes(model, distorted, nodes)]);
  let rigid = 0;
  let rigidWhere = '';
  for (const e of [0, 1]) {
    const k = K[e];
    const R = Rs[e];
    const normK = frobenius(k);
    for (let j = 0; j < m; j++) {
      let rr = 0;
      let kr = 0;
      for (let i = 0; i < ndof; i++) {
        rr += R[i * m + j] ** 2;
        let s = 0;
        for (let c = 0; c < ndof; c++) s += k[i * ndof + c] * R[c * m + j];
        kr += s * s;
      }
      const v = Math.sqrt(kr) / (normK * Math.sqrt(rr));
      if (!(v <= rigid)) {
        rigid = v;
        rigidWhere = `mode ${j + 1} on the ${shapes[e].name} shape`;
      }
    }
  }
  const rigidOk = rigid <= RIGID_MODE_TOLERANCE;
  checks.push({
    id: 'rigid-body-modes',
    required: true,
    status: rigidOk ? 'pass' : 'fail',
    metric: rigid,
    tolerance: RIGID_MODE_TOLERANCE,
    modes: m,
    ...(rigidOk
      ? {}
      : { message: `K r ≠ 0 for rigid-body ${rigidWhere}: ‖K r‖ / (‖K‖ ‖r‖) = ${rigid.toPrecision(3)}` })
  });

  // spectra of the symmetric parts
  const eig = [0, 1, 2].map((e) => symmetricEigen(symmetricPart(K[e], ndof), ndof));
  const zeroCount = (values: Float64Array) => {
    const max = values[values.length - 1];
    let z = 0;
    for (let i = 0; i < values.length; i++) if (values[i] <= ZERO_EIGENVALUE_RATIO * max) z++;
    return z;
  };
  const zReg = zeroCount(eig[0].values);
  const zDist = zeroCount(eig[1].values);
  const spuriousReg = Math.max(0, zReg - m);
  const spuriousDist = Math.max(0, zDist - m);
  const zeroOk = zReg === m && zDist === m;
  const worstZero = Math.abs(zDist - m) > Math.abs(zReg - m) ? zDist : zReg;
  checks.push({
    id: 'zero-energy-modes',
    required: true,
    status: zeroOk ? 'pass' : 'fail',
    zeroModes: worstZero,
    expected: m,
    spurious: Math.max(spuriousReg, spuriousDist),
    tolerance: 0,
    ...(zeroOk
      ? {}
      : {
          message:
            worstZero > m
              ? `${worstZero} zero eigenvalues where the strain kind has ${m} rigid-body modes: ${worstZero - m} spurious (hourglass) mode${worstZero - m === 1 ? '' : 's'}` +
                (zReg !== zDist ? ` (regular shape ${zReg}, distorted shape ${zDist})` : '')
              : `${worstZero} zero eigenvalue${worstZero === 1 ? '' : 's'}, fewer than the ${m} rigid-body modes: a rigid motion strains the element`
        }),
    eigenvalues: Array.from(eig[0].values),
    nodes: Array.from({ length: nodes }, (_, i) => Array.from(regular.subarray(i * dim, (i + 1) * dim))),
    spuriousModes: spuriousModes(eig[0].vectors, ndof, zReg, Rs[0], m, spuriousReg, K[0]),
    distorted: { zeroModes: zDist, spurious: spuriousDist }
  });

  // positive-semidefinite
  let ratio = Infinity;
  let ratioShape = '';
  for (const e of [0, 1]) {
    const v = eig[e].values;
    const r = v[0] / v[v.length - 1];
    if (!(r >= ratio)) {
      ratio = r;
      ratioShape = shapes[e].name;
    }
  }
  const psdOk = ratio >= -NEGATIVE_EIGENVALUE_RATIO;
  checks.push({
    id: 'positive-semidefinite',
    required: true,
    status: psdOk ? 'pass' : 'fail',
    metric: ratio,
    tolerance: -NEGATIVE_EIGENVALUE_RATIO,
    ...(psdOk
      ? {}
      : {
          message: `negative eigenvalue on the ${ratioShape} shape: λmin / λmax = ${ratio.toPrecision(3)} (the element can release energy)`
        })
  });

  // frame-invariance: spectrum of the distorted shape before and after the rigid motion
  const a = eig[1].values;
  const b = eig[2].values;
  const max = Math.max(Math.abs(a[a.length - 1]), Math.abs(b[b.length - 1]));
  let change = 0;
  let changeAt = 0;
  for (let i = 0; i < ndof; i++) {
    const c = Math.abs(a[i] - b[i]) / max;
    if (!(c <= change)) {
      change = c;
      changeAt = i;
    }
  }
  const frameOk = change <= FRAME_INVARIANCE_TOLERANCE;
  if (!motion.testable) {
    checks.push({
      id: 'frame-invariance',
      required: true,
      status: 'skipped',
      message: `not tested: ${motion.description}`
    });
    return { checks };
  }
  checks.push({
    id: 'frame-invariance',
    required: true,
    status: frameOk ? 'pass' : 'fail',
    metric: change,
    tolerance: FRAME_INVARIANCE_TOLERANCE,
    motion: motion.description,
    message: frameOk
      ? `tested: ${motion.description}`
      : `eigenvalue ${changeAt + 1} changes by ${change.toPrecision(3)} × λmax under ${motion.description}: the element depends on where it is placed`
  });
  return { checks };
}

function concat(...arrays: Float64Array[]): Float64Array {
  const out = new Float64Array(arrays.reduce((s, a) => s + a.length, 0));
  let at = 0;
  for (const a of arrays) {
    out.set(a, at);
    at += a.length;
  }
  return out;
}
