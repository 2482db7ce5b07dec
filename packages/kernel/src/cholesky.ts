import { KernelError, requireFinite, requireInput } from './errors';
import { SparseSymmetric } from './sparse';

/**
 * A pivot fails when it falls to this fraction of its original diagonal entry (or below zero): about
 * 1e4 machine epsilons, above the rounding residue a singular (unsupported) system leaves, below the
 * pivot loss of well-posed stiffness matrices of any practical conditioning (common practice, no source).
 */
export const PIVOT_RELATIVE_TOLERANCE = 1e-12;

/** Parts of at most this many supervariables are not dissected further. */
const DISSECTION_LEAF = 8;

/** A level separator must leave at least this fraction of the part on each side. */
const BALANCE = 0.3;

/** Pseudo-peripheral root search: at most this many BFS sweeps (George & Liu 1981 converge in a few). */
const PERIPHERAL_SWEEPS = 8;

interface Graph {
  n: number;
  ptr: Int32Array;
  adj: Int32Array;
}

/** Symmetric adjacency without the diagonal, sorted per vertex, from the upper CSR. */
function adjacencyOf(K: SparseSymmetric): Graph {
  K.build();
  const n = K.n;
  const rp = K.rowPtr!;
  const cols = K.cols;
  const deg = new Int32Array(n + 1);
  for (let i = 0; i < n; i++)
    for (let p = rp[i]; p < rp[i + 1]; p++) {
      const j = cols[p];
      if (j !== i) {
        deg[i + 1]++;
        deg[j + 1]++;
      }
    }
  for (let i = 0; i < n; i++) deg[i + 1] += deg[i];
  const adj = new Int32Array(deg[n]);
  const next = deg.slice(0, n);
  // rows ascending and columns ascending give sorted lists: lower neighbours arrive first, in order
  for (let i = 0; i < n; i++)
    for (let p = rp[i]; p < rp[i + 1]; p++) {
      const j = cols[p];
      if (j !== i) adj[next[j]++] = i;
    }
  for (let i = 0; i < n; i++)
    for (let p = rp[i]; p < rp[i + 1]; p++) {
      const j = cols[p];
      if (j !== i) adj[next[i]++] = j;
    }
  return { n, ptr: deg, adj };
}

/** Groups vertices with identical closed neighbourhoods (the dofs of one node): returns the group of each vertex and the quotient graph. */
function supervariables(g: Graph): { group: Int32Array; count: number; quotient: Graph } {
  const { n, ptr, adj } = g;
  const hash = new Float64Array(n);
  for (let v = 0; v < n; v++) {
    let h = v;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) h += adj[p];
    hash[v] = h;
  }
  // N[u] = N(u) ∪ {u} equals N[v] when the degrees agree and every member of N[u] is in N[v]
  const inV = new Int32Array(n).fill(-1);
  const closedEqual = (u: number, v: number): boolean => {
    if (ptr[u + 1] - ptr[u] !== ptr[v + 1] - ptr[v]) return false;
    inV[v] = v;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) inV[adj[p]] = v;
    if (inV[u] !== v) return false;
    for (let p = ptr[u]; p < ptr[u + 1]; p++) if (inV[adj[p]] !== v) return false;
    return true;
  };
  const group = new Int32Array(n).fill(-1);
  const leader: number[] = [];
  for (let v = 0; v < n; v++) {
    for (let p = ptr[v]; p < ptr[v + 1]; p++) {
      const u = adj[p];
      if (u >= v) break;
      const l = leader[group[u]];
      if (hash[l] === hash[v] && closedEqual(l, v)) {
        group[v] = group[u];
        break;
      }
    }
    if (group[v] < 0) {
      group[v] = leader.length;
      leader.push(v);
    }
  }
  const count = leader.length;
  // quotient graph on the leaders
  const mark = new Int32Array(count).fill(-1);
  const qptr = new Int32Array(count + 1);
  const qadj: number[] = [];
  for (let s = 0; s < count; s++) {
    const v = leader[s];
    mark[s] = s;
    const start = qadj.length;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) {
      const t = group[adj[p]];
      if (mark[t] !== s) {
        mark[t] = s;
        qadj.push(t);
      }
    }
    const seg = qadj.slice(start).sort((a, b) => a - b);
    for (let k = 0; k < seg.length; k++) qadj[start + k] = seg[k];
    qptr[s + 1] = qadj.length;
  }
  return { group, count, quotient: { n: count, ptr: qptr, adj: Int32Array.from(qadj) } };
}

/**
 * Nested dissection by level-structure separators (George 1973; George & Liu 1981, ch. 8): a
 * pseudo-peripheral root, its breadth-first levels, the middle level as separator, numbered last.
 */
function nestedDissection(g: Graph): Int32Array {
  const { n, ptr, adj } = g;
  const order = new Int32Array(n);
  let head = 0;
  const part = new Int32Array(n); // part label of each unnumbered vertex; −1 once numbered
  let nextPart = 1;
  const seen = new Int32Array(n);
  let stamp = 0;
  // two level structures: the best so far and a candidate
  interface Levels {
    level: Int32Array;
    queue: Int32Array;
    count: number;
    levels: number;
  }
  const make = (): Levels => ({ level: new Int32Array(n), queue: new Int32Array(n), count: 0, levels: 0 });
  let best = make();
  let trial = make();

  /** Breadth-first levels from root inside part pid, into L. */
  const bfs = (root: number, pid: number, L: Levels): void => {
    const { level, queue } = L;
    stamp++;
    let qh = 0;
    let qt = 0;
    queue[qt++] = root;
    seen[root] = stamp;
    level[root] = 0;
    let levels = 1;
    while (qh < qt) {
      const v = queue[qh++];
      const lv = level[v];
      for (let p = ptr[v]; p < ptr[v + 1]; p++) {
        const u = adj[p];
        if (part[u] === pid && seen[u] !== stamp) {
          seen[u] = stamp;
          level[u] = lv + 1;
          if (lv + 2 > levels) levels = lv + 2;
          queue[qt++] = u;
        }
      }
    }
    L.count = qt;
    L.levels = levels;
  };

  const degreeIn = (v: number, pid: number): number => {
    let d = 0;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) if (part[adj[p]] === pid) d++;
    return d;
  };

  const touches = new Int32Array(n + 1);
  const cumulative = new Int32Array(n + 2);
  /** The separator level of L: the smallest balanced one (each side ≥ BALANCE), else the median's. */
  const chooseLevel = (L: Levels, pid: number): { level: number; size: number } => {
    const { level, queue, count: len, levels } = L;
    touches.fill(0, 0, levels);
    cumulative.fill(0, 0, levels + 1);
    for (let i = 0; i < len; i++) {
      const v = queue[i];
      const lv = level[v];
      cumulative[lv + 1]++;
      for (let p = ptr[v]; p < ptr[v + 1]; p++) {
        const u = adj[p];
        if (part[u] === pid && level[u] === lv + 1) {
          touches[lv]++;
          break;
        }
      }
    }
    for (let l = 0; l < levels; l++) cumulative[l + 1] += cumulative[l];
    let bestLevel = -1;
    let bestSize = Infinity;
    for (let l = 1; l < levels - 1; l++) {
      if (
        cumulative[l] >= BALANCE * len &&
        len - cumulative[l + 1] >= BALANCE * len &&
        touches[l] < bestSize
      ) {
        bestSize = touches[l];
        bestLevel = l;
      }
    }
    if (bestLevel < 0) {
      bestLevel = Math.min(levels - 2, Math.max(1, level[queue[len >> 1]]));
      bestSize = touches[bestLevel];
    }
    return { level: bestLevel, size: bestSize };
  };

  const ringSeen = new Int32Array(n);
  let ringStamp = 0;
  /** In the last level of L: multi-source BFS from its vertices of less than the level's largest degree; the farthest vertex. */
  const levelCentre = (L: Levels, pid: number): number => {
    const { level, queue, count, levels } = L;
    let start = count;
    while (start > 0 && level[queue[start - 1]] === levels - 1) start--;
    if (count - start < 3) return -1;
    const last = queue.slice(start, count);
    const mark = ++ringStamp;
    const deg = last.map((v) => degreeIn(v, pid));
    let maxDeg = 0;
    for (const d of deg) maxDeg = Math.max(maxDeg, d);
    const ring: number[] = [];
    last.forEach((v, i) => {
      if (deg[i] < maxDeg) {
        ring.push(v);
        ringSeen[v] = mark;
      }
    });
    if (ring.length === 0 || ring.length === last.length) return -1;
    let farthest = ring[0];
    for (let h = 0; h < ring.length; h++) {
      const v = ring[h];
      farthest = v;
      for (let p = ptr[v]; p < ptr[v + 1]; p++) {
        const u = adj[p];
        if (ringSeen[u] !== mark && part[u] === pid && level[u] === levels - 1) {
          ringSeen[u] = mark;
          ring.push(u);
        }
      }
    }
    return farthest;
  };

  const number = (vs: ArrayLike<number>) => {
    for (let i = 0; i < vs.length; i++) {
      order[head++] = vs[i];
      part[vs[i]] = -1;
    }
  };

  const dissect = (verts: Int32Array, pid: number): void => {
    const len = verts.length;
    if (len <= DISSECTION_LEAF) return number(verts);
    // pseudo-peripheral root (George & Liu 1979): restart from a least-degree vertex of the last level while the depth grows
    let root = verts[0];
    bfs(root, pid, best);
    for (let sweep = 0; sweep < PERIPHERAL_SWEEPS; sweep++) {
      let cand = -1;
      let candDeg = Infinity;
      for (let i = best.count - 1; i >= 0 && best.level[best.queue[i]] === best.levels - 1; i--) {
        const v = best.queue[i];
        const d = degreeIn(v, pid);
        if (d < candDeg || (d === candDeg && v < cand)) {
          candDeg = d;
          cand = v;
        }
      }
      bfs(cand, pid, trial);
      if (trial.levels <= best.levels) break;
      root = cand;
      [best, trial] = [trial, best];
    }
    if (best.count < len) {
      // disconnected: the component found and the rest are dissected separately
      const comp = Int32Array.from(best.queue.subarray(0, best.count)).sort();
      const a = nextPart++;
      const b = nextPart++;
      for (let i = 0; i < len; i++) part[verts[i]] = b;
      for (let i = 0; i < comp.length; i++) part[comp[i]] = a;
      const rest = verts.filter((v) => part[v] === b);
      dissect(comp, a);
      dissect(rest, b);
      return;
    }
    if (best.levels <= 2) return number(best.queue.subarray(0, len));
    // a second root: the vertex of the last level farthest (within that level) from its lower-degree
    // vertices, e.g. the middle of a far side of a grid, whose levels run straight where a corner's bend
    let cut = chooseLevel(best, pid);
    const second = levelCentre(best, pid);
    if (second >= 0 && second !== root) {
      bfs(second, pid, trial);
      const alt = chooseLevel(trial, pid);
      if (alt.size < cut.size) {
        cut = alt;
        [best, trial] = [trial, best];
      }
    }
    const m = cut.level;
    const { level, queue } = best;
    const a = nextPart++;
    const b = nextPart++;
    const sep: number[] = [];
    const sideA: number[] = [];
    const sideB: number[] = [];
    for (let i = 0; i < len; i++) {
      const v = queue[i];
      const lv = level[v];
      if (lv < m) sideA.push(v);
      else if (lv > m) sideB.push(v);
      else {
        // level-m vertices without a neighbour beyond the level need not separate
        let touchesNext = false;
        for (let p = ptr[v]; p < ptr[v + 1]; p++) {
          const u = adj[p];
          if (part[u] === pid && level[u] === m + 1) {
            touchesNext = true;
            break;
          }
        }
        (touchesNext ? sep : sideA).push(v);
      }
    }
    for (const v of sideA) part[v] = a;
    for (const v of sideB) part[v] = b;
    for (const v of sep) part[v] = -1;
    dissect(Int32Array.from(sideA).sort(), a);
    dissect(Int32Array.from(sideB).sort(), b);
    for (const v of sep) order[head++] = v;
  };

  const all = new Int32Array(n);
  for (let i = 0; i < n; i++) all[i] = i;
  if (n > 0) dissect(all, 0);
  return order;
}

/** A fill-reducing ordering of K (new → old): nested dissection of the graph of its supervariables. */
export function fillReducingOrdering(K: SparseSymmetric): Int32Array {
  const g = adjacencyOf(K);
  const { group, count, quotient } = supervariables(g);
  const qorder = nestedDissection(quotient);
  // members of each supervariable, in index order
  const mptr = new Int32Array(count + 1);
  for (let v = 0; v < g.n; v++) mptr[group[v] + 1]++;
  for (let s = 0; s < count; s++) mptr[s + 1] += mptr[s];
  const members = new Int32Array(g.n);
  const fill = mptr.slice(0, count);
  for (let v = 0; v < g.n; v++) members[fill[group[v]]++] = v;
  const perm = new Int32Array(g.n);
  let k = 0;
  for (let t = 0; t < count; t++) {
    const s = qorder[t];
    for (let p = mptr[s]; p < mptr[s + 1]; p++) perm[k++] = members[p];
  }
  return perm;
}

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
  /** a precomputed ordering (new → old); default fillReducingOrdering(K) */
  ordering?: Int32Array;
}

/**
 * Sparse Cholesky P K Pᵀ = L Lᵀ: nested-dissection ordering, elimination tree and column counts
 * (symbolic), relaxed supernodes, then multifrontal numeric factorisation (Liu 1992, "The multifrontal method").
 * Throws KernelError 'not-positive-definite' naming the dof whose pivot failed.
 */
export function choleskyFactor(K: SparseSymmetric, opts?: CholeskyOptions): CholeskyFactor {
  K.build();
  const n = K.n;
  requireFinite(K.values, 'matrix values');
  const labels = opts?.labels;
  if (labels)
    requireInput(labels.length === n, () => `labels has ${labels.length} entries; the matrix has order ${n}`);
  const nd = opts?.ordering ?? fillReducingOrdering(K);
  requireInput(nd.length === n, () => `ordering has ${nd.length} entries; the matrix has order ${n}`);
  // postorder the elimination tree of the dissection ordering: same fill, contiguous subtrees
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
 * Numeric multifrontal factorisation: for each supernode in postorder, assemble the frontal matrix from
 * A and the children's update matrices (extend-add), factor its k pivot columns, and push the Schur
 * complement (packed lower triangle) on a stack arena.
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
  let maxPanel = 0;
  for (let s = 0; s < ns; s++)
    maxPanel = Math.max(maxPanel, (rowPtr[s + 1] - rowPtr[s]) * (superStart[s + 1] - superStart[s]));
  const P = new Float64Array(maxPanel);
  const rel = new Int32Array(n);
  const loc = new Int32Array(maxFront);
  for (let s = 0; s < ns; s++) {
    const f = superStart[s];
    const k = superStart[s + 1] - f;
    const ro = rowPtr[s];
    const m = rowPtr[s + 1] - ro;
    for (let t = 0; t < m; t++) rel[rows[ro + t]] = t;
    for (let i = 0; i < m; i++) F.fill(0, i * m, i * m + i + 1);
    for (let jj = 0; jj < k; jj++) {
      const j = f + jj;
      for (let t = A.p[j]; t < A.p[j + 1]; t++) F[rel[A.i[t]] * m + jj] += A.x[t];
    }
    // extend-add the children's update matrices (the top of the stack, in postorder)
    for (let c = superChildren[s]; c > 0; c--) {
      const cs = stack[--top];
      const kc = superStart[cs + 1] - superStart[cs];
      const cro = rowPtr[cs] + kc;
      const u = rowPtr[cs + 1] - cro;
      const base = starts[cs];
      for (let a = 0; a < u; a++) loc[a] = rel[rows[cro + a]];
      for (let a = 0; a < u; a++) {
        const la = loc[a] * m;
        const ua = base + (a * (a + 1)) / 2;
        for (let b = 0; b <= a; b++) F[la + loc[b]] += arena[ua + b];
      }
      arenaTop = base;
    }
    partialCholesky(F, m, k, P, diag, f, dofOf);
    values.set(P.subarray(0, m * k), valuePtr[s]);
    const u = m - k;
    if (u > 0) {
      starts[s] = arenaTop;
      for (let a = 0; a < u; a++) {
        const src = (k + a) * m + k;
        arena.set(F.subarray(src, src + a + 1), arenaTop);
        arenaTop += a + 1;
      }
      stack[top++] = s;
    }
  }
  return values;
}

/**
 * Dense partial Cholesky of a front (m × m, row-major, lower triangle): the first k columns are copied to
 * the column-major panel P (m × k), factored left-looking, and the trailing block of F becomes the Schur
 * complement S − P₂ P₂ᵀ (P₂: the panel rows k … m − 1).
 */
function partialCholesky(
  F: Float64Array,
  m: number,
  k: number,
  P: Float64Array,
  diag: Float64Array,
  first: number,
  dofOf: (j: number) => number
): void {
  for (let j = 0; j < k; j++) {
    const cj = j * m;
    for (let i = j; i < m; i++) P[cj + i] = F[i * m + j];
    // col_j −= Σ_{p<j} L[j][p] · col_p over rows j … m − 1, four columns at a time
    let p = 0;
    for (; p + 3 < j; p += 4) {
      const c0 = p * m;
      const c1 = c0 + m;
      const c2 = c1 + m;
      const c3 = c2 + m;
      const l0 = P[c0 + j];
      const l1 = P[c1 + j];
      const l2 = P[c2 + j];
      const l3 = P[c3 + j];
      for (let i = j; i < m; i++)
        P[cj + i] -= l0 * P[c0 + i] + l1 * P[c1 + i] + l2 * P[c2 + i] + l3 * P[c3 + i];
    }
    for (; p < j; p++) {
      const c0 = p * m;
      const l0 = P[c0 + j];
      if (l0 === 0) continue;
      for (let i = j; i < m; i++) P[cj + i] -= l0 * P[c0 + i];
    }
    const d = P[cj + j];
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
    P[cj + j] = l;
    const il = 1 / l;
    for (let i = j + 1; i < m; i++) P[cj + i] *= il;
  }
  const u = m - k;
  if (u === 0) return;
  // trailing block: S[a][b] −= Σ_j P[k + a][j] P[k + b][j], two rows by four panel columns at a time
  let j = 0;
  for (; j + 3 < k; j += 4) {
    const p0 = j * m + k;
    const p1 = p0 + m;
    const p2 = p1 + m;
    const p3 = p2 + m;
    let a = 0;
    for (; a + 1 < u; a += 2) {
      const x0 = P[p0 + a];
      const x1 = P[p1 + a];
      const x2 = P[p2 + a];
      const x3 = P[p3 + a];
      const y0 = P[p0 + a + 1];
      const y1 = P[p1 + a + 1];
      const y2 = P[p2 + a + 1];
      const y3 = P[p3 + a + 1];
      const r0 = (k + a) * m + k;
      const r1 = r0 + m;
      for (let b = 0; b <= a; b++) {
        const q0 = P[p0 + b];
        const q1 = P[p1 + b];
        const q2 = P[p2 + b];
        const q3 = P[p3 + b];
        F[r0 + b] -= x0 * q0 + x1 * q1 + x2 * q2 + x3 * q3;
        F[r1 + b] -= y0 * q0 + y1 * q1 + y2 * q2 + y3 * q3;
      }
      F[r1 + a + 1] -= y0 * y0 + y1 * y1 + y2 * y2 + y3 * y3;
    }
    if (a < u) {
      const x0 = P[p0 + a];
      const x1 = P[p1 + a];
      const x2 = P[p2 + a];
      const x3 = P[p3 + a];
      const r0 = (k + a) * m + k;
      for (let b = 0; b <= a; b++)
        F[r0 + b] -= x0 * P[p0 + b] + x1 * P[p1 + b] + x2 * P[p2 + b] + x3 * P[p3 + b];
    }
  }
  for (; j < k; j++) {
    const p0 = j * m + k;
    for (let a = 0; a < u; a++) {
      const x0 = P[p0 + a];
      if (x0 === 0) continue;
      const r0 = (k + a) * m + k;
      for (let b = 0; b <= a; b++) F[r0 + b] -= x0 * P[p0 + b];
    }
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
