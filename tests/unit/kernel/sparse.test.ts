import { describe, expect, it } from 'vitest';
import { lusolve, matrix, sparse } from 'mathjs';
import {
  KernelError,
  SparseSymmetric,
  assemble,
  choleskyFactor,
  elementCoords,
  elementDofMap,
  elementStiffness,
  fillReducingOrdering,
  gaussRule,
  nodesWhere,
  seededUniform,
  solveSymmetric,
  solveWithDirichlet,
  structuredMesh
} from '../../../packages/kernel/src/index';
import { Q4, assembleMesh, maxAbs, tabulate } from './fixtures';

/** Agreement with the reference solver, relative to the solution size (both stable; condition numbers here ≲ 1e4). */
const SOLVE_TOLERANCE = 1e-10;

function randomSpd(n: number, seed: number, density = 0.1): SparseSymmetric {
  const rnd = seededUniform(seed);
  const K = new SparseSymmetric(n);
  const rowSum = new Float64Array(n);
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++)
      if (rnd() < density) {
        const v = 2 * rnd() - 1;
        K.add(i, j, v);
        rowSum[i] += Math.abs(v);
        rowSum[j] += Math.abs(v);
      }
  // diagonally dominant, hence positive definite (Gershgorin)
  for (let i = 0; i < n; i++) K.add(i, i, rowSum[i] + 0.5 + rnd());
  return K.build();
}

function toRows(A: Float64Array, n: number): number[][] {
  return Array.from({ length: n }, (_, i) => Array.from(A.subarray(i * n, (i + 1) * n)));
}

describe('sparse symmetric matrices', () => {
  it('sum duplicate triplets from either triangle and multiply like the dense matrix', () => {
    const K = new SparseSymmetric(3);
    K.add(0, 0, 2);
    K.add(1, 0, -1);
    K.add(0, 1, -0.5);
    K.add(2, 2, 4);
    K.add(1, 1, 3);
    K.add(1, 1, 1);
    K.build();
    expect(K.get(0, 1)).toBe(-1.5);
    expect(K.get(1, 0)).toBe(-1.5);
    expect(K.get(0, 2)).toBe(0);
    expect(Array.from(K.toDense())).toEqual([2, -1.5, 0, -1.5, 4, 0, 0, 0, 4]);
    expect(Array.from(K.multiply(Float64Array.of(1, 2, 3)))).toEqual([-1, 6.5, 12]);
    K.add(1, 0, 0.5);
    expect(K.get(0, 1)).toBe(-1);
    expect(() => K.add(0, 2, 1)).toThrow(/not in the pattern/);
    expect(() => K.add(3, 0, 1)).toThrow(/outside the 3 × 3/);
    expect(() => new SparseSymmetric(2).add(0, 0, Number.NaN)).toThrow(/not finite/);
  });

  it('assemble element matrices into the same matrix as dense summation (Aᵀ K_e A)', () => {
    const mesh = structuredMesh('quadrilateral', 3, { perturbation: 0.2, seed: 1 });
    const rule = gaussRule('quadrilateral', 2);
    const tab = tabulate(Q4, rule.points);
    const n = mesh.nodeCount * 2;
    const dense = new Float64Array(n * n);
    const Ke = new Float64Array(mesh.elementCount * 64);
    const map = elementDofMap(mesh.elements, 2);
    for (let e = 0; e < mesh.elementCount; e++) {
      const k = elementStiffness('plane-strain', tab, rule.weights, elementCoords(mesh, e), {
        E: 5,
        nu: 0.2
      });
      Ke.set(k, e * 64);
      for (let a = 0; a < 8; a++)
        for (let b = 0; b < 8; b++) dense[map[e * 8 + a] * n + map[e * 8 + b]] += k[a * 8 + b];
    }
    const K = assemble(n, map, Ke, 8);
    const D = K.toDense();
    for (let i = 0; i < n * n; i++) expect(Math.abs(D[i] - dense[i])).toBeLessThan(1e-14 * maxAbs(dense));
  });
});

describe('sparse Cholesky solve', () => {
  it('agrees with mathjs lusolve on seeded random SPD systems and on a supported plane mesh', () => {
    for (const [n, seed] of [
      [1, 1],
      [7, 2],
      [40, 3],
      [120, 4]
    ]) {
      const K = randomSpd(n, seed);
      const b = Float64Array.from({ length: n }, (_, i) => Math.sin(i + seed));
      const x = solveSymmetric(K, b);
      const ref = (lusolve(toRows(K.toDense(), n), Array.from(b)) as number[][]).map((r) => r[0]);
      const err = maxAbs(x.map((v, i) => v - ref[i])) / maxAbs(Float64Array.from(ref));
      expect(err, `n = ${n}`).toBeLessThan(SOLVE_TOLERANCE);
    }
    // a clamped 6 × 6 membrane under a corner load, against mathjs sparse lusolve
    const mesh = structuredMesh('quadrilateral', 6, { perturbation: 0.15, seed: 8 });
    const { K } = assembleMesh(
      'plane-stress',
      Q4,
      gaussRule('quadrilateral', 2),
      mesh,
      { E: 70, nu: 0.33 },
      { thickness: 0.1 }
    );
    const clamped = Int32Array.from(
      [...nodesWhere(mesh, ([x]) => x === 0)].flatMap((i) => [2 * i, 2 * i + 1])
    );
    const f = new Float64Array(K.n);
    f[K.n - 1] = -1;
    const { u } = solveWithDirichlet(K, f, clamped, new Float64Array(clamped.length));
    const free = Array.from({ length: K.n }, (_, i) => i).filter((i) => !clamped.includes(i));
    const D = K.toDense();
    const Kff = free.map((i) => free.map((j) => D[i * K.n + j]));
    const ref = lusolve(sparse(Kff), matrix(free.map((i) => [f[i]]))).toArray() as number[][];
    free.forEach((dof, k) => expect(Math.abs(u[dof] - ref[k][0]) / maxAbs(u)).toBeLessThan(SOLVE_TOLERANCE));
  });

  it('recovers reactions that balance the loads, and prescribed values exactly (elimination of Dirichlet dofs)', () => {
    const mesh = structuredMesh('quadrilateral', 4);
    const { K } = assembleMesh('plane-stress', Q4, gaussRule('quadrilateral', 2), mesh, { E: 1, nu: 0.3 });
    const left = nodesWhere(mesh, ([x]) => x === 0);
    const fixed = Int32Array.from([...left].flatMap((i) => [2 * i, 2 * i + 1]));
    const values = Float64Array.from(fixed, (_d, k) => (k % 2 === 0 ? 0.01 : 0));
    const f = new Float64Array(K.n);
    const right = nodesWhere(mesh, ([x]) => x === 1);
    for (const i of right) f[2 * i] = 0.25;
    const { u, reactions } = solveWithDirichlet(K, f, fixed, values);
    fixed.forEach((d, k) => expect(u[d]).toBe(values[k]));
    // equilibrium: Σ reactions + Σ loads = 0 in each direction
    let rx = 0;
    let ry = 0;
    for (const d of fixed) {
      if (d % 2 === 0) rx += reactions[d];
      else ry += reactions[d];
    }
    expect(rx + 0.25 * right.length).toBeCloseTo(0, 12);
    expect(ry).toBeCloseTo(0, 12);
    // free dofs carry no reaction
    for (let d = 0; d < K.n; d++) if (!fixed.includes(d)) expect(reactions[d]).toBe(0);
  });

  it('names the dof where the pivot fails on a singular (unsupported) or indefinite system, never NaN', () => {
    const mesh = structuredMesh('quadrilateral', 3);
    const { K } = assembleMesh('plane-stress', Q4, gaussRule('quadrilateral', 2), mesh, { E: 1, nu: 0.3 });
    try {
      solveSymmetric(K, new Float64Array(K.n));
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(KernelError);
      expect((e as KernelError).code).toBe('not-positive-definite');
      expect((e as KernelError).detail?.dof).toEqual(expect.any(Number));
      expect((e as Error).message).toMatch(/pivot of dof \d+/);
    }
    // only one node held: the rotation is free; the error names a dof of the full numbering
    const held = Int32Array.of(0, 1);
    try {
      solveWithDirichlet(K, new Float64Array(K.n), held, new Float64Array(2));
      expect.unreachable();
    } catch (e) {
      const dof = (e as KernelError).detail?.dof as number;
      expect(dof).toBeGreaterThan(1);
      expect(dof).toBeLessThan(K.n);
    }
    const indefinite = new SparseSymmetric(3);
    indefinite.add(0, 0, 1);
    indefinite.add(1, 1, -2);
    indefinite.add(2, 2, 1);
    expect(() => solveSymmetric(indefinite, Float64Array.of(1, 1, 1))).toThrow(/dof 1/);
  });

  it('rejects bad boundary data, naming the entry', () => {
    const K = randomSpd(5, 9);
    expect(() =>
      solveWithDirichlet(K, new Float64Array(5), Int32Array.of(1, 1), Float64Array.of(0, 0))
    ).toThrow(/dof 1 is prescribed twice/);
    expect(() => solveWithDirichlet(K, new Float64Array(5), Int32Array.of(7), Float64Array.of(0))).toThrow(
      /fixed dof 7/
    );
    expect(() => solveWithDirichlet(K, new Float64Array(4), Int32Array.of(0), Float64Array.of(0))).toThrow(
      /load vector has 4/
    );
    expect(() => solveSymmetric(K, Float64Array.of(1, Number.NaN, 0, 0, 0))).toThrow(/right-hand side\[1\]/);
  });

  it('orders with less fill than the natural order on a grid and gives the same solution in any order', () => {
    const mesh = structuredMesh('quadrilateral', 12);
    const { K } = assembleMesh('plane-stress', Q4, gaussRule('quadrilateral', 2), mesh, { E: 1, nu: 0.3 });
    for (let i = 0; i < K.n; i++) K.add(i, i, 1e-2);
    const natural = Int32Array.from({ length: K.n }, (_, i) => i);
    const nd = fillReducingOrdering(K);
    expect([...nd].sort((a, b) => a - b)).toEqual([...natural]);
    const a = choleskyFactor(K, { ordering: natural });
    const b = choleskyFactor(K);
    expect(b.nnz).toBeLessThan(a.nnz);
    const rhs = Float64Array.from({ length: K.n }, (_, i) => Math.cos(i));
    const xa = a.solve(rhs);
    const xb = b.solve(rhs);
    expect(maxAbs(xa.map((v, i) => v - xb[i])) / maxAbs(xa)).toBeLessThan(1e-12);
    const r = K.multiply(xb).map((v, i) => v - rhs[i]);
    expect(maxAbs(r)).toBeLessThan(1e-12 * maxAbs(rhs) * 1e3);
  });

  it('gives the same bits on every solve of the same system (deterministic) and rejects a non-permutation ordering', () => {
    const K = randomSpd(60, 21, 0.2);
    const b = Float64Array.from({ length: 60 }, (_, i) => 1 / (i + 1));
    expect(Array.from(solveSymmetric(K, b))).toEqual(Array.from(solveSymmetric(K, b)));
    const bad = Int32Array.from({ length: 60 }, (_, i) => (i === 5 ? 4 : i));
    expect(() => choleskyFactor(K, { ordering: bad })).toThrow(/ordering entry 5 .* permutation/);
  });
});
