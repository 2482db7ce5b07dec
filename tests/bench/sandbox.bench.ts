// Sandboxed evaluation against the same expressions hand-written in TypeScript (target: within
// 1.5×, on the least time of 31 interleaved runs; the medians are printed beside it) and against
// mathjs compile().evaluate point by point; cold isolate start, warm call latency, and the slowest
// refusal of the hostile documents. Figures only: nothing is asserted.
import { readFileSync } from 'node:fs';
import { compile, type EvalFunction } from 'mathjs';
import { CATALOGUE_DIR, parseFormulation, type Definition } from '@isoledger/formulation';
import { referenceCell } from '@isoledger/kernel';
import { SandboxPool } from '@isoledger/sandbox';
import { HOSTILE } from '../unit/formulation/hostile-corpus';
import { medianMs, type BenchRow } from './report';

/** The host's collector, when the bench runs with --expose-gc (tests/bench/run.ts starts it so). */
const collect = (globalThis as { gc?: () => void }).gc;

/**
 * The least wall time of `rounds` interleaved runs of each function, each started on a collected
 * heap so that no run pays for the garbage of the one before. On a machine shared with other work
 * the minimum estimates the cost of the work itself; interleaving gives both sides the same load.
 */
async function bestOfInterleaved(rounds: number, ...fns: (() => unknown)[]): Promise<number[]> {
  return (await interleaved(rounds, ...fns)).map((times) => times[0]);
}

/** Every wall time of `rounds` interleaved runs of each function, sorted, each on a collected heap. */
async function interleaved(rounds: number, ...fns: (() => unknown)[]): Promise<number[][]> {
  const times = fns.map((): number[] => []);
  for (let r = 0; r < rounds; r++)
    for (let k = 0; k < fns.length; k++) {
      collect?.();
      const t0 = performance.now();
      await fns[k]();
      times[k].push(performance.now() - t0);
    }
  return times.map((t) => t.sort((a, b) => a - b));
}

const median = (sorted: number[]) => sorted[Math.floor(sorted.length / 2)];

/** Calls of each side before timing, and timed rounds of the sandbox against hand-written code. */
const WARM_UP = 5;
const ROUNDS = 31;

export const title = 'sandbox: compiled expressions in isolated-vm';

const definition = (name: string): Definition => {
  const r = parseFormulation(readFileSync(`${CATALOGUE_DIR}/${name}.formulation.yaml`, 'utf8'));
  if (!r.ok) throw new Error(`${name} does not parse`);
  return r.definition;
};

/** Hand-written bilinear quadrilateral: N and ∂N/∂ξ at every point. */
function quad4(P: Float64Array, n: number) {
  const N = new Float64Array(n * 4);
  const dN = new Float64Array(n * 8);
  for (let q = 0; q < n; q++) {
    const xi = P[2 * q];
    const eta = P[2 * q + 1];
    const o = 4 * q;
    const d = 8 * q;
    N[o] = ((1 - xi) * (1 - eta)) / 4;
    N[o + 1] = ((1 + xi) * (1 - eta)) / 4;
    N[o + 2] = ((1 + xi) * (1 + eta)) / 4;
    N[o + 3] = ((1 - xi) * (1 + eta)) / 4;
    dN[d] = -(1 - eta) / 4;
    dN[d + 1] = -(1 - xi) / 4;
    dN[d + 2] = (1 - eta) / 4;
    dN[d + 3] = -(1 + xi) / 4;
    dN[d + 4] = (1 + eta) / 4;
    dN[d + 5] = (1 + xi) / 4;
    dN[d + 6] = -(1 + eta) / 4;
    dN[d + 7] = (1 - xi) / 4;
  }
  return { N, dN };
}

// node signs of hex20-serendipity.formulation.yaml, in its node order
const HEX20_SIGNS = [
  [-1, -1, -1],
  [1, -1, -1],
  [1, 1, -1],
  [-1, 1, -1],
  [-1, -1, 1],
  [1, -1, 1],
  [1, 1, 1],
  [-1, 1, 1],
  [0, -1, -1],
  [1, 0, -1],
  [0, 1, -1],
  [-1, 0, -1],
  [0, -1, 1],
  [1, 0, 1],
  [0, 1, 1],
  [-1, 0, 1],
  [-1, -1, 0],
  [1, -1, 0],
  [1, 1, 0],
  [-1, 1, 0]
];
const SA = Float64Array.from(HEX20_SIGNS, (s) => s[0]);
const SB = Float64Array.from(HEX20_SIGNS, (s) => s[1]);
const SC = Float64Array.from(HEX20_SIGNS, (s) => s[2]);

/** Hand-written serendipity hexahedron: corner functions, then mid-edge functions, and their derivatives. */
function hex20(P: Float64Array, n: number) {
  const N = new Float64Array(n * 20);
  const dN = new Float64Array(n * 60);
  for (let q = 0; q < n; q++) {
    const x = P[3 * q];
    const y = P[3 * q + 1];
    const z = P[3 * q + 2];
    for (let i = 0; i < 8; i++) {
      const a = SA[i];
      const b = SB[i];
      const c = SC[i];
      const fx = 1 + a * x;
      const fy = 1 + b * y;
      const fz = 1 + c * z;
      const s = a * x + b * y + c * z - 2;
      const o = q * 20 + i;
      N[o] = fx * fy * fz * s * 0.125;
      dN[3 * o] = a * fy * fz * (s + fx) * 0.125;
      dN[3 * o + 1] = b * fx * fz * (s + fy) * 0.125;
      dN[3 * o + 2] = c * fx * fy * (s + fz) * 0.125;
    }
    for (let i = 8; i < 20; i++) {
      const a = SA[i];
      const b = SB[i];
      const c = SC[i];
      // one of a, b, c is 0: that direction has the bubble 1 - s², the others 1 + sign·s
      const gx = a === 0 ? 1 - x * x : 1 + a * x;
      const gy = b === 0 ? 1 - y * y : 1 + b * y;
      const gz = c === 0 ? 1 - z * z : 1 + c * z;
      const o = q * 20 + i;
      N[o] = gx * gy * gz * 0.25;
      dN[3 * o] = (a === 0 ? -2 * x : a) * gy * gz * 0.25;
      dN[3 * o + 1] = (b === 0 ? -2 * y : b) * gx * gz * 0.25;
      dN[3 * o + 2] = (c === 0 ? -2 * z : c) * gx * gy * 0.25;
    }
  }
  return { N, dN };
}

/** Hand-written B block of the custom membrane: [dNdx, 0; 0, dNdy; dNdy, dNdx] per entry. */
function membraneB(dNdx: Float64Array, dNdy: Float64Array, n: number) {
  const O = new Float64Array(n * 6);
  for (let e = 0; e < n; e++) {
    const o = 6 * e;
    O[o] = dNdx[e];
    O[o + 3] = dNdy[e];
    O[o + 4] = dNdy[e];
    O[o + 5] = dNdx[e];
  }
  return O;
}

/** mathjs compile().evaluate of every shape function and derivative, point by point. */
function mathjsTabulate(def: Definition, P: Float64Array, n: number) {
  const fns: EvalFunction[] = [...def.shape, ...def.derivatives.flat()].map((t) => compile(t));
  const dim = def.coordinates.length;
  const out = new Float64Array(n * fns.length);
  const scope: Record<string, number> = {};
  for (let q = 0; q < n; q++) {
    for (let k = 0; k < dim; k++) scope[def.coordinates[k]] = P[q * dim + k];
    for (let f = 0; f < fns.length; f++) out[q * fns.length + f] = fns[f].evaluate(scope) as number;
  }
  return out;
}

const perSecond = (count: number, ms: number) => (count * 1000) / ms;

export default async function bench(report: (row: BenchRow) => void): Promise<void> {
  // the first parse in this process: 60 derivatives taken and simplified
  const parseStart = performance.now();
  definition('hex20-serendipity');
  const firstParseMs = performance.now() - parseStart;
  report({
    name: 'parse hex20-serendipity, first time (60 derivatives)',
    value: firstParseMs,
    unit: 'ms',
    higherIsBetter: false
  });
  const pool = new SandboxPool({ poolSize: 1, timeoutMs: 30_000, memoryLimitMb: 512 });
  try {
    // tabulation
    for (const [name, hand, count, mathjsCount] of [
      ['quad4-membrane', quad4, 200_000, 5_000],
      ['hex20-serendipity', hex20, 20_000, 500]
    ] as const) {
      const def = definition(name);
      const P = referenceCell(def.cell).sampleInterior(count, 1);
      // both sides warmed up first, so that the JIT has optimised their loops
      for (let w = 0; w < WARM_UP; w++) {
        await pool.tabulate(def, P);
        hand(P, count);
      }
      const [sandboxTimes, handTimes] = await interleaved(
        ROUNDS,
        () => pool.tabulate(def, P),
        () => hand(P, count)
      );
      const [sandboxMs, handMs] = [sandboxTimes[0], handTimes[0]];
      const [mathjsMs] = await bestOfInterleaved(3, () => mathjsTabulate(def, P, mathjsCount));
      const hw = perSecond(count, handMs);
      report({
        name: `tabulate ${name}, hand-written TypeScript`,
        value: hw,
        unit: 'points/s',
        higherIsBetter: true
      });
      report({
        name: `tabulate ${name}, sandbox (one call, ${count} points)`,
        value: perSecond(count, sandboxMs),
        unit: 'points/s',
        higherIsBetter: true,
        baseline: { name: 'hand-written', value: hw },
        target: '≥ 0.67× hand-written (within 1.5×)'
      });
      report({
        name: `tabulate ${name}, sandbox, median of ${ROUNDS} runs`,
        value: perSecond(count, median(sandboxTimes)),
        unit: 'points/s',
        higherIsBetter: true,
        baseline: { name: 'hand-written median', value: perSecond(count, median(handTimes)) }
      });
      report({
        name: `tabulate ${name}, mathjs compile().evaluate per point`,
        value: perSecond(mathjsCount, mathjsMs),
        unit: 'points/s',
        higherIsBetter: true,
        baseline: { name: 'hand-written', value: hw }
      });
    }

    // custom B at every node of every point of a mesh: one call
    const custom = definition('quad4-custom-plane-strain');
    const entries = 400_000;
    const dNdx = Float64Array.from({ length: entries }, (_, i) => Math.sin(i));
    const dNdy = Float64Array.from({ length: entries }, (_, i) => Math.cos(i));
    for (let w = 0; w < WARM_UP; w++) {
      await pool.evaluate(custom, 'B', { dNdx, dNdy }, entries);
      membraneB(dNdx, dNdy, entries);
    }
    const [sandboxBTimes, handBTimes] = await interleaved(
      ROUNDS,
      () => pool.evaluate(custom, 'B', { dNdx, dNdy }, entries),
      () => membraneB(dNdx, dNdy, entries)
    );
    const [sandboxB, handB] = [sandboxBTimes[0], handBTimes[0]];
    const bFn = compile((custom.strain as { B: string }).B);
    const mathjsEntries = 5_000;
    const [mathjsB] = await bestOfInterleaved(3, () => {
      const out = new Float64Array(mathjsEntries * 6);
      for (let e = 0; e < mathjsEntries; e++) {
        const m = bFn.evaluate({ dNdx: dNdx[e], dNdy: dNdy[e] }) as { toArray(): number[][] };
        out.set(m.toArray().flat(), e * 6);
      }
      return out;
    });
    const handRate = perSecond(entries, handB);
    report({
      name: 'custom B, hand-written TypeScript',
      value: handRate,
      unit: 'entries/s',
      higherIsBetter: true
    });
    report({
      name: `custom B, sandbox (one call, ${entries} entries)`,
      value: perSecond(entries, sandboxB),
      unit: 'entries/s',
      higherIsBetter: true,
      baseline: { name: 'hand-written', value: handRate },
      target: '≥ 0.67× hand-written (within 1.5×)'
    });
    report({
      name: `custom B, sandbox, median of ${ROUNDS} runs`,
      value: perSecond(entries, median(sandboxBTimes)),
      unit: 'entries/s',
      higherIsBetter: true,
      baseline: { name: 'hand-written median', value: perSecond(entries, median(handBTimes)) }
    });
    report({
      name: 'custom B, mathjs compile().evaluate per entry',
      value: perSecond(mathjsEntries, mathjsB),
      unit: 'entries/s',
      higherIsBetter: true,
      baseline: { name: 'hand-written', value: handRate }
    });

    // latency
    const tri3 = definition('tri3-membrane');
    const one = new Float64Array([0.2, 0.3]);
    const cold = await medianMs(async () => {
      const p = new SandboxPool({ poolSize: 1 });
      await p.tabulate(tri3, one);
      await p.dispose();
    }, 5);
    await pool.tabulate(tri3, one);
    const warm = await medianMs(async () => {
      for (let i = 0; i < 100; i++) await pool.tabulate(tri3, one);
    }, 5);
    report({
      name: 'cold start: new isolate, program installed, first call',
      value: cold,
      unit: 'ms',
      higherIsBetter: false
    });
    report({
      name: 'warm call: tabulate 1 point',
      value: (warm / 100) * 1000,
      unit: 'µs',
      higherIsBetter: false,
      baseline: { name: 'cold start', value: cold * 1000 }
    });

    // parsing: the memo of derivatives makes the second parse of the same functions cheap
    const hexSource = readFileSync(`${CATALOGUE_DIR}/hex20-serendipity.formulation.yaml`, 'utf8');
    const t0 = performance.now();
    parseFormulation(hexSource.replace('title: Twenty-node', 'title: Twenty node'));
    report({
      name: 'parse hex20-serendipity again (derivatives memoised)',
      value: performance.now() - t0,
      unit: 'ms',
      higherIsBetter: false,
      baseline: { name: 'first parse', value: firstParseMs }
    });

    // hostile documents: the slowest refusal, then a valid document still served
    let slowest = { name: '', ms: 0 };
    for (const h of HOSTILE) {
      const source = h.source();
      const s = performance.now();
      const r = parseFormulation(source);
      const ms = performance.now() - s;
      if (r.ok) throw new Error(`hostile document accepted: ${h.name}`);
      if (ms > slowest.ms) slowest = { name: h.name, ms };
    }
    await pool.tabulate(tri3, one);
    report({
      name: `slowest refusal of ${HOSTILE.length} hostile documents (${slowest.name})`,
      value: slowest.ms,
      unit: 'ms',
      higherIsBetter: false,
      target: '< 2000 ms'
    });
  } finally {
    await pool.dispose();
  }
}
