// The test server's own database (DATABASE_URL), for set-ups and checks the API cannot express,
// such as moving a session's expiry into the past.
import { QueryTypes } from 'sequelize';
import { closeDatabase, getSequelize } from '../../src/lib/server/db';

export function testDb() {
  return getSequelize();
}

export function select<T extends object>(sql: string, replacements: unknown[] = []): Promise<T[]> {
  return getSequelize().query<T>(sql, { type: QueryTypes.SELECT, replacements });
}

export async function execute(sql: string, replacements: unknown[] = []): Promise<void> {
  await getSequelize().query(sql, { replacements });
}

export const closeTestDb = closeDatabase;
