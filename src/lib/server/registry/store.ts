// Row shapes and lookups shared by the registry services.
import type { Transaction } from 'sequelize';
import { notFound } from './errors';
import { select, selectOne } from './sql';
import type { VersionStatus } from './access';

export interface FormulationRow {
  id: string;
  name: string;
  title: string;
  owner_id: string;
  owner_name: string;
  owner_email: string;
  created_at: Date;
}

export interface VersionRow {
  id: string;
  formulation_id: string;
  name: string;
  version: string;
  status: VersionStatus;
  source: string;
  definition: string;
  source_hash: string;
  definition_hash: string;
  cell: string;
  author_id: string;
  author_name: string;
  author_email: string;
  created_at: Date;
  updated_at: Date;
  submitted_at: Date | null;
  record_id: string | null;
  released_at: Date | null;
  released_by: string | null;
  withdrawn_at: Date | null;
  withdrawn_by: string | null;
  withdrawn_reason: string | null;
}

export interface Person {
  name: string;
  email: string;
}

const FORMULATION_SELECT = `SELECT f.*, u.name AS owner_name, u.email AS owner_email
  FROM formulations f JOIN users u ON u.id = f.owner_id`;

const VERSION_SELECT = `SELECT v.*, f.name AS name, u.name AS author_name, u.email AS author_email
  FROM formulation_versions v
  JOIN formulations f ON f.id = v.formulation_id
  JOIN users u ON u.id = v.author_id`;

/**
 * The formulation by name; with `lock` its row (and only its row) is locked for the transaction,
 * which serialises the changes of its versions.
 */
export async function findFormulation(name: string, t?: Transaction, lock = false): Promise<FormulationRow> {
  if (lock) {
    const row = await selectOne<Omit<FormulationRow, 'owner_name' | 'owner_email'>>(
      'SELECT * FROM formulations WHERE name = ? FOR UPDATE',
      [name],
      t
    );
    if (!row) throw notFound(`no formulation named '${name}'`);
    const owner = await personOf(row.owner_id, t);
    return { ...row, owner_name: owner.name, owner_email: owner.email };
  }
  const row = await selectOne<FormulationRow>(`${FORMULATION_SELECT} WHERE f.name = ?`, [name], t);
  if (!row) throw notFound(`no formulation named '${name}'`);
  return row;
}

async function personOf(id: string, t?: Transaction): Promise<Person> {
  const p = await selectOne<Person>('SELECT name, email FROM users WHERE id = ?', [id], t);
  return p ?? { name: '(unknown)', email: '' };
}

/**
 * The version; with `lock` its row (and only its row: a locking read of a join would lock the
 * author's account too) is locked and read as last committed.
 */
export async function findVersion(
  name: string,
  version: string,
  t?: Transaction,
  lock = false
): Promise<VersionRow> {
  if (lock) {
    const row = await selectOne<Omit<VersionRow, 'name' | 'author_name' | 'author_email'>>(
      `SELECT v.* FROM formulation_versions v
       WHERE v.formulation_id = (SELECT f.id FROM formulations f WHERE f.name = ?) AND v.version = ? FOR UPDATE`,
      [name, version],
      t
    );
    if (!row) throw notFound(`formulation '${name}' has no version ${version}`);
    const author = await personOf(row.author_id, t);
    return { ...row, name, author_name: author.name, author_email: author.email };
  }
  const row = await selectOne<VersionRow>(
    `${VERSION_SELECT} WHERE f.name = ? AND v.version = ?`,
    [name, version],
    t
  );
  if (!row) throw notFound(`formulation '${name}' has no version ${version}`);
  return row;
}

export function versionsOf(formulationId: string, t?: Transaction): Promise<VersionRow[]> {
  return select<VersionRow>(`${VERSION_SELECT} WHERE v.formulation_id = ?`, [formulationId], t);
}

/** Everyone who wrote or submitted any part of the version. */
export async function versionAuthors(versionId: string, t?: Transaction): Promise<string[]> {
  const rows = await select<{ user_id: string }>(
    'SELECT user_id FROM version_authors WHERE version_id = ?',
    [versionId],
    t
  );
  return rows.map((r) => r.user_id);
}

export async function usersWithRole(role: string, t?: Transaction): Promise<(Person & { id: string })[]> {
  return select<Person & { id: string }>(
    `SELECT u.id, u.name, u.email FROM users u JOIN user_roles r ON r.user_id = u.id
     WHERE r.role = ? AND u.disabled_at IS NULL ORDER BY u.email`,
    [role],
    t
  );
}

export async function peopleByIds(ids: string[], t?: Transaction): Promise<(Person & { id: string })[]> {
  if (ids.length === 0) return [];
  return select<Person & { id: string }>(
    `SELECT id, name, email FROM users WHERE id IN (${ids.map(() => '?').join(', ')}) AND disabled_at IS NULL ORDER BY email`,
    ids,
    t
  );
}

export function subjectOf(name: string, version: string): string {
  return `${name}@${version}`;
}
