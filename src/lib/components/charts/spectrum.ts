// Classification of an element stiffness spectrum for drawing: each eigenvalue relative to the largest.

/** The zero threshold of the zero-energy-modes check: λ ≤ 1e-8 λmax counts as zero (verification.md §2). */
export const ZERO_EIGENVALUE_RATIO = 1e-8;

/** The positive-semidefinite check's tolerance: λ/λmax below −1e-10 is a negative eigenvalue (verification.md §2). */
export const NEGATIVE_EIGENVALUE_RATIO = 1e-10;

/**
 * Lowest |λ|/λmax drawn on a log axis: a little below double-precision round-off of a sum of order-one
 * terms (ε ≈ 2.2e-16), so computed zeros land on this floor instead of at −∞ (common practice, no source).
 */
export const SPECTRUM_FLOOR = 1e-17;

export type EigenvalueKind = 'zero' | 'positive' | 'negative';

export interface SpectrumPoint {
  /** 1-based position in ascending order */
  index: number;
  value: number;
  /** λ / λmax */
  ratio: number;
  /** max(|λ / λmax|, floor): where the point is drawn on the log axis */
  drawn: number;
  kind: EigenvalueKind;
  /** a zero beyond the expected rigid-body count */
  spurious: boolean;
}

export interface Spectrum {
  points: SpectrumPoint[];
  lambdaMax: number;
  /** eigenvalues at or below the zero threshold, negative ones included */
  zeroCount: number;
  negativeCount: number;
}

/**
 * Sorts the eigenvalues ascending and classifies each: negative (λ < −1e-10 λmax), zero (λ ≤ 1e-8 λmax)
 * or positive; zeros after the first `expected` ones are spurious.
 */
export function classifySpectrum(
  eigenvalues: readonly number[],
  expected: number,
  zeroRatio = ZERO_EIGENVALUE_RATIO,
  negativeRatio = NEGATIVE_EIGENVALUE_RATIO
): Spectrum {
  const sorted = eigenvalues.filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
  const lambdaMax = sorted.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  let zeroCount = 0;
  let negativeCount = 0;
  const points = sorted.map((value, i): SpectrumPoint => {
    const ratio = lambdaMax > 0 ? value / lambdaMax : 0;
    let kind: EigenvalueKind = 'positive';
    if (ratio < -negativeRatio) kind = 'negative';
    else if (ratio <= zeroRatio) kind = 'zero';
    // the contract counts every λ ≤ 1e-8 λmax as zero, negative ones included (verification.md §2)
    if (kind !== 'positive') zeroCount++;
    if (kind === 'negative') negativeCount++;
    return {
      index: i + 1,
      value,
      ratio,
      drawn: Math.max(Math.abs(ratio), SPECTRUM_FLOOR),
      kind,
      spurious: kind === 'zero' && zeroCount > expected
    };
  });
  return { points, lambdaMax, zeroCount, negativeCount };
}
