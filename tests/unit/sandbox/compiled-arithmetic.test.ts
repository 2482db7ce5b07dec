// The compiled arithmetic computes what mathjs computes: random whitelisted expressions, tabulated
// in the sandbox, against mathjs `evaluate` (a general-purpose reference library) at random points.
import fc from 'fast-check';
import { evaluate } from 'mathjs';
import { afterAll, describe, expect, it } from 'vitest';
import { parseFormulation } from '@isoledger/formulation';
import { SandboxError, SandboxPool } from '@isoledger/sandbox';
import { expressionText } from '../formulation/arbitraries';
import { formulationDoc } from '../formulation/documents';

const pool = new SandboxPool({ poolSize: 1 });
afterAll(() => pool.dispose());

/** Both sides do the same IEEE operations; only mathjs's own rounding of pi and of integer powers can differ. */
const RELATIVE_TOLERANCE = 1e-12;

describe('compiled expressions', () => {
  it('evaluate random shape functions as mathjs does, or report the point where they are not finite', async () => {
    let compared = 0;
    await fc.assert(
      fc.asyncProperty(
        expressionText,
        fc.array(fc.double({ min: 0.01, max: 0.49, noNaN: true }), { minLength: 2, maxLength: 8 }),
        async (text, coords) => {
          const r = parseFormulation(formulationDoc({ shape: ['1 - xi - eta', text, 'eta'] }));
          fc.pre(r.ok);
          if (!r.ok) return;
          const pts = Float64Array.from(coords.length % 2 ? coords.slice(1) : coords);
          const expected = Array.from(
            { length: pts.length / 2 },
            (_, q) => evaluate(text, { xi: pts[2 * q], eta: pts[2 * q + 1] }) as number
          );
          try {
            const tab = await pool.tabulate(r.definition, pts);
            compared++;
            expected.forEach((v, q) => {
              const got = tab.N[q * 3 + 1];
              expect(Math.abs(got - v)).toBeLessThanOrEqual(RELATIVE_TOLERANCE * Math.max(1, Math.abs(v)));
            });
          } catch (error) {
            // only a value that mathjs also finds non-finite, or a derivative that is, may fault
            expect(error).toBeInstanceOf(SandboxError);
            expect((error as SandboxError).code).toBe('non-finite');
            if ((error as SandboxError).path === 'shape[1]')
              expect(Number.isFinite(expected[(error as SandboxError).point!])).toBe(false);
          }
        }
      ),
      { numRuns: 150, seed: 31337 }
    );
    // the property is about evaluation: most random expressions must get that far
    expect(compared).toBeGreaterThan(100);
  });

  it('never return a non-finite value: at coordinates large enough to overflow, the fault is reported', async () => {
    // Polynomial values skip the per-value check when bounds on their magnitude prove them finite;
    // at these coordinates the bounds often fail and the values overflow, so a wrong proof shows as
    // an infinity or a NaN handed back without an error.
    let returned = 0;
    let refused = 0;
    const coordinate = fc.oneof(
      fc.double({ min: -1e3, max: 1e3, noNaN: true }),
      fc.constantFrom(1e80, -3e110, 2e155, -1e160, 7e200, -1e250)
    );
    await fc.assert(
      fc.asyncProperty(
        expressionText,
        fc.array(coordinate, { minLength: 2, maxLength: 8 }),
        async (random, coords) => {
          // a factor of xi² makes large coordinates overflow whatever the random part is
          const text = `(${random}) * xi * xi`;
          const r = parseFormulation(formulationDoc({ shape: ['1 - xi - eta', text, 'eta'] }));
          fc.pre(r.ok);
          if (!r.ok) return;
          const pts = Float64Array.from(coords.length % 2 ? coords.slice(1) : coords);
          try {
            const tab = await pool.tabulate(r.definition, pts);
            returned++;
            expect(tab.N.every(Number.isFinite) && tab.dN.every(Number.isFinite)).toBe(true);
            for (let q = 0; q < pts.length / 2; q++) {
              const v = evaluate(text, { xi: pts[2 * q], eta: pts[2 * q + 1] }) as number;
              if (Number.isFinite(v))
                expect(Math.abs(tab.N[q * 3 + 1] - v)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(v)));
            }
          } catch (error) {
            expect(error).toBeInstanceOf(SandboxError);
            expect((error as SandboxError).code).toBe('non-finite');
            refused++;
          }
        }
      ),
      { numRuns: 60, seed: 4242 }
    );
    // both outcomes must occur for the property to have tested anything
    expect(returned).toBeGreaterThan(15);
    expect(refused).toBeGreaterThan(15);
  });
});
