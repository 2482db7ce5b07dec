// The `isoledger` command, spawned as a user runs it (node packages/cli/bin/isoledger.js …):
// output, exit codes, and the stiffness of the linear triangle against its closed form.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { CATALOGUE_DIR, parseFormulation } from '@isoledger/formulation';
import { formulationDoc } from '../formulation/documents';

const ROOT = fileURLToPath(new URL('../../../', import.meta.url));
const BIN = join(ROOT, 'packages/cli/bin/isoledger.js');
const TRI3 = join(CATALOGUE_DIR, 'tri3-membrane.formulation.yaml');
const tmp = mkdtempSync(join(tmpdir(), 'isoledger-cli-'));

function run(...args: string[]) {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}
function file(name: string, text: string) {
  const path = join(tmp, name);
  writeFileSync(path, text);
  return path;
}

describe('isoledger check', () => {
  it('exits 0 on a valid document and prints its definitionHash', () => {
    const r = run('check', TRI3);
    expect(r.status).toBe(0);
    const parsed = parseFormulation(readFileSync(TRI3, 'utf8'));
    expect(parsed.ok).toBe(true);
    expect(r.stdout.trim()).toBe(
      `${TRI3}: valid formulation 'tri3-membrane', definitionHash ${parsed.ok ? parsed.definitionHash : ''}`
    );
  });

  it('exits 2 on an invalid document, printing FILE:LINE:COL message for every problem', () => {
    const bad = file(
      'bad.formulation.yaml',
      formulationDoc({ shape: ['1 - xi - zeta', 'xi', 'eta'], strain: 'plain-stress' })
    );
    const r = run('check', bad);
    expect(r.status).toBe(2);
    const lines = r.stdout.trim().split('\n');
    expect(lines).toEqual([
      `${bad}:7:15 error: unknown symbol 'zeta': a triangle has coordinates xi, eta (shape[0])`,
      `${bad}:10:9 error: unknown strain kind 'plain-stress': the built-in kinds are bar, plane-stress, plane-strain, axisymmetric, solid, or write a custom block (dofs, components, B, D, …) (strain)`,
      `${bad}: invalid, 2 problems`
    ]);
  });

  it('prints the diagnostics as JSON with --json', () => {
    const bad = file('bad-json.formulation.yaml', formulationDoc({ nodes: '[[0, 0], [1, 0], [0, 2]]' }));
    const r = run('check', bad, '--json');
    expect(r.status).toBe(2);
    const body = JSON.parse(r.stdout);
    expect(body.ok).toBe(false);
    expect(body.diagnostics).toEqual([
      {
        line: 5,
        column: 25,
        path: 'nodes[2]',
        message: 'node 3 (0, 2) lies outside the reference triangle: xi ≥ 0, eta ≥ 0, xi + eta ≤ 1',
        severity: 'error'
      }
    ]);
    const good = JSON.parse(run('check', TRI3, '--json').stdout);
    expect(good).toMatchObject({ ok: true, name: 'tri3-membrane', definition: { cell: 'triangle' } });
    expect(good.definitionHash).toMatch(/^sha256:[0-9a-f]{64}$/);
  });

  it('exits 2 naming a file that does not exist', () => {
    const r = run('check', join(tmp, 'missing.formulation.yaml'));
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/cannot read .*missing\.formulation\.yaml: no such file/);
  });
});

/** The constant strain triangle in closed form: K = t A Bᵀ D B (textbook result, e.g. Zienkiewicz & Taylor vol. 1; from memory). */
function cstStiffness(xy: number[][], E: number, nu: number, t: number): number[][] {
  const [[x1, y1], [x2, y2], [x3, y3]] = xy;
  const A = ((x2 - x1) * (y3 - y1) - (x3 - x1) * (y2 - y1)) / 2;
  const b = [y2 - y3, y3 - y1, y1 - y2];
  const c = [x3 - x2, x1 - x3, x2 - x1];
  const B = [
    [b[0], 0, b[1], 0, b[2], 0],
    [0, c[0], 0, c[1], 0, c[2]],
    [c[0], b[0], c[1], b[1], c[2], b[2]]
  ].map((row) => row.map((v) => v / (2 * A)));
  const f = E / (1 - nu * nu);
  const D = [
    [f, f * nu, 0],
    [f * nu, f, 0],
    [0, 0, (f * (1 - nu)) / 2]
  ];
  return Array.from({ length: 6 }, (_, i) =>
    Array.from({ length: 6 }, (_, j) => {
      let s = 0;
      for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) s += B[p][i] * D[p][q] * B[q][j];
      return t * A * s;
    })
  );
}

describe('isoledger stiffness', () => {
  it('prints the closed-form stiffness of the linear triangle (E = 1, nu = 0.3, t = 1)', () => {
    const xy = [
      [0, 0],
      [2, 0],
      [0, 1]
    ];
    const r = run(
      'stiffness',
      TRI3,
      '--coords',
      JSON.stringify(xy),
      '--E',
      '1',
      '--nu',
      '0.3',
      '--thickness',
      '1'
    );
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const { K } = JSON.parse(r.stdout) as { K: number[][] };
    const expected = cstStiffness(xy, 1, 0.3, 1);
    expect(K).toHaveLength(6);
    K.forEach((row, i) => row.forEach((v, j) => expect(v).toBeCloseTo(expected[i][j], 14)));
  });

  it('uses the document’s material and thickness when no option is given', () => {
    const xy = [
      [0, 0],
      [0.3, 0],
      [0, 0.2]
    ];
    const r = run('stiffness', TRI3, '--coords', JSON.stringify(xy));
    expect(r.status).toBe(0);
    const { K } = JSON.parse(r.stdout) as { K: number[][] };
    // tri3-membrane.formulation.yaml: E = 210e9, nu = 0.3, thickness = 0.01
    const expected = cstStiffness(xy, 210e9, 0.3, 0.01);
    K.forEach((row, i) =>
      row.forEach((v, j) => expect(Math.abs(v - expected[i][j])).toBeLessThan(1e-12 * 210e9))
    );
  });

  it('exits 1 for an element turned inside out, naming the point', () => {
    const r = run('stiffness', TRI3, '--coords', '[[0,0],[0,1],[2,0]]');
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/det J/i);
  });

  it('exits 2 for coordinates that do not fit the document, and without --coords', () => {
    const wrong = run('stiffness', TRI3, '--coords', '[[0,0],[1,0]]');
    expect(wrong.status).toBe(2);
    expect(wrong.stderr).toMatch(/--coords must list 3 nodes for 'tri3-membrane', not 2/);
    const missing = run('stiffness', TRI3);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/--coords is required/);
    expect(missing.stderr).toMatch(/usage: isoledger stiffness FILE --coords/);
  });
});

describe('isoledger', () => {
  it('prints the usage with exit 2 for an unknown command', () => {
    const r = run('frobnicate');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/unknown command 'frobnicate'/);
    expect(r.stderr).toMatch(/check\s+validate a formulation document/);
    expect(r.stderr).toMatch(/stiffness\s+print the stiffness matrix of one physical element/);
  });

  it('prints the usage with exit 0 for --help', () => {
    const r = run('--help');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^usage: isoledger COMMAND/);
  });
});
