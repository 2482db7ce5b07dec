// Formulations: a name (the documents' slug), a title, an owner, and versions.
import { newId } from '../ids';
import { appendAudit } from './audit';
import { actorOf, canSee, seesDrafts, VERSION_STATUSES, type VersionStatus, type Viewer } from './access';
import { conflict, forbidden, malformed } from './errors';
import { newestFirst } from './semver-order';
import { exec, iso, select, selectOne, transact, isDuplicateKey } from './sql';
import { findFormulation, versionsOf, type Person, type VersionRow } from './store';
import { currentRecordFor, recordRef, type RecordRef } from './verification';

/** The document slug of formulation-format.md. */
export const NAME_PATTERN = /^[a-z][a-z0-9-]{2,63}$/;
export const TITLE_MAX = 120;
export const PER_PAGE_MAX = 100;
export const CELLS = ['interval', 'triangle', 'quadrilateral', 'tetrahedron', 'hexahedron'] as const;
/** The built-in strain kinds of formulation-format.md, and `custom` for a strain block written out. */
export const STRAIN_FILTERS = [
  'bar',
  'plane-stress',
  'plane-strain',
  'axisymmetric',
  'solid',
  'custom'
] as const;
/** Catalogue orders: by name or title (A to Z), or by the latest version's last change (oldest first); `-` reverses. */
export const LIST_SORTS = ['name', '-name', 'title', '-title', 'updated', '-updated'] as const;
export type ListSort = (typeof LIST_SORTS)[number];

export interface FormulationSummary {
  name: string;
  title: string;
  owner: Person;
  createdAt: string;
  versions: number;
  latest: {
    version: string;
    status: VersionStatus;
    cell: string;
    /** the built-in strain kind, or `custom` for a strain block */
    strain: string;
    definitionHash: string;
    author: Person;
    updatedAt: string;
    releasedAt: string | null;
    /** the record the version cites (see verificationOf); filled for the listed page only */
    verification: RecordRef | null;
  } | null;
  /** versions waiting for review that the caller may see, newest first */
  inReview: { version: string; author: Person; submittedAt: string | null }[];
}

export interface VersionSummary {
  version: string;
  status: VersionStatus;
  cell: string;
  sourceHash: string;
  definitionHash: string;
  author: Person;
  createdAt: string;
  releasedAt: string | null;
  withdrawnAt: string | null;
  verification: RecordRef | null;
}

export interface FormulationDetail {
  name: string;
  title: string;
  owner: Person;
  createdAt: string;
  /** newest first; drafts and versions in review only for authors, reviewers and auditors */
  versions: VersionSummary[];
  pins: { project: string; title: string; version: string }[];
}

export function checkName(name: string): string {
  if (!NAME_PATTERN.test(name)) {
    throw malformed(
      `name '${name}' must be a slug: a lower-case letter, then 2 to 63 lower-case letters, digits or '-'`,
      { field: 'name' }
    );
  }
  return name;
}

export function checkTitle(title: string): string {
  const t = title.trim();
  if (t.length === 0 || t.length > TITLE_MAX || /[\r\n]/.test(t)) {
    throw malformed(`title must be one line of 1 to ${TITLE_MAX} characters`, { field: 'title' });
  }
  return t;
}

export async function createFormulation(
  actor: Viewer,
  input: { name: string; title: string }
): Promise<FormulationSummary> {
  const name = checkName(input.name);
  const title = checkTitle(input.title);
  const exists = () =>
    conflict('already-exists', `a formulation named '${name}' already exists`, { field: 'name' });
  if (await selectOne('SELECT id FROM formulations WHERE name = ?', [name])) throw exists();
  return transact(async (t) => {
    const now = new Date();
    // the unique name decides between two people creating the same name at once
    await exec(
      'INSERT INTO formulations (id, name, title, owner_id, created_at) VALUES (?, ?, ?, ?, ?)',
      [newId(), name, title, actor.id, now],
      t
    ).catch((e: unknown) => {
      throw isDuplicateKey(e) ? exists() : e;
    });
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'formulation.create',
      subjectType: 'formulation',
      subject: name,
      after: { name, title }
    });
    return {
      name,
      title,
      owner: { name: actor.name, email: actor.email },
      createdAt: now.toISOString(),
      versions: 0,
      latest: null,
      inReview: []
    };
  });
}

export interface ListQuery {
  q?: string;
  cell?: string;
  status?: string;
  /** a built-in strain kind or `custom` */
  strain?: string;
  /** part of the name or e-mail of the latest version's author or of the owner, any case */
  author?: string;
  sort?: string;
  /** only formulations with a version waiting for review */
  inReview?: boolean;
  page?: number;
  perPage?: number;
}

export interface Page<T> {
  items: T[];
  page: number;
  perPage: number;
  total: number;
}

export function checkPaging(page = 1, perPage = 20): { page: number; perPage: number } {
  if (!Number.isInteger(page) || page < 1)
    throw malformed(`page must be a whole number from 1, got ${page}`, { field: 'page' });
  if (!Number.isInteger(perPage) || perPage < 1 || perPage > PER_PAGE_MAX) {
    throw malformed(`per_page must be a whole number from 1 to ${PER_PAGE_MAX}, got ${perPage}`, {
      field: 'per_page'
    });
  }
  return { page, perPage };
}

/** Lists formulations with the newest version the viewer may see; filters apply to that version. */
export async function listFormulations(
  viewer: Viewer,
  query: ListQuery = {}
): Promise<Page<FormulationSummary>> {
  const { page, perPage } = checkPaging(query.page, query.perPage);
  if (query.cell && !(CELLS as readonly string[]).includes(query.cell)) {
    throw malformed(`cell must be one of ${CELLS.join(', ')}, got '${query.cell}'`, { field: 'cell' });
  }
  if (query.status && !(VERSION_STATUSES as readonly string[]).includes(query.status)) {
    throw malformed(`status must be one of ${VERSION_STATUSES.join(', ')}, got '${query.status}'`, {
      field: 'status'
    });
  }
  if (query.status && !canSee(viewer, query.status as VersionStatus)) {
    throw forbidden(
      `versions that are ${query.status} are visible to the author, reviewer and auditor roles`
    );
  }
  if (query.strain && !(STRAIN_FILTERS as readonly string[]).includes(query.strain)) {
    throw malformed(`strain must be one of ${STRAIN_FILTERS.join(', ')}, got '${query.strain}'`, {
      field: 'strain'
    });
  }
  const sort = (query.sort || 'name') as ListSort;
  if (!(LIST_SORTS as readonly string[]).includes(sort)) {
    throw malformed(`sort must be one of ${LIST_SORTS.join(', ')}, got '${query.sort}'`, { field: 'sort' });
  }
  if (query.inReview && !seesDrafts(viewer)) {
    throw forbidden('versions in review are visible to the author, reviewer and auditor roles');
  }
  const author = query.author?.trim().toLowerCase() ?? '';
  const where: string[] = [];
  const params: unknown[] = [];
  if (query.q) {
    where.push('(f.name LIKE ? OR f.title LIKE ?)');
    const like = `%${query.q.replace(/[\\%_]/g, (c) => '\\' + c)}%`;
    params.push(like, like);
  }
  const formulations = await select<{
    id: string;
    name: string;
    title: string;
    created_at: Date;
    owner_name: string;
    owner_email: string;
  }>(
    `SELECT f.id, f.name, f.title, f.created_at, u.name AS owner_name, u.email AS owner_email
     FROM formulations f JOIN users u ON u.id = f.owner_id ${where.length ? 'WHERE ' + where.join(' AND ') : ''} ORDER BY f.name`,
    params
  );
  // JSON_VALUE gives the strain kind's name, and NULL for a custom strain block (an object)
  const versions = await select<
    Pick<
      VersionRow,
      | 'formulation_id'
      | 'version'
      | 'status'
      | 'cell'
      | 'definition_hash'
      | 'released_at'
      | 'updated_at'
      | 'submitted_at'
      | 'record_id'
      | 'author_name'
      | 'author_email'
    > & { strain: string | null }
  >(
    `SELECT v.formulation_id, v.version, v.status, v.cell, v.definition_hash, v.released_at, v.updated_at,
            v.submitted_at, v.record_id, u.name AS author_name, u.email AS author_email,
            JSON_VALUE(v.definition, '$.strain') AS strain
     FROM formulation_versions v JOIN users u ON u.id = v.author_id`
  );
  const byFormulation = new Map<string, typeof versions>();
  for (const v of versions) {
    if (!canSee(viewer, v.status)) continue;
    const list = byFormulation.get(v.formulation_id) ?? [];
    list.push(v);
    byFormulation.set(v.formulation_id, list);
  }
  const all: { summary: FormulationSummary; latestRow: (typeof versions)[number] | undefined }[] = [];
  const matches = (...texts: string[]) => texts.some((t) => t.toLowerCase().includes(author));
  for (const f of formulations) {
    const visible = newestFirst(byFormulation.get(f.id) ?? []);
    const latest = visible[0];
    const strain = latest ? (latest.strain ?? 'custom') : null;
    const inReview = visible.filter((v) => v.status === 'in-review');
    if (query.cell && latest?.cell !== query.cell) continue;
    if (query.status && latest?.status !== query.status) continue;
    if (query.strain && strain !== query.strain) continue;
    if (query.inReview && inReview.length === 0) continue;
    if (
      author &&
      !matches(f.owner_name, f.owner_email, latest?.author_name ?? '', latest?.author_email ?? '')
    )
      continue;
    all.push({
      latestRow: latest,
      summary: {
        name: f.name,
        title: f.title,
        owner: { name: f.owner_name, email: f.owner_email },
        createdAt: iso(f.created_at)!,
        versions: visible.length,
        latest: latest
          ? {
              version: latest.version,
              status: latest.status,
              cell: latest.cell,
              strain: strain!,
              definitionHash: latest.definition_hash,
              author: { name: latest.author_name, email: latest.author_email },
              updatedAt: iso(latest.updated_at)!,
              releasedAt: iso(latest.released_at),
              verification: null
            }
          : null,
        inReview: inReview.map((v) => ({
          version: v.version,
          author: { name: v.author_name, email: v.author_email },
          submittedAt: iso(v.submitted_at)
        }))
      }
    });
  }
  const key = sort.replace(/^-/, '');
  const sign = sort.startsWith('-') ? -1 : 1;
  const value = (s: FormulationSummary): string =>
    key === 'title' ? s.title.toLowerCase() : key === 'updated' ? (s.latest?.updatedAt ?? '') : s.name;
  all.sort((a, b) => {
    const [x, y] = [value(a.summary), value(b.summary)];
    return (x < y ? -1 : x > y ? 1 : a.summary.name < b.summary.name ? -1 : 1) * sign;
  });
  const shown = all.slice((page - 1) * perPage, page * perPage);
  for (const { summary, latestRow } of shown) {
    if (summary.latest && latestRow) summary.latest.verification = await verificationOf(latestRow);
  }
  return { items: shown.map((s) => s.summary), page, perPage, total: all.length };
}

/** The evidence a version shows: the record it was submitted with, else the current record of its definition. */
export async function verificationOf(
  v: Pick<VersionRow, 'record_id' | 'definition_hash' | 'status'>
): Promise<RecordRef | null> {
  if (v.record_id) return recordRef(v.record_id);
  if (v.status === 'released' || v.status === 'withdrawn') return null;
  return currentRecordFor(v.definition_hash);
}

export async function getFormulation(viewer: Viewer, name: string): Promise<FormulationDetail> {
  const f = await findFormulation(name);
  const visible = newestFirst((await versionsOf(f.id)).filter((v) => canSee(viewer, v.status)));
  const list: VersionSummary[] = [];
  for (const v of visible) {
    list.push({
      version: v.version,
      status: v.status,
      cell: v.cell,
      sourceHash: v.source_hash,
      definitionHash: v.definition_hash,
      author: { name: v.author_name, email: v.author_email },
      createdAt: iso(v.created_at)!,
      releasedAt: iso(v.released_at),
      withdrawnAt: iso(v.withdrawn_at),
      verification: await verificationOf(v)
    });
  }
  const pins = await select<{ key: string; title: string; version: string }>(
    `SELECT p.\`key\`, p.title, v.version FROM project_pins pp
     JOIN projects p ON p.id = pp.project_id JOIN formulation_versions v ON v.id = pp.version_id
     WHERE pp.formulation_id = ? ORDER BY p.\`key\``,
    [f.id]
  );
  return {
    name: f.name,
    title: f.title,
    owner: { name: f.owner_name, email: f.owner_email },
    createdAt: iso(f.created_at)!,
    versions: list,
    pins: pins.map((p) => ({ project: p.key, title: p.title, version: p.version }))
  };
}
