import { KernelError, requireFinite, requireInput } from './errors';
import { SparseSymmetric } from './sparse';
import { type OrderingMethod, fillReducingOrdering } from './ordering';

/**
 * A pivot fails when it falls to this fraction of its original diagonal entry (or below zero): about
 * 1e4 machine epsilons, above the rounding residue a singular (unsupported) system leaves, below the
 * pivot loss of well-posed stiffness matrices of any practical conditioning (common practice, no source).
 */
export const PIVOT_RELATIVE_TOLERANCE = 1e-12;

/** Upper CSC of P K Pᵀ for inv (old → new): column b holds the rows a < b (unordered) with values; d is the diagonal. */
function permutedUpper(
  K: SparseSymmetric,
  inv: Int32Array
): { p: Int32Array; i: Int32Array; x: Float64Array; d: Float64Array } {
  const n = K.n;
  const rp = K.rowPtr!;
  const cols = K.cols;
  const vals = K.values;
  const d = new Float64Array(n);
  const up = new Int32Array(n + 1);
  for (let r = 0; r < n; r++)
    for (let q = rp[r]; q < rp[r + 1]; q++) {
      const a = inv[r];
      const b = inv[cols[q]];
      if (a !== b) up[(a > b ? a : b) + 1]++;
    }
  for (let j = 0; j < n; j++) up[j + 1] += up[j];
  const next = up.slice(0, n);
  const ui = new Int32Array(up[n]);
  const ux = new Float64Array(up[n]);
  for (let r = 0; r < n; r++)
    for (let q = rp[r]; q < rp[r + 1]; q++) {
      const a = inv[r];
      const b = inv[cols[q]];
      if (a === b) d[a] += vals[q];
      else {
        const t = next[a > b ? a : b]++;
        ui[t] = a < b ? a : b;
        ux[t] = vals[q];
      }
    }
  return { p: up, i: ui, x: ux, d };
}

/** Lower CSC (column a: the diagonal, then rows b > a ascending) by transposing the upper CSC column by column. */
function lowerFromUpper(
  n: number,
  U: { p: Int32Array; i: Int32Array; x: Float64Array; d: Float64Array }
): { p: Int32Array; i: Int32Array; x: Float64Array } {
  const lp = new Int32Array(n + 1);
  for (let a = 0; a < n; a++) lp[a + 1] = 1;
  for (let t = 0; t < U.p[n]; t++) lp[U.i[t] + 1]++;
  for (let a = 0; a < n; a++) lp[a + 1] += lp[a];
  const li = new Int32Array(lp[n]);
  const lx = new Float64Array(lp[n]);
  const next = lp.slice(0, n);
  for (let a = 0; a < n; a++) {
    li[next[a]] = a;
    lx[next[a]++] = U.d[a];
  }
  for (let b = 0; b < n; b++)
    for (let t = U.p[b]; t < U.p[b + 1]; t++) {
      const a = U.i[t];
      li[next[a]] = b;
      lx[next[a]++] = U.x[t];
    }
  return { p: lp, i: li, x: lx };
}

/** Elimination tree (Liu 1986, with path compression) from the upper pattern. */
function eliminationTree(n: number, up: Int32Array, ui: Int32Array): Int32Array {
  const parent = new Int32Array(n).fill(-1);
  const ancestor = new Int32Array(n).fill(-1);
  for (let k = 0; k < n; k++) {
    for (let t = up[k]; t < up[k + 1]; t++) {
      let i = ui[t];
      while (i !== -1 && i < k) {
        const next = ancestor[i];
        ancestor[i] = k;
        if (next === -1) parent[i] = k;
        i = next;
      }
    }
  }
  return parent;
}

/** Postorder of a forest (children in index order). */
function postorder(parent: Int32Array): Int32Array {
  const n = parent.length;
  const headChild = new Int32Array(n).fill(-1);
  const nextSibling = new Int32Array(n).fill(-1);
  for (let j = n - 1; j >= 0; j--) {
    const p = parent[j];
    if (p >= 0) {
      nextSibling[j] = headChild[p];
      headChild[p] = j;
    }
  }
  const post = new Int32Array(n);
  const stack = new Int32Array(n);
  let k = 0;
  for (let r = 0; r < n; r++) {
    if (parent[r] !== -1) continue;
    let top = 0;
    stack[0] = r;
    while (top >= 0) {
      const v = stack[top];
      const c = headChild[v];
      if (c === -1) {
        post[k++] = v;
        top--;
      } else {
        headChild[v] = nextSibling[c];
        stack[++top] = c;
      }
    }
  }
  return post;
}

/** The factor L of P K Pᵀ = L Lᵀ in supernodal form, with solve(). */
export class CholeskyFactor {
  readonly n: number;
  /** new → old */
  readonly perm: Int32Array;
  /** first column of each supernode, plus n */
  readonly superStart: Int32Array;
  /** row indices of each supernode's columns: rows[rowPtr[s] .. rowPtr[s + 1]) */
  readonly rowPtr: Int32Array;
  readonly rows: Int32Array;
  /** values: supernode s is an m × k column-major panel at valuePtr[s] */
  readonly valuePtr: Float64Array;
  readonly values: Float64Array;

  constructor(
    n: number,
    perm: Int32Array,
    superStart: Int32Array,
    rowPtr: Int32Array,
    rows: Int32Array,
    valuePtr: Float64Array,
    values: Float64Array
  ) {
    this.n = n;
    this.perm = perm;
    this.superStart = superStart;
    this.rowPtr = rowPtr;
    this.rows = rows;
    this.valuePtr = valuePtr;
    this.values = values;
  }

  /** Nonzeros of L (including the diagonal). */
  get nnz(): number {
    let s = 0;
    for (let t = 0; t + 1 < this.superStart.length; t++) {
      const k = this.superStart[t + 1] - this.superStart[t];
      const m = this.rowPtr[t + 1] - this.rowPtr[t];
      s += k * m - (k * (k - 1)) / 2;
    }
    return s;
  }

  /** x = K⁻¹ b by forward and backward substitution. */
  solve(b: Float64Array, out?: Float64Array): Float64Array {
    const n = this.n;
    requireInput(b.length === n, () => `right-hand side has ${b.length} entries; the matrix has order ${n}`);
    const { perm, superStart, rowPtr, rows, valuePtr, values: L } = this;
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) y[i] = b[perm[i]];
    const ns = superStart.length - 1;
    for (let s = 0; s < ns; s++) {
      const f = superStart[s];
      const k = superStart[s + 1] - f;
      const ro = rowPtr[s];
      const m = rowPtr[s + 1] - ro;
      const off = valuePtr[s];
      for (let jj = 0; jj < k; jj++) {
        const c = off + jj * m;
        const yj = y[f + jj] / L[c + jj];
        y[f + jj] = yj;
        for (let t = jj + 1; t < m; t++) y[rows[ro + t]] -= L[c + t] * yj;
      }
    }
    for (let s = ns - 1; s >= 0; s--) {
      const f = superStart[s];
      const k = superStart[s + 1] - f;
      const ro = rowPtr[s];
      const m = rowPtr[s + 1] - ro;
      const off = valuePtr[s];
      for (let jj = k - 1; jj >= 0; jj--) {
        const c = off + jj * m;
        let sum = y[f + jj];
        for (let t = jj + 1; t < m; t++) sum -= L[c + t] * y[rows[ro + t]];
        y[f + jj] = sum / L[c + jj];
      }
    }
    const x = out ?? new Float64Array(n);
    for (let i = 0; i < n; i++) x[perm[i]] = y[i];
    return x;
  }
}

export interface CholeskyOptions {
  /** dof id to name in errors for each matrix index (default: the index itself) */
  labels?: Int32Array;
  /** a precomputed ordering (new → old); default fillReducingOrdering(K, method) */
  ordering?: Int32Array;
  /** which fill-reducing ordering to compute when none is given (default 'automatic': the least predicted fill) */
  method?: OrderingMethod;
}

/**
 * Sparse Cholesky P K Pᵀ = L Lᵀ: a fill-reducing ordering (minimum degree or nested dissection, whichever
 * predicts less fill), elimination tree and column counts (symbolic), relaxed supernodes, then multifrontal
 * numeric factorisation (Liu 1992, "The multifrontal method").
 * Throws KernelError 'not-positive-definite' naming the dof whose pivot failed.
 */
export function choleskyFactor(K: SparseSymmetric, opts?: CholeskyOptions): CholeskyFactor {
  K.build();
  const n = K.n;
  requireFinite(K.values, 'matrix values');
  const labels = opts?.labels;
  if (labels)
    requireInput(labels.length === n, () => `labels has ${labels.length} entries; the matrix has order ${n}`);
  const nd = opts?.ordering ?? fillReducingOrdering(K, opts?.method);
  requireInput(nd.length === n, () => `ordering has ${nd.length} entries; the matrix has order ${n}`);
  // postorder the elimination tree of the fill-reducing ordering: same fill, contiguous subtrees
  let inv = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    const v = nd[i];
    if (!(v >= 0 && v < n) || inv[v] !== -1) {
      throw new KernelError(
        'invalid-input',
        `ordering entry ${i} (${v}) is out of range or repeated: it must be a permutation of 0 … ${n - 1}`
      );
    }
    inv[v] = i;
  }
  let U = permutedUpper(K, inv);
  const post = postorder(eliminationTree(n, U.p, U.i));
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = nd[post[i]];
  inv = new Int32Array(n);
  for (let i = 0; i < n; i++) inv[perm[i]] = i;
  U = permutedUpper(K, inv);
  const A = lowerFromUpper(n, U);
  const parent = eliminationTree(n, U.p, U.i);

  // column counts by row subtrees: row k of L is the set reached climbing the tree from each i < k with A(i, k) ≠ 0
  const colCount = new Int32Array(n);
  const mark = new Int32Array(n).fill(-1);
  for (let k = 0; k < n; k++) {
    mark[k] = k;
    colCount[k]++;
    for (let t = U.p[k]; t < U.p[k + 1]; t++) {
      let i = U.i[t];
      while (mark[i] !== k) {
        colCount[i]++;
        mark[i] = k;
        i = parent[i];
      }
    }
  }
  const childCount = new Int32Array(n);
  for (let j = 0; j < n; j++) if (parent[j] >= 0) childCount[parent[j]]++;
  const { superStart, superParent, superChildren, rowPtr } = relaxedSupernodes(
    n,
    parent,
    colCount,
    childCount
  );
  const ns = superStart.length - 1;
  const rows = new Int32Array(rowPtr[ns]);
  const valuePtr = new Float64Array(ns + 1);
  for (let s = 0; s < ns; s++)
    valuePtr[s + 1] = valuePtr[s] + (superStart[s + 1] - superStart[s]) * (rowPtr[s + 1] - rowPtr[s]);
  const childHead = new Int32Array(ns).fill(-1);
  const childNext = new Int32Array(ns).fill(-1);
  for (let s = ns - 1; s >= 0; s--) {
    const p = superParent[s];
    if (p >= 0) {
      childNext[s] = childHead[p];
      childHead[p] = s;
    }
  }
  mark.fill(-1);
  for (let s = 0; s < ns; s++) {
    const f = superStart[s];
    const l = superStart[s + 1] - 1;
    let w = rowPtr[s];
    for (let j = f; j <= l; j++) {
      rows[w++] = j;
      mark[j] = s;
    }
    const tail = w;
    for (let j = f; j <= l; j++)
      for (let t = A.p[j]; t < A.p[j + 1]; t++) {
        const i = A.i[t];
        if (mark[i] !== s) {
          mark[i] = s;
          rows[w++] = i;
        }
      }
    for (let c = childHead[s]; c !== -1; c = childNext[c]) {
      const kc = superStart[c + 1] - superStart[c];
      for (let t = rowPtr[c] + kc; t < rowPtr[c + 1]; t++) {
        const i = rows[t];
        if (mark[i] !== s) {
          mark[i] = s;
          rows[w++] = i;
        }
      }
    }
    if (w !== rowPtr[s + 1]) {
      throw new KernelError(
        'internal',
        `symbolic factorisation: supernode ${s} has ${w - rowPtr[s]} rows, column count says ${rowPtr[s + 1] - rowPtr[s]}`
      );
    }
    rows.subarray(tail, w).sort();
  }

  const diag = U.d;
  const values = multifrontal({ n, superStart, superChildren, rowPtr, rows, valuePtr }, A, diag, (j) =>
    labels ? labels[perm[j]] : perm[j]
  );
  return new CholeskyFactor(n, perm, superStart, rowPtr, rows, valuePtr, values);
}

/**
 * Relaxed supernodes (Ashcraft & Grimes 1989): fundamental supernodes, each merged into its parent when
 * it is the parent's last child and the merged node stays small or stores few explicit zeros.
 * Returns the partition, the supernodal tree and each supernode's row count.
 */
function relaxedSupernodes(n: number, parent: Int32Array, colCount: Int32Array, childCount: Int32Array) {
  const fundamental: number[] = [];
  for (let j = 0; j < n; j++) {
    const joins = j > 0 && parent[j - 1] === j && colCount[j - 1] === colCount[j] + 1 && childCount[j] === 1;
    if (!joins) fundamental.push(j);
  }
  fundamental.push(n);
  // groups of consecutive fundamental supernodes: first column, columns, rows, true nonzeros
  const gStart: number[] = [];
  const gCols: number[] = [];
  const gRows: number[] = [];
  const gTrue: number[] = [];
  for (let t = 0; t + 1 < fundamental.length; t++) {
    const f = fundamental[t];
    const k = fundamental[t + 1] - f;
    const m = colCount[f];
    let trueNz = 0;
    for (let j = f; j < f + k; j++) trueNz += colCount[j];
    const g = gStart.length - 1;
    if (g >= 0 && gStart[g] + gCols[g] === f && parent[f - 1] === f) {
      const kk = gCols[g] + k;
      const mm = gCols[g] + m;
      const stored = kk * mm - (kk * (kk - 1)) / 2;
      const zeros = (stored - gTrue[g] - trueNz) / stored;
      if (relaxMerge(kk, zeros)) {
        gCols[g] = kk;
        gRows[g] = mm;
        gTrue[g] += trueNz;
        continue;
      }
    }
    gStart.push(f);
    gCols.push(k);
    gRows.push(m);
    gTrue.push(trueNz);
  }
  const ns = gStart.length;
  const superStart = new Int32Array(ns + 1);
  for (let s = 0; s < ns; s++) superStart[s] = gStart[s];
  superStart[ns] = n;
  const rowPtr = new Int32Array(ns + 1);
  for (let s = 0; s < ns; s++) rowPtr[s + 1] = rowPtr[s] + gRows[s];
  const superOf = new Int32Array(n);
  for (let s = 0; s < ns; s++) for (let j = superStart[s]; j < superStart[s + 1]; j++) superOf[j] = s;
  const superParent = new Int32Array(ns).fill(-1);
  const superChildren = new Int32Array(ns);
  for (let s = 0; s < ns; s++) {
    const p = parent[superStart[s + 1] - 1];
    if (p >= 0) {
      superParent[s] = superOf[p];
      superChildren[superOf[p]]++;
    }
  }
  return { superStart, superParent, superChildren, rowPtr };
}

/** Merge thresholds in the spirit of common supernodal codes: up to 4 columns always, 16 with < 80 % zeros, 48 with < 10 %, else < 5 %. */
function relaxMerge(columns: number, zeroFraction: number): boolean {
  if (columns <= 4) return true;
  if (columns <= 16) return zeroFraction < 0.8;
  if (columns <= 48) return zeroFraction < 0.1;
  return zeroFraction < 0.05;
}

interface Symbolic {
  n: number;
  superStart: Int32Array;
  superChildren: Int32Array;
  rowPtr: Int32Array;
  rows: Int32Array;
  valuePtr: Float64Array;
}

/**
 * Pivot columns factored together in a front: the trailing update then runs as dot products of this
 * length held in registers, so each trailing entry is read and written once per block (32 measured
 * fastest of 16 … 64 on fronts of 300 … 900 rows; common practice, no source).
 */
const PANEL_BLOCK = 32;

/**
 * Numeric multifrontal factorisation (Duff & Reid 1983; Liu 1992): for each supernode in postorder, the
 * frontal matrix (column-major, lower triangle) is assembled from A and the children's update matrices
 * (extend-add), its k pivot columns are factored in place and stored, and its Schur complement is pushed
 * (packed by columns) on a stack arena.
 */
function multifrontal(
  sym: Symbolic,
  A: { p: Int32Array; i: Int32Array; x: Float64Array },
  diag: Float64Array,
  dofOf: (j: number) => number
): Float64Array {
  const { n, superStart, superChildren, rowPtr, rows, valuePtr } = sym;
  const ns = superStart.length - 1;
  // arena size: the peak of the update stack in postorder
  let maxFront = 0;
  let cur = 0;
  let peak = 0;
  const sizes: number[] = [];
  for (let s = 0; s < ns; s++) {
    const k = superStart[s + 1] - superStart[s];
    const m = rowPtr[s + 1] - rowPtr[s];
    maxFront = Math.max(maxFront, m);
    for (let c = superChildren[s]; c > 0; c--) cur -= sizes.pop()!;
    const u = m - k;
    if (u > 0) {
      const size = (u * (u + 1)) / 2;
      sizes.push(size);
      cur += size;
      if (cur > peak) peak = cur;
    }
  }
  const arena = new Float64Array(peak);
  const starts = new Float64Array(ns); // arena offset of each pushed update
  const stack = new Int32Array(ns);
  let top = 0;
  let arenaTop = 0;
  const values = new Float64Array(valuePtr[ns]);
  const F = new Float64Array(maxFront * maxFront);
  const R = new Float64Array(maxFront * PANEL_BLOCK);
  const rel = new Int32Array(n);
  const loc = new Int32Array(maxFront);
  for (let s = 0; s < ns; s++) {
    const f = superStart[s];
    const k = superStart[s + 1] - f;
    const ro = rowPtr[s];
    const m = rowPtr[s + 1] - ro;
    for (let t = 0; t < m; t++) rel[rows[ro + t]] = t;
    for (let b = 0; b < m; b++) F.fill(0, b * m + b, (b + 1) * m);
    for (let jj = 0; jj < k; jj++) {
      const c = jj * m;
      for (let t = A.p[f + jj]; t < A.p[f + jj + 1]; t++) F[c + rel[A.i[t]]] += A.x[t];
    }
    // extend-add the children's update matrices (the top of the stack, in postorder)
    for (let c = superChildren[s]; c > 0; c--) {
      const cs = stack[--top];
      const kc = superStart[cs + 1] - superStart[cs];
      const cro = rowPtr[cs] + kc;
      const u = rowPtr[cs + 1] - cro;
      for (let a = 0; a < u; a++) loc[a] = rel[rows[cro + a]];
      let q = starts[cs];
      arenaTop = q;
      for (let b = 0; b < u; b++) {
        const cb = loc[b] * m;
        for (let a = b; a < u; a++) F[cb + loc[a]] += arena[q++];
      }
    }
    partialCholesky(F, m, k, R, diag, f, dofOf);
    values.set(F.subarray(0, m * k), valuePtr[s]);
    const u = m - k;
    if (u > 0) {
      starts[s] = arenaTop;
      for (let b = 0; b < u; b++) {
        const src = (k + b) * m + k + b;
        arena.set(F.subarray(src, src + u - b), arenaTop);
        arenaTop += u - b;
      }
      stack[top++] = s;
    }
  }
  return values;
}

/**
 * Dense partial Cholesky of a front (m × m, column-major, lower triangle used), in place: its first k columns
 * become the columns of L, and the trailing block the Schur complement S − L₂ L₂ᵀ. Blocked right-looking: each
 * block of PANEL_BLOCK pivot columns is factored left-looking, then every later column is updated by it.
 */
function partialCholesky(
  F: Float64Array,
  m: number,
  k: number,
  R: Float64Array,
  diag: Float64Array,
  first: number,
  dofOf: (j: number) => number
): void {
  for (let j0 = 0; j0 < k; j0 += PANEL_BLOCK) {
    const je = Math.min(j0 + PANEL_BLOCK, k);
    for (let j = j0; j < je; j++) {
      const cj = j * m;
      // col_j −= Σ_p L[j][p] · col_p over the block's earlier columns p, rows j … m − 1, four at a time
      let p = j0;
      for (; p + 3 < j; p += 4) {
        const c0 = p * m;
        const c1 = c0 + m;
        const c2 = c1 + m;
        const c3 = c2 + m;
        const l0 = F[c0 + j];
        const l1 = F[c1 + j];
        const l2 = F[c2 + j];
        const l3 = F[c3 + j];
        for (let i = j; i < m; i++)
          F[cj + i] -= l0 * F[c0 + i] + l1 * F[c1 + i] + l2 * F[c2 + i] + l3 * F[c3 + i];
      }
      for (; p < j; p++) {
        const c0 = p * m;
        const l0 = F[c0 + j];
        if (l0 === 0) continue;
        for (let i = j; i < m; i++) F[cj + i] -= l0 * F[c0 + i];
      }
      const d = F[cj + j];
      const dj = diag[first + j];
      if (!(dj > 0) || !(d > PIVOT_RELATIVE_TOLERANCE * dj)) {
        const dof = dofOf(first + j);
        throw new KernelError(
          'not-positive-definite',
          `the matrix is singular or not positive definite: the pivot of dof ${dof} is ${d} ` +
            `(its diagonal entry was ${dj}); a rigid-body motion may be unconstrained or the element is unstable`,
          { dof, pivot: d, diagonal: dj }
        );
      }
      const l = Math.sqrt(d);
      F[cj + j] = l;
      const il = 1 / l;
      for (let i = j + 1; i < m; i++) F[cj + i] *= il;
    }
    const u = m - je;
    if (u === 0) continue;
    // the block's rows below it, row-major (u × jb), so each update entry is one contiguous dot product
    const jb = je - j0;
    for (let t = 0; t < jb; t++) {
      const c = (j0 + t) * m + je;
      for (let a = 0; a < u; a++) R[a * jb + t] = F[c + a];
    }
    blockUpdate(F, R, m, je, u, jb);
  }
}

/**
 * F[je + a][je + b] −= Σ_t R[a][t] R[b][t] for a ≥ b (F column-major with leading dimension m, R row-major
 * u × jb): two columns by four rows per step, the eight dot products accumulated in registers.
 */
function blockUpdate(F: Float64Array, R: Float64Array, m: number, je: number, u: number, jb: number): void {
  let b = 0;
  for (; b + 1 < u; b += 2) {
    const rb0 = b * jb;
    const rb1 = rb0 + jb;
    const cb0 = (je + b) * m + je;
    const cb1 = cb0 + m;
    // the diagonal 2 × 2 (lower)
    let d00 = 0;
    let d10 = 0;
    let d11 = 0;
    for (let t = 0; t < jb; t++) {
      const x = R[rb0 + t];
      const y = R[rb1 + t];
      d00 += x * x;
      d10 += y * x;
      d11 += y * y;
    }
    F[cb0 + b] -= d00;
    F[cb0 + b + 1] -= d10;
    F[cb1 + b + 1] -= d11;
    let a = b + 2;
    for (; a + 3 < u; a += 4) {
      const ra0 = a * jb;
      const ra1 = ra0 + jb;
      const ra2 = ra1 + jb;
      const ra3 = ra2 + jb;
      let s00 = 0;
      let s01 = 0;
      let s10 = 0;
      let s11 = 0;
      let s20 = 0;
      let s21 = 0;
      let s30 = 0;
      let s31 = 0;
      for (let t = 0; t < jb; t++) {
        const q0 = R[rb0 + t];
        const q1 = R[rb1 + t];
        const x0 = R[ra0 + t];
        const x1 = R[ra1 + t];
        const x2 = R[ra2 + t];
        const x3 = R[ra3 + t];
        s00 += x0 * q0;
        s01 += x0 * q1;
        s10 += x1 * q0;
        s11 += x1 * q1;
        s20 += x2 * q0;
        s21 += x2 * q1;
        s30 += x3 * q0;
        s31 += x3 * q1;
      }
      F[cb0 + a] -= s00;
      F[cb1 + a] -= s01;
      F[cb0 + a + 1] -= s10;
      F[cb1 + a + 1] -= s11;
      F[cb0 + a + 2] -= s20;
      F[cb1 + a + 2] -= s21;
      F[cb0 + a + 3] -= s30;
      F[cb1 + a + 3] -= s31;
    }
    for (; a < u; a++) {
      const ra = a * jb;
      let s0 = 0;
      let s1 = 0;
      for (let t = 0; t < jb; t++) {
        const x = R[ra + t];
        s0 += x * R[rb0 + t];
        s1 += x * R[rb1 + t];
      }
      F[cb0 + a] -= s0;
      F[cb1 + a] -= s1;
    }
  }
  if (b < u) {
    const rb = b * jb;
    let s = 0;
    for (let t = 0; t < jb; t++) s += R[rb + t] * R[rb + t];
    F[(je + b) * m + je + b] -= s;
  }
}

/** x = K⁻¹ f by sparse Cholesky with a fill-reducing ordering; throws KernelError naming the dof where the pivot failed. */
export function solveSymmetric(K: SparseSymmetric, f: Float64Array, opts?: CholeskyOptions): Float64Array {
  K.build();
  requireInput(
    f.length === K.n,
    () => `right-hand side has ${f.length} entries; the matrix has order ${K.n}`
  );
  requireFinite(f, 'right-hand side');
  return choleskyFactor(K, opts).solve(f);
}

export interface DirichletResult {
  /** the full displacement vector, prescribed values included */
  u: Float64Array;
  /** K u − f: the reactions at the prescribed dofs (zero at free dofs) */
  reactions: Float64Array;
}

/** Solves K u = f with u[fixed] = values by elimination of the prescribed dofs; reactions r = K u − f at them. */
export function solveWithDirichlet(
  K: SparseSymmetric,
  f: Float64Array,
  fixed: Int32Array,
  values: Float64Array
): DirichletResult {
  K.build();
  const n = K.n;
  requireInput(f.length === n, () => `load vector has ${f.length} entries; the matrix has order ${n}`);
  requireInput(
    fixed.length === values.length,
    () => `${fixed.length} fixed dofs but ${values.length} prescribed values`
  );
  requireFinite(f, 'load vector');
  requireFinite(values, 'prescribed values');
  const isFixed = new Uint8Array(n);
  const u = new Float64Array(n);
  for (let t = 0; t < fixed.length; t++) {
    const d = fixed[t];
    if (!(Number.isInteger(d) && d >= 0 && d < n)) {
      throw new KernelError('invalid-input', `fixed dof ${d} (entry ${t}) is outside 0 … ${n - 1}`, {
        index: t,
        dof: d
      });
    }
    if (isFixed[d])
      throw new KernelError('invalid-input', `dof ${d} is prescribed twice (entry ${t})`, {
        index: t,
        dof: d
      });
    isFixed[d] = 1;
    u[d] = values[t];
  }
  const free = new Int32Array(n - fixed.length);
  const map = new Int32Array(n).fill(-1);
  for (let i = 0, k = 0; i < n; i++) if (!isFixed[i]) free[(map[i] = k++)] = i;
  if (free.length > 0) {
    const rp = K.rowPtr!;
    const cols = K.cols;
    const vals = K.values;
    const rhs = new Float64Array(free.length);
    for (let k = 0; k < free.length; k++) rhs[k] = f[free[k]];
    let count = 0;
    for (let i = 0; i < n; i++)
      for (let p = rp[i]; p < rp[i + 1]; p++) if (!isFixed[i] && !isFixed[cols[p]]) count++;
    const rrp = new Int32Array(free.length + 1);
    const rc = new Int32Array(count);
    const rv = new Float64Array(count);
    let w = 0;
    for (let i = 0; i < n; i++) {
      const ri = map[i];
      for (let p = rp[i]; p < rp[i + 1]; p++) {
        const j = cols[p];
        const v = vals[p];
        if (ri >= 0) {
          if (map[j] >= 0) {
            rc[w] = map[j];
            rv[w++] = v;
          } else rhs[ri] -= v * u[j];
        } else if (map[j] >= 0) rhs[map[j]] -= v * u[i];
      }
      if (ri >= 0) rrp[ri + 1] = w;
    }
    const Kff = SparseSymmetric.fromUpperCSR(free.length, rrp, rc, rv);
    const uf = solveSymmetric(Kff, rhs, { labels: free });
    for (let k = 0; k < free.length; k++) u[free[k]] = uf[k];
  }
  const reactions = K.multiply(u);
  for (let i = 0; i < n; i++) reactions[i] = isFixed[i] ? reactions[i] - f[i] : 0;
  return { u, reactions };
}
