// Log-scale axis ticks, observed orders and slope triangles for log–log plots of errors against h.

/** A labelled tick of a logarithmic axis; minor ticks carry no label. */
export interface LogTick {
  value: number;
  label: string | null;
}

/** The decade range [10^floor(log10 lo), 10^ceil(log10 hi)] enclosing the positive values given. */
export function decadeDomain(values: readonly number[]): [number, number] {
  const positive = values.filter((v) => Number.isFinite(v) && v > 0);
  if (positive.length === 0) return [0.1, 1];
  const lo = Math.floor(Math.log10(Math.min(...positive)));
  let hi = Math.ceil(Math.log10(Math.max(...positive)));
  if (hi === lo) hi = lo + 1;
  return [10 ** lo, 10 ** hi];
}

/** Powers of ten labelled, 2…9 × 10^k as minor ticks; 2 and 5 labelled too when the domain spans ≤ 2 decades. */
export function logTicks(domain: readonly [number, number]): LogTick[] {
  const [a, b] = domain[0] <= domain[1] ? domain : [domain[1], domain[0]];
  const lo = Math.floor(Math.log10(a));
  const hi = Math.ceil(Math.log10(b));
  const dense = hi - lo <= 2;
  const ticks: LogTick[] = [];
  for (let k = lo; k <= hi; k++) {
    for (let m = 1; m <= 9; m++) {
      const value = Number((m * 10 ** k).toPrecision(12));
      if (value < a * (1 - 1e-9) || value > b * (1 + 1e-9)) continue;
      const labelled = m === 1 || (dense && (m === 2 || m === 5));
      ticks.push({ value, label: labelled ? powerLabel(m, k) : null });
    }
  }
  return ticks;
}

/** 1, 10, 0.1 written plainly; other powers as 1e-5; 2e-3 style for mantissas. */
function powerLabel(m: number, k: number): string {
  if (k >= -2 && k <= 3) return String(Number((m * 10 ** k).toPrecision(12)));
  return `${m}e${k}`;
}

/** One refinement step of a convergence series. */
export interface ConvergencePoint {
  h: number;
  dofs?: number;
  l2: number;
  energy: number;
}

/** Observed order between consecutive meshes: p = log(e₁/e₂) / log(h₁/h₂); null where undefined (a zero or repeated value). */
export function observedOrders(series: readonly ConvergencePoint[], key: 'l2' | 'energy'): (number | null)[] {
  const orders: (number | null)[] = [];
  for (let i = 1; i < series.length; i++) {
    const a = series[i - 1];
    const b = series[i];
    const ratioH = a.h / b.h;
    const ratioE = a[key] / b[key];
    orders.push(
      ratioH > 0 && ratioH !== 1 && ratioE > 0 && Number.isFinite(ratioE)
        ? Math.log(ratioE) / Math.log(ratioH)
        : null
    );
  }
  return orders;
}

/** The three corners of a slope triangle in data coordinates: base from (x0, y0) to (x0·f, y0), rise to (x0·f, y0·f^slope). */
export function slopeTriangle(
  x0: number,
  y0: number,
  factor: number,
  slope: number
): [[number, number], [number, number], [number, number]] {
  const x1 = x0 * factor;
  return [
    [x0, y0],
    [x1, y0],
    [x1, y0 * factor ** slope]
  ];
}

/**
 * Where to put a reference triangle of the given slope below a series in a log–log plot: anchored at the
 * finest mesh (smallest h), spanning a factor of 2 in h and shifted down by `offset` (a factor below the
 * data), so it sits beside the data without covering it.
 */
export function triangleBelow(
  points: readonly { x: number; y: number }[],
  slope: number,
  offset = 0.4,
  factor = 2
): [[number, number], [number, number], [number, number]] | null {
  const valid = points.filter((p) => p.x > 0 && p.y > 0).sort((p, q) => p.x - q.x);
  if (valid.length < 2 || !(slope > 0)) return null;
  const first = valid[0];
  return slopeTriangle(first.x, first.y * offset, factor, slope);
}
