// Raw SQL through the one Sequelize connection, with replacements (never string-built values).
import { QueryTypes, type Transaction } from 'sequelize';
import { getSequelize, inTransaction } from '../db';

export function select<T extends object>(
  sql: string,
  replacements: unknown[] = [],
  t?: Transaction
): Promise<T[]> {
  return getSequelize().query<T>(sql, { type: QueryTypes.SELECT, replacements, transaction: t });
}

export async function selectOne<T extends object>(
  sql: string,
  replacements: unknown[] = [],
  t?: Transaction
): Promise<T | undefined> {
  const rows = await select<T>(sql, replacements, t);
  return rows[0];
}

export async function exec(sql: string, replacements: unknown[], t: Transaction): Promise<void> {
  await getSequelize().query(sql, { replacements, transaction: t });
}

export function iso(d: Date | string | null | undefined): string | null {
  return d ? new Date(d).toISOString() : null;
}

const DEADLOCK = 1213; // ER_LOCK_DEADLOCK: InnoDB rolled the transaction back; running it again is safe
const DUPLICATE_KEY = 1062; // ER_DUP_ENTRY
const ATTEMPTS = 3;

function errno(e: unknown): number | undefined {
  const parent = (e as { parent?: { errno?: number }; original?: { errno?: number } } | null) ?? null;
  return parent?.parent?.errno ?? parent?.original?.errno ?? (e as { errno?: number } | null)?.errno;
}

export function isDuplicateKey(e: unknown): boolean {
  return errno(e) === DUPLICATE_KEY;
}

/**
 * One transaction for a mutation and its audit event, run again (up to three times) when InnoDB
 * chose it as a deadlock victim; `fn` must therefore keep no state outside its own scope.
 */
export async function transact<T>(fn: (t: Transaction) => Promise<T>): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await inTransaction(fn);
    } catch (e) {
      if (errno(e) !== DEADLOCK || attempt >= ATTEMPTS) throw e;
    }
  }
}
