import { describe, expect, it } from 'vitest';
import { format } from 'mathjs';
import { formatNumber, formatScientific } from '../../../src/lib/components/charts/number-format';

describe('numbers in a record (common practice, no source)', () => {
  it('writes tiny metrics and tolerances in a short exponent form', () => {
    expect(formatNumber(3.2e-15)).toBe('3.2e-15');
    expect(formatNumber(1e-12)).toBe('1e-12');
    expect(formatNumber(-1e-10)).toBe('-1e-10');
    expect(formatNumber(2.5e7)).toBe('2.5e7');
  });

  it('writes the middle range plainly, to the significant digits asked', () => {
    expect(formatNumber(1333.3333333, 6)).toBe('1333.33');
    expect(formatNumber(0.0123456)).toBe('0.0123');
    expect(formatNumber(400)).toBe('400');
    expect(formatNumber(0)).toBe('0');
  });

  it('agrees with mathjs exponential notation to the same precision', () => {
    for (const v of [3.2456e-15, 7.1e-9, -4.25e-11, 1.999e12]) {
      const ours = formatScientific(v, 3);
      const theirs = format(v, { notation: 'exponential', precision: 3 }).replace('e+', 'e');
      expect(Number(ours)).toBe(Number(theirs));
    }
  });
});
