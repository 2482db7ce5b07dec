// Hostile documents: each is refused with a clear message, and afterwards the same process and the
// same sandbox pool still serve a valid document. (Time is not asserted here; the benchmark prints
// the slowest refusal. The bounds come from the static limits and the sandbox's limits.)
import { afterAll, describe, expect, it } from 'vitest';
import { parseFormulation, type Definition } from '@isoledger/formulation';
import { SandboxError, SandboxPool } from '@isoledger/sandbox';
import { formulationDoc } from '../formulation/documents';
import { HOSTILE } from '../formulation/hostile-corpus';

const pool = new SandboxPool({ poolSize: 1, timeoutMs: 500 });
afterAll(() => pool.dispose());

const valid = formulationDoc();

/** A valid document parses and tabulates in the same pool: the process is still serving. */
async function stillServing() {
  const r = parseFormulation(valid);
  expect(r.ok).toBe(true);
  if (!r.ok) return;
  const tab = await pool.tabulate(r.definition, new Float64Array([0.2, 0.3]));
  expect(Array.from(tab.N).map((v) => +v.toFixed(12))).toEqual([0.5, 0.2, 0.3]);
}

describe('hostile documents are refused with a clear message', () => {
  it('has at least thirty of them', () => {
    expect(HOSTILE.length).toBeGreaterThanOrEqual(30);
  });
  for (const h of HOSTILE)
    it(`refuses ${h.name}, then serves a valid document`, async () => {
      const result = parseFormulation(h.source());
      expect(result.ok).toBe(false);
      const messages = result.diagnostics.map((d) => d.message);
      expect(
        messages.some((m) => h.refusal.test(m)),
        messages.join('\n')
      ).toBe(true);
      for (const d of result.diagnostics) {
        expect(d.line).toBeGreaterThanOrEqual(1);
        expect(d.column).toBeGreaterThanOrEqual(1);
        expect(d.message.length).toBeLessThan(400);
      }
      await stillServing();
    });

  it('leaves Object.prototype untouched by a __proto__ field', () => {
    parseFormulation(formulationDoc({ extra: '__proto__: { polluted: 1 }' }));
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });
});

describe('hostile inputs that reach the sandbox are refused there', () => {
  const good = parseFormulation(valid);
  if (!good.ok) throw new Error('the valid document does not parse');
  const tri3 = good.definition;

  async function refused(run: () => Promise<unknown>, code: SandboxError['code'], message: RegExp) {
    let caught: unknown;
    try {
      await run();
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(SandboxError);
    expect((caught as SandboxError).code).toBe(code);
    expect((caught as SandboxError).message).toMatch(message);
    await stillServing();
  }

  it('refuses a shape function that reaches for the global object', () =>
    refused(
      () => pool.tabulate({ ...tri3, shape: ['globalThis', 'xi', 'eta'] }, new Float64Array([0.1, 0.1])),
      'invalid',
      /unknown symbol 'globalThis'/
    ));

  it('refuses a derivative that calls a function outside the table', () =>
    refused(
      () =>
        pool.tabulate(
          {
            ...tri3,
            derivatives: [
              ['require("fs")', '0'],
              ['1', '0'],
              ['0', '1']
            ]
          },
          new Float64Array([0.1, 0.1])
        ),
      'invalid',
      /derivatives\[0\]\[0\]/
    ));

  it('refuses a definition whose cell is a prototype key', () =>
    refused(
      () => pool.tabulate({ ...tri3, cell: '__proto__' as Definition['cell'] }, new Float64Array([0.1, 0.1])),
      'invalid',
      /unknown cell/
    ));

  it('refuses a 0/0 at a node as a non-finite value naming node and point', () =>
    refused(
      () =>
        pool.tabulate(
          {
            ...tri3,
            shape: ['1 - xi - eta', 'xi * xi / xi', 'eta'],
            derivatives: [
              ['-1', '-1'],
              ['1', '0'],
              ['0', '1']
            ]
          },
          new Float64Array([0, 0])
        ),
      'non-finite',
      /N2 \(shape\[1\]\) of node 2 is NaN at point 0/
    ));

  it('stops a batch that runs past the time limit', async () => {
    const heavy = parseFormulation(
      formulationDoc({
        shape: [
          '1 - xi - eta',
          'xi + 0 * (' + Array.from({ length: 250 }, (_, i) => `cos(eta*${i + 1})`).join('+') + ')',
          'eta'
        ]
      })
    );
    if (!heavy.ok) throw new Error('the heavy document does not parse');
    await refused(
      () => pool.tabulate(heavy.definition, new Float64Array(2 * 400_000).fill(0.2)),
      'timeout',
      /time limit of 500 ms/
    );
  });

  it('refuses a batch whose arrays exceed the isolate’s memory', () =>
    refused(() => pool.evaluate(tri3 as Definition, 'B', {}, 1), 'invalid', /built-in kind/).then(() =>
      refused(() => pool.tabulate(tri3, new Float64Array(2 * 20_000_000)), 'memory', /split the batch/)
    ));
});
