// `isoledger manifest PROJECT [--verify]`, spawned as a user runs it, against the built server: it
// prints the manifest; with --verify it checks every pin and exits 1 naming each withdrawn pin and
// each pin whose source or record does not match what the manifest pins.
import { execFile } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { manifestSchema } from '@isoledger/client';
import { DEMO, DEMO_PASSWORD, randomAddress, signedIn, testUrl, type Client } from '../support/http';
import { closeTestDb, execute, select } from '../support/db';
import {
  catalogueSource,
  createFormulation,
  createProject,
  pin,
  released,
  tag,
  unusedStiffness,
  withdraw
} from '../support/registry-fixtures';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const BIN = join(ROOT, 'packages/cli/bin/isoledger.js');

function isoledger(args: string[]): Promise<{ status: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [BIN, ...args, '--server', testUrl(), '--token', token],
      { cwd: ROOT, env: { ...process.env, ISOLEDGER_SERVER: '', ISOLEDGER_TOKEN: '' }, timeout: 120_000 },
      (error, stdout, stderr) =>
        resolve({ status: error ? Number((error as { code?: number }).code ?? 1) : 0, stdout, stderr })
    );
  });
}

let author: Client;
let reviewer: Client;
let lead: Client;
let token: string;

/** A released version of the catalogue's linear triangle under a new name, pinned by project key. */
async function pinnedVersion(key: string, opts: { E?: number } = {}): Promise<string> {
  const name = `man-${tag()}`;
  await createFormulation(author, name, 'Manifest fixture');
  await released({ author, reviewer }, name, '1.0.0', catalogueSource('tri3-membrane', name, opts));
  await pin(lead, key, name, '1.0.0');
  return name;
}

async function project(): Promise<string> {
  const key = `MAN-${tag().toUpperCase()}`;
  await createProject(lead, key, 'Manifest fixture project');
  return key;
}

beforeAll(async () => {
  [author, reviewer, lead] = await Promise.all([
    signedIn(DEMO.author),
    signedIn(DEMO.reviewer),
    signedIn(DEMO.lead)
  ]);
  const r = await fetch(`${testUrl()}/api/v1/auth/token`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': randomAddress() },
    body: JSON.stringify({ email: DEMO.lead, password: DEMO_PASSWORD, name: `manifest ${tag()}` })
  });
  token = ((await r.json()) as { token: string }).token;
});

afterAll(async () => {
  await closeTestDb();
});

describe('isoledger manifest', () => {
  it('prints the manifest, and with --verify checks every pin (exit 0); a withdrawn pin then fails it by name', async () => {
    const key = await project();
    const a = await pinnedVersion(key);
    const b = await pinnedVersion(key);
    const printed = await isoledger(['manifest', key]);
    expect(printed.status, printed.stderr).toBe(0);
    const manifest = manifestSchema.parse(JSON.parse(printed.stdout));
    expect(manifest.pins.map((p) => p.name)).toEqual([a, b].sort());

    const ok = await isoledger(['manifest', key, '--verify']);
    expect(ok.status, ok.stdout + ok.stderr).toBe(0);
    for (const p of manifest.pins)
      expect(ok.stdout).toContain(`ok        ${p.name}@1.0.0  ${p.definitionHash}  record ${p.recordId}`);
    expect(ok.stdout).toContain(
      `every pin of ${key} is released, hashes as pinned and cites its passing record`
    );
    expect(ok.stderr).toMatch(/not approval for use/);

    await withdraw(reviewer, b, '1.0.0', 'Manifest fixture: withdrawn to fail the check.');
    const bad = await isoledger(['manifest', key, '--verify']);
    expect(bad.status).toBe(1);
    expect(bad.stdout).toContain(`MISMATCH  ${b}@1.0.0`);
    expect(bad.stdout).toContain(`${b}@1.0.0 is withdrawn: the pin must move to a released version`);
    expect(bad.stdout).toContain(`ok        ${a}@1.0.0`);
    expect(bad.stdout).toContain(`1 of 2 pins of ${key} do not check out`);
    expect(bad.stderr).toContain(`isoledger manifest: ${b}@1.0.0: ${b}@1.0.0 is withdrawn`);
  });

  it('names a pin whose stored definitionHash no longer matches its source or its record', async () => {
    const key = await project();
    const name = await pinnedVersion(key);
    const forged = `sha256:${'0'.repeat(64)}`;
    // storage altered behind the registry's back: the version now claims another definition
    await execute(
      `UPDATE formulation_versions v JOIN formulations f ON f.id = v.formulation_id
          SET v.definition_hash = ? WHERE f.name = ? AND v.version = '1.0.0'`,
      [forged, name]
    );
    const r = await isoledger(['manifest', key, '--verify', '--json']);
    expect(r.status).toBe(1);
    const report = JSON.parse(r.stdout) as {
      ok: boolean;
      pins: { name: string; ok: boolean; problems: string[] }[];
    };
    expect(report.ok).toBe(false);
    expect(report.pins).toHaveLength(1);
    const problems = report.pins[0].problems.join('\n');
    expect(problems).toMatch(
      new RegExp(
        `the source of ${name}@1\\.0\\.0 hashes to definitionHash sha256:[0-9a-f]{64}, but the manifest pins ${forged}`
      )
    );
    expect(problems).toMatch(
      new RegExp(
        `record \\w+ of ${name}@1\\.0\\.0 is of definitionHash sha256:[0-9a-f]{64}, not the pinned ${forged}`
      )
    );
  });

  it('names a pin whose record was altered after approval', async () => {
    const key = await project();
    // a meaning of its own, so its record is nobody else's
    const name = await pinnedVersion(key, { E: unusedStiffness() });
    const [row] = await select<{ record_id: string }>(
      `SELECT v.record_id FROM formulation_versions v JOIN formulations f ON f.id = v.formulation_id
        WHERE f.name = ? AND v.version = '1.0.0'`,
      [name]
    );
    await execute(
      `UPDATE verification_records SET record = JSON_SET(record, '$.verdict', 'fail') WHERE id = ?`,
      [row.record_id]
    );
    const r = await isoledger(['manifest', key, '--verify']);
    expect(r.status).toBe(1);
    expect(r.stdout).toContain(`record ${row.record_id} of ${name}@1.0.0 has verdict 'fail', not pass`);
  });

  it('reports an unknown project with exit 1 and a malformed call with exit 2', async () => {
    const unknown = await isoledger(['manifest', `NOPE-${tag().toUpperCase()}`, '--verify']);
    expect(unknown.status).toBe(1);
    expect(unknown.stderr).toMatch(/no project with key 'NOPE-[0-9A-F]+' \(404 not-found\)/);
    const usage = await isoledger(['manifest', 'A', 'B']);
    expect(usage.status).toBe(2);
    expect(usage.stderr).toContain('one PROJECT expected, got 2');
  });
});
