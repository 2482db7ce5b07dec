// POST /api/v1/validate against the built server: diagnostics with line and column for an invalid
// document, and for a valid one the shape functions tabulated in the sandbox over the reference cell.
import { evaluate } from 'mathjs';
import { beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, signedIn, testUrl } from '../support/http';

interface Diagnostic {
  line: number;
  column: number;
  path: string;
  message: string;
  severity: 'error' | 'warning';
}

interface Preview {
  cell: string;
  dim: number;
  coordinates: string[];
  vertices: number[][];
  nodes: number[][];
  plot: { kind: string; points: number[][]; patches: number[][] };
  N: number[][];
  precision: number;
}

interface Validation {
  ok: boolean;
  diagnostics: Diagnostic[];
  definitionHash?: string;
  definition?: { shape: string[]; derivatives: string[][]; coordinates: string[] };
  preview?: Preview | null;
  previewNote?: string;
}

/** The format's document limit (formulation-format.md, "Limits"): 64 KB. */
const DOCUMENT_LIMIT = 64 * 1024;

/**
 * Each tabulated value is rounded to the preview's precision (±precision/2), so a sum of n values may
 * stray from the exact sum by n × precision/2; the 1e-12 covers the sandbox's own arithmetic.
 */
function sumTolerance(nodes: number, precision: number): number {
  return (nodes * precision) / 2 + 1e-12;
}

// Bilinear four-node quadrilateral, corners counter-clockwise from (−1, −1): the textbook Lagrange
// functions N_i = (1 + ξ ξ_i)(1 + η η_i) / 4 (common practice, no source).
const QUAD4 = `format: 1
name: validate-quad4
title: Four-node quadrilateral for the validation route
cell: quadrilateral
nodes: [[-1, -1], [1, -1], [1, 1], [-1, 1]]
shape:
  - (1 - xi) * (1 - eta) / 4
  - (1 + xi) * (1 - eta) / 4
  - (1 + xi) * (1 + eta) / 4
  - (1 - xi) * (1 + eta) / 4
strain: plane-stress
quadrature: { rule: gauss, points: 2 }
material: { E: 1, nu: 0.3 }
`;

// Six-node quadratic triangle (corners, then mid-edges 1–2, 2–3, 3–1) in area coordinates
// L1 = 1 − ξ − η, L2 = ξ, L3 = η: corners L(2L − 1), mid-edges 4 L_a L_b (common practice, no source).
const TRI6 = `format: 1
name: validate-tri6
title: Six-node triangle for the validation route
cell: triangle
nodes: [[0, 0], [1, 0], [0, 1], [0.5, 0], [0.5, 0.5], [0, 0.5]]
definitions:
  - L1 = 1 - xi - eta
shape:
  - L1 * (2 * L1 - 1)
  - xi * (2 * xi - 1)
  - eta * (2 * eta - 1)
  - 4 * L1 * xi
  - 4 * xi * eta
  - 4 * eta * L1
strain: plane-stress
quadrature: { rule: simplex, degree: 2 }
`;

const BAR2 = `format: 1
name: validate-bar2
title: Two-node bar for the validation route
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
`;

const HEX8 = `format: 1
name: validate-hex8
title: Eight-node hexahedron for the validation route
cell: hexahedron
nodes: [[-1, -1, -1], [1, -1, -1], [1, 1, -1], [-1, 1, -1], [-1, -1, 1], [1, -1, 1], [1, 1, 1], [-1, 1, 1]]
definitions:
  - h(a, b, c) = (1 + a * xi) * (1 + b * eta) * (1 + c * zeta) / 8
shape:
  - h(-1, -1, -1)
  - h(1, -1, -1)
  - h(1, 1, -1)
  - h(-1, 1, -1)
  - h(-1, -1, 1)
  - h(1, -1, 1)
  - h(1, 1, 1)
  - h(-1, 1, 1)
strain: solid
quadrature: { rule: gauss, points: 2 }
`;

let author: Client;

beforeAll(async () => {
  author = await signedIn(DEMO.author);
});

async function validate(client: Client, source: string): Promise<Validation> {
  return client.sendJson<Validation>('POST', '/api/v1/validate', { source });
}

function expectPartitionOfUnity(preview: Preview): void {
  const tol = sumTolerance(preview.nodes.length, preview.precision);
  expect(preview.N.length).toBe(preview.plot.points.length);
  for (const row of preview.N) {
    expect(row.length).toBe(preview.nodes.length);
    expect(Math.abs(row.reduce((s, v) => s + v, 0) - 1)).toBeLessThanOrEqual(tol);
  }
}

describe('POST /api/v1/validate with a valid document', () => {
  it('tabulates the bilinear quadrilateral on a 25 × 25 grid that matches mathjs and sums to one', async () => {
    const v = await validate(author, QUAD4);
    expect(v.ok).toBe(true);
    expect(v.definitionHash).toMatch(/^sha256:[0-9a-f]{64}$/);
    expect(v.definition?.derivatives.length).toBe(4);
    expect(v.definition?.derivatives[0].length).toBe(2);
    const p = v.preview!;
    expect(p.cell).toBe('quadrilateral');
    expect(p.plot.kind).toBe('area');
    expect(p.plot.points.length).toBe(25 * 25);
    expect(p.nodes).toEqual([
      [-1, -1],
      [1, -1],
      [1, 1],
      [-1, 1]
    ]);
    expectPartitionOfUnity(p);
    // reference: mathjs (a general-purpose library) evaluating the textbook functions at the same points
    const textbook = [
      '(1 - xi) * (1 - eta) / 4',
      '(1 + xi) * (1 - eta) / 4',
      '(1 + xi) * (1 + eta) / 4',
      '(1 - xi) * (1 + eta) / 4'
    ];
    p.plot.points.forEach(([xi, eta], k) => {
      textbook.forEach((expr, i) => {
        expect(Math.abs(p.N[k][i] - evaluate(expr, { xi, eta }))).toBeLessThanOrEqual(
          p.precision / 2 + 1e-12
        );
      });
    });
  });

  it('tabulates the six-node triangle on a triangular grid inside the cell, with N_i(x_j) = δ_ij at its nodes', async () => {
    const v = await validate(author, TRI6);
    expect(v.ok).toBe(true);
    const p = v.preview!;
    // 24 subdivisions per edge: (24 + 1)(24 + 2) / 2 points
    expect(p.plot.points.length).toBe((25 * 26) / 2);
    for (const [xi, eta] of p.plot.points) {
      expect(xi).toBeGreaterThanOrEqual(0);
      expect(eta).toBeGreaterThanOrEqual(0);
      expect(xi + eta).toBeLessThanOrEqual(1 + 1e-9);
    }
    expectPartitionOfUnity(p);
    // every node of this element lies on the grid (multiples of 1/24): the Kronecker property there
    p.nodes.forEach((node, j) => {
      const k = p.plot.points.findIndex(
        (q) => Math.abs(q[0] - node[0]) < 1e-9 && Math.abs(q[1] - node[1]) < 1e-9
      );
      expect(k).toBeGreaterThanOrEqual(0);
      p.N[k].forEach((value, i) =>
        expect(Math.abs(value - (i === j ? 1 : 0))).toBeLessThanOrEqual(p.precision / 2)
      );
    });
    // a corner function L(2L − 1) dips below zero, least at L = 1/4: −1/8 (derived by hand; L = 1/4 lies on the grid)
    const lowest = Math.min(...p.N.map((row) => row[0]));
    expect(Math.abs(lowest - -0.125)).toBeLessThanOrEqual(p.precision);
  });

  it('tabulates a bar at 101 points along the interval', async () => {
    const v = await validate(author, BAR2);
    expect(v.ok).toBe(true);
    const p = v.preview!;
    expect(p.plot.kind).toBe('line');
    expect(p.plot.points.length).toBe(101);
    expect(p.plot.points[0]).toEqual([-1]);
    expect(p.plot.points[100]).toEqual([1]);
    expectPartitionOfUnity(p);
  });

  it('tabulates a hexahedron on the grids of its six faces', async () => {
    const v = await validate(author, HEX8);
    expect(v.ok).toBe(true);
    const p = v.preview!;
    expect(p.plot.kind).toBe('surface');
    expect(p.plot.points.length).toBe(6 * 13 * 13);
    // every point lies on the boundary of the cube
    for (const q of p.plot.points) expect(Math.max(...q.map(Math.abs))).toBeCloseTo(1, 9);
    expectPartitionOfUnity(p);
  });
});

describe('POST /api/v1/validate with an invalid document', () => {
  it('reports a mistyped symbol at its line and column, and an unknown field at its own', async () => {
    const source =
      QUAD4.replace('(1 + xi) * (1 + eta) / 4', '(1 + xi) * (1 + etq) / 4') + 'colour: verdigris\n';
    const v = await validate(author, source);
    expect(v.ok).toBe(false);
    expect(v.preview).toBeUndefined();
    const lines = source.split('\n');
    const shapeLine = lines.findIndex((l) => l.includes('etq')) + 1;
    const symbol = v.diagnostics.find((d) => d.message.includes('etq'));
    expect(symbol, JSON.stringify(v.diagnostics)).toBeDefined();
    expect(symbol!.line).toBe(shapeLine);
    expect(symbol!.column).toBe(lines[shapeLine - 1].indexOf('etq') + 1);
    expect(symbol!.path).toBe('shape[2]');
    const field = v.diagnostics.find((d) => d.message.includes('colour'));
    expect(field, JSON.stringify(v.diagnostics)).toBeDefined();
    expect(field!.line).toBe(lines.indexOf('colour: verdigris') + 1);
    expect(field!.column).toBe(1);
  });
});

describe('POST /api/v1/validate refuses what it must', () => {
  it('answers 401 in the error shape to a visitor who is not signed in', async () => {
    const r = await new Client().request('POST', '/api/v1/validate', { json: { source: QUAD4 } });
    expect(r.status).toBe(401);
    const body = await r.json();
    expect(body.error.code).toBe('unauthenticated');
    expect(typeof body.error.message).toBe('string');
  });

  it('answers 413 naming the limit to a document over 64 KB, and to a body far beyond it', async () => {
    const padded = QUAD4 + '#'.repeat(DOCUMENT_LIMIT - Buffer.byteLength(QUAD4) - 1) + '\n' + '#\n';
    expect(Buffer.byteLength(padded)).toBeGreaterThan(DOCUMENT_LIMIT);
    // the server may answer before it has read a refused body: these connections are not reused
    const close = { connection: 'close' };
    const r = await author.request('POST', '/api/v1/validate', { json: { source: padded }, headers: close });
    expect(r.status).toBe(413);
    const body = await r.json();
    expect(body.error.code).toBe('too-large');
    expect(body.error.message).toContain(String(DOCUMENT_LIMIT));

    const huge = await author.request('POST', '/api/v1/validate', {
      json: { source: 'x'.repeat(1024 * 1024) },
      headers: close
    });
    expect(huge.status).toBe(413);

    // just under the limit is fine: comments do not count against anything but the size
    const fits = QUAD4 + '#'.repeat(DOCUMENT_LIMIT - Buffer.byteLength(QUAD4) - 1) + '\n';
    expect(Buffer.byteLength(fits)).toBe(DOCUMENT_LIMIT);
    expect((await validate(author, fits)).ok).toBe(true);
  });

  it('answers 400 to a body without a source string and 415 to a body that is not JSON', async () => {
    const r = await author.request('POST', '/api/v1/validate', { json: { text: QUAD4 } });
    expect(r.status).toBe(400);
    expect((await r.json()).error.message).toContain('source');
    const plain = await author.request('POST', '/api/v1/validate', {
      headers: { 'content-type': 'text/plain' },
      json: undefined
    });
    expect(plain.status).toBe(415);
  });

  it('refuses hostile expressions with a diagnostic each and keeps serving valid documents', async () => {
    const withShape = (expr: string) => QUAD4.replace('(1 - xi) * (1 - eta) / 4', expr);
    const hostile: { what: string; source: string }[] = [
      { what: 'constructor', source: withShape('"constructor"') },
      { what: '__proto__', source: withShape('__proto__') },
      { what: 'import', source: withShape('import("node:fs")') },
      { what: 'evaluate', source: withShape('evaluate("1 + 1")') },
      { what: 'a string', source: withShape(`'"abc"'`) },
      { what: 'property access', source: withShape('xi.constructor') },
      { what: 'deep nesting', source: withShape('('.repeat(2000) + 'xi' + ')'.repeat(2000)) },
      {
        what: 'an alias bomb',
        source: `a: &a ["x","x","x","x","x","x","x","x","x"]\nb: &b [*a,*a,*a,*a,*a,*a,*a,*a,*a]\nc: &c [*b,*b,*b,*b,*b,*b,*b,*b,*b]\nd: &d [*c,*c,*c,*c,*c,*c,*c,*c,*c]\ne: [*d,*d,*d,*d,*d,*d,*d,*d,*d]\n${QUAD4}`
      }
    ];
    for (const h of hostile) {
      const v = await validate(author, h.source);
      expect(v.ok, h.what).toBe(false);
      expect(v.diagnostics.length, h.what).toBeGreaterThan(0);
      for (const d of v.diagnostics) {
        expect(d.line, h.what).toBeGreaterThanOrEqual(1);
        expect(d.message.length, h.what).toBeGreaterThan(0);
      }
    }
    // an exponent tower evaluates to an exponent beyond the format's bound: refused at its field, no preview
    const tower = await validate(author, withShape('(1 - xi) * (1 - eta) / 4 + 0 * 9^9^9^9'));
    expect(tower.ok).toBe(false);
    expect(tower.preview ?? null).toBeNull();
    expect(tower.diagnostics.some((d) => d.path.startsWith('shape') && /exponent/.test(d.message))).toBe(
      true
    );
    // the server still answers, and a valid document still gets its full preview
    expect((await fetch(new URL('/api/v1/health', testUrl()))).status).toBe(200);
    const after = await validate(author, QUAD4);
    expect(after.ok).toBe(true);
    expectPartitionOfUnity(after.preview!);
  });
});
