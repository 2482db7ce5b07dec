/** One printed figure. `baseline` is another figure measured in the same run; ratio = value / baseline.value. */
export interface BenchRow {
  name: string;
  value: number;
  unit: string;
  /** true when a larger value is better (throughput); false for times and memory */
  higherIsBetter: boolean;
  baseline?: { name: string; value: number };
  /** the target from the issue, as text, printed beside the figure (never asserted) */
  target?: string;
}

export interface BenchModule {
  title?: string;
  default: (report: (row: BenchRow) => void) => Promise<void>;
}

const fmt = (v: number): string =>
  Math.abs(v) >= 1e5 || (Math.abs(v) < 1e-2 && v !== 0) ? v.toExponential(3) : v.toPrecision(4);

export function formatRows(rows: BenchRow[]): string {
  const lines = rows.map((r) => {
    const ratio = r.baseline
      ? `${fmt(r.value / r.baseline.value)}× ${r.baseline.name} (${fmt(r.baseline.value)} ${r.unit})`
      : '';
    return `  ${r.name.padEnd(52)} ${fmt(r.value).padStart(11)} ${r.unit.padEnd(10)} ${ratio}${r.target ? `   target ${r.target}` : ''}`;
  });
  return lines.join('\n');
}

/** Runs fn repeatedly for at least minMs and returns operations per second (ops per call given). */
export function throughput(fn: () => void, opsPerCall = 1, minMs = 500): number {
  fn();
  let calls = 0;
  const t0 = performance.now();
  let t = t0;
  while (t - t0 < minMs) {
    fn();
    calls++;
    t = performance.now();
  }
  return (calls * opsPerCall * 1000) / (t - t0);
}

/** Median wall time in milliseconds of `repeat` calls. */
export async function medianMs(fn: () => unknown | Promise<unknown>, repeat = 5): Promise<number> {
  const times: number[] = [];
  for (let i = 0; i < repeat; i++) {
    const t0 = performance.now();
    await fn();
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}
