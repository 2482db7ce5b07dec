import { describe, expect, it } from 'vitest';
import {
  KernelError,
  SparseSymmetric,
  choleskyFactor,
  chooseOrdering,
  fillReducingOrdering,
  gaussRule,
  orderingCandidates,
  seededUniform,
  simplexRule,
  structuredMesh
} from '../../../packages/kernel/src/index';
import { HEX8, Q4, T10, assembleMesh, maxAbs } from './fixtures';

/** Solutions from two orderings agree to this, relative to the solution (both backward stable; condition ≲ 1e4 here). */
const ORDERING_AGREEMENT = 1e-12;

/**
 * Amestoy, Davis & Duff (1996) find the fill of approximate minimum degree comparable to that of minimum
 * degree with exact degrees; we allow this much more (our margin, no source).
 */
const AMD_FILL_MARGIN = 1.1;

/** A stiffened copy: K + δI is positive definite however the mesh is supported. */
function shifted(K: SparseSymmetric, delta = 1e-2): SparseSymmetric {
  for (let i = 0; i < K.n; i++) K.add(i, i, delta);
  return K;
}

function membrane(divisions: number): SparseSymmetric {
  const mesh = structuredMesh('quadrilateral', divisions, { perturbation: 0.1, seed: 2 });
  return shifted(assembleMesh('plane-stress', Q4, gaussRule('quadrilateral', 2), mesh, { E: 1, nu: 0.3 }).K);
}

function cube(divisions: number): SparseSymmetric {
  const mesh = structuredMesh('hexahedron', divisions);
  return shifted(assembleMesh('solid', HEX8, gaussRule('hexahedron', 2), mesh, { E: 1, nu: 0.3 }).K);
}

function quadraticTets(divisions: number): SparseSymmetric {
  const mesh = structuredMesh('tetrahedron', divisions, { referenceNodes: T10.nodes });
  return shifted(assembleMesh('solid', T10, simplexRule('tetrahedron', 2), mesh, { E: 1, nu: 0.3 }).K);
}

/** A matrix with the sparsity of a graph given as edge lists (unit off-diagonals, dominant diagonal). */
function graphMatrix(n: number, edges: [number, number][]): SparseSymmetric {
  const K = new SparseSymmetric(n);
  const deg = new Float64Array(n);
  for (const [a, b] of edges) {
    K.add(a, b, -1);
    deg[a]++;
    deg[b]++;
  }
  for (let i = 0; i < n; i++) K.add(i, i, deg[i] + 1);
  return K.build();
}

/** 5-point (star) or 9-point (full) grid graph. */
function gridGraph(nx: number, ny: number, full: boolean): SparseSymmetric {
  const edges: [number, number][] = [];
  const id = (i: number, j: number) => i + nx * j;
  for (let j = 0; j < ny; j++)
    for (let i = 0; i < nx; i++) {
      if (i + 1 < nx) edges.push([id(i, j), id(i + 1, j)]);
      if (j + 1 < ny) edges.push([id(i, j), id(i, j + 1)]);
      if (full && i + 1 < nx && j + 1 < ny) edges.push([id(i, j), id(i + 1, j + 1)]);
      if (full && i > 0 && j + 1 < ny) edges.push([id(i, j), id(i - 1, j + 1)]);
    }
  return graphMatrix(nx * ny, edges);
}

/** Adjacency sets of the matrix graph (no diagonal). */
function adjacency(K: SparseSymmetric): Set<number>[] {
  K.build();
  const adj = Array.from({ length: K.n }, () => new Set<number>());
  for (let i = 0; i < K.n; i++)
    for (let p = K.rowPtr![i]; p < K.rowPtr![i + 1]; p++) {
      const j = K.cols[p];
      if (j !== i) {
        adj[i].add(j);
        adj[j].add(i);
      }
    }
  return adj;
}

/**
 * nnz(L) and Σ c_j² of an ordering by explicit symbolic elimination: eliminating a vertex joins its remaining
 * neighbours into a clique, and they are the column's off-diagonal rows (the elimination graph model, Rose 1972;
 * George & Liu 1981, ch. 5). Independent of the kernel's elimination tree and column counts.
 */
function eliminationFill(K: SparseSymmetric, perm: ArrayLike<number>): { fill: number; flops: number } {
  const adj = adjacency(K);
  let fill = 0;
  let flops = 0;
  for (let t = 0; t < perm.length; t++) {
    const v = perm[t];
    const nb = [...adj[v]];
    fill += nb.length + 1;
    flops += (nb.length + 1) ** 2;
    for (const a of nb) {
      adj[a].delete(v);
      for (const b of nb) if (a !== b) adj[a].add(b);
    }
  }
  return { fill, flops };
}

/** Minimum degree with exact degrees (smallest index among equals), by explicit elimination. */
function exactMinimumDegree(K: SparseSymmetric): Int32Array {
  const adj = adjacency(K);
  const alive = new Uint8Array(K.n).fill(1);
  const order = new Int32Array(K.n);
  for (let t = 0; t < K.n; t++) {
    let best = -1;
    for (let v = 0; v < K.n; v++) if (alive[v] && (best < 0 || adj[v].size < adj[best].size)) best = v;
    order[t] = best;
    alive[best] = 0;
    const nb = [...adj[best]];
    for (const a of nb) {
      adj[a].delete(best);
      for (const b of nb) if (a !== b) adj[a].add(b);
    }
  }
  return order;
}

const isPermutation = (p: Int32Array, n: number) =>
  p.length === n && [...p].sort((a, b) => a - b).every((v, i) => v === i);

describe('approximate minimum degree ordering (Amestoy, Davis & Duff 1996)', () => {
  it('is a permutation on meshes, disconnected graphs, isolated dofs and trivial matrices', () => {
    const cases: [string, SparseSymmetric][] = [
      ['membrane', membrane(6)],
      ['cube', cube(3)],
      ['quadratic tetrahedra', quadraticTets(1)],
      // two separate paths and an isolated vertex
      [
        'disconnected',
        graphMatrix(9, [
          [0, 1],
          [1, 2],
          [4, 5],
          [5, 6],
          [6, 7]
        ])
      ],
      ['diagonal', graphMatrix(5, [])],
      ['1 × 1', graphMatrix(1, [])],
      ['empty', graphMatrix(0, [])]
    ];
    for (const [name, K] of cases) {
      const p = fillReducingOrdering(K, 'minimum-degree');
      expect(isPermutation(p, K.n), name).toBe(true);
    }
  });

  it('predicts the fill and operation count that explicit symbolic elimination gives (George & Liu 1981)', () => {
    for (const K of [membrane(5), cube(2), quadraticTets(1), gridGraph(9, 7, true)]) {
      for (const c of orderingCandidates(K)) {
        const ref = eliminationFill(K, c.perm);
        expect(c.fill, c.method).toBe(ref.fill);
        expect(c.flops, c.method).toBe(ref.flops);
      }
    }
  });

  it('gives less fill than the natural order on grids, and about that of exact minimum degree', () => {
    for (const [K, label] of [
      [membrane(12), 'Q4 membrane 12 × 12'],
      [cube(4), 'Hex8 cube 4³'],
      [gridGraph(14, 14, false), '5-point grid 14 × 14'],
      [gridGraph(12, 12, true), '9-point grid 12 × 12']
    ] as const) {
      const natural = eliminationFill(
        K,
        Int32Array.from({ length: K.n }, (_, i) => i)
      ).fill;
      const [amd] = orderingCandidates(K, 'minimum-degree');
      expect(amd.method).toBe('minimum-degree');
      expect(amd.fill, label).toBeLessThan(natural);
      // and in the factor actually computed (relaxed supernodes store a few zeros more, never fewer)
      expect(choleskyFactor(K, { ordering: amd.perm }).nnz, label).toBeGreaterThanOrEqual(amd.fill);
    }
    for (const K of [gridGraph(14, 14, false), gridGraph(12, 12, true), membrane(8), cube(3)]) {
      const exact = eliminationFill(K, exactMinimumDegree(K)).fill;
      const [amd] = orderingCandidates(K, 'minimum-degree');
      expect(amd.fill).toBeLessThanOrEqual(AMD_FILL_MARGIN * exact);
    }
  });

  it('is identical across runs and across copies of the same matrix (deterministic)', () => {
    const K = quadraticTets(2);
    const copy = SparseSymmetric.fromUpperCSR(K.n, K.rowPtr!.slice(), K.cols.slice(), K.values.slice());
    const a = orderingCandidates(K);
    const b = orderingCandidates(copy);
    expect(a.map((c) => c.method)).toEqual(['minimum-degree', 'nested-dissection']);
    for (let t = 0; t < a.length; t++) {
      expect(Array.from(a[t].perm)).toEqual(Array.from(b[t].perm));
      expect(a[t].fill).toBe(b[t].fill);
    }
    const rhs = Float64Array.from({ length: K.n }, (_, i) => Math.sin(i));
    const x1 = choleskyFactor(K, { method: 'minimum-degree' }).solve(rhs);
    const x2 = choleskyFactor(copy, { method: 'minimum-degree' }).solve(rhs);
    expect(Array.from(x1)).toEqual(Array.from(x2));
  });

  it('solves as the nested-dissection ordering does, to 1e-12 relative', () => {
    for (const K of [membrane(10), cube(4), quadraticTets(2)]) {
      const rnd = seededUniform(K.n);
      const rhs = Float64Array.from({ length: K.n }, () => 2 * rnd() - 1);
      const xa = choleskyFactor(K, { method: 'minimum-degree' }).solve(rhs);
      const xn = choleskyFactor(K, { method: 'nested-dissection' }).solve(rhs);
      expect(maxAbs(xa.map((v, i) => v - xn[i])) / maxAbs(xn)).toBeLessThan(ORDERING_AGREEMENT);
      const r = K.multiply(xa).map((v, i) => v - rhs[i]);
      expect(maxAbs(r)).toBeLessThan(ORDERING_AGREEMENT * 1e3 * maxAbs(rhs));
    }
  });

  it('still names the dof where the pivot fails, under either ordering', () => {
    // an unsupported membrane: singular (three rigid-body modes)
    const mesh = structuredMesh('quadrilateral', 4);
    const { K } = assembleMesh('plane-stress', Q4, gaussRule('quadrilateral', 2), mesh, { E: 1, nu: 0.3 });
    for (const method of ['minimum-degree', 'nested-dissection'] as const) {
      try {
        choleskyFactor(K, { method });
        expect.unreachable();
      } catch (e) {
        expect(e).toBeInstanceOf(KernelError);
        expect((e as KernelError).code).toBe('not-positive-definite');
        const dof = (e as KernelError).detail?.dof as number;
        expect(Number.isInteger(dof) && dof >= 0 && dof < K.n).toBe(true);
        expect((e as Error).message).toContain(`pivot of dof ${dof}`);
      }
    }
  });
});

describe('choice of ordering per matrix', () => {
  it('takes the candidate of least predicted fill, on plane, cube and quadratic-tetrahedron meshes', () => {
    for (const K of [membrane(16), cube(5), quadraticTets(2)]) {
      const candidates = orderingCandidates(K);
      const chosen = chooseOrdering(candidates);
      for (const c of candidates) expect(chosen.fill).toBeLessThanOrEqual(c.fill);
      expect(Array.from(fillReducingOrdering(K))).toEqual(Array.from(chosen.perm));
    }
  });

  it('rejects an unknown ordering method, naming it', () => {
    expect(() => orderingCandidates(membrane(2), 'reverse' as never)).toThrow(/unknown ordering 'reverse'/);
    expect(() => chooseOrdering([])).toThrow(/no candidate/);
  });
});
