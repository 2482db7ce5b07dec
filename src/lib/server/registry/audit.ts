// The audit trail: every change is an event appended to a SHA-256 hash chain. Each event stores the
// hash of its own content together with the previous event's hash, so altering, removing or
// reordering any stored event breaks the chain from that event on.
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import { QueryTypes, type Transaction } from 'sequelize';
import { getSequelize } from '../db';

export interface AuditActor {
  id: string | null;
  label: string;
}

export interface AuditInput {
  actor: AuditActor;
  action: string;
  subjectType: string;
  subject: string;
  before?: unknown;
  after?: unknown;
}

export interface AuditEvent {
  id: number;
  at: string;
  actorId: string | null;
  actorLabel: string;
  action: string;
  subjectType: string;
  subject: string;
  before: unknown;
  after: unknown;
  prevHash: string;
  hash: string;
}

const GENESIS = '0'.repeat(64);

function contentHash(e: Omit<AuditEvent, 'hash'>): string {
  const content = canonicalize({
    id: e.id,
    at: e.at,
    actorId: e.actorId,
    actorLabel: e.actorLabel,
    action: e.action,
    subjectType: e.subjectType,
    subject: e.subject,
    before: e.before ?? null,
    after: e.after ?? null
  }) as string;
  return createHash('sha256').update(e.prevHash).update('\n').update(content).digest('hex');
}

/** Appends one event inside the caller's transaction (the mutation and its event commit together). */
export async function appendAudit(t: Transaction, input: AuditInput): Promise<AuditEvent> {
  const sequelize = getSequelize();
  const [head] = await sequelize.query<{ last_id: number | string; last_hash: string }>(
    'SELECT last_id, last_hash FROM audit_head WHERE id = 1 FOR UPDATE',
    { type: QueryTypes.SELECT, transaction: t }
  );
  if (!head) throw new Error('audit_head is missing: run the migrations');
  const at = new Date();
  // millisecond precision, as stored (DATETIME(3))
  const event: Omit<AuditEvent, 'hash'> = {
    id: Number(head.last_id) + 1,
    at: at.toISOString(),
    actorId: input.actor.id,
    actorLabel: input.actor.label,
    action: input.action,
    subjectType: input.subjectType,
    subject: input.subject,
    before: input.before ?? null,
    after: input.after ?? null,
    prevHash: head.last_hash
  };
  const hash = contentHash(event);
  await sequelize.query(
    `INSERT INTO audit_events (id, at, actor_id, actor_label, action, subject_type, subject, before_summary, after_summary, prev_hash, hash)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    {
      transaction: t,
      replacements: [
        event.id,
        at,
        event.actorId,
        event.actorLabel,
        event.action,
        event.subjectType,
        event.subject,
        event.before === null ? null : JSON.stringify(event.before),
        event.after === null ? null : JSON.stringify(event.after),
        event.prevHash,
        hash
      ]
    }
  );
  await sequelize.query('UPDATE audit_head SET last_id = ?, last_hash = ? WHERE id = 1', {
    transaction: t,
    replacements: [event.id, hash]
  });
  return { ...event, hash };
}

interface AuditRow {
  id: number | string;
  at: Date;
  actor_id: string | null;
  actor_label: string;
  action: string;
  subject_type: string;
  subject: string;
  before_summary: unknown;
  after_summary: unknown;
  prev_hash: string;
  hash: string;
}

function parseJson(v: unknown): unknown {
  if (v === null || v === undefined) return null;
  if (typeof v === 'string') return JSON.parse(v);
  return v;
}

export function rowToEvent(r: AuditRow): AuditEvent {
  return {
    id: Number(r.id),
    at: new Date(r.at).toISOString(),
    actorId: r.actor_id,
    actorLabel: r.actor_label,
    action: r.action,
    subjectType: r.subject_type,
    subject: r.subject,
    before: parseJson(r.before_summary),
    after: parseJson(r.after_summary),
    prevHash: r.prev_hash,
    hash: r.hash
  };
}

export interface ChainVerdict {
  ok: boolean;
  events: number;
  firstBrokenId: number | null;
}

/**
 * Re-hashes the whole chain in id order and names the first event whose content or link is wrong.
 * The head is read first, so events appended while the check runs are simply not part of it.
 */
export async function verifyAuditChain(batch = 2000): Promise<ChainVerdict> {
  const sequelize = getSequelize();
  const [head] = await sequelize.query<{ last_id: number | string; last_hash: string }>(
    'SELECT last_id, last_hash FROM audit_head WHERE id = 1',
    { type: QueryTypes.SELECT }
  );
  const headId = head ? Number(head.last_id) : 0;
  let prev = GENESIS;
  let expectedId = 1;
  let count = 0;
  let lastId = 0;
  while (lastId < headId) {
    const rows = await sequelize.query<AuditRow>(
      'SELECT * FROM audit_events WHERE id > ? AND id <= ? ORDER BY id LIMIT ?',
      { type: QueryTypes.SELECT, replacements: [lastId, headId, batch] }
    );
    if (rows.length === 0) break;
    for (const row of rows) {
      const e = rowToEvent(row);
      const broken = e.id !== expectedId || e.prevHash !== prev || contentHash(e) !== e.hash;
      if (broken) return { ok: false, events: count, firstBrokenId: e.id };
      prev = e.hash;
      expectedId = e.id + 1;
      lastId = e.id;
      count++;
    }
  }
  // a deleted tail shows as a head that points past the last stored event
  if (head && (headId !== lastId || head.last_hash !== prev)) {
    return { ok: false, events: count, firstBrokenId: lastId + 1 };
  }
  return { ok: true, events: count, firstBrokenId: null };
}
