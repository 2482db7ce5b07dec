// Kernel throughput and solve times, each beside the same work done through mathjs in this run.
import { add, det, inv, lusolve, matrix, multiply, sparse, transpose, type Matrix } from 'mathjs';
import {
  type Material,
  type Mesh,
  type QuadratureRule,
  SparseSymmetric,
  assemble,
  chooseOrdering,
  elasticityMatrix,
  elementCoords,
  elementDofMap,
  elementStiffness,
  gaussRule,
  nodesWhere,
  orderingCandidates,
  simplexRule,
  solveWithDirichlet,
  structuredMesh
} from '../../packages/kernel/src/index';
import { HEX8, Q4, T10, tabulate, type FixtureElement } from '../unit/kernel/fixtures';
import type { BenchRow } from './report';
import { medianMs, throughput } from './report';

export const title = 'kernel: element stiffness, assembly and sparse Cholesky';

const material: Material = { E: 1, nu: 0.3 };

/** A few distorted elements to cycle through, so no call sees the same coordinates twice in a row. */
function distortedElements(el: FixtureElement, count: number): Float64Array[] {
  const out: Float64Array[] = [];
  for (let e = 0; e < count; e++)
    out.push(
      Float64Array.from(el.nodes, (v, i) => v * (1 + 0.05 * Math.sin(e + i)) + 0.1 * Math.cos(3 * e + i))
    );
  return out;
}

/** The same stiffness through mathjs matrices: J, J⁻¹, B and Bᵀ D B per point. */
function mathjsStiffness(
  el: FixtureElement,
  rule: ReturnType<typeof gaussRule>,
  x: Float64Array,
  kind: 'plane-stress' | 'solid'
): Matrix {
  const dim = el.dim;
  const nn = el.nodes.length / dim;
  const ncomp = dim === 2 ? 3 : 6;
  const D = matrix(
    Array.from({ length: ncomp }, (_, i) =>
      Array.from(elasticityMatrix(kind, material).subarray(i * ncomp, (i + 1) * ncomp))
    )
  );
  const X = matrix(Array.from({ length: nn }, (_, i) => Array.from(x.subarray(i * dim, (i + 1) * dim))));
  const tab = tabulate(el, rule.points);
  let K = matrix(Array.from({ length: nn * dim }, () => new Array(nn * dim).fill(0)));
  for (let q = 0; q < rule.count; q++) {
    const dN = matrix(
      Array.from({ length: nn }, (_, i) =>
        Array.from(tab.dN.subarray((q * nn + i) * dim, (q * nn + i + 1) * dim))
      )
    );
    const J = multiply(transpose(X), dN) as Matrix;
    const dNdx = (multiply(dN, inv(J)) as Matrix).toArray() as number[][];
    const B = Array.from({ length: ncomp }, () => new Array(nn * dim).fill(0));
    for (let i = 0; i < nn; i++) {
      const [a, b, c] = dNdx[i];
      if (dim === 2) {
        B[0][2 * i] = a;
        B[1][2 * i + 1] = b;
        B[2][2 * i] = b;
        B[2][2 * i + 1] = a;
      } else {
        B[0][3 * i] = a;
        B[1][3 * i + 1] = b;
        B[2][3 * i + 2] = c;
        B[3][3 * i] = b;
        B[3][3 * i + 1] = a;
        B[4][3 * i + 1] = c;
        B[4][3 * i + 2] = b;
        B[5][3 * i] = c;
        B[5][3 * i + 2] = a;
      }
    }
    const Bm = matrix(B);
    K = add(K, multiply(multiply(multiply(transpose(Bm), D), Bm), rule.weights[q] * det(J))) as Matrix;
  }
  return K;
}

function elementThroughput(el: FixtureElement, kind: 'plane-stress' | 'solid', mathjsCount: number) {
  const rule = gaussRule(el.cell as 'quadrilateral', 2);
  const tab = tabulate(el, rule.points);
  const xs = distortedElements(el, 64);
  const ndof = el.nodes.length;
  const out = new Float64Array(ndof * ndof);
  const batch = 1000;
  let e = 0;
  const ours = throughput(() => {
    for (let i = 0; i < batch; i++)
      elementStiffness(kind, tab, rule.weights, xs[e++ & 63], material, undefined, out);
  }, batch);
  let m = 0;
  const theirs = throughput(() => {
    for (let i = 0; i < mathjsCount; i++) mathjsStiffness(el, rule, xs[m++ & 63], kind);
  }, mathjsCount);
  return { ours, theirs };
}

interface Problem {
  mesh: Mesh;
  el: FixtureElement;
  kind: 'plane-stress' | 'solid';
  fixed: Int32Array;
  f: Float64Array;
}

/** The element's stiffness rule: 2 × 2 (× 2) Gauss on tensor cells, the degree-2 rule on tetrahedra (exact for T10 on straight tetrahedra). */
function stiffnessRule(el: FixtureElement): QuadratureRule {
  return el.cell === 'tetrahedron' ? simplexRule('tetrahedron', 2) : gaussRule(el.cell as 'quadrilateral', 2);
}

/** Unit square or cube, clamped at x = 0, a unit load at the last node in −y. */
function cantilever(el: FixtureElement, divisions: number): Problem {
  const mesh = structuredMesh(el.cell, divisions, { referenceNodes: el.nodes });
  const dpn = mesh.dim;
  const fixed = Int32Array.from(
    [...nodesWhere(mesh, ([x]) => x === 0)].flatMap((i) => Array.from({ length: dpn }, (_, k) => i * dpn + k))
  );
  const f = new Float64Array(mesh.nodeCount * dpn);
  f[(mesh.nodeCount - 1) * dpn + 1] = -1;
  return { mesh, el, kind: dpn === 2 ? 'plane-stress' : 'solid', fixed, f };
}

/** Element stiffnesses and assembly. */
function stiffness(p: Problem): SparseSymmetric {
  const { mesh, el, kind } = p;
  const rule = stiffnessRule(el);
  const tab = tabulate(el, rule.points);
  const dpn = mesh.dim;
  const edof = mesh.elementNodes * dpn;
  const Ke = new Float64Array(mesh.elementCount * edof * edof);
  const x = new Float64Array(mesh.elementNodes * mesh.dim);
  for (let e = 0; e < mesh.elementCount; e++) {
    elementStiffness(
      kind,
      tab,
      rule.weights,
      elementCoords(mesh, e, x),
      material,
      undefined,
      Ke.subarray(e * edof * edof, (e + 1) * edof * edof)
    );
  }
  return assemble(mesh.nodeCount * dpn, elementDofMap(mesh.elements, dpn), Ke, edof);
}

/** Element stiffnesses, assembly and the Dirichlet solve: the work of one linear analysis. */
function analyse(p: Problem): Float64Array {
  return solveWithDirichlet(stiffness(p), p.f, p.fixed, new Float64Array(p.fixed.length)).u;
}

/** The matrix of the free dofs, as solveWithDirichlet factors it. */
function freeMatrix(p: Problem): SparseSymmetric {
  const K = stiffness(p);
  const isFixed = new Uint8Array(K.n);
  for (const d of p.fixed) isFixed[d] = 1;
  const map = new Int32Array(K.n).fill(-1);
  let nf = 0;
  for (let i = 0; i < K.n; i++) if (!isFixed[i]) map[i] = nf++;
  const Kf = new SparseSymmetric(nf, K.nnz);
  const rp = K.rowPtr!;
  for (let i = 0; i < K.n; i++)
    if (map[i] >= 0)
      for (let q = rp[i]; q < rp[i + 1]; q++)
        if (map[K.cols[q]] >= 0) Kf.add(map[i], map[K.cols[q]], K.values[q]);
  return Kf.build();
}

const ORDERING_NAME = { 'minimum-degree': 'minimum degree', 'nested-dissection': 'nested dissection' };

/** The fill and operation count of the ordering the solve takes, each beside the other candidate's. */
function reportOrdering(report: (row: BenchRow) => void, label: string, p: Problem): void {
  const candidates = orderingCandidates(freeMatrix(p));
  const chosen = chooseOrdering(candidates);
  const other = candidates.find((c) => c !== chosen)!;
  report({
    name: `${label}: nnz(L), ${ORDERING_NAME[chosen.method]} (chosen)`,
    value: chosen.fill,
    unit: 'nnz',
    higherIsBetter: false,
    baseline: { name: ORDERING_NAME[other.method], value: other.fill }
  });
  report({
    name: `${label}: factorisation Σ c_j², ${ORDERING_NAME[chosen.method]}`,
    value: chosen.flops,
    unit: 'flop',
    higherIsBetter: false,
    baseline: { name: ORDERING_NAME[other.method], value: other.flops }
  });
}

/** The 32 × 32 reduced system solved by mathjs sparse lusolve. */
function mathjsSolve(p: Problem): number {
  const { mesh, el, kind } = p;
  const rule = gaussRule(el.cell as 'quadrilateral', 2);
  const tab = tabulate(el, rule.points);
  const edof = mesh.elementNodes * 2;
  const Ke = new Float64Array(mesh.elementCount * edof * edof);
  for (let e = 0; e < mesh.elementCount; e++)
    Ke.set(elementStiffness(kind, tab, rule.weights, elementCoords(mesh, e), material), e * edof * edof);
  const K = assemble(mesh.nodeCount * 2, elementDofMap(mesh.elements, 2), Ke, edof).toDense();
  const n = mesh.nodeCount * 2;
  const isFixed = new Uint8Array(n);
  for (const d of p.fixed) isFixed[d] = 1;
  const free = Array.from({ length: n }, (_, i) => i).filter((i) => !isFixed[i]);
  const rows = free.map((i) => free.map((j) => K[i * n + j]));
  const b = matrix(free.map((i) => [p.f[i]]));
  const t0 = performance.now();
  lusolve(sparse(rows), b);
  return performance.now() - t0;
}

export default async function run(report: (row: BenchRow) => void): Promise<void> {
  const q4 = elementThroughput(Q4, 'plane-stress', 200);
  report({
    name: 'Q4 plane-stress stiffness (2×2 Gauss)',
    value: q4.ours,
    unit: 'K/s',
    higherIsBetter: true,
    baseline: { name: 'mathjs matrices', value: q4.theirs },
    target: '≥ 1 M/s on one core'
  });
  const hex = elementThroughput(HEX8, 'solid', 40);
  report({
    name: 'Hex8 solid stiffness (2×2×2 Gauss)',
    value: hex.ours,
    unit: 'K/s',
    higherIsBetter: true,
    baseline: { name: 'mathjs matrices', value: hex.theirs }
  });

  // times are of warm code: each problem runs twice before it is measured (the first runs compile it)
  const small = cantilever(Q4, 32);
  analyse(small);
  analyse(small);
  const oursSmall = await medianMs(() => analyse(small), 7);
  const mathjsMs = mathjsSolve(small);
  const freeSmall = small.f.length - small.fixed.length;
  report({
    name: `Q4 32 × 32 cantilever, ${freeSmall} free dofs: K, assembly, solve`,
    value: oursSmall,
    unit: 'ms',
    higherIsBetter: false,
    baseline: { name: 'mathjs sparse lusolve alone', value: mathjsMs }
  });
  report({
    name: `speed-up over mathjs sparse lusolve, 32 × 32 (${freeSmall} dofs)`,
    value: mathjsMs / oursSmall,
    unit: '×',
    higherIsBetter: true,
    target: '≥ 50×'
  });
  const big = cantilever(Q4, 64);
  analyse(big);
  analyse(big);
  report({
    name: `Q4 64 × 64 cantilever, ${big.f.length - big.fixed.length} free dofs: K, assembly, solve`,
    value: await medianMs(() => analyse(big), 7),
    unit: 'ms',
    higherIsBetter: false,
    target: '≤ 100 ms'
  });
  const cube = cantilever(HEX8, 16);
  analyse(cube);
  report({
    name: `Hex8 16³ cube, ${cube.f.length - cube.fixed.length} free dofs: K, assembly, solve`,
    value: await medianMs(() => analyse(cube), 3),
    unit: 'ms',
    higherIsBetter: false
  });
  reportOrdering(report, 'Hex8 16³ cube', cube);
  // ten-node tetrahedra, 6 per cube cell (Kuhn split), on a 9³ grid: (2·9 + 1)³ nodes
  const tets = cantilever(T10, 9);
  analyse(tets);
  report({
    name: `T10 9³ cube, ${tets.f.length - tets.fixed.length} free dofs: K, assembly, solve`,
    value: await medianMs(() => analyse(tets), 3),
    unit: 'ms',
    higherIsBetter: false
  });
  reportOrdering(report, 'T10 9³ cube', tets);
  report({
    name: 'peak resident set size',
    value: process.resourceUsage().maxRSS / 1024,
    unit: 'MiB',
    higherIsBetter: false
  });
}
