// The verification queue on the real MariaDB of the test stack, with the real engine: claims,
// ownership, the one-record rule, reuse of records, silent workers, and the runs/records routes.
// Other workers (the test server's own, other test files') may claim runs from the same queue at
// the same time; every assertion below holds whoever executes a run.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { ulid } from 'ulid';
import { SandboxPool } from '@isoledger/sandbox';
import { ENGINE_VERSION, recordHash, verifySource, type VerificationRecord } from '@isoledger/verify';
import { closeDatabase, getSequelize } from '../../src/lib/server/db';
import {
  complete,
  enqueueRun,
  fail,
  getRecord,
  getRun,
  heartbeat,
  latestRecordFor,
  recordEtag,
  release,
  requeueStale,
  RunQueueError
} from '../../src/lib/server/runs/queue';
import { findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { barSource, probe, stiffnessBase, type ProbeDocument } from '../support/queue-documents';
import { insertHeldRun, recordsOfDefinition, recordsOfRuns, waitForRuns } from '../support/queue-db';
import { startQueueProcess, type QueueProcess } from '../support/queue-process';

const BASE = process.env.ISOLEDGER_TEST_URL;
const base = stiffnessBase();
let next = 0;
/** a bar document never verified before in this database */
const freshBar = (): ProbeDocument => probe(barSource(base + next++, 'queue behaviour'));

let sandbox: SandboxPool;
let worker: QueueProcess;
let token: string;

/** The real record of a document, made here in the test process by the engine itself. */
async function recordOf(doc: ProbeDocument): Promise<VerificationRecord> {
  return verifySource(doc.source, { sandbox });
}

async function refusal(p: Promise<unknown>): Promise<RunQueueError> {
  const e = await p.then(
    () => null,
    (err: unknown) => err
  );
  expect(e, 'the call was expected to be refused').toBeInstanceOf(RunQueueError);
  return e as RunQueueError;
}

function api(path: string, init: RequestInit & { auth?: boolean } = {}): Promise<Response> {
  const headers = new Headers(init.headers);
  if (init.auth !== false) headers.set('authorization', `Bearer ${token}`);
  return fetch(`${BASE}${path}`, { ...init, headers });
}

beforeAll(async () => {
  if (!BASE)
    throw new Error(
      'ISOLEDGER_TEST_URL is not set: run through `npm test -- tests/integration/runs.test.ts`'
    );
  sandbox = new SandboxPool({ poolSize: 1 });
  // one worker process of our own, so runs finish even where the test server runs no workers
  worker = await startQueueProcess({
    name: 'behaviour',
    size: 1,
    heartbeatMs: 500,
    staleMs: 20_000,
    sweepMs: 2_000,
    idlePollMs: 200
  });
  const author = await findUserByEmail('author@example.com');
  if (!author) throw new Error('the demo account author@example.com is missing: the test stack seeds it');
  token = (await createToken(author, { name: 'runs test', roleCeiling: null, expiresAt: null })).token;
});

afterAll(async () => {
  await worker?.stop();
  await sandbox?.dispose();
  await closeDatabase();
});

describe('queueing', () => {
  it('refuses malformed runs, naming the field, and stores nothing', async () => {
    const marker = `# not stored ${ulid()}\n${barSource(1)}`;
    const cases: [Parameters<typeof enqueueRun>[0], string][] = [
      [{ source: '', definitionHash: probe(barSource(1)).definitionHash }, 'source'],
      [{ source: marker, definitionHash: 'sha256:xyz' }, 'definitionHash'],
      [
        { source: marker, definitionHash: probe(barSource(1)).definitionHash, versionId: 'not-an-id' },
        'versionId'
      ],
      [{ source: marker, definitionHash: probe(barSource(1)).definitionHash, maxAttempts: 0 }, 'maxAttempts']
    ];
    for (const [input, field] of cases) {
      const e = await refusal(enqueueRun(input));
      expect(e.code).toBe('invalid');
      expect(e.field).toBe(field);
      expect(e.message).toContain(field);
    }
    const [row] = await getSequelize().query<{ n: number | bigint }>(
      'SELECT COUNT(*) AS n FROM verification_runs WHERE source = ?',
      {
        type: QueryTypes.SELECT,
        replacements: [marker]
      }
    );
    expect(Number(row.n)).toBe(0);
  });

  it('runs a queued document to one record whose hash is the engine’s own recordHash', async () => {
    const doc = freshBar();
    const run = await enqueueRun(doc);
    expect(run).toMatchObject({ status: 'queued', recordId: null });
    const [row] = await waitForRuns([run.id], 90_000);
    expect(row.status).toBe('done');
    expect(row.attempts).toBe(1);
    const records = await recordsOfRuns([run.id]);
    expect(records).toHaveLength(1);
    const stored = await getRecord(records[0].id);
    expect(stored!.record.definitionHash).toBe(doc.definitionHash);
    expect(stored!.engineVersion).toBe(ENGINE_VERSION);
    expect(stored!.recordHash).toBe(recordHash(stored!.record));
    expect(stored!.verdict).toBe(stored!.record.verdict);
  });

  it('fails a run of an invalid document with the diagnostics as the reason', async () => {
    // one shape function for two nodes: the parser reports the count mismatch with line and column;
    // an invalid document has no definitionHash, so a hash of its text serves as the queue key
    const source = `# ${ulid()}\n${barSource(1).replace('  - (1 + xi) / 2\n', '')}`;
    const run = await enqueueRun({
      source,
      definitionHash: `sha256:${createHash('sha256').update(source).digest('hex')}`
    });
    const [row] = await waitForRuns([run.id], 90_000);
    expect(row.status).toBe('failed');
    expect(row.error).toContain('the document is invalid');
    expect(row.error).toMatch(/line \d+, column \d+/);
    expect(await recordsOfRuns([run.id])).toHaveLength(0);
  });
});

describe('ownership and the one-record rule', () => {
  it('lets only the holding worker complete a run, and only once', async () => {
    const doc = freshBar();
    const record = await recordOf(doc);
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });

    const stranger = await refusal(complete(id, 'test-stranger', record));
    expect(stranger.code).toBe('not-owned');
    expect(stranger.message).toContain(holder);

    const recordId = await complete(id, holder, record);
    const again = await refusal(complete(id, holder, record));
    expect(again.code).toBe('not-owned');
    expect(again.message).toContain('done');

    const records = await recordsOfRuns([id]);
    expect(records.map((r) => r.id)).toEqual([recordId]);
    const run = await getRun(id);
    expect(run).toMatchObject({ status: 'done', progress: 1, recordId });
    expect(await heartbeat(id, holder, 0.5, 'late')).toBe(false);
  });

  it('writes one record when the same worker completes twice at the same moment', async () => {
    const doc = freshBar();
    const record = await recordOf(doc);
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const outcomes = await Promise.allSettled([
      complete(id, holder, record),
      complete(id, holder, record),
      complete(id, holder, record)
    ]);
    expect(outcomes.filter((o) => o.status === 'fulfilled')).toHaveLength(1);
    for (const o of outcomes)
      if (o.status === 'rejected') expect((o.reason as RunQueueError).code).toBe('not-owned');
    expect(await recordsOfRuns([id])).toHaveLength(1);
  });

  it('refuses a record of another definition than the run’s', async () => {
    const doc = freshBar();
    const other = await recordOf(freshBar());
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const e = await refusal(complete(id, holder, other));
    expect(e.code).toBe('mismatch');
    expect(e.message).toContain(doc.definitionHash);
    expect(await recordsOfRuns([id])).toHaveLength(0);
    await fail(id, holder, e.message);
    expect(await getRun(id)).toMatchObject({ status: 'failed', error: e.message });
  });

  it('gives a released run back to the queue without spending an attempt', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    expect(await release(id, 'test-stranger')).toBe(false);
    expect(await release(id, holder)).toBe(true);
    const [row] = await waitForRuns([id], 90_000);
    expect(row.status).toBe('done');
    // the release gave back attempt 1, so the worker that finished it made attempt 1 again
    expect(row.attempts).toBe(1);
    expect(row.claimed_by).not.toBe(holder);
  });
});

describe('reuse of records', () => {
  it('creates a run done at once when this engine already verified the definition', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const first = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const recordId = await complete(first, holder, await recordOf(doc));

    const again = await enqueueRun(doc);
    expect(again).toEqual({ id: again.id, status: 'done', recordId });
    expect(await getRun(again.id)).toMatchObject({
      status: 'done',
      progress: 1,
      recordId,
      attempts: 0,
      claimedBy: null
    });
    expect((await recordsOfDefinition(doc.definitionHash)).map((r) => r.id)).toEqual([recordId]);
    expect((await latestRecordFor(doc.definitionHash))!.id).toBe(recordId);
  });

  it('does not reuse a record made by another engine version', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const first = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const older = { ...(await recordOf(doc)), engine: '0.0.1-superseded' };
    const olderId = await complete(first, holder, older);
    expect(await latestRecordFor(doc.definitionHash)).toBeNull();

    const again = await enqueueRun(doc);
    expect(again.status).toBe('queued');
    const [row] = await waitForRuns([again.id], 90_000);
    expect(row.status).toBe('done');
    expect(row.record_id).not.toBe(olderId);
    const current = await latestRecordFor(doc.definitionHash);
    expect(current!.id).toBe(row.record_id);
    expect(current!.engineVersion).toBe(ENGINE_VERSION);
  });
});

describe('silent workers', () => {
  it('re-queues a run whose heartbeat is stale, takes it from the silent worker, and finishes it elsewhere', async () => {
    const doc = freshBar();
    const silent = `test-silent-${ulid()}`;
    const id = await insertHeldRun(doc, {
      workerId: silent,
      attempts: 1,
      silentMs: 3_600_000,
      stage: 'patch tests'
    });
    await requeueStale(60_000);
    const afterSweep = await getRun(id);
    expect(afterSweep!.claimedBy).not.toBe(silent);
    expect(afterSweep!.error).toContain(`re-queued: attempt 1 of 3: worker ${silent} sent no heartbeat`);
    expect(afterSweep!.error).toContain("during stage 'patch tests'");
    // the silent worker wakes up: its heartbeat and its record are both refused
    expect(await heartbeat(id, silent, 0.9, 'convergence')).toBe(false);
    expect((await refusal(complete(id, silent, await recordOf(doc)))).code).toBe('not-owned');

    const [row] = await waitForRuns([id], 90_000);
    expect(row.status).toBe('done');
    expect(row.attempts).toBe(2);
    expect(await recordsOfRuns([id])).toHaveLength(1);
  });

  it('fails a run with the reason once its last attempt went silent', async () => {
    const doc = freshBar();
    const silent = `test-silent-${ulid()}`;
    const id = await insertHeldRun(
      { ...doc, maxAttempts: 2 },
      { workerId: silent, attempts: 2, silentMs: 3_600_000, stage: 'convergence' }
    );
    await requeueStale(60_000);
    const run = await getRun(id);
    expect(run!.status).toBe('failed');
    expect(run!.error).toContain('no worker finished this run in 2 attempts');
    expect(run!.error).toContain(`worker ${silent} sent no heartbeat`);
    expect(run!.error).toContain("stage 'convergence'");
    expect(await recordsOfRuns([id])).toHaveLength(0);
  });

  it('leaves a run with a fresh heartbeat where it is', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const swept = await requeueStale(60_000);
    expect(swept.requeued).not.toContain(id);
    expect(swept.failed).not.toContain(id);
    expect(await getRun(id)).toMatchObject({ status: 'running', claimedBy: holder });
    expect(await heartbeat(id, holder, 0.25, 'element checks')).toBe(true);
    expect(await getRun(id)).toMatchObject({ progress: 0.25, stage: 'element checks' });
    await fail(id, holder, 'ended by the test');
  });
});

describe('GET /api/v1/runs/{id} and /api/v1/records/{id}', () => {
  it('answers 401 in the error shape to a request without a session or token', async () => {
    for (const path of [`/api/v1/runs/${ulid()}`, `/api/v1/records/${ulid()}`]) {
      const r = await api(path, { auth: false });
      expect(r.status).toBe(401);
      const body = (await r.json()) as { error: { code: string; message: string } };
      expect(body.error.code).toBe('unauthenticated');
      expect(body.error.message.length).toBeGreaterThan(0);
    }
  });

  it('answers 404 in the error shape to an unknown or malformed id', async () => {
    for (const path of [
      `/api/v1/runs/${ulid()}`,
      '/api/v1/runs/nonsense',
      `/api/v1/records/${ulid()}`,
      '/api/v1/records/nonsense'
    ]) {
      const r = await api(path);
      expect(r.status, path).toBe(404);
      const body = (await r.json()) as { error: { code: string; message: string; details: unknown } };
      expect(body.error.code).toBe('not-found');
      expect(body.error.message).toContain(path.split('/').pop()!);
      expect(body).toHaveProperty('error.details');
    }
  });

  it('shows a run’s status and progress, then its record once done', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    await heartbeat(id, holder, 0.5, 'patch tests');
    let r = await api(`/api/v1/runs/${id}`);
    expect(r.status).toBe(200);
    expect(await r.json()).toEqual({
      id,
      status: 'running',
      progress: 0.5,
      stage: 'patch tests',
      record: null
    });

    const record = await recordOf(doc);
    await complete(id, holder, record);
    r = await api(`/api/v1/runs/${id}`);
    const view = (await r.json()) as { status: string; progress: number; record: VerificationRecord };
    expect(view.status).toBe('done');
    expect(view.progress).toBe(1);
    expect(view.record).toEqual(JSON.parse(JSON.stringify(record)));
  });

  it('adds the reason to a failed run', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    await fail(id, holder, 'the sandbox ran out of memory in stage convergence');
    const r = await api(`/api/v1/runs/${id}`);
    expect(await r.json()).toEqual({
      id,
      status: 'failed',
      progress: 0.4,
      stage: null,
      record: null,
      error: 'the sandbox ran out of memory in stage convergence'
    });
  });

  it('serves a record byte for byte with a strong ETag, immutable caching, and 304 on If-None-Match', async () => {
    const doc = freshBar();
    const holder = `test-holder-${ulid()}`;
    const id = await insertHeldRun(doc, { workerId: holder, attempts: 1, silentMs: 0 });
    const recordId = await complete(id, holder, await recordOf(doc));
    const stored = (await getRecord(recordId))!;

    const r = await api(`/api/v1/records/${recordId}`);
    expect(r.status).toBe(200);
    expect(r.headers.get('content-type')).toMatch(/^application\/json/);
    expect(r.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    const etag = r.headers.get('etag')!;
    expect(etag).toBe(recordEtag(stored));
    expect(etag).toMatch(/^"[0-9a-f]{64}"$/);
    expect(await r.text()).toBe(stored.json);

    for (const ifNoneMatch of [etag, `W/${etag}`, `"elsewhere", ${etag}`, '*']) {
      const cached = await api(`/api/v1/records/${recordId}`, { headers: { 'if-none-match': ifNoneMatch } });
      expect(cached.status, ifNoneMatch).toBe(304);
      expect(cached.headers.get('etag')).toBe(etag);
      expect(await cached.text()).toBe('');
    }
    const changed = await api(`/api/v1/records/${recordId}`, { headers: { 'if-none-match': '"0000"' } });
    expect(changed.status).toBe(200);
    expect(await changed.text()).toBe(stored.json);
  });
});
