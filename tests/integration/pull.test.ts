// `isoledger pull NAME@VERSION`, spawned as a user runs it, against the built server: it writes the
// source and the record of a released version, and refuses (exit 1, nothing written) a draft, an
// unknown version, a missing token, and a source whose hashes differ from what the server states.
import { execFile } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseFormulation, sourceHash } from '@isoledger/formulation';
import { DEMO, DEMO_PASSWORD, randomAddress, signedIn, testUrl, type Client } from '../support/http';
import { closeTestDb, execute } from '../support/db';
import {
  catalogueSource,
  createDraft,
  createFormulation,
  released,
  tag,
  unusedStiffness
} from '../support/registry-fixtures';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const BIN = join(ROOT, 'packages/cli/bin/isoledger.js');

interface Run {
  status: number;
  stdout: string;
  stderr: string;
}

function isoledger(args: string[], env: Record<string, string> = {}): Promise<Run> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [BIN, ...args],
      {
        cwd: ROOT,
        env: { ...process.env, ISOLEDGER_SERVER: '', ISOLEDGER_TOKEN: '', ...env },
        timeout: 120_000
      },
      (error, stdout, stderr) =>
        resolve({ status: error ? Number((error as { code?: number }).code ?? 1) : 0, stdout, stderr })
    );
  });
}

const folders: string[] = [];
/** A new empty folder for one pull, removed after the file's tests. */
function outFolder(): string {
  const dir = mkdtempSync(join(tmpdir(), 'isoledger-pull-'));
  folders.push(dir);
  return dir;
}

const sha256 = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex');
let author: Client;
let reviewer: Client;
let token: string;
let authorToken: string;
const NAME = `pull-${tag()}`;

beforeAll(async () => {
  [author, reviewer] = await Promise.all([signedIn(DEMO.author), signedIn(DEMO.reviewer)]);
  const tokenOf = async (email: string) => {
    const r = await fetch(`${testUrl()}/api/v1/auth/token`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-forwarded-for': randomAddress() },
      body: JSON.stringify({ email, password: DEMO_PASSWORD, name: `pull ${tag()}` })
    });
    return ((await r.json()) as { token: string }).token;
  };
  // a solver pipeline's token: it reads released versions and nothing more
  token = await tokenOf(DEMO.lead);
  authorToken = await tokenOf(DEMO.author);
  await createFormulation(author, NAME, 'Pulled triangle');
  await released(
    { author, reviewer },
    NAME,
    '1.0.0',
    catalogueSource('tri3-membrane', NAME, { title: 'Pulled triangle' })
  );
});

afterAll(async () => {
  for (const dir of folders) rmSync(dir, { recursive: true, force: true });
  await closeTestDb();
});

describe('isoledger pull', () => {
  it('writes the source and the record of a released version, each hashing to what was approved', async () => {
    const out = outFolder();
    const r = await isoledger([
      'pull',
      `${NAME}@1.0.0`,
      '--server',
      testUrl(),
      '--token',
      token,
      '--out',
      out
    ]);
    expect(r.status, r.stderr).toBe(0);
    const v = await author.getJson<{
      source: string;
      sourceHash: string;
      definitionHash: string;
      verification: { recordId: string };
    }>(`/api/v1/formulations/${NAME}/versions/1.0.0`);
    const source = readFileSync(join(out, `${NAME}@1.0.0.formulation.yaml`), 'utf8');
    expect(source).toBe(v.source);
    const parsed = parseFormulation(source);
    expect(parsed.ok && parsed.definitionHash).toBe(v.definitionHash);
    expect(sourceHash(source)).toBe(v.sourceHash);

    const recordText = readFileSync(join(out, `${NAME}@1.0.0.record.json`), 'utf8');
    const served = await author.get(`/api/v1/records/${v.verification.recordId}`);
    expect(served.headers.get('etag')).toBe(`"${sha256(recordText)}"`);
    await served.body?.cancel();
    expect(JSON.parse(recordText)).toMatchObject({ definitionHash: v.definitionHash, verdict: 'pass' });

    expect(r.stdout).toContain(`pulled ${NAME}@1.0.0 (released)`);
    expect(r.stdout).toContain(v.definitionHash);
    expect(r.stdout).toMatch(/evidence that these checks hold, not approval for use/);
  });

  it('takes the server and token from the environment and prints a JSON summary', async () => {
    const out = outFolder();
    const r = await isoledger(['pull', `${NAME}@1.0.0`, '--out', out, '--json'], {
      ISOLEDGER_SERVER: testUrl(),
      ISOLEDGER_TOKEN: token
    });
    expect(r.status, r.stderr).toBe(0);
    const summary = JSON.parse(r.stdout);
    expect(summary).toMatchObject({
      name: NAME,
      version: '1.0.0',
      status: 'released',
      verdict: 'pass',
      files: {
        source: join(out, `${NAME}@1.0.0.formulation.yaml`),
        record: join(out, `${NAME}@1.0.0.record.json`)
      }
    });
  });

  it('refuses a source whose hashes differ from what the server states, and writes nothing', async () => {
    const name = `pull-tampered-${tag()}`;
    await createFormulation(author, name, 'Tampered triangle');
    await released({ author, reviewer }, name, '1.0.0', catalogueSource('tri3-membrane', name));
    // storage altered behind the registry's back: the stored source no longer means what was approved
    await execute(
      `UPDATE formulation_versions v JOIN formulations f ON f.id = v.formulation_id
          SET v.source = ? WHERE f.name = ? AND v.version = '1.0.0'`,
      [catalogueSource('tri3-membrane', name, { E: unusedStiffness() }), name]
    );
    const out = outFolder();
    const r = await isoledger([
      'pull',
      `${name}@1.0.0`,
      '--server',
      testUrl(),
      '--token',
      token,
      '--out',
      out
    ]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(
      new RegExp(
        `refused: the source of ${name}@1\\.0\\.0 hashes to definitionHash sha256:[0-9a-f]{64}, but the server states sha256:[0-9a-f]{64}`
      )
    );
    expect(r.stderr).toContain('nothing was written');
    expect(readdirSync(out)).toEqual([]);
  });

  it('refuses a draft (to a reader who may see it, and to one who may not), an unknown version and a missing token (exit 1)', async () => {
    await createDraft(
      author,
      NAME,
      '1.1.0',
      catalogueSource('tri3-membrane', NAME, { E: unusedStiffness() })
    );
    const out = outFolder();
    const hidden = await isoledger([
      'pull',
      `${NAME}@1.1.0`,
      '--server',
      testUrl(),
      '--token',
      token,
      '--out',
      out
    ]);
    expect(hidden.status).toBe(1);
    expect(hidden.stderr).toMatch(/\(403 forbidden\)/);
    const draft = await isoledger([
      'pull',
      `${NAME}@1.1.0`,
      '--server',
      testUrl(),
      '--token',
      authorToken,
      '--out',
      out
    ]);
    expect(draft.status).toBe(1);
    expect(draft.stderr).toContain(`${NAME}@1.1.0 is draft; only released versions are pulled`);

    const unknown = await isoledger([
      'pull',
      `${NAME}@9.9.9`,
      '--server',
      testUrl(),
      '--token',
      token,
      '--out',
      out
    ]);
    expect(unknown.status).toBe(1);
    expect(unknown.stderr).toMatch(/\(404 not-found\)/);

    const anonymous = await isoledger(['pull', `${NAME}@1.0.0`, '--server', testUrl(), '--out', out]);
    expect(anonymous.status).toBe(1);
    expect(anonymous.stderr).toMatch(/\(401 unauthenticated\)/);
    expect(existsSync(join(out, `${NAME}@1.0.0.formulation.yaml`))).toBe(false);
    expect(readdirSync(out)).toEqual([]);
  });

  it('answers a malformed argument with the usage and exit 2', async () => {
    const r = await isoledger(['pull', 'tri3-membrane']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain("'tri3-membrane' is not NAME@VERSION");
    expect(r.stderr).toContain('usage: isoledger pull NAME@VERSION');
  });
});
