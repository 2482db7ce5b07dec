// The schema from an empty database: every migration up, one step down and up again, all the way
// down; and the first-account rule, which only an empty database can show. Runs on the scratch
// database (TEST_SCRATCH_DATABASE_URL), never on the test server's.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';

const scratch = process.env.TEST_SCRATCH_DATABASE_URL;
if (!scratch)
  throw new Error(
    'TEST_SCRATCH_DATABASE_URL is not set: run through `npm test -- tests/integration/migrations.test.ts`'
  );
// this test process's own connection and mode: the scratch database, as in production
process.env.DATABASE_URL = scratch;
process.env.NODE_ENV = 'production';
delete process.env.ISOLEDGER_DEMO;

const { closeDatabase, getSequelize } = await import('../../src/lib/server/db');
const { migrateDown, migrateUp } = await import('../../src/lib/server/db/migrate');
const { migrations } = await import('../../src/lib/server/db/migrations');
const { signUp } = await import('../../src/lib/server/auth/credentials');
const { changeRole } = await import('../../src/lib/server/auth/people');
const { ApiError } = await import('../../src/lib/server/api/errors');

let db: Sequelize;

async function tables(): Promise<string[]> {
  const rows = await db.query<{ name: string }>(
    'SELECT table_name AS name FROM information_schema.tables WHERE table_schema = DATABASE() ORDER BY table_name',
    { type: QueryTypes.SELECT }
  );
  return rows.map((r) => r.name);
}

/** Every column of every table with its type: two equal fingerprints are the same schema. */
async function fingerprint(): Promise<string> {
  const rows = await db.query<{ t: string; c: string; ty: string; n: string }>(
    `SELECT table_name AS t, column_name AS c, column_type AS ty, is_nullable AS n
       FROM information_schema.columns WHERE table_schema = DATABASE() ORDER BY table_name, ordinal_position`,
    { type: QueryTypes.SELECT }
  );
  return rows.map((r) => `${r.t}.${r.c} ${r.ty} ${r.n}`).join('\n');
}

beforeAll(async () => {
  db = getSequelize();
  // start from nothing, whatever an earlier run left behind
  await db.query('SET FOREIGN_KEY_CHECKS = 0');
  for (const t of await tables()) await db.query(`DROP TABLE \`${t}\``);
  await db.query('SET FOREIGN_KEY_CHECKS = 1');
});

afterAll(async () => {
  await closeDatabase();
});

describe('migrations on an empty database', () => {
  let afterUp = '';

  it('applies every migration in order, creating the account and audit tables in utf8mb4', async () => {
    expect(await tables()).toEqual([]);
    const applied = await migrateUp(db);
    expect(applied).toEqual(migrations.map((m) => m.name));
    expect(applied[0]).toBe('0001-accounts-and-audit');
    const names = await tables();
    for (const t of [
      'users',
      'user_roles',
      'sessions',
      'api_tokens',
      'rate_limits',
      'audit_events',
      'audit_head',
      'schema_migrations'
    ]) {
      expect(names).toContain(t);
    }
    const collations = await db.query<{ name: string; collation: string }>(
      `SELECT table_name AS name, table_collation AS collation FROM information_schema.tables
        WHERE table_schema = DATABASE() AND table_name IN ('users', 'sessions', 'api_tokens', 'audit_events')`,
      { type: QueryTypes.SELECT }
    );
    expect(collations.map((c) => c.collation)).toEqual(Array(4).fill('utf8mb4_unicode_ci'));
    afterUp = await fingerprint();
  });

  it('applies nothing the second time', async () => {
    expect(await migrateUp(db)).toEqual([]);
  });

  it('makes the first account on an empty production database an admin, and only the first', async () => {
    const first = await signUp({
      name: 'First Person',
      email: 'first@fenwold.example',
      password: 'first-password-1'
    });
    const second = await signUp({
      name: 'Second Person',
      email: 'second@fenwold.example',
      password: 'second-password-2'
    });
    expect(first.roles).toEqual(['admin']);
    expect(second.roles).toEqual([]);
    const rows = await db.query<{ role: string }>('SELECT role FROM user_roles WHERE user_id = ?', {
      type: QueryTypes.SELECT,
      replacements: [first.id]
    });
    expect(rows.map((r) => r.role)).toEqual(['admin']);

    // and the one admin cannot give the role away, or nobody could grant it again
    const actor = { id: first.id, email: first.email, name: first.name, roles: first.roles };
    const refusal = await changeRole(actor, first.id, 'admin', false).catch((e: unknown) => e);
    expect(refusal).toBeInstanceOf(ApiError);
    expect((refusal as InstanceType<typeof ApiError>).status).toBe(409);
    await changeRole(actor, second.id, 'admin', true);
    expect((await changeRole(actor, first.id, 'admin', false)).roles).toEqual([]);
  });

  it('rolls back exactly the last migration, and applies it again to the same schema', async () => {
    const last = migrations[migrations.length - 1].name;
    expect(await migrateDown(db)).toEqual([last]);
    const recorded = await db.query<{ name: string }>('SELECT name FROM schema_migrations', {
      type: QueryTypes.SELECT
    });
    expect(recorded.map((r) => r.name)).not.toContain(last);
    expect(await fingerprint()).not.toBe(afterUp);
    expect(await migrateUp(db)).toEqual([last]);
    expect(await fingerprint()).toBe(afterUp);
  });

  it('rolls back every migration, leaving only the bookkeeping table', async () => {
    const reverted = await migrateDown(db, migrations.length);
    expect(reverted).toEqual(migrations.map((m) => m.name).reverse());
    expect(await tables()).toEqual(['schema_migrations']);
  });
});
