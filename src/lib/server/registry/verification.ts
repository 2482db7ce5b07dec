// The verification evidence a version cites: the newest record of its definitionHash made by the
// engine version this server runs. Records themselves are written only by the run queue.
import type { Transaction } from 'sequelize';
import { getRecord, latestRecordFor } from '../runs/queue';
import { selectOne } from './sql';

export type Verdict = 'pass' | 'fail' | 'incomplete';

export interface RecordRef {
  recordId: string;
  verdict: Verdict;
}

export interface RecordCheck {
  id: string;
  required?: boolean;
  status: string;
  metric?: number;
  [k: string]: unknown;
}

/** The newest record of this definitionHash by the current engine, or null when none was made yet. */
export async function currentRecordFor(definitionHash: string, t?: Transaction): Promise<RecordRef | null> {
  const r = await latestRecordFor(definitionHash, undefined, t);
  return r ? { recordId: r.id, verdict: r.verdict } : null;
}

export async function recordRef(recordId: string, t?: Transaction): Promise<RecordRef | null> {
  const row = await selectOne<{ id: string; verdict: Verdict }>(
    'SELECT id, verdict FROM verification_records WHERE id = ?',
    [recordId],
    t
  );
  return row ? { recordId: row.id, verdict: row.verdict } : null;
}

/** The checks of a stored record. */
export async function recordChecks(recordId: string): Promise<RecordCheck[]> {
  const stored = await getRecord(recordId);
  return stored ? (stored.record.checks as RecordCheck[]) : [];
}
