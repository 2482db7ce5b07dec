// The sandbox pool: batched tabulation and evaluation in isolates, faults as SandboxErrors, a warm
// pool that replaces isolates that timed out, and nothing of the author's text in the compiled code.
import { readFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { CATALOGUE_DIR, parseFormulation, type Definition } from '@isoledger/formulation';
import { compileDefinition, SandboxError, SandboxPool } from '@isoledger/sandbox';
import { formulationDoc } from '../formulation/documents';

const definitionOf = (source: string): Definition => {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error(JSON.stringify(r.diagnostics));
  return r.definition;
};
const catalogued = (name: string) =>
  definitionOf(readFileSync(`${CATALOGUE_DIR}/${name}.formulation.yaml`, 'utf8'));

const tri3 = definitionOf(formulationDoc());
const custom = catalogued('quad4-custom-plane-strain');
const hex20 = catalogued('hex20-serendipity');

const pool = new SandboxPool({ poolSize: 2 });
afterAll(() => pool.dispose());

async function rejection(p: Promise<unknown>): Promise<SandboxError> {
  try {
    await p;
  } catch (error) {
    expect(error).toBeInstanceOf(SandboxError);
    return error as SandboxError;
  }
  throw new Error('expected a SandboxError');
}

describe('tabulate', () => {
  it('returns N (points × nodes) and ∂N/∂ξ (points × nodes × dim) of the linear triangle (area coordinates, textbook)', async () => {
    const tab = await pool.tabulate(tri3, new Float64Array([0.2, 0.3, 0, 0, 1 / 3, 1 / 3]));
    expect({ nodes: tab.nodes, dim: tab.dim, points: tab.points }).toEqual({ nodes: 3, dim: 2, points: 3 });
    [0.5, 0.2, 0.3, 1, 0, 0, 1 / 3, 1 / 3, 1 / 3].forEach((v, k) => expect(tab.N[k]).toBeCloseTo(v, 15));
    expect(Array.from(tab.dN.subarray(0, 6))).toEqual([-1, -1, 1, 0, 0, 1]);
    expect(Array.from(tab.dN.subarray(12, 18))).toEqual([-1, -1, 1, 0, 0, 1]);
  });

  it('handles zero points and refuses points that are not count × dim finite numbers', async () => {
    expect((await pool.tabulate(tri3, new Float64Array(0))).points).toBe(0);
    expect((await rejection(pool.tabulate(tri3, new Float64Array(3)))).code).toBe('invalid');
    expect((await rejection(pool.tabulate(tri3, new Float64Array([0, Number.NaN])))).message).toMatch(
      /point 0 has a non-finite coordinate/
    );
    expect((await rejection(pool.tabulate(tri3, [0, 0] as unknown as Float64Array))).message).toMatch(
      /Float64Array/
    );
  });

  it('names the field, the node and the point of a 0/0 at a node', async () => {
    const def = definitionOf(formulationDoc({ shape: ['1 - xi - eta', 'xi', 'eta * xi / xi'] }));
    const e = await rejection(pool.tabulate(def, new Float64Array([0.25, 0.25, 0, 1])));
    expect(e.code).toBe('non-finite');
    expect({ path: e.path, node: e.node, point: e.point }).toEqual({ path: 'shape[2]', node: 2, point: 1 });
    expect(e.message).toBe('N3 (shape[2]) of node 3 is NaN at point 1 (xi = 0, eta = 1), such as 0/0');
  });

  it('returns values whose bound fails but which are finite, and refuses those that overflow', async () => {
    // bilinear quadrilateral, N1 = (1 - xi)(1 - eta)/4 (textbook): at xi = eta = -1e151 every value is
    // finite (N1 is about 2.5e301), but the magnitude bound, from |xi| + |eta|, exceeds 1e300, so the
    // exact scan after the loop decides; at -1e155, N1 overflows to infinity and must be refused
    const quad4 = catalogued('quad4-membrane');
    const big = await pool.tabulate(quad4, new Float64Array([0.5, 0.5, -1e151, -1e151]));
    expect(big.N[4]).toBe(((1 + 1e151) * (1 + 1e151)) / 4);
    expect(big.dN[8]).toBe(-(1 + 1e151) / 4);
    const e = await rejection(pool.tabulate(quad4, new Float64Array([0.5, 0.5, -1e155, -1e155])));
    expect(e.code).toBe('non-finite');
    expect({ path: e.path, point: e.point }).toEqual({ path: 'shape[0]', point: 1 });
    expect(e.message).toMatch(/N1 \(shape\[0\]\) of node 1 is Infinity at point 1/);
  });

  it('writes every number of a batch too large for the arena, into memory it did not clear first', async () => {
    // bilinear quadrilateral at 400,000 points: the 4.8 million results are moved, not copied, in a
    // buffer the host does not clear; each must equal the closed form (textbook Q4 functions)
    const quad4 = catalogued('quad4-membrane');
    const count = 400_000;
    const P = Float64Array.from({ length: 2 * count }, (_, i) => Math.sin(1 + i * 0.37));
    const tab = await pool.tabulate(quad4, P);
    let worst = 0;
    for (let q = 0; q < count; q++) {
      const xi = P[2 * q];
      const eta = P[2 * q + 1];
      const expected = [
        ((1 - xi) * (1 - eta)) / 4,
        ((1 + xi) * (1 - eta)) / 4,
        ((1 + xi) * (1 + eta)) / 4,
        ((1 - xi) * (1 + eta)) / 4,
        -(1 - eta) / 4,
        -(1 - xi) / 4,
        (1 - eta) / 4,
        -(1 + xi) / 4,
        (1 + eta) / 4,
        (1 + xi) / 4,
        -(1 + eta) / 4,
        (1 - xi) / 4
      ];
      for (let i = 0; i < 4; i++) worst = Math.max(worst, Math.abs(tab.N[4 * q + i] - expected[i]));
      for (let k = 0; k < 8; k++) worst = Math.max(worst, Math.abs(tab.dN[8 * q + k] - expected[4 + k]));
    }
    expect(tab.N.length + tab.dN.length).toBe(12 * count);
    expect(worst).toBeLessThan(1e-15);
  });

  it('names a derivative that divides by zero', async () => {
    // ∂/∂xi of eta·sqrt(xi) is eta / (2 sqrt(xi)): infinite on the edge xi = 0
    const def = definitionOf(formulationDoc({ shape: ['1 - xi - eta', 'xi', 'eta + eta * sqrt(xi)'] }));
    const e = await rejection(pool.tabulate(def, new Float64Array([0.25, 0.25, 0, 0.5])));
    expect(e.code).toBe('non-finite');
    expect(e.path).toBe('derivatives[2][0]');
    expect(e.point).toBe(1);
  });
});

describe('evaluate', () => {
  it('evaluates B for every node at every point in one call, one components × dofs block per entry', async () => {
    const dNdx = new Float64Array([0.1, 0.2, 0.3]);
    const dNdy = new Float64Array([-1, -2, -3]);
    const B = await pool.evaluate(custom, 'B', { dNdx, dNdy }, 3);
    expect(B.length).toBe(3 * 6);
    // [dNdx, 0; 0, dNdy; dNdy, dNdx] row-major
    expect(Array.from(B.subarray(6, 12))).toEqual([0.2, 0, 0, -2, -2, 0.2]);
  });

  it('evaluates D from E and nu as the plane-strain elasticity matrix (Zienkiewicz & Taylor, from memory)', async () => {
    const E = 210e9;
    const nu = 0.3;
    const D = await pool.evaluate(custom, 'D', { E, nu }, 1);
    const c = E / ((1 + nu) * (1 - 2 * nu));
    const expected = [c * (1 - nu), c * nu, 0, c * nu, c * (1 - nu), 0, 0, 0, (c * (1 - 2 * nu)) / 2];
    Array.from(D).forEach((v, k) => expect(v).toBeCloseTo(expected[k], 3));
  });

  it('takes E, nu and thickness from the definition when the call does not give them', async () => {
    const D = await pool.evaluate(custom, 'D', {}, 1);
    expect(D[0]).toBeCloseTo((1 - 0.3) / ((1 + 0.3) * (1 - 0.6)), 14);
    const w = await pool.evaluate(custom, 'weight', { detJ: new Float64Array([2, 3]) }, 2);
    expect(Array.from(w)).toEqual([2, 3]);
  });

  it('evaluates rigid modes at node positions: modes × dofs per entry, mixing arrays and constants', async () => {
    const modes = await pool.evaluate(custom, 'rigid_modes', { x: new Float64Array([1, 2]), y: 5 }, 2);
    expect(Array.from(modes)).toEqual([1, 0, 0, 1, -5, 1, 1, 0, 0, 1, -5, 2]);
  });

  it('refuses a missing symbol, a wrong length and a built-in kind’s B, naming them', async () => {
    expect((await rejection(pool.evaluate(custom, 'B', { dNdx: new Float64Array(2) }, 2))).message).toBe(
      "B uses 'dNdy' but no value was given for it"
    );
    expect(
      (
        await rejection(
          pool.evaluate(custom, 'B', { dNdx: new Float64Array(2), dNdy: new Float64Array(3) }, 2)
        )
      ).message
    ).toBe("'dNdy' has 3 values; count is 2");
    expect(
      (await rejection(pool.evaluate(custom, 'B', { dNdx: Number.POSITIVE_INFINITY, dNdy: 1 }, 1))).message
    ).toBe("'dNdx' is Infinity; values must be finite");
    expect((await rejection(pool.evaluate(tri3, 'B', {}, 1))).message).toMatch(
      /built-in kind 'plane-stress' is computed by the kernel/
    );
    expect((await rejection(pool.evaluate(custom, 'stiffness' as 'B', {}, 1))).message).toMatch(
      /unknown field 'stiffness'/
    );
  });

  it('names the entry, point and node of a division by zero in B', async () => {
    const def = definitionOf(
      formulationDoc({
        strain:
          '{ dofs: [u, v], components: [exx, eyy, gxy], B: "[dNdx / detJ, 0; 0, dNdy; dNdy, dNdx]", D: "[1, 0, 0; 0, 1, 0; 0, 0, 1]", rigid_modes: ["[1, 0]"] }'
      })
    );
    const count = 2 * 3;
    const detJ = new Float64Array(count).fill(1);
    detJ[4] = 0;
    const e = await rejection(pool.evaluate(def, 'B', { dNdx: 1, dNdy: 1, detJ }, count, { nodes: 3 }));
    expect(e.code).toBe('non-finite');
    expect({ point: e.point, node: e.node, path: e.path }).toEqual({ point: 1, node: 1, path: 'strain.B' });
    expect(e.message).toBe('strain.B [0, 0] is Infinity at point 1, node 2, a division by zero');
  });
});

describe('the pool', () => {
  it('serves repeated calls from warm isolates and installs a program once per isolate', async () => {
    const p = new SandboxPool({ poolSize: 1 });
    try {
      for (let i = 0; i < 20; i++) await p.tabulate(tri3, new Float64Array([0.1, 0.1]));
      // an equal definition parsed again is the same program
      await p.tabulate(definitionOf(formulationDoc()), new Float64Array([0.1, 0.1]));
      expect(p.stats).toMatchObject({
        isolatesStarted: 1,
        isolatesReplaced: 0,
        calls: 21,
        programsInstalled: 1
      });
    } finally {
      await p.dispose();
    }
  });

  it('runs concurrent calls on at most poolSize isolates, each with the right result', async () => {
    const p = new SandboxPool({ poolSize: 2 });
    try {
      const defs = [tri3, hex20, custom];
      const results = await Promise.all(
        Array.from({ length: 12 }, (_, i) =>
          p.tabulate(defs[i % 3], new Float64Array(defs[i % 3].coordinates.length).fill(0.1))
        )
      );
      results.forEach((t, i) => expect(t.nodes).toBe(defs[i % 3].nodes.length));
      expect(p.stats.isolatesStarted).toBeLessThanOrEqual(2);
    } finally {
      await p.dispose();
    }
  });

  it('stops a call at the time limit, replaces the isolate and serves the next call', async () => {
    const heavy = definitionOf(
      formulationDoc({
        shape: [
          '1 - xi - eta',
          'xi + 0 * (' + Array.from({ length: 250 }, (_, i) => `sin(xi*${i + 1})`).join('+') + ')',
          'eta'
        ]
      })
    );
    const p = new SandboxPool({ poolSize: 1, timeoutMs: 250 });
    try {
      const e = await rejection(p.tabulate(heavy, new Float64Array(2 * 300_000).fill(0.25)));
      expect(e.code).toBe('timeout');
      expect(e.message).toMatch(/took longer than the sandbox's time limit of 250 ms/);
      const after = await p.tabulate(tri3, new Float64Array([0.2, 0.3]));
      expect(Array.from(after.N)).toEqual([0.5, 0.2, 0.3]);
      expect(p.stats.isolatesReplaced).toBe(1);
    } finally {
      await p.dispose();
    }
  });

  it('refuses a batch larger than the isolate’s memory and serves the next call', async () => {
    const p = new SandboxPool({ poolSize: 1, memoryLimitMb: 16 });
    try {
      const e = await rejection(p.tabulate(hex20, new Float64Array(3 * 100_000)));
      expect(e.code).toBe('memory');
      expect(e.message).toMatch(
        /tabulating 100000 points needs about \d+ MB; the sandbox's limit is 16 MB: split the batch/
      );
      expect((await p.tabulate(hex20, new Float64Array(3))).N[0]).toBeCloseTo(-0.25, 14);
    } finally {
      await p.dispose();
    }
  });

  it('serves at its smallest memory limit, 8 MB, through the arena and with moved buffers', async () => {
    const p = new SandboxPool({ poolSize: 1, memoryLimitMb: 8 });
    try {
      // serendipity hexahedron, corner node 1 at the centre: N1 = (1/8)(1)(1)(1)(0 + 0 + 0 - 2) = -0.25
      expect((await p.tabulate(hex20, new Float64Array(3))).N[0]).toBe(-0.25);
      // the largest batch this limit takes, 40 times over: the isolate is recycled on the way
      const count = 5000;
      for (let i = 0; i < 40; i++) {
        const t = await p.tabulate(hex20, new Float64Array(3 * count));
        expect(t.N[20 * (count - 1)]).toBe(-0.25);
      }
      expect((await rejection(p.tabulate(hex20, new Float64Array(3 * 6000)))).code).toBe('memory');
      expect(p.stats.isolatesReplaced).toBe(0);
      expect(p.stats.isolatesRecycled).toBeGreaterThan(0);
    } finally {
      await p.dispose();
    }
  });

  it('replaces an isolate that runs out of memory and serves the next call', async () => {
    // the host refuses any batch that would not fit the limit twice over, so no document reaches
    // this: the call is made past that check, with results four times the isolate's limit moved in
    const p = new SandboxPool({ poolSize: 1, memoryLimitMb: 16 });
    type Call = (...args: unknown[]) => Promise<unknown>;
    const internals = p as unknown as { program(d: Definition): unknown; call: Call };
    try {
      expect((await p.tabulate(hex20, new Float64Array(3))).N[0]).toBe(-0.25);
      const count = 50_000;
      const e = await rejection(
        internals.call.call(
          p,
          internals.program(hex20),
          'tabulate',
          3 * count,
          (I: Float64Array) => I.fill(0),
          80 * count,
          count,
          'tabulating past the check'
        )
      );
      expect(e.code).toBe('memory');
      expect(e.message).toBe(
        "tabulating past the check ran out of memory (the sandbox's limit is 16 MB): split the batch"
      );
      expect((await p.tabulate(hex20, new Float64Array(3))).N[0]).toBe(-0.25);
      expect(p.stats).toMatchObject({ isolatesStarted: 2, isolatesReplaced: 1 });
    } finally {
      await p.dispose();
    }
  });

  it('returns results the caller owns: a later call through the same isolate leaves them as they were', async () => {
    const p = new SandboxPool({ poolSize: 1 });
    try {
      // linear triangle: N = (1 - xi - eta, xi, eta), area coordinates (textbook)
      const first = await p.tabulate(tri3, new Float64Array([0.2, 0.3]));
      const kept = Array.from(first.N);
      const second = await p.tabulate(tri3, new Float64Array([0.6, 0.1]));
      expect(kept).toEqual([0.5, 0.2, 0.3]);
      expect(Array.from(first.N)).toEqual(kept);
      expect(Array.from(second.N).map((v) => +v.toFixed(15))).toEqual([0.3, 0.6, 0.1]);
    } finally {
      await p.dispose();
    }
  });

  it('serves a long run of large batches without the isolate running out of memory', async () => {
    // each call moves about 20 MB of results through an isolate limited to 64 MB: buffers an isolate
    // has been handed stay counted against it until it collects the handles it held, which it does
    // not always do in time, so without recycling the isolate is killed after a few calls
    const p = new SandboxPool({ poolSize: 1, memoryLimitMb: 64 });
    const entries = 400_000;
    const dNdx = Float64Array.from({ length: entries }, (_, i) => Math.sin(i));
    const dNdy = Float64Array.from({ length: entries }, (_, i) => Math.cos(i));
    try {
      for (let i = 0; i < 40; i++) {
        const B = await p.evaluate(custom, 'B', { dNdx, dNdy }, entries);
        // the document's B, [dNdx, 0; 0, dNdy; dNdy, dNdx] (the plane B of Zienkiewicz & Taylor), row-major
        const e = (i * 9973) % entries;
        expect(Array.from(B.subarray(6 * e, 6 * e + 6))).toEqual([dNdx[e], 0, 0, dNdy[e], dNdy[e], dNdx[e]]);
      }
      expect(p.stats.isolatesReplaced).toBe(0);
      expect(p.stats.isolatesRecycled).toBeGreaterThan(0);
    } finally {
      await p.dispose();
    }
  });

  it('serves small batches through the isolate’s arena without recycling it', async () => {
    const p = new SandboxPool({ poolSize: 1, memoryLimitMb: 16 });
    try {
      for (let i = 0; i < 500; i++) {
        const t = await p.tabulate(hex20, new Float64Array([0.1, -0.2, 0.3]));
        expect(t.N.length).toBe(20);
      }
      expect(p.stats).toMatchObject({ isolatesStarted: 1, isolatesReplaced: 0, isolatesRecycled: 0 });
    } finally {
      await p.dispose();
    }
  });

  it('leaves zeros where a block has them, also where the arena held another call’s results', async () => {
    const p = new SandboxPool({ poolSize: 1 });
    try {
      // 2,000 points of the twenty-node hexahedron fill the arena with non-zero values first: the
      // points, then N, where the block's results go next
      const points = Float64Array.from({ length: 6000 }, (_, i) => 0.9 * Math.sin(i + 1));
      const before = await p.tabulate(hex20, points);
      expect(before.N.subarray(0, 2100).every((v) => v !== 0)).toBe(true);
      const dNdx = Float64Array.from({ length: 1000 }, (_, i) => 1 + i);
      const dNdy = Float64Array.from({ length: 1000 }, (_, i) => -1 - i);
      const B = await p.evaluate(custom, 'B', { dNdx, dNdy }, 1000);
      // [dNdx, 0; 0, dNdy; dNdy, dNdx] (the plane B of Zienkiewicz & Taylor), row-major
      for (const e of [0, 1, 500, 999])
        expect(Array.from(B.subarray(6 * e, 6 * e + 6))).toEqual([dNdx[e], 0, 0, dNdy[e], dNdy[e], dNdx[e]]);
      expect(B.filter((v) => v === 0).length).toBe(2000);
    } finally {
      await p.dispose();
    }
  });

  it('refuses calls after dispose', async () => {
    const p = new SandboxPool({ poolSize: 1 });
    await p.tabulate(tri3, new Float64Array([0.1, 0.1]));
    await p.dispose();
    expect((await rejection(p.tabulate(tri3, new Float64Array([0.1, 0.1])))).code).toBe('internal');
  });
});

describe('compiled programs', () => {
  it('contain none of the author’s names: symbols become generated locals, numbers are printed from values', () => {
    const def = definitionOf(
      formulationDoc({
        extra: 'coordinates: [qalpha, qbeta]',
        shape: ['1 - qalpha - qbeta', 'qalpha * 1.25e-1 * 8', 'qbeta'],
        strain:
          '{ dofs: [udisp, vdisp], components: [strainxx, strainyy, strainxy], B: "[dNdx, 0; 0, dNdy; dNdy, dNdx * detJ / detJ]", D: "E * [1, nu, 0; nu, 1, 0; 0, 0, thickness]", rigid_modes: ["[1, 0]", "[-y, x]"] }'
      })
    );
    const { source } = compileDefinition(def);
    for (const word of [
      'qalpha',
      'qbeta',
      'udisp',
      'strainxx',
      'detJ',
      'dNdx',
      'thickness',
      'nu',
      '1.25e-1',
      'constructor',
      'globalThis',
      'Function',
      'eval'
    ])
      expect(source.includes(word), word).toBe(false);
    expect(source).toMatch(/const t\d+ = c0 \* 0\.125;/);
    // plain arithmetic on locals: the only property access is a function of the frozen math table
    const accesses = [...source.matchAll(/([A-Za-z_$][\w$]*)\s*\.\s*([A-Za-z_$][\w$]*)/g)];
    expect(accesses.length).toBeGreaterThan(0);
    for (const [text, object] of accesses) expect(object, text).toBe('M');
    expect(source).not.toMatch(/\[\s*['"`]/);
  });

  it('check a polynomial element’s values by bounds, and a rational one’s by sums in the loop', () => {
    // the loop of the bilinear quadrilateral adds up only the magnitudes of the coordinates; a
    // shape function with a division by a variable keeps its per-value sum
    const loopOf = (source: string) =>
      source.slice(source.indexOf('for (let q'), source.indexOf('const s ='));
    const quad4 = loopOf(compileDefinition(catalogued('quad4-membrane')).source);
    expect(quad4).toMatch(/m0 \+= M\.abs\(c0\); m1 \+= M\.abs\(c1\);/);
    expect(quad4).not.toMatch(/a\d \+=/);
    const rational = definitionOf(formulationDoc({ shape: ['1 - xi - eta', 'xi', 'eta * xi / (1 + xi)'] }));
    expect(loopOf(compileDefinition(rational).source)).toMatch(/a\d \+= t\d+;/);
  });

  it('refuse a definition that did not come from the parser and holds code, before any isolate sees it', async () => {
    const tampered: Definition[] = [
      { ...tri3, shape: ["constructor.constructor('return process')()", 'xi', 'eta'] },
      {
        ...tri3,
        derivatives: [
          ['process.exit(1)', '0'],
          ['1', '0'],
          ['0', '1']
        ]
      },
      { ...tri3, shape: ['this', 'xi', 'eta'] },
      { ...tri3, cell: 'toString' as Definition['cell'] },
      { ...tri3, shape: ['xi'.padEnd(600_000, ' ')] },
      {
        ...custom,
        strain: { ...(custom.strain as object), B: 'dNdx; while(true){}' } as Definition['strain']
      }
    ];
    const p = new SandboxPool({ poolSize: 1 });
    try {
      for (const def of tampered)
        expect(
          (
            await rejection(
              def === tampered[5]
                ? p.evaluate(def, 'B', {}, 1)
                : p.tabulate(def, new Float64Array([0.1, 0.1]))
            )
          ).code
        ).toBe('invalid');
      expect(p.stats.isolatesStarted).toBe(0);
    } finally {
      await p.dispose();
    }
  });
});
