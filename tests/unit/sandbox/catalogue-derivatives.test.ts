// The derivatives the parser takes symbolically, checked for every catalogue element against central
// finite differences of N (both tabulated through the sandbox) at seeded random interior points, and
// N itself against mathjs `evaluate` (a general-purpose reference library) of the re-printed functions.
import { evaluate } from 'mathjs';
import { afterAll, describe, expect, it } from 'vitest';
import { loadCatalogue, parseFormulation, type Definition } from '@isoledger/formulation';
import { referenceCell } from '@isoledger/kernel';
import { SandboxPool } from '@isoledger/sandbox';

/** Central-difference step: truncation h²·|N'''|/6 ≈ 1e-10 against rounding ε·|N|/h ≈ 1e-11 for these polynomials. */
const FD_STEP = 1e-5;
/** Agreement of ∂N/∂ξ with its central difference: a few times the truncation and rounding above. */
const FD_TOLERANCE = 1e-8;
/** Sandbox and mathjs evaluate the same arithmetic in a different order: agreement to rounding. */
const EVALUATION_TOLERANCE = 1e-13;
/** Interior points per element, seeded so a failure can be replayed. */
const POINTS = 25;
const SEED = 20251201;

const pool = new SandboxPool({ poolSize: 2 });
afterAll(() => pool.dispose());

const catalogue = loadCatalogue().map(({ file, source }) => {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error(`${file} does not parse`);
  return r.definition;
});

function shifted(points: Float64Array, dim: number, k: number, h: number): Float64Array {
  const out = Float64Array.from(points);
  for (let q = 0; q < points.length / dim; q++) out[q * dim + k] += h;
  return out;
}

describe.each(catalogue.map((d) => [d.name, d] as [string, Definition]))('%s', (_name, def) => {
  const dim = def.coordinates.length;
  const nodes = def.nodes.length;
  const points = referenceCell(def.cell).sampleInterior(POINTS, SEED);

  it('has ∂N/∂ξ equal to central finite differences of N at seeded interior points', async () => {
    const tab = await pool.tabulate(def, points);
    for (let k = 0; k < dim; k++) {
      const plus = await pool.tabulate(def, shifted(points, dim, k, FD_STEP));
      const minus = await pool.tabulate(def, shifted(points, dim, k, -FD_STEP));
      for (let q = 0; q < POINTS; q++)
        for (let i = 0; i < nodes; i++) {
          const fd = (plus.N[q * nodes + i] - minus.N[q * nodes + i]) / (2 * FD_STEP);
          const exact = tab.dN[(q * nodes + i) * dim + k];
          expect(
            Math.abs(fd - exact),
            `∂N${i + 1}/∂${def.coordinates[k]} at point ${q}: ${exact} vs ${fd}`
          ).toBeLessThan(FD_TOLERANCE);
        }
    }
  });

  it('tabulates N and ∂N/∂ξ as mathjs evaluates the re-printed functions', async () => {
    const tab = await pool.tabulate(def, points);
    for (let q = 0; q < POINTS; q++) {
      const scope = Object.fromEntries(def.coordinates.map((c, k) => [c, points[q * dim + k]]));
      for (let i = 0; i < nodes; i++) {
        const n = evaluate(def.shape[i], scope) as number;
        expect(Math.abs(tab.N[q * nodes + i] - n)).toBeLessThanOrEqual(
          EVALUATION_TOLERANCE * Math.max(1, Math.abs(n))
        );
        for (let k = 0; k < dim; k++) {
          const d = evaluate(def.derivatives[i][k], scope) as number;
          expect(Math.abs(tab.dN[(q * nodes + i) * dim + k] - d)).toBeLessThanOrEqual(
            EVALUATION_TOLERANCE * Math.max(1, Math.abs(d))
          );
        }
      }
    }
  });

  it('interpolates: N_i(node j) = δ_ij (textbook property of nodal shape functions)', async () => {
    const at = Float64Array.from(def.nodes.flat());
    const tab = await pool.tabulate(def, at);
    for (let j = 0; j < nodes; j++)
      for (let i = 0; i < nodes; i++) expect(tab.N[j * nodes + i]).toBeCloseTo(i === j ? 1 : 0, 12);
  });

  it(
    def.name === 'tri3-unity-defect'
      ? 'misses partition of unity, as it is meant to'
      : 'sums to one with derivatives summing to zero (partition of unity)',
    async () => {
      const tab = await pool.tabulate(def, points);
      let worst = 0;
      for (let q = 0; q < POINTS; q++) {
        let sum = 0;
        for (let i = 0; i < nodes; i++) sum += tab.N[q * nodes + i];
        worst = Math.max(worst, Math.abs(sum - 1));
        if (def.name !== 'tri3-unity-defect')
          for (let k = 0; k < dim; k++) {
            let ds = 0;
            for (let i = 0; i < nodes; i++) ds += tab.dN[(q * nodes + i) * dim + k];
            expect(Math.abs(ds)).toBeLessThan(1e-12);
          }
      }
      if (def.name === 'tri3-unity-defect') expect(worst).toBeGreaterThan(1e-3);
      else expect(worst).toBeLessThan(1e-12);
    }
  );
});
