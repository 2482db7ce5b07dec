import { KernelError, requireInput } from './errors';

/**
 * A sparse symmetric matrix. Entries are added as triplets (either triangle; duplicates sum) and
 * `build()` compresses them to CSR of the upper triangle (row i holds columns j ≥ i, ascending).
 * After build, `add` sums into existing entries only.
 */
export class SparseSymmetric {
  readonly n: number;
  private ti: Int32Array;
  private tj: Int32Array;
  private tv: Float64Array;
  private tcount = 0;
  /** CSR of the upper triangle, set by build() */
  rowPtr: Int32Array | null = null;
  cols: Int32Array = new Int32Array(0);
  values: Float64Array = new Float64Array(0);

  constructor(n: number, expectedEntries = 16) {
    requireInput(
      Number.isInteger(n) && n >= 0,
      () => `matrix order must be a non-negative integer, got ${n}`
    );
    this.n = n;
    const cap = Math.max(16, expectedEntries);
    this.ti = new Int32Array(cap);
    this.tj = new Int32Array(cap);
    this.tv = new Float64Array(cap);
  }

  /** A built matrix from an upper-triangle CSR pattern (taken over, not copied). */
  static fromUpperCSR(
    n: number,
    rowPtr: Int32Array,
    cols: Int32Array,
    values: Float64Array
  ): SparseSymmetric {
    requireInput(
      rowPtr.length === n + 1,
      () => `rowPtr has ${rowPtr.length} entries; n + 1 = ${n + 1} needed`
    );
    requireInput(
      cols.length === values.length && cols.length === rowPtr[n],
      'cols and values must both hold rowPtr[n] entries'
    );
    const m = new SparseSymmetric(n, 16);
    m.rowPtr = rowPtr;
    m.cols = cols;
    m.values = values;
    return m;
  }

  get built(): boolean {
    return this.rowPtr !== null;
  }

  /** Stored entries of the upper triangle (after build). */
  get nnz(): number {
    return this.rowPtr ? this.rowPtr[this.n] : this.tcount;
  }

  /** A(i, j) += v and, by symmetry, A(j, i). */
  add(i: number, j: number, v: number): void {
    if (!(i >= 0 && i < this.n && j >= 0 && j < this.n && Number.isInteger(i) && Number.isInteger(j))) {
      throw new KernelError(
        'invalid-input',
        `entry (${i}, ${j}) is outside the ${this.n} × ${this.n} matrix`,
        { i, j }
      );
    }
    if (!Number.isFinite(v))
      throw new KernelError('invalid-input', `entry (${i}, ${j}) value ${v} is not finite`, { i, j });
    const r = i < j ? i : j;
    const c = i < j ? j : i;
    if (this.rowPtr) {
      const p = this.find(r, c);
      if (p < 0) {
        throw new KernelError('pattern', `entry (${i}, ${j}) is not in the pattern of the built matrix`, {
          i,
          j
        });
      }
      this.values[p] += v;
      return;
    }
    if (this.tcount === this.ti.length) {
      const cap = this.ti.length * 2;
      const ni = new Int32Array(cap);
      const nj = new Int32Array(cap);
      const nv = new Float64Array(cap);
      ni.set(this.ti);
      nj.set(this.tj);
      nv.set(this.tv);
      this.ti = ni;
      this.tj = nj;
      this.tv = nv;
    }
    this.ti[this.tcount] = r;
    this.tj[this.tcount] = c;
    this.tv[this.tcount] = v;
    this.tcount++;
  }

  /** Compresses the triplets to upper CSR, summing duplicates. Returns this. */
  build(): this {
    if (this.rowPtr) return this;
    const n = this.n;
    const count = new Int32Array(n + 1);
    for (let t = 0; t < this.tcount; t++) count[this.ti[t] + 1]++;
    for (let i = 0; i < n; i++) count[i + 1] += count[i];
    const next = count.slice(0, n);
    const cj = new Int32Array(this.tcount);
    const cv = new Float64Array(this.tcount);
    for (let t = 0; t < this.tcount; t++) {
      const p = next[this.ti[t]]++;
      cj[p] = this.tj[t];
      cv[p] = this.tv[t];
    }
    // sort each row by column and sum duplicates
    const rowPtr = new Int32Array(n + 1);
    const cols = new Int32Array(this.tcount);
    const vals = new Float64Array(this.tcount);
    let out = 0;
    const order: number[] = [];
    for (let i = 0; i < n; i++) {
      rowPtr[i] = out;
      order.length = 0;
      for (let p = count[i]; p < count[i + 1]; p++) order.push(p);
      order.sort((a, b) => cj[a] - cj[b] || a - b);
      for (const p of order) {
        if (out > rowPtr[i] && cols[out - 1] === cj[p]) vals[out - 1] += cv[p];
        else {
          cols[out] = cj[p];
          vals[out] = cv[p];
          out++;
        }
      }
    }
    rowPtr[n] = out;
    this.rowPtr = rowPtr;
    this.cols = cols.slice(0, out);
    this.values = vals.slice(0, out);
    this.ti = new Int32Array(0);
    this.tj = new Int32Array(0);
    this.tv = new Float64Array(0);
    this.tcount = 0;
    return this;
  }

  private find(r: number, c: number): number {
    const rp = this.rowPtr!;
    let lo = rp[r];
    let hi = rp[r + 1] - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const v = this.cols[mid];
      if (v === c) return mid;
      if (v < c) lo = mid + 1;
      else hi = mid - 1;
    }
    return -1;
  }

  /** A(i, j) (0 when not stored). */
  get(i: number, j: number): number {
    this.build();
    const p = this.find(Math.min(i, j), Math.max(i, j));
    return p < 0 ? 0 : this.values[p];
  }

  /** y = A x */
  multiply(x: Float64Array, out?: Float64Array): Float64Array {
    this.build();
    const n = this.n;
    requireInput(x.length === n, () => `vector has ${x.length} entries; the matrix has order ${n}`);
    const y = out ?? new Float64Array(n);
    y.fill(0);
    const rp = this.rowPtr!;
    const cols = this.cols;
    const vals = this.values;
    for (let i = 0; i < n; i++) {
      let s = y[i];
      const xi = x[i];
      for (let p = rp[i]; p < rp[i + 1]; p++) {
        const j = cols[p];
        const v = vals[p];
        s += v * x[j];
        if (j !== i) y[j] += v * xi;
      }
      y[i] = s;
    }
    return y;
  }

  /** The diagonal. */
  diagonal(): Float64Array {
    this.build();
    const d = new Float64Array(this.n);
    const rp = this.rowPtr!;
    for (let i = 0; i < this.n; i++)
      if (rp[i] < rp[i + 1] && this.cols[rp[i]] === i) d[i] = this.values[rp[i]];
    return d;
  }

  /** Dense row-major copy (for small matrices and tests). */
  toDense(): Float64Array {
    this.build();
    const n = this.n;
    const A = new Float64Array(n * n);
    const rp = this.rowPtr!;
    for (let i = 0; i < n; i++)
      for (let p = rp[i]; p < rp[i + 1]; p++) {
        const j = this.cols[p];
        A[i * n + j] = this.values[p];
        A[j * n + i] = this.values[p];
      }
    return A;
  }
}

/**
 * K = Σ_e Aeᵀ K_e Ae: assembles element matrices (elements × edof × edof, row-major each) through the
 * element dof map (elements × edof; a negative id drops that row and column) into a built SparseSymmetric.
 */
export function assemble(
  ndof: number,
  elementDofs: Int32Array,
  elementMatrices: Float64Array,
  dofsPerElement: number
): SparseSymmetric {
  const ed = dofsPerElement;
  requireInput(
    Number.isInteger(ed) && ed > 0,
    () => `dofs per element must be a positive integer, got ${ed}`
  );
  requireInput(
    elementDofs.length % ed === 0,
    () => `element dof map has ${elementDofs.length} entries, not a multiple of ${ed}`
  );
  const ne = elementDofs.length / ed;
  requireInput(
    elementMatrices.length === ne * ed * ed,
    `element matrices hold ${elementMatrices.length} values; ${ne} elements × ${ed} × ${ed} need ${ne * ed * ed}`
  );
  for (let p = 0; p < elementDofs.length; p++) {
    const d = elementDofs[p];
    if (d >= ndof) {
      throw new KernelError(
        'invalid-input',
        `element ${Math.floor(p / ed)} refers to dof ${d}; there are ${ndof}`,
        {
          element: Math.floor(p / ed)
        }
      );
    }
  }
  // dof → (element, local index) incidence
  const incPtr = new Int32Array(ndof + 1);
  for (let p = 0; p < elementDofs.length; p++) if (elementDofs[p] >= 0) incPtr[elementDofs[p] + 1]++;
  for (let i = 0; i < ndof; i++) incPtr[i + 1] += incPtr[i];
  const inc = new Int32Array(incPtr[ndof]);
  const fill = incPtr.slice(0, ndof);
  for (let p = 0; p < elementDofs.length; p++) if (elementDofs[p] >= 0) inc[fill[elementDofs[p]]++] = p;
  // pattern, row by row
  const mark = new Int32Array(ndof).fill(-1);
  const rowPtr = new Int32Array(ndof + 1);
  let nnz = 0;
  for (let i = 0; i < ndof; i++) {
    mark[i] = i;
    nnz++;
    for (let t = incPtr[i]; t < incPtr[i + 1]; t++) {
      const e = Math.floor(inc[t] / ed);
      for (let b = 0; b < ed; b++) {
        const j = elementDofs[e * ed + b];
        if (j > i && mark[j] !== i) {
          mark[j] = i;
          nnz++;
        }
      }
    }
    rowPtr[i + 1] = nnz;
  }
  const cols = new Int32Array(nnz);
  const values = new Float64Array(nnz);
  const pos = new Int32Array(ndof).fill(-1);
  const row: number[] = [];
  for (let i = 0; i < ndof; i++) {
    row.length = 0;
    row.push(i);
    pos[i] = -2 - i; // marks "seen in row i"
    for (let t = incPtr[i]; t < incPtr[i + 1]; t++) {
      const e = Math.floor(inc[t] / ed);
      for (let b = 0; b < ed; b++) {
        const j = elementDofs[e * ed + b];
        if (j > i && pos[j] !== -2 - i) {
          pos[j] = -2 - i;
          row.push(j);
        }
      }
    }
    row.sort((a, b) => a - b);
    const start = rowPtr[i];
    for (let k = 0; k < row.length; k++) {
      cols[start + k] = row[k];
      pos[row[k]] = start + k;
    }
    // scatter values of the elements touching dof i into row i (columns ≥ i)
    for (let t = incPtr[i]; t < incPtr[i + 1]; t++) {
      const p = inc[t];
      const e = Math.floor(p / ed);
      const a = p - e * ed;
      const base = e * ed * ed + a * ed;
      for (let b = 0; b < ed; b++) {
        const j = elementDofs[e * ed + b];
        if (j >= i) values[pos[j]] += elementMatrices[base + b];
      }
    }
  }
  return SparseSymmetric.fromUpperCSR(ndof, rowPtr, cols, values);
}

/** f = Σ_e Aeᵀ f_e: assembles element vectors (elements × edof) through the element dof map (negative ids dropped). */
export function assembleVector(
  ndof: number,
  elementDofs: Int32Array,
  elementVectors: Float64Array,
  out?: Float64Array
): Float64Array {
  requireInput(
    elementVectors.length === elementDofs.length,
    () => `element vectors hold ${elementVectors.length} values; the dof map has ${elementDofs.length}`
  );
  const f = out ?? new Float64Array(ndof);
  for (let p = 0; p < elementDofs.length; p++) {
    const d = elementDofs[p];
    if (d >= ndof)
      throw new KernelError('invalid-input', `dof map entry ${p} refers to dof ${d}; there are ${ndof}`);
    if (d >= 0) f[d] += elementVectors[p];
  }
  return f;
}

/** The element dof map of a node connectivity (each node id expanded to its dofs): dof = node × dofsPerNode + component. */
export function elementDofMap(elements: Int32Array, dofsPerNode: number): Int32Array {
  const map = new Int32Array(elements.length * dofsPerNode);
  for (let p = 0; p < elements.length; p++)
    for (let c = 0; c < dofsPerNode; c++) map[p * dofsPerNode + c] = elements[p] * dofsPerNode + c;
  return map;
}
