// Database views and set-ups shared by the queue tests (the same MariaDB as the test server).
import { QueryTypes } from 'sequelize';
import { getSequelize, inTransaction } from '../../src/lib/server/db';
import { enqueueRun, type NewRun } from '../../src/lib/server/runs/queue';

export interface RunRowView {
  id: string;
  status: string;
  attempts: number;
  max_attempts: number;
  claimed_by: string | null;
  record_id: string | null;
  error: string | null;
  definition_hash: string;
}

export interface RecordRowView {
  id: string;
  run_id: string;
  definition_hash: string;
  engine_version: string;
  verdict: string;
  record_hash: string;
}

function placeholders(n: number): string {
  return Array.from({ length: n }, () => '?').join(', ');
}

export async function runRows(ids: string[]): Promise<RunRowView[]> {
  if (ids.length === 0) return [];
  const rows = await getSequelize().query<RunRowView>(
    `SELECT id, status, attempts, max_attempts, claimed_by, record_id, error, definition_hash FROM verification_runs WHERE id IN (${placeholders(ids.length)})`,
    { type: QueryTypes.SELECT, replacements: ids }
  );
  return rows.map((r) => ({ ...r, attempts: Number(r.attempts), max_attempts: Number(r.max_attempts) }));
}

export async function recordsOfRuns(runIds: string[]): Promise<RecordRowView[]> {
  if (runIds.length === 0) return [];
  return getSequelize().query<RecordRowView>(
    `SELECT id, run_id, definition_hash, engine_version, verdict, record_hash FROM verification_records WHERE run_id IN (${placeholders(runIds.length)})`,
    { type: QueryTypes.SELECT, replacements: runIds }
  );
}

export async function recordsOfDefinition(definitionHash: string): Promise<RecordRowView[]> {
  return getSequelize().query<RecordRowView>(
    'SELECT id, run_id, definition_hash, engine_version, verdict, record_hash FROM verification_records WHERE definition_hash = ?',
    { type: QueryTypes.SELECT, replacements: [definitionHash] }
  );
}

/** Waits until every run is done or failed; returns their rows. */
export async function waitForRuns(
  ids: string[],
  timeoutMs: number,
  onWait?: () => string
): Promise<RunRowView[]> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await runRows(ids);
    const open = rows.filter((r) => r.status === 'queued' || r.status === 'running');
    if (rows.length === ids.length && open.length === 0) return rows;
    if (Date.now() > until) {
      const counts = rows.reduce<Record<string, number>>(
        (m, r) => ({ ...m, [r.status]: (m[r.status] ?? 0) + 1 }),
        {}
      );
      throw new Error(
        `runs still open after ${timeoutMs} ms: ${JSON.stringify(counts)}${onWait ? `\n${onWait()}` : ''}`
      );
    }
    await new Promise((r) => setTimeout(r, 250));
  }
}

/**
 * Queues a run and, in the same transaction, hands it to `workerId` as attempt `attempts` with a
 * heartbeat `silentMs` old: a worker that claimed it and then (when silentMs is large) vanished.
 * No other worker can see the run before the transaction commits, so none can take it first.
 */
export async function insertHeldRun(
  input: NewRun,
  opts: { workerId: string; attempts: number; silentMs: number; stage?: string }
): Promise<string> {
  return inTransaction(async (t) => {
    const run = await enqueueRun(input, t);
    if (run.status !== 'queued')
      throw new Error(`run ${run.id} was ${run.status} at once: its definition already has a record`);
    await getSequelize().query(
      `UPDATE verification_runs SET status = 'running', claimed_by = ?, attempts = ?, started_at = NOW(3),
         heartbeat_at = NOW(3) - INTERVAL ? MICROSECOND, stage = ?, progress = 0.4 WHERE id = ?`,
      {
        transaction: t,
        replacements: [
          opts.workerId,
          opts.attempts,
          Math.round(opts.silentMs * 1000),
          opts.stage ?? null,
          run.id
        ]
      }
    );
    return run.id;
  });
}
