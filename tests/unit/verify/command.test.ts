// `isoledger verify FILE [--json]` (verification.md, "Command line"): called directly and spawned as a process.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { STAGES, type VerificationRecord, verifyCommand } from '../../../packages/verify/src/index';
import { ROOT, type CatalogueEntry, catalogue, pick, sumsToOne } from './helpers';

class Capture {
  text = '';
  constructor(readonly isTTY = false) {}
  write(chunk: string) {
    this.text += chunk;
    return true;
  }
}

let entries: CatalogueEntry[];
let tri3: CatalogueEntry;
let onePoint: CatalogueEntry;
let dir: string;

beforeAll(() => {
  entries = catalogue();
  tri3 = pick(
    entries,
    'the three-node triangle',
    (d) => d.cell === 'triangle' && d.nodes.length === 3 && typeof d.strain === 'string' && sumsToOne(d)
  );
  onePoint = pick(
    entries,
    'the one-point quadrilateral',
    (d) =>
      d.cell === 'quadrilateral' &&
      d.nodes.length === 4 &&
      d.quadrature.rule === 'gauss' &&
      d.quadrature.points === 1
  );
  dir = mkdtempSync(join(tmpdir(), 'isoledger-verify-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function run(args: string[], tty = false) {
  const stdout = new Capture();
  const stderr = new Capture(tty);
  const code = await verifyCommand(args, { stdout, stderr });
  return { code, stdout: stdout.text, stderr: stderr.text };
}

describe('isoledger verify', () => {
  it('prints the record alone on stdout with --json and exits 0 for a passing document', async () => {
    const r = await run([tri3.path, '--json']);
    expect(r.code).toBe(0);
    const record = JSON.parse(r.stdout) as VerificationRecord;
    expect(record.verdict).toBe('pass');
    expect(record.definitionHash).toBe(tri3.definitionHash);
    expect(record.version).toBeNull();
    expect(r.stderr).toBe('');
  });

  it('prints a table naming every check, the verdict and the standing notice by default', async () => {
    const r = await run([tri3.path]);
    expect(r.code).toBe(0);
    for (const id of [
      'kronecker-delta',
      'zero-energy-modes',
      'patch-membrane',
      'convergence',
      'membrane-benchmark'
    ])
      expect(r.stdout).toContain(id);
    expect(r.stdout).toMatch(/verdict: pass/);
    expect(r.stdout).toMatch(/not approval for use/);
  });

  it('exits 1 for a failing document and shows why', async () => {
    const r = await run([onePoint.path]);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/verdict: fail/);
    expect(r.stdout).toMatch(/spurious/);
  });

  it('exits 2 for an invalid document with compiler-style FILE:LINE:COL diagnostics', async () => {
    const file = join(dir, 'broken.formulation.yaml');
    writeFileSync(file, tri3.source.replace(/^cell:.*$/m, 'cell: pentagon'));
    const r = await run([file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(new RegExp(`${file.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}:\\d+:\\d+ `));
    expect(r.stdout).toBe('');
  });

  it('exits 2 naming the file when it cannot be read, and on bad usage with the usage text', async () => {
    const missing = await run([join(dir, 'nowhere.formulation.yaml')]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/cannot read .*nowhere\.formulation\.yaml: no such file/);
    const none = await run([]);
    expect(none.code).toBe(2);
    expect(none.stderr).toMatch(/usage: isoledger verify FILE/);
    const unknown = await run([tri3.path, '--colour']);
    expect(unknown.code).toBe(2);
  });

  it('draws stage names and a progress bar on stderr when it is a terminal', async () => {
    const r = await run([tri3.path, '--json'], true);
    expect(r.code).toBe(0);
    for (const s of STAGES) expect(r.stderr).toContain(s);
    expect(r.stderr).toMatch(/\d+%/);
    expect(JSON.parse(r.stdout).verdict).toBe('pass');
  });

  it('runs as its own process: node --no-node-snapshot --import tsx packages/verify/src/cli-entry.ts FILE --json', () => {
    const p = spawnSync(
      process.execPath,
      ['--no-node-snapshot', '--import', 'tsx', 'packages/verify/src/cli-entry.ts', onePoint.path, '--json'],
      {
        cwd: ROOT,
        encoding: 'utf8',
        timeout: 120_000
      }
    );
    expect(p.status).toBe(1);
    const record = JSON.parse(p.stdout) as VerificationRecord;
    expect(record.verdict).toBe('fail');
    expect(record.checks.find((c) => c.id === 'zero-energy-modes')!.spurious).toBe(2);
  });
});
