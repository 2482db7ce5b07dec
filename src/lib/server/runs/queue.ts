// The verification queue in MariaDB. A run is claimed by exactly one worker at a time
// (SELECT … FOR UPDATE SKIP LOCKED, so any number of processes share the queue), proves it is
// alive by heartbeats, and ends with exactly one immutable record (the unique run_id of
// verification_records makes a second completion impossible). A run whose worker went silent is
// put back in the queue by the sweeper, and fails with the reason once its attempts are spent.
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import { QueryTypes, Transaction } from 'sequelize';
import { newId } from '../ids';
import { ENGINE_VERSION, recordHash, type VerificationRecord } from '@isoledger/verify';
import { getSequelize } from '../db';
import { appendAudit, type AuditActor } from '../registry/audit';

export type RunStatus = 'queued' | 'running' | 'done' | 'failed';
export type Verdict = VerificationRecord['verdict'];

export interface Run {
  id: string;
  versionId: string | null;
  definitionHash: string;
  status: RunStatus;
  progress: number;
  stage: string | null;
  attempts: number;
  maxAttempts: number;
  claimedBy: string | null;
  heartbeatAt: string | null;
  /** the reason of a failed run; on other runs, notes of earlier attempts whose worker went silent */
  error: string | null;
  recordId: string | null;
  requestedBy: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

/** What a worker needs to execute a run it has just claimed. */
export interface ClaimedRun {
  id: string;
  source: string;
  definitionHash: string;
  versionId: string | null;
  /** the registry version string, written into the record */
  version: string | null;
  /** 1 for the first claim; grows each time a silent worker's run is claimed again */
  attempt: number;
  maxAttempts: number;
}

export interface StoredRecord {
  id: string;
  runId: string;
  definitionHash: string;
  engineVersion: string;
  verdict: Verdict;
  /** the record exactly as stored (canonical JSON): the bytes every reader gets */
  json: string;
  record: VerificationRecord;
  recordHash: string;
  createdAt: string;
}

export interface NewRun {
  /** the YAML document, snapshotted: the run verifies exactly this text */
  source: string;
  /** definitionHash of the source as @isoledger/formulation computes it */
  definitionHash: string;
  versionId?: string | null;
  requestedBy?: string | null;
  /** how many claims a run gets before a silent worker makes it fail; default 3 */
  maxAttempts?: number;
}

export interface EnqueuedRun {
  id: string;
  status: RunStatus;
  /** set when a record of the same definitionHash and engine version was reused at once */
  recordId: string | null;
}

export class RunQueueError extends Error {
  constructor(
    public code: 'invalid' | 'not-found' | 'not-owned' | 'mismatch',
    message: string,
    public field?: string
  ) {
    super(message);
    this.name = 'RunQueueError';
  }
}

export const DEFAULT_MAX_ATTEMPTS = 3;
/** Upper bound of maxAttempts: a run that loses its worker more often than this has a deeper problem. */
export const MAX_ATTEMPTS_LIMIT = 20;
/** verification_runs.source is MEDIUMTEXT; the document format itself stops at 64 KB. */
const MAX_SOURCE_BYTES = 16 * 1024 * 1024 - 1;
const MAX_ERROR_CHARS = 60_000;
const MAX_STAGE_CHARS = 64;
const HASH = /^sha256:[0-9a-f]{64}$/;
const ULID = /^[0-9A-HJKMNP-TV-Z]{26}$/;
const WORKER = /^[\x21-\x7e]{1,120}$/;
const VERDICTS: readonly Verdict[] = ['pass', 'fail', 'incomplete'];
/** A claim that meets runs whose record can be reused marks them done and looks further, this many times at most. */
const REUSE_SCAN = 50;
/** MariaDB errors worth one more try: deadlock (1213) and lock wait timeout (1205). */
const RETRYABLE = new Set([1213, 1205]);

export const QUEUE_ACTOR: AuditActor = { id: null, label: 'verification queue' };

interface RunRow {
  id: string;
  version_id: string | null;
  definition_hash: string;
  status: RunStatus;
  progress: number;
  stage: string | null;
  attempts: number;
  max_attempts: number;
  claimed_by: string | null;
  heartbeat_at: Date | null;
  error: string | null;
  record_id: string | null;
  requested_by: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

interface RecordRow {
  id: string;
  run_id: string;
  definition_hash: string;
  engine_version: string;
  verdict: Verdict;
  record: string;
  record_hash: string;
  created_at: Date;
}

const RUN_COLUMNS =
  'id, version_id, definition_hash, status, progress, stage, attempts, max_attempts, claimed_by, heartbeat_at, error, record_id, requested_by, created_at, started_at, finished_at';

function iso(d: Date | string | null): string | null {
  return d === null ? null : new Date(d).toISOString();
}

function toRun(r: RunRow): Run {
  return {
    id: r.id,
    versionId: r.version_id,
    definitionHash: r.definition_hash,
    status: r.status,
    progress: Number(r.progress),
    stage: r.stage,
    attempts: Number(r.attempts),
    maxAttempts: Number(r.max_attempts),
    claimedBy: r.claimed_by,
    heartbeatAt: iso(r.heartbeat_at),
    error: r.error,
    recordId: r.record_id,
    requestedBy: r.requested_by,
    createdAt: iso(r.created_at) as string,
    startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at)
  };
}

function toRecord(r: RecordRow): StoredRecord {
  return {
    id: r.id,
    runId: r.run_id,
    definitionHash: r.definition_hash,
    engineVersion: r.engine_version,
    verdict: r.verdict,
    json: r.record,
    record: JSON.parse(r.record) as VerificationRecord,
    recordHash: r.record_hash,
    createdAt: iso(r.created_at) as string
  };
}

function errno(e: unknown): number | undefined {
  const err = e as { parent?: { errno?: number }; original?: { errno?: number }; errno?: number };
  return err?.parent?.errno ?? err?.original?.errno ?? err?.errno;
}

/** Runs a short transaction, once more (up to three times) when MariaDB picked it as a deadlock victim. */
async function transact<T>(
  fn: (t: Transaction) => Promise<T>,
  isolation?: Transaction.ISOLATION_LEVELS
): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await getSequelize().transaction(isolation ? { isolationLevel: isolation } : {}, fn);
    } catch (e) {
      const code = errno(e);
      if (attempt >= 3 || code === undefined || !RETRYABLE.has(code)) throw e;
      await new Promise((r) => setTimeout(r, 20 * attempt + Math.random() * 30));
    }
  }
}

/** Queue claims and sweeps read committed rows only: no gap locks, so enqueueing never waits on a claim. */
const READ_COMMITTED = Transaction.ISOLATION_LEVELS.READ_COMMITTED;

function checkWorker(workerId: string): void {
  if (typeof workerId !== 'string' || !WORKER.test(workerId)) {
    throw new RunQueueError(
      'invalid',
      `workerId must be 1 to 120 printable characters without spaces, got '${workerId}'`,
      'workerId'
    );
  }
}

function checkRunId(runId: string): void {
  if (typeof runId !== 'string' || !ULID.test(runId)) {
    throw new RunQueueError('not-found', `no verification run with id '${runId}'`, 'runId');
  }
}

function checkNewRun(input: NewRun): number {
  if (typeof input?.source !== 'string' || input.source.trim() === '') {
    throw new RunQueueError(
      'invalid',
      'source must be the non-empty text of a formulation document',
      'source'
    );
  }
  if (Buffer.byteLength(input.source, 'utf8') > MAX_SOURCE_BYTES) {
    throw new RunQueueError('invalid', `source is larger than ${MAX_SOURCE_BYTES} bytes`, 'source');
  }
  if (typeof input.definitionHash !== 'string' || !HASH.test(input.definitionHash)) {
    throw new RunQueueError(
      'invalid',
      `definitionHash must be 'sha256:' and 64 lower-case hex digits, got '${input.definitionHash}'`,
      'definitionHash'
    );
  }
  for (const field of ['versionId', 'requestedBy'] as const) {
    const v = input[field];
    if (v !== undefined && v !== null && (typeof v !== 'string' || !ULID.test(v))) {
      throw new RunQueueError('invalid', `${field} must be a 26-character id, got '${v}'`, field);
    }
  }
  const max = input.maxAttempts ?? DEFAULT_MAX_ATTEMPTS;
  if (!Number.isInteger(max) || max < 1 || max > MAX_ATTEMPTS_LIMIT) {
    throw new RunQueueError(
      'invalid',
      `maxAttempts must be a whole number from 1 to ${MAX_ATTEMPTS_LIMIT}, got ${input.maxAttempts}`,
      'maxAttempts'
    );
  }
  return max;
}

function checkRecord(record: VerificationRecord): void {
  const r = record as unknown as Record<string, unknown>;
  const problems: string[] = [];
  if (typeof r !== 'object' || r === null)
    throw new RunQueueError('invalid', 'the record must be an object', 'record');
  if (typeof r.engine !== 'string' || r.engine.length === 0 || r.engine.length > 32)
    problems.push('engine must be a version string of at most 32 characters');
  if (typeof r.definitionHash !== 'string' || !HASH.test(r.definitionHash))
    problems.push('definitionHash must be a sha256 hash');
  if (!VERDICTS.includes(r.verdict as Verdict))
    problems.push(`verdict must be one of ${VERDICTS.join(', ')}`);
  if (!Array.isArray(r.checks)) problems.push('checks must be a list');
  if (problems.length)
    throw new RunQueueError('invalid', `the record is malformed: ${problems.join('; ')}`, 'record');
}

/** The newest record of a definitionHash made by that engine version (by default the one running here). */
export async function latestRecordFor(
  definitionHash: string,
  engineVersion: string = ENGINE_VERSION,
  t?: Transaction
): Promise<StoredRecord | null> {
  const [row] = await getSequelize().query<RecordRow>(
    `SELECT * FROM verification_records WHERE definition_hash = ? AND engine_version = ?
     ORDER BY created_at DESC, id DESC LIMIT 1`,
    { type: QueryTypes.SELECT, replacements: [definitionHash, engineVersion], transaction: t }
  );
  return row ? toRecord(row) : null;
}

/**
 * Queues a verification of `source`. When this engine version already verified the same
 * definitionHash, the run is created `done` at once and points at that record. Pass the
 * caller's transaction so the run commits together with the caller's audit event.
 */
export async function enqueueRun(input: NewRun, t?: Transaction): Promise<EnqueuedRun> {
  const maxAttempts = checkNewRun(input);
  const sequelize = getSequelize();
  const id = newId();
  const now = new Date();
  const reuse = await latestRecordFor(input.definitionHash, ENGINE_VERSION, t);
  await sequelize.query(
    `INSERT INTO verification_runs (id, version_id, definition_hash, source, status, progress, stage, attempts, max_attempts,
       record_id, requested_by, created_at, finished_at)
     VALUES (?, ?, ?, ?, ?, ?, NULL, 0, ?, ?, ?, ?, ?)`,
    {
      transaction: t,
      replacements: [
        id,
        input.versionId ?? null,
        input.definitionHash,
        input.source,
        reuse ? 'done' : 'queued',
        reuse ? 1 : 0,
        maxAttempts,
        reuse?.id ?? null,
        input.requestedBy ?? null,
        now,
        reuse ? now : null
      ]
    }
  );
  return { id, status: reuse ? 'done' : 'queued', recordId: reuse?.id ?? null };
}

/**
 * Claims the oldest queued run for `workerId`, or returns null when nothing is queued.
 * Rows that another transaction holds are skipped, never waited for, so concurrent workers in
 * any process each get a different run. Queued runs whose definitionHash meanwhile got a record
 * from this engine version are completed with that record on the way.
 */
export async function claimNext(workerId: string): Promise<ClaimedRun | null> {
  checkWorker(workerId);
  return transact(async (t) => {
    const sequelize = getSequelize();
    for (let i = 0; i < REUSE_SCAN; i++) {
      const [row] = await sequelize.query<{
        id: string;
        source: string;
        definition_hash: string;
        version_id: string | null;
        attempts: number;
        max_attempts: number;
      }>(
        `SELECT id, source, definition_hash, version_id, attempts, max_attempts FROM verification_runs
         WHERE status = 'queued' ORDER BY created_at, id LIMIT 1 FOR UPDATE SKIP LOCKED`,
        { type: QueryTypes.SELECT, transaction: t }
      );
      if (!row) return null;
      const reuse = await latestRecordFor(row.definition_hash, ENGINE_VERSION, t);
      if (reuse) {
        await sequelize.query(
          `UPDATE verification_runs SET status = 'done', progress = 1, stage = NULL, claimed_by = NULL, record_id = ?,
             finished_at = NOW(3) WHERE id = ?`,
          { transaction: t, replacements: [reuse.id, row.id] }
        );
        continue;
      }
      await sequelize.query(
        `UPDATE verification_runs SET status = 'running', attempts = attempts + 1, claimed_by = ?, heartbeat_at = NOW(3),
           started_at = COALESCE(started_at, NOW(3)), progress = 0, stage = NULL WHERE id = ?`,
        { transaction: t, replacements: [workerId, row.id] }
      );
      // the record names the registry version that asked for it first (null for a run of a bare document)
      const [named] = row.version_id
        ? await sequelize.query<{ version: string }>(
            'SELECT version FROM formulation_versions WHERE id = ?',
            {
              type: QueryTypes.SELECT,
              transaction: t,
              replacements: [row.version_id]
            }
          )
        : [];
      return {
        id: row.id,
        source: row.source,
        definitionHash: row.definition_hash,
        versionId: row.version_id,
        version: named?.version ?? null,
        attempt: Number(row.attempts) + 1,
        maxAttempts: Number(row.max_attempts)
      };
    }
    return null;
  }, READ_COMMITTED);
}

/**
 * Tells the queue that `workerId` is still executing `runId`, with its progress (0..1) and stage.
 * Returns false when the run is no longer this worker's (re-queued after a silence, or finished):
 * the worker must then drop its work.
 */
export async function heartbeat(
  runId: string,
  workerId: string,
  progress: number,
  stage: string | null
): Promise<boolean> {
  checkRunId(runId);
  checkWorker(workerId);
  if (typeof progress !== 'number' || !Number.isFinite(progress)) {
    throw new RunQueueError(
      'invalid',
      `progress must be a finite number from 0 to 1, got ${progress}`,
      'progress'
    );
  }
  const p = Math.min(1, Math.max(0, progress));
  const s = stage === null || stage === undefined ? null : String(stage).slice(0, MAX_STAGE_CHARS);
  const affected = await getSequelize().query(
    `UPDATE verification_runs SET heartbeat_at = NOW(3), progress = ?, stage = ?
     WHERE id = ? AND status = 'running' AND claimed_by = ?`,
    { type: QueryTypes.BULKUPDATE, replacements: [p, s, runId, workerId] }
  );
  return Number(affected) === 1;
}

/** Locks a run that `workerId` must own and be running; refuses otherwise, naming who holds it now. */
async function lockOwned(t: Transaction, runId: string, workerId: string, doing: string): Promise<RunRow> {
  checkRunId(runId);
  checkWorker(workerId);
  const [row] = await getSequelize().query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM verification_runs WHERE id = ? FOR UPDATE`,
    {
      type: QueryTypes.SELECT,
      replacements: [runId],
      transaction: t
    }
  );
  if (!row) throw new RunQueueError('not-found', `no verification run with id '${runId}'`, 'runId');
  if (row.status !== 'running' || row.claimed_by !== workerId) {
    const now = row.status === 'running' ? `running on worker ${row.claimed_by}` : row.status;
    throw new RunQueueError(
      'not-owned',
      `cannot ${doing} run ${runId}: it is no longer held by ${workerId} (it is ${now})`
    );
  }
  return row;
}

/**
 * Stores the record of a run that `workerId` holds and marks the run done, in one transaction.
 * Refused when the worker no longer holds the run, or when the record is of another definition.
 * Returns the new record's id.
 */
export async function complete(runId: string, workerId: string, record: VerificationRecord): Promise<string> {
  checkRecord(record);
  const json = canonicalize(record) as string;
  const hash = recordHash(record);
  return transact(async (t) => {
    const sequelize = getSequelize();
    const run = await lockOwned(t, runId, workerId, 'complete');
    if (record.definitionHash !== run.definition_hash) {
      throw new RunQueueError(
        'mismatch',
        `the record is of definition ${record.definitionHash}, but run ${runId} was queued for ${run.definition_hash}`,
        'record'
      );
    }
    const id = newId();
    await sequelize.query(
      `INSERT INTO verification_records (id, run_id, definition_hash, engine_version, verdict, record, record_hash, created_at)
       VALUES (?, ?, ?, ?, ?, ?, ?, NOW(3))`,
      {
        transaction: t,
        replacements: [id, runId, run.definition_hash, record.engine, record.verdict, json, hash]
      }
    );
    await sequelize.query(
      `UPDATE verification_runs SET status = 'done', progress = 1, stage = NULL, record_id = ?, finished_at = NOW(3)
       WHERE id = ?`,
      { transaction: t, replacements: [id, runId] }
    );
    await appendAudit(t, {
      actor: QUEUE_ACTOR,
      action: 'verification.record',
      subjectType: 'verification-run',
      subject: runId,
      after: {
        recordId: id,
        definitionHash: run.definition_hash,
        engine: record.engine,
        verdict: record.verdict,
        recordHash: hash
      }
    });
    return id;
  });
}

/** Ends a run that `workerId` holds as failed, with the reason (an invalid document, a crashed worker thread …). */
export async function fail(runId: string, workerId: string, reason: string): Promise<void> {
  const message = String(reason || 'the verification failed without a reason').slice(0, MAX_ERROR_CHARS);
  await transact(async (t) => {
    const run = await lockOwned(t, runId, workerId, 'fail');
    await getSequelize().query(
      `UPDATE verification_runs SET status = 'failed', error = ?, finished_at = NOW(3) WHERE id = ?`,
      { transaction: t, replacements: [message, runId] }
    );
    await appendAudit(t, {
      actor: QUEUE_ACTOR,
      action: 'verification.fail',
      subjectType: 'verification-run',
      subject: runId,
      after: {
        definitionHash: run.definition_hash,
        attempt: Number(run.attempts),
        error: message.slice(0, 500)
      }
    });
  });
}

/**
 * Gives a run that `workerId` holds back to the queue without spending an attempt (a worker
 * process shutting down in order). Returns false when the run was no longer this worker's.
 */
export async function release(runId: string, workerId: string): Promise<boolean> {
  checkRunId(runId);
  checkWorker(workerId);
  const affected = await getSequelize().query(
    `UPDATE verification_runs SET status = 'queued', claimed_by = NULL, heartbeat_at = NULL, progress = 0, stage = NULL,
       attempts = GREATEST(CAST(attempts AS SIGNED) - 1, 0)
     WHERE id = ? AND status = 'running' AND claimed_by = ?`,
    { type: QueryTypes.BULKUPDATE, replacements: [runId, workerId] }
  );
  return Number(affected) === 1;
}

export interface SweepResult {
  requeued: string[];
  failed: string[];
}

/**
 * Running runs whose last heartbeat is older than `olderThanMs` (by the database clock, which all
 * processes share) lost their worker: they go back to the queue, or fail with the reason once
 * they have been claimed max_attempts times.
 */
export async function requeueStale(olderThanMs: number): Promise<SweepResult> {
  if (!Number.isFinite(olderThanMs) || olderThanMs < 0) {
    throw new RunQueueError(
      'invalid',
      `olderThanMs must be a non-negative number of milliseconds, got ${olderThanMs}`,
      'olderThanMs'
    );
  }
  const micros = Math.round(olderThanMs * 1000);
  return transact(async (t) => {
    const sequelize = getSequelize();
    const rows = await sequelize.query<{
      id: string;
      attempts: number;
      max_attempts: number;
      claimed_by: string | null;
      stage: string | null;
      silent_ms: number | string | null;
      definition_hash: string;
    }>(
      `SELECT id, attempts, max_attempts, claimed_by, stage, definition_hash,
         TIMESTAMPDIFF(MICROSECOND, heartbeat_at, NOW(3)) DIV 1000 AS silent_ms
       FROM verification_runs
       WHERE status = 'running' AND (heartbeat_at IS NULL OR heartbeat_at < NOW(3) - INTERVAL ? MICROSECOND)
       ORDER BY created_at, id LIMIT 500 FOR UPDATE SKIP LOCKED`,
      { type: QueryTypes.SELECT, replacements: [micros], transaction: t }
    );
    const result: SweepResult = { requeued: [], failed: [] };
    for (const r of rows) {
      const attempts = Number(r.attempts);
      const max = Number(r.max_attempts);
      const silent =
        r.silent_ms === null
          ? 'never sent a heartbeat'
          : `sent no heartbeat for ${(Number(r.silent_ms) / 1000).toFixed(1)} s`;
      const note = `attempt ${attempts} of ${max}: worker ${r.claimed_by ?? 'unknown'} ${silent}${r.stage ? ` during stage '${r.stage}'` : ''}`;
      if (attempts >= max) {
        const reason = `no worker finished this run in ${max} attempt${max === 1 ? '' : 's'}; the last one was lost (${note})`;
        await sequelize.query(
          `UPDATE verification_runs SET status = 'failed', claimed_by = NULL,
             error = LEFT(CONCAT_WS('\n', ?, error), ${MAX_ERROR_CHARS}), finished_at = NOW(3) WHERE id = ?`,
          { transaction: t, replacements: [reason, r.id] }
        );
        await appendAudit(t, {
          actor: QUEUE_ACTOR,
          action: 'verification.fail',
          subjectType: 'verification-run',
          subject: r.id,
          after: { definitionHash: r.definition_hash, attempt: attempts, error: reason.slice(0, 500) }
        });
        result.failed.push(r.id);
      } else {
        await sequelize.query(
          `UPDATE verification_runs SET status = 'queued', claimed_by = NULL, heartbeat_at = NULL, progress = 0, stage = NULL,
             error = LEFT(CONCAT_WS('\n', error, ?), ${MAX_ERROR_CHARS}) WHERE id = ?`,
          { transaction: t, replacements: [`re-queued: ${note}`, r.id] }
        );
        result.requeued.push(r.id);
      }
    }
    return result;
  }, READ_COMMITTED);
}

export async function getRun(id: string): Promise<Run | null> {
  if (typeof id !== 'string' || !ULID.test(id)) return null;
  const [row] = await getSequelize().query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM verification_runs WHERE id = ?`,
    {
      type: QueryTypes.SELECT,
      replacements: [id]
    }
  );
  return row ? toRun(row) : null;
}

export async function getRecord(id: string): Promise<StoredRecord | null> {
  if (typeof id !== 'string' || !ULID.test(id)) return null;
  const [row] = await getSequelize().query<RecordRow>('SELECT * FROM verification_records WHERE id = ?', {
    type: QueryTypes.SELECT,
    replacements: [id]
  });
  return row ? toRecord(row) : null;
}

/** A strong validator of a stored record: the SHA-256 of the exact bytes served. */
export function recordEtag(stored: StoredRecord): string {
  return `"${createHash('sha256').update(stored.json, 'utf8').digest('hex')}"`;
}
