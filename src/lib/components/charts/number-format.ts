// Numbers as engineers read them in a record: plain decimals in a middle range, otherwise a short
// exponent form (3.2e-15, 1e-12); ASCII minus so a copied figure pastes into any tool.

/** Below this magnitude (and at or above PLAIN_MAX) a number is written with an exponent. */
const PLAIN_MIN = 1e-3;
const PLAIN_MAX = 1e5;

function trimMantissa(s: string): string {
  return s.includes('.') ? s.replace(/\.?0+$/, '') : s;
}

/** v to `digits` significant digits: 0.0123, 1333.33, 3.2e-15, 1e-12, 2.5e+7 written 2.5e7. */
export function formatNumber(v: number, digits = 3): string {
  if (Number.isNaN(v)) return 'NaN';
  if (!Number.isFinite(v)) return v > 0 ? 'inf' : '-inf';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= PLAIN_MIN && a < PLAIN_MAX) {
    if (Number.isInteger(v) && a < PLAIN_MAX) return String(v);
    return trimMantissa(v.toPrecision(digits));
  }
  const [mantissa, exponent] = v.toExponential(digits - 1).split('e');
  return `${trimMantissa(mantissa)}e${exponent.replace('+', '')}`;
}

/** Always the exponent form, for values compared on a log scale (λ/λmax). */
export function formatScientific(v: number, digits = 3): string {
  if (!Number.isFinite(v)) return formatNumber(v);
  if (v === 0) return '0';
  const [mantissa, exponent] = v.toExponential(digits - 1).split('e');
  return `${trimMantissa(mantissa)}e${exponent.replace('+', '')}`;
}
