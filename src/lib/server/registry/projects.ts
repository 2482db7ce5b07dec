// Projects pin released versions: at most one version of each formulation per project. The
// manifest lists every pin with its definitionHash and record, for offline checks by solvers.
import { newId } from '../ids';
import type { Transaction } from 'sequelize';
import { appendAudit } from './audit';
import { actorOf, type VersionStatus, type Viewer } from './access';
import { conflict, malformed, notFound } from './errors';
import { checkTitle } from './formulations';
import { checkVersion } from './semver-order';
import { exec, iso, select, selectOne, transact, isDuplicateKey } from './sql';
import { findFormulation, findVersion, subjectOf, type Person } from './store';

export const PROJECT_KEY = /^[A-Z][A-Z0-9-]{1,31}$/;

export interface ProjectSummary {
  key: string;
  title: string;
  lead: Person;
  createdAt: string;
  pins: number;
}

export interface Pin {
  name: string;
  title: string;
  version: string;
  status: VersionStatus;
  definitionHash: string;
  sourceHash: string;
  recordId: string | null;
  pinnedBy: Person;
  pinnedAt: string;
}

export interface ProjectDetail extends Omit<ProjectSummary, 'pins'> {
  pins: Pin[];
}

export interface Manifest {
  project: { key: string; title: string };
  generatedAt: string;
  pins: {
    name: string;
    version: string;
    definitionHash: string;
    sourceHash: string;
    recordId: string | null;
    status: VersionStatus;
  }[];
}

interface ProjectRow {
  id: string;
  key: string;
  title: string;
  lead_name: string;
  lead_email: string;
  created_at: Date;
}

function checkKey(key: string): string {
  if (!PROJECT_KEY.test(key)) {
    throw malformed(
      `project key '${key}' must be 2 to 32 characters: an upper-case letter, then upper-case letters, digits or '-'`,
      { field: 'key' }
    );
  }
  return key;
}

async function findProject(key: string, lock = false, t?: Transaction): Promise<ProjectRow> {
  // a locking read locks every row it joins, so the lock takes the projects row alone
  if (lock && !(await selectOne('SELECT id FROM projects WHERE `key` = ? FOR UPDATE', [key], t))) {
    throw notFound(`no project with key '${key}'`);
  }
  const row = await selectOne<ProjectRow>(
    `SELECT p.id, p.\`key\`, p.title, p.created_at, u.name AS lead_name, u.email AS lead_email
     FROM projects p JOIN users u ON u.id = p.lead_id WHERE p.\`key\` = ?`,
    [key],
    t
  );
  if (!row) throw notFound(`no project with key '${key}'`);
  return row;
}

export async function listProjects(): Promise<ProjectSummary[]> {
  const rows = await select<ProjectRow & { pins: number | bigint }>(
    `SELECT p.\`key\`, p.title, p.created_at, u.name AS lead_name, u.email AS lead_email,
            (SELECT COUNT(*) FROM project_pins pp WHERE pp.project_id = p.id) AS pins
     FROM projects p JOIN users u ON u.id = p.lead_id ORDER BY p.\`key\``
  );
  return rows.map((r) => ({
    key: r.key,
    title: r.title,
    lead: { name: r.lead_name, email: r.lead_email },
    createdAt: iso(r.created_at)!,
    pins: Number(r.pins)
  }));
}

export async function createProject(
  actor: Viewer,
  input: { key: string; title: string }
): Promise<ProjectSummary> {
  const key = checkKey(input.key);
  const title = checkTitle(input.title);
  const exists = () =>
    conflict('already-exists', `a project with key '${key}' already exists`, { field: 'key' });
  if (await selectOne('SELECT id FROM projects WHERE `key` = ?', [key])) throw exists();
  return transact(async (t) => {
    const now = new Date();
    // the unique key decides between two leads creating the same key at once
    await exec(
      'INSERT INTO projects (id, `key`, title, lead_id, created_at) VALUES (?, ?, ?, ?, ?)',
      [newId(), key, title, actor.id, now],
      t
    ).catch((e: unknown) => {
      throw isDuplicateKey(e) ? exists() : e;
    });
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'project.create',
      subjectType: 'project',
      subject: key,
      after: { key, title }
    });
    return {
      key,
      title,
      lead: { name: actor.name, email: actor.email },
      createdAt: now.toISOString(),
      pins: 0
    };
  });
}

async function pinsOf(projectId: string): Promise<Pin[]> {
  const rows = await select<{
    name: string;
    title: string;
    version: string;
    status: VersionStatus;
    definition_hash: string;
    source_hash: string;
    record_id: string | null;
    pinned_by_name: string;
    pinned_by_email: string;
    pinned_at: Date;
  }>(
    `SELECT f.name, f.title, v.version, v.status, v.definition_hash, v.source_hash, v.record_id,
            u.name AS pinned_by_name, u.email AS pinned_by_email, pp.pinned_at
     FROM project_pins pp
     JOIN formulations f ON f.id = pp.formulation_id
     JOIN formulation_versions v ON v.id = pp.version_id
     JOIN users u ON u.id = pp.pinned_by
     WHERE pp.project_id = ? ORDER BY f.name`,
    [projectId]
  );
  return rows.map((r) => ({
    name: r.name,
    title: r.title,
    version: r.version,
    status: r.status,
    definitionHash: r.definition_hash,
    sourceHash: r.source_hash,
    recordId: r.record_id,
    pinnedBy: { name: r.pinned_by_name, email: r.pinned_by_email },
    pinnedAt: iso(r.pinned_at)!
  }));
}

export async function getProject(key: string): Promise<ProjectDetail> {
  const p = await findProject(key);
  return {
    key: p.key,
    title: p.title,
    lead: { name: p.lead_name, email: p.lead_email },
    createdAt: iso(p.created_at)!,
    pins: await pinsOf(p.id)
  };
}

/** Pins a released version (replacing this formulation's earlier pin in the project, if any). */
export async function pinVersion(
  actor: Viewer,
  key: string,
  name: string,
  input: { version: string }
): Promise<ProjectDetail> {
  const version = checkVersion(input.version);
  await transact(async (t) => {
    const p = await findProject(key, true, t);
    const f = await findFormulation(name, t);
    const v = await findVersion(name, version, t, true);
    if (v.status !== 'released') {
      throw conflict(
        'not-released',
        `only released versions can be pinned: ${subjectOf(name, version)} is ${v.status}`,
        { status: v.status }
      );
    }
    const existing = await selectOne<{ version_id: string; version: string }>(
      `SELECT pp.version_id, v.version FROM project_pins pp JOIN formulation_versions v ON v.id = pp.version_id
       WHERE pp.project_id = ? AND pp.formulation_id = ?`,
      [p.id, f.id],
      t
    );
    if (existing?.version_id === v.id) return;
    const now = new Date();
    if (existing) {
      await exec(
        'UPDATE project_pins SET version_id = ?, pinned_by = ?, pinned_at = ? WHERE project_id = ? AND formulation_id = ?',
        [v.id, actor.id, now, p.id, f.id],
        t
      );
    } else {
      await exec(
        'INSERT INTO project_pins (project_id, formulation_id, version_id, pinned_by, pinned_at) VALUES (?, ?, ?, ?, ?)',
        [p.id, f.id, v.id, actor.id, now],
        t
      );
    }
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'project.pin',
      subjectType: 'project',
      subject: key,
      before: existing ? { name, version: existing.version } : null,
      after: { name, version, definitionHash: v.definition_hash, recordId: v.record_id }
    });
  });
  return getProject(key);
}

export async function unpinFormulation(actor: Viewer, key: string, name: string): Promise<ProjectDetail> {
  await transact(async (t) => {
    const p = await findProject(key, true, t);
    const f = await findFormulation(name, t);
    const existing = await selectOne<{ version: string }>(
      `SELECT v.version FROM project_pins pp JOIN formulation_versions v ON v.id = pp.version_id
       WHERE pp.project_id = ? AND pp.formulation_id = ?`,
      [p.id, f.id],
      t
    );
    if (!existing) throw notFound(`project '${key}' does not pin '${name}'`);
    await exec('DELETE FROM project_pins WHERE project_id = ? AND formulation_id = ?', [p.id, f.id], t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'project.unpin',
      subjectType: 'project',
      subject: key,
      before: { name, version: existing.version },
      after: null
    });
  });
  return getProject(key);
}

export async function projectManifest(key: string): Promise<Manifest> {
  const p = await findProject(key);
  const pins = await pinsOf(p.id);
  return {
    project: { key: p.key, title: p.title },
    generatedAt: new Date().toISOString(),
    pins: pins.map((x) => ({
      name: x.name,
      version: x.version,
      definitionHash: x.definitionHash,
      sourceHash: x.sourceHash,
      recordId: x.recordId,
      status: x.status
    }))
  };
}
