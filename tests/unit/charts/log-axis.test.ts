import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { log } from 'mathjs';
import {
  decadeDomain,
  logTicks,
  observedOrders,
  slopeTriangle,
  triangleBelow
} from '../../../src/lib/components/charts/log-axis';

describe('observed orders of a convergence series', () => {
  // The observed order between two meshes, p = ln(e1/e2) / ln(h1/h2), is the standard estimate of
  // code verification (Roache, Verification and Validation in Computational Science and Engineering, 1998; from memory).
  it('recovers the exponent of an exact power law e = C h^p on any refinement sequence (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1e-6, max: 1e3, noNaN: true }),
        fc.double({ min: 0.5, max: 6, noNaN: true }),
        fc.array(fc.double({ min: 1.2, max: 4, noNaN: true }), { minLength: 1, maxLength: 6 }),
        (C, p, ratios) => {
          let h = 0.5;
          const series = [{ h, l2: C * h ** (p + 1), energy: C * h ** p }];
          for (const r of ratios) {
            h /= r;
            series.push({ h, l2: C * h ** (p + 1), energy: C * h ** p });
          }
          for (const o of observedOrders(series, 'energy')) expect(o).toBeCloseTo(p, 9);
          for (const o of observedOrders(series, 'l2')) expect(o).toBeCloseTo(p + 1, 9);
        }
      )
    );
  });

  it('agrees with the same quotient of logarithms computed by mathjs', () => {
    const series = [
      { h: 0.25, l2: 3.1e-3, energy: 9.4e-2 },
      { h: 0.125, l2: 8.2e-4, energy: 4.8e-2 },
      { h: 0.0625, l2: 2.07e-4, energy: 2.41e-2 }
    ];
    const orders = observedOrders(series, 'l2');
    expect(orders[0]).toBeCloseTo((log(3.1e-3 / 8.2e-4) as number) / (log(2) as number), 12);
    expect(orders[1]).toBeCloseTo((log(8.2e-4 / 2.07e-4) as number) / (log(2) as number), 12);
  });

  it('gives no order where an error is zero or the mesh size repeats', () => {
    expect(
      observedOrders(
        [
          { h: 0.5, l2: 1, energy: 0 },
          { h: 0.25, l2: 0.25, energy: 0 }
        ],
        'energy'
      )
    ).toEqual([null]);
    expect(
      observedOrders(
        [
          { h: 0.5, l2: 1, energy: 1 },
          { h: 0.5, l2: 0.5, energy: 1 }
        ],
        'l2'
      )
    ).toEqual([null]);
  });
});

describe('log axis ticks (common practice, no source)', () => {
  it('encloses the data in whole decades', () => {
    expect(decadeDomain([0.03125, 0.25])).toEqual([0.01, 1]);
    expect(decadeDomain([2.1e-7, 3e-3])).toEqual([1e-7, 1e-2]);
    expect(decadeDomain([1, 1])).toEqual([1, 10]);
  });

  it('labels every power of ten, and 2 and 5 times them when at most two decades are shown', () => {
    const labels = logTicks([0.01, 1])
      .filter((t) => t.label)
      .map((t) => t.label);
    expect(labels).toEqual(['0.01', '0.02', '0.05', '0.1', '0.2', '0.5', '1']);
    const wide = logTicks([1e-8, 1e-2]).filter((t) => t.label);
    expect(wide.map((t) => t.label)).toEqual(['1e-8', '1e-7', '1e-6', '1e-5', '1e-4', '1e-3', '0.01']);
    expect(logTicks([1e-8, 1e-2]).length).toBe(6 * 9 + 1);
  });
});

describe('slope triangles', () => {
  it('rises by factor^slope over its base, so its hypotenuse has the given slope on log–log axes', () => {
    const [a, b, c] = slopeTriangle(0.1, 1e-3, 2, 3);
    expect(a).toEqual([0.1, 1e-3]);
    expect(b).toEqual([0.2, 1e-3]);
    expect(c[1]).toBeCloseTo(8e-3, 15);
    expect(Math.log(c[1] / a[1]) / Math.log(c[0] / a[0])).toBeCloseTo(3, 12);
  });

  it('sits below the finest point of the series', () => {
    const tri = triangleBelow(
      [
        { x: 0.25, y: 0.1 },
        { x: 0.125, y: 0.05 }
      ],
      1
    );
    expect(tri).not.toBeNull();
    expect(tri![0][0]).toBe(0.125);
    expect(tri![0][1]).toBeLessThan(0.05);
    expect(triangleBelow([{ x: 1, y: 1 }], 1)).toBeNull();
  });
});
