// Fill-reducing orderings of sparse symmetric matrices, on the graph of their node groups (the dofs of one
// node share a closed neighbourhood): nested dissection and approximate minimum degree, chosen per matrix
// by the fill that symbolic column counts predict.
import { KernelError } from './errors';
import type { SparseSymmetric } from './sparse';

/** Parts of at most this many supervariables are not dissected further. */
const DISSECTION_LEAF = 8;

/** A level separator must leave at least this fraction of the part on each side. */
const BALANCE = 0.3;

/** Pseudo-peripheral root search: at most this many BFS sweeps (George & Liu 1981 converge in a few). */
const PERIPHERAL_SWEEPS = 8;

/** An undirected graph without self-loops: the neighbours of v are adj[ptr[v] … ptr[v + 1]). */
export interface Graph {
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
  const qadj = new Int32Array(ptr[n]);
  let w = 0;
  for (let s = 0; s < count; s++) {
    const v = leader[s];
    mark[s] = s;
    const start = w;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) {
      const t = group[adj[p]];
      if (mark[t] !== s) {
        mark[t] = s;
        // insertion keeps the list sorted (group ids mostly arrive ascending)
        let r = w++;
        while (r > start && qadj[r - 1] > t) {
          qadj[r] = qadj[r - 1];
          r--;
        }
        qadj[r] = t;
      }
    }
    qptr[s + 1] = w;
  }
  return { group, count, quotient: { n: count, ptr: qptr, adj: qadj.slice(0, w) } };
}

/**
 * Nested dissection by level-structure separators (George 1973; George & Liu 1981, ch. 8): a
 * pseudo-peripheral root and a few more roots, the breadth-first levels of each, the smallest balanced
 * level as separator, numbered last.
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

  const spare = make();
  /** The vertex of L's last level whose distance in `from` is nearest half of from's depth (the first found among equals). */
  const halfwayFrom = (L: Levels, from: Levels): number => {
    const { level, queue, count, levels } = L;
    let start = count;
    while (start > 0 && level[queue[start - 1]] === levels - 1) start--;
    const half = (from.levels - 1) / 2;
    let pick = -1;
    let gap = Infinity;
    for (let i = start; i < count; i++) {
      const g = Math.abs(from.level[queue[i]] - half);
      if (g < gap) {
        gap = g;
        pick = queue[i];
      }
    }
    return pick;
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
    let far = -1; // the last sweep's least-degree vertex, when its levels (in trial) were no deeper
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
      if (trial.levels <= best.levels) {
        far = cand;
        break;
      }
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
    let cut = chooseLevel(best, pid);
    // more roots: vertices of the last level halfway (by distance) from a far vertex r′ of that level, e.g. the
    // middle of a far face of a box, where the root's levels are bent shells around a corner; r′ is the root
    // search's last least-degree vertex (its levels are at hand) and the last vertex found
    const picks: number[] = [];
    if (far >= 0) picks.push(halfwayFrom(best, trial));
    bfs(best.queue[best.count - 1], pid, spare);
    picks.push(halfwayFrom(best, spare));
    let halfway = -1;
    for (const h of picks) {
      if (h === root || h === halfway) continue;
      bfs(h, pid, trial);
      const alt = chooseLevel(trial, pid);
      if (alt.size < cut.size) {
        cut = alt;
        [best, trial] = [trial, best];
      }
      halfway = h;
    }
    // and the vertex of the last level farthest (within that level) from its lower-degree vertices, e.g. the
    // middle of a far side of a grid, whose levels run straight where a corner's bend
    const second = levelCentre(best, pid);
    if (second >= 0 && second !== root && second !== halfway) {
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

/** −i − 2: the parent pointer of an absorbed element or a merged variable, kept where the list start was (−1 stays −1). */
const flip = (i: number): number => -i - 2;

/** Marks of the minimum degree ordering restart below this bound, far below 2³¹. */
const MARK_LIMIT = 1 << 30;

/**
 * Approximate minimum degree ordering (Amestoy, Davis & Duff 1996, "An approximate minimum degree ordering
 * algorithm", SIAM J. Matrix Anal. Appl. 17(4)) of a graph whose vertices carry weights (here the dofs of
 * each node group): elimination on the quotient graph of variables and elements, approximate external
 * degrees, mass elimination, aggressive element absorption, indistinguishable variables merged by hashing,
 * then a postorder of the assembly tree. Returns the order (new → old) of the vertices.
 */
export function approximateMinimumDegree(g: Graph, weight: ArrayLike<number>): Int32Array {
  const n = g.n;
  const order = new Int32Array(n);
  if (n === 0) return order;
  let total = 0;
  for (let i = 0; i < n; i++) {
    if (!(Number.isInteger(weight[i]) && weight[i] > 0))
      throw new KernelError('internal', `minimum degree ordering: vertex ${i} has weight ${weight[i]}`);
    total += weight[i];
  }
  let cnz = g.ptr[n];
  // elbow room: the live quotient graph never needs more than the original graph (George & Liu 1981), a new
  // element at most `total` more
  const nzmax = cnz + Math.floor(cnz / 5) + 2 * total + n + 1;
  const Ci = new Int32Array(nzmax);
  Ci.set(g.adj.subarray(0, cnz));
  const Cp = new Int32Array(n); // start of each list; flip(parent) once absorbed or merged; −1 for a root
  const len = new Int32Array(n); // list length: elements first (elen of them), then variables
  const nv = new Int32Array(n); // weight of a principal variable; 0 once merged; negative while in the pivot element
  const elen = new Int32Array(n); // elements in the list of a variable; −2 for an element, −1 once merged
  const degree = new Int32Array(n); // approximate external degree (weighted); |L_e| for an element
  const w = new Int32Array(n).fill(1); // marks; 0 for a dead element
  const next = new Int32Array(n).fill(-1);
  const last = new Int32Array(n).fill(-1);
  const head = new Int32Array(total + 1).fill(-1); // degree lists
  const hhead = new Int32Array(n).fill(-1); // hash buckets of the supervariable search
  for (let i = 0; i < n; i++) {
    Cp[i] = g.ptr[i];
    len[i] = g.ptr[i + 1] - g.ptr[i];
    nv[i] = weight[i];
  }
  let nel = 0; // weight eliminated so far
  for (let i = 0; i < n; i++) {
    let d = 0;
    for (let p = g.ptr[i]; p < g.ptr[i + 1]; p++) d += nv[g.adj[p]];
    degree[i] = d;
    if (d === 0) {
      // an isolated vertex: an element at once, a root of the assembly tree
      elen[i] = -2;
      nel += nv[i];
      Cp[i] = -1;
      w[i] = 0;
    } else {
      if (head[d] !== -1) last[head[d]] = i;
      next[i] = head[d];
      head[d] = i;
    }
  }
  let lemax = 0;
  const clearMarks = (mark: number): number => {
    if (mark < 2 || mark + lemax + total + n >= MARK_LIMIT) {
      for (let i = 0; i < n; i++) if (w[i] !== 0) w[i] = 1;
      return 2;
    }
    return mark;
  };
  let mark = clearMarks(0);
  let mindeg = 0;
  while (nel < total) {
    // the pivot: a variable of least approximate degree (the head of the first non-empty list)
    let k = -1;
    for (; mindeg < total && (k = head[mindeg]) === -1; mindeg++);
    if (next[k] !== -1) last[next[k]] = -1;
    head[mindeg] = next[k];
    const elenk = elen[k];
    let nvk = nv[k];
    nel += nvk;

    // compact the lists when the new element might not fit behind them
    if (elenk > 0 && cnz + mindeg >= nzmax) {
      for (let j = 0; j < n; j++) {
        const p = Cp[j];
        if (p >= 0) {
          Cp[j] = Ci[p];
          Ci[p] = flip(j);
        }
      }
      let q = 0;
      for (let p = 0; p < cnz;) {
        const j = flip(Ci[p++]);
        if (j >= 0) {
          Ci[q] = Cp[j];
          Cp[j] = q++;
          for (let t = 0; t < len[j] - 1; t++) Ci[q++] = Ci[p++];
        }
      }
      cnz = q;
      if (cnz + mindeg >= nzmax)
        throw new KernelError(
          'internal',
          `minimum degree ordering: ${cnz} + ${mindeg} entries exceed the workspace of ${nzmax}`
        );
    }

    // the new element L_k: the variables of k's elements and of k's own list, each once; the elements absorbed
    let dk = 0;
    nv[k] = -nvk;
    let p = Cp[k];
    const pk1 = elenk === 0 ? p : cnz;
    let pk2 = pk1;
    for (let k1 = 1; k1 <= elenk + 1; k1++) {
      let e: number;
      let pj: number;
      let ln: number;
      if (k1 > elenk) {
        e = k;
        pj = p;
        ln = len[k] - elenk;
      } else {
        e = Ci[p++];
        pj = Cp[e];
        ln = len[e];
      }
      for (let k2 = 1; k2 <= ln; k2++) {
        const i = Ci[pj++];
        const nvi = nv[i];
        if (nvi <= 0) continue;
        dk += nvi;
        nv[i] = -nvi; // flags i as a member of L_k
        Ci[pk2++] = i;
        // out of its degree list
        if (next[i] !== -1) last[next[i]] = last[i];
        if (last[i] !== -1) next[last[i]] = next[i];
        else head[degree[i]] = next[i];
      }
      if (e !== k) {
        Cp[e] = flip(k);
        w[e] = 0;
      }
    }
    if (elenk !== 0) cnz = pk2;
    degree[k] = dk;
    Cp[k] = pk1;
    len[k] = pk2 - pk1;
    elen[k] = -2;

    // |L_e \ L_k| for every element e next to L_k, as w[e] − mark
    mark = clearMarks(mark);
    for (let pk = pk1; pk < pk2; pk++) {
      const i = Ci[pk];
      const eln = elen[i];
      if (eln <= 0) continue;
      const nvi = -nv[i];
      const wnvi = mark - nvi;
      for (let q = Cp[i]; q < Cp[i] + eln; q++) {
        const e = Ci[q];
        if (w[e] >= mark) w[e] -= nvi;
        else if (w[e] !== 0) w[e] = degree[e] + wnvi;
      }
    }

    // approximate degrees of the variables of L_k; prune their lists; absorb elements inside L_k
    for (let pk = pk1; pk < pk2; pk++) {
      const i = Ci[pk];
      const p1 = Cp[i];
      const p2 = p1 + elen[i] - 1;
      let pn = p1;
      let h = 0;
      let d = 0;
      for (let q = p1; q <= p2; q++) {
        const e = Ci[q];
        if (w[e] !== 0) {
          const dext = w[e] - mark;
          if (dext > 0) {
            d += dext;
            Ci[pn++] = e;
            h += e;
          } else {
            // aggressive absorption: L_e ⊆ L_k
            Cp[e] = flip(k);
            w[e] = 0;
          }
        }
      }
      elen[i] = pn - p1 + 1;
      const p3 = pn;
      const p4 = p1 + len[i];
      for (let q = p2 + 1; q < p4; q++) {
        const j = Ci[q];
        const nvj = nv[j];
        if (nvj <= 0) continue;
        d += nvj;
        Ci[pn++] = j;
        h += j;
      }
      if (d === 0) {
        // mass elimination: i is adjacent to nothing outside L_k
        Cp[i] = flip(k);
        const nvi = -nv[i];
        dk -= nvi;
        nvk += nvi;
        nel += nvi;
        nv[i] = 0;
        elen[i] = -1;
      } else {
        degree[i] = Math.min(degree[i], d);
        // k becomes the first element of i's list
        Ci[pn] = Ci[p3];
        Ci[p3] = Ci[p1];
        Ci[p1] = k;
        len[i] = pn - p1 + 1;
        h %= n;
        next[i] = hhead[h];
        hhead[h] = i;
        last[i] = h;
      }
    }
    degree[k] = dk;
    lemax = Math.max(lemax, dk);
    mark = clearMarks(mark + lemax);

    // indistinguishable variables of L_k (same elements and variables, found through equal hashes) merge
    for (let pk = pk1; pk < pk2; pk++) {
      let i = Ci[pk];
      if (nv[i] >= 0) continue;
      const h = last[i];
      i = hhead[h];
      hhead[h] = -1;
      for (; i !== -1 && next[i] !== -1; i = next[i], mark++) {
        const ln = len[i];
        const eln = elen[i];
        for (let q = Cp[i] + 1; q < Cp[i] + ln; q++) w[Ci[q]] = mark;
        let jlast = i;
        for (let j = next[i]; j !== -1;) {
          let ok = len[j] === ln && elen[j] === eln;
          for (let q = Cp[j] + 1; ok && q < Cp[j] + ln; q++) if (w[Ci[q]] !== mark) ok = false;
          if (ok) {
            Cp[j] = flip(i);
            nv[i] += nv[j];
            nv[j] = 0;
            elen[j] = -1;
            j = next[j];
            next[jlast] = j;
          } else {
            jlast = j;
            j = next[j];
          }
        }
      }
    }

    // the variables of L_k back into the degree lists with their new degrees
    let pw = pk1;
    for (let pk = pk1; pk < pk2; pk++) {
      const i = Ci[pk];
      const nvi = -nv[i];
      if (nvi <= 0) continue;
      nv[i] = nvi;
      const d = Math.min(degree[i] + dk - nvi, total - nel - nvi);
      if (head[d] !== -1) last[head[d]] = i;
      next[i] = head[d];
      last[i] = -1;
      head[d] = i;
      if (d < mindeg) mindeg = d;
      degree[i] = d;
      Ci[pw++] = i;
    }
    nv[k] = nvk;
    len[k] = pw - pk1;
    if (len[k] === 0) {
      Cp[k] = -1;
      w[k] = 0;
    }
    if (elenk !== 0) cnz = pw;
  }

  // postorder of the assembly tree: every merged variable and absorbed element before its parent
  const parent = Cp;
  for (let i = 0; i < n; i++) parent[i] = flip(parent[i]);
  const child = head.fill(-1, 0, n);
  const sibling = next.fill(-1);
  for (let j = n - 1; j >= 0; j--) {
    if (nv[j] > 0) continue;
    sibling[j] = child[parent[j]];
    child[parent[j]] = j;
  }
  for (let e = n - 1; e >= 0; e--) {
    if (nv[e] <= 0 || parent[e] === -1) continue;
    sibling[e] = child[parent[e]];
    child[parent[e]] = e;
  }
  const stack = last;
  let k = 0;
  for (let r = 0; r < n; r++) {
    if (parent[r] !== -1) continue;
    let top = 0;
    stack[0] = r;
    while (top >= 0) {
      const v = stack[top];
      const c = child[v];
      if (c === -1) {
        order[k++] = v;
        top--;
      } else {
        child[v] = sibling[c];
        stack[++top] = c;
      }
    }
  }
  if (k !== n) throw new KernelError('internal', `minimum degree ordering numbered ${k} of ${n} vertices`);
  return order;
}

/** Predicted cost of factorising with an ordering, from its symbolic column counts. */
export interface OrderingPrediction {
  method: 'minimum-degree' | 'nested-dissection';
  /** new → old over the matrix indices */
  perm: Int32Array;
  /** nonzeros of L, diagonal included (no explicit zeros) */
  fill: number;
  /** Σ_j c_j², c_j the nonzeros of column j of L: the multiply-adds of the factorisation, to a constant */
  flops: number;
}

/**
 * Fill and operation count of the node-group order on the quotient graph: elimination tree (Liu 1986), then
 * the row subtrees climbed from each row's lower neighbours give every column's weighted count (Liu 1990).
 * A group of w dofs whose column reaches c dofs below it holds w(w + 1)/2 + w·c entries of L.
 */
function predictedCost(
  g: Graph,
  weight: ArrayLike<number>,
  order: Int32Array
): { fill: number; flops: number } {
  const { n, ptr, adj } = g;
  const inv = new Int32Array(n);
  for (let k = 0; k < n; k++) inv[order[k]] = k;
  const parent = new Int32Array(n).fill(-1);
  const ancestor = new Int32Array(n).fill(-1);
  for (let k = 0; k < n; k++) {
    const v = order[k];
    for (let p = ptr[v]; p < ptr[v + 1]; p++) {
      let i = inv[adj[p]];
      while (i !== -1 && i < k) {
        const up = ancestor[i];
        ancestor[i] = k;
        if (up === -1) parent[i] = k;
        i = up;
      }
    }
  }
  const below = new Float64Array(n);
  const mark = ancestor.fill(-1);
  for (let k = 0; k < n; k++) {
    const v = order[k];
    const wk = weight[v];
    mark[k] = k;
    for (let p = ptr[v]; p < ptr[v + 1]; p++) {
      let i = inv[adj[p]];
      if (i > k) continue;
      while (mark[i] !== k) {
        below[i] += wk;
        mark[i] = k;
        i = parent[i];
      }
    }
  }
  let fill = 0;
  let flops = 0;
  for (let k = 0; k < n; k++) {
    const wk = weight[order[k]];
    const c = below[k];
    fill += (wk * (wk + 1)) / 2 + wk * c;
    for (let j = 1; j <= wk; j++) flops += (j + c) * (j + c);
  }
  return { fill, flops };
}

/** The dof order (new → old) of a node-group order: the members of each group together, in index order. */
function expandGroups(group: Int32Array, count: number, qorder: Int32Array): Int32Array {
  const n = group.length;
  const mptr = new Int32Array(count + 1);
  for (let v = 0; v < n; v++) mptr[group[v] + 1]++;
  for (let s = 0; s < count; s++) mptr[s + 1] += mptr[s];
  const members = new Int32Array(n);
  const fill = mptr.slice(0, count);
  for (let v = 0; v < n; v++) members[fill[group[v]]++] = v;
  const perm = new Int32Array(n);
  let k = 0;
  for (let t = 0; t < count; t++) {
    const s = qorder[t];
    for (let p = mptr[s]; p < mptr[s + 1]; p++) perm[k++] = members[p];
  }
  return perm;
}

export type OrderingMethod = 'automatic' | 'minimum-degree' | 'nested-dissection';

/**
 * The candidate orderings of K on the graph of its node groups, each with the fill and operation count its
 * symbolic column counts predict: approximate minimum degree and nested dissection (or the one asked for).
 */
export function orderingCandidates(
  K: SparseSymmetric,
  method: OrderingMethod = 'automatic'
): OrderingPrediction[] {
  if (method !== 'automatic' && method !== 'minimum-degree' && method !== 'nested-dissection') {
    throw new KernelError(
      'invalid-input',
      `unknown ordering '${String(method)}'; expected automatic, minimum-degree or nested-dissection`
    );
  }
  const g = adjacencyOf(K);
  const { group, count, quotient } = supervariables(g);
  const weight = new Int32Array(count);
  for (let v = 0; v < g.n; v++) weight[group[v]]++;
  const out: OrderingPrediction[] = [];
  if (method !== 'nested-dissection') {
    const q = approximateMinimumDegree(quotient, weight);
    out.push({
      method: 'minimum-degree',
      perm: expandGroups(group, count, q),
      ...predictedCost(quotient, weight, q)
    });
  }
  if (method !== 'minimum-degree') {
    const q = nestedDissection(quotient);
    out.push({
      method: 'nested-dissection',
      perm: expandGroups(group, count, q),
      ...predictedCost(quotient, weight, q)
    });
  }
  return out;
}

/**
 * A fill-reducing ordering of K (new → old) on the graph of its node groups: by default whichever of
 * approximate minimum degree and nested dissection predicts the smaller fill (minimum degree on a tie).
 */
export function fillReducingOrdering(K: SparseSymmetric, method: OrderingMethod = 'automatic'): Int32Array {
  return chooseOrdering(orderingCandidates(K, method)).perm;
}

/** The candidate of least predicted fill (the first of equals: minimum degree before nested dissection). */
export function chooseOrdering(candidates: OrderingPrediction[]): OrderingPrediction {
  if (candidates.length === 0)
    throw new KernelError('invalid-input', 'no candidate orderings to choose from');
  let best = candidates[0];
  for (const o of candidates) if (o.fill < best.fill) best = o;
  return best;
}
