// Reading the audit trail, newest first, filtered by subject, actor, action and time.
import { rowToEvent, type AuditEvent } from './audit';
import { malformed } from './errors';
import { checkPaging, type Page } from './formulations';
import { select, selectOne } from './sql';

export interface AuditQuery {
  /** a subject (`quad4-membrane`, `SALTMARSH-FB`); a formulation's name also matches its versions (`name@1.0.0`) */
  subject?: string;
  /** the actor's e-mail address or account id */
  actor?: string;
  /** an action (`version.approve`), or a family of actions by its first word (`version`) */
  action?: string;
  /** events at or after this instant; a bare date (`2026-12-01`) means its start, in UTC */
  from?: string;
  /** events at or before this instant; a bare date means the whole of that day, in UTC */
  until?: string;
  page?: number;
  perPage?: number;
}

export interface AuditPage extends Page<AuditEvent> {
  /** every action the trail holds, so a filter can offer them */
  actions: string[];
}

const DATE_ONLY = /^\d{4}-\d{2}-\d{2}$/;
const INSTANT = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,3})?)?(Z|[+-]\d{2}:\d{2})?$/;
const DAY_MS = 86_400_000;

/** An ISO 8601 date or instant (UTC unless it says otherwise); `endOfDay` turns a bare date into the last millisecond of that day. */
export function parseInstant(value: string, field: 'from' | 'until', endOfDay = false): Date {
  const v = value.trim();
  const bare = DATE_ONLY.test(v);
  const zoned = /(Z|[+-]\d{2}:\d{2})$/.test(v);
  const t = bare ? Date.parse(`${v}T00:00:00Z`) : INSTANT.test(v) ? Date.parse(zoned ? v : `${v}Z`) : NaN;
  if (!Number.isFinite(t)) {
    throw malformed(
      `${field} must be a date (2026-12-01) or an instant (2026-12-01T09:30:00Z), got '${value}'`,
      {
        field
      }
    );
  }
  return new Date(bare && endOfDay ? t + DAY_MS - 1 : t);
}

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => '\\' + c);

export async function listAudit(query: AuditQuery = {}): Promise<AuditPage> {
  const { page, perPage } = checkPaging(query.page, query.perPage ?? 50);
  const where: string[] = [];
  const params: unknown[] = [];
  if (query.subject) {
    where.push('(subject = ? OR subject LIKE ?)');
    params.push(query.subject, `${escapeLike(query.subject)}@%`);
  }
  if (query.actor) {
    where.push('(actor_label = ? OR actor_id = ?)');
    params.push(query.actor.toLowerCase(), query.actor);
  }
  if (query.action) {
    const action = query.action.trim();
    if (action.includes('.')) {
      where.push('action = ?');
      params.push(action);
    } else {
      where.push('action LIKE ?');
      params.push(`${escapeLike(action)}.%`);
    }
  }
  const from = query.from ? parseInstant(query.from, 'from') : null;
  const until = query.until ? parseInstant(query.until, 'until', true) : null;
  if (from && until && from > until) {
    throw malformed(`from (${from.toISOString()}) is later than until (${until.toISOString()})`, {
      field: 'until'
    });
  }
  if (from) {
    where.push('at >= ?');
    params.push(from);
  }
  if (until) {
    where.push('at <= ?');
    params.push(until);
  }
  const clause = where.length ? `WHERE ${where.join(' AND ')}` : '';
  const total = await selectOne<{ n: number | bigint }>(
    `SELECT COUNT(*) AS n FROM audit_events ${clause}`,
    params
  );
  const rows = await select<Parameters<typeof rowToEvent>[0]>(
    `SELECT * FROM audit_events ${clause} ORDER BY id DESC LIMIT ? OFFSET ?`,
    [...params, perPage, (page - 1) * perPage]
  );
  const actions = await select<{ action: string }>(
    'SELECT DISTINCT action FROM audit_events ORDER BY action'
  );
  return {
    items: rows.map(rowToEvent),
    page,
    perPage,
    total: Number(total?.n ?? 0),
    actions: actions.map((a) => a.action)
  };
}
