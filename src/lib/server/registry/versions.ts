// Versions of a formulation: drafts are created and edited by authors, verified, and submitted for
// review. Only drafts change; released and withdrawn versions are immutable.
import { newId } from '../ids';
import type { Transaction } from 'sequelize';
import { parseFormulation, type Definition, type Diagnostic } from '@isoledger/formulation';
import { enqueueRun } from '../runs/queue';
import { appendAudit } from './audit';
import { actorOf, canSee, isPublished, type VersionStatus, type Viewer } from './access';
import { conflict, forbidden, RegistryError } from './errors';
import { verificationOf } from './formulations';
import { checkVersion, isGreater, newestFirst } from './semver-order';
import { exec, iso, select, selectOne, transact } from './sql';
import {
  findFormulation,
  findVersion,
  subjectOf,
  usersWithRole,
  versionAuthors,
  versionsOf,
  type Person,
  type VersionRow
} from './store';
import { currentRecordFor, type RecordRef } from './verification';
import { notify, type Outgoing } from '../mail/notify';
import { reviewRequested } from '../mail/templates';

export interface VersionDetail {
  name: string;
  title: string;
  version: string;
  status: VersionStatus;
  source: string;
  definition: Definition;
  sourceHash: string;
  definitionHash: string;
  verification: RecordRef | null;
  author: Person;
  createdAt: string;
  updatedAt: string;
  submittedAt: string | null;
  releasedAt: string | null;
  withdrawn: { at: string; reason: string; by: Person | null } | null;
  latestRun: { id: string; status: string } | null;
  reviews: { reviewer: Person; decision: 'approve' | 'reject'; comment: string; at: string }[];
}

/** The 422 of api.md: the document's diagnostics as `details`. */
export function invalidDocument(diagnostics: Diagnostic[]): RegistryError {
  const first = diagnostics[0];
  const where = first
    ? ` (first: line ${first.line}, column ${first.column}, ${first.path}: ${first.message})`
    : '';
  return new RegistryError(
    422,
    'invalid-document',
    `the document has ${diagnostics.length} problem${diagnostics.length === 1 ? '' : 's'}${where}`,
    diagnostics
  );
}

/** Where the top-level `name:` value starts, for a diagnostic that points at it. */
function namePosition(source: string): { line: number; column: number } {
  const lines = source.replace(/\r\n?/g, '\n').split('\n');
  for (let i = 0; i < lines.length; i++) {
    const m = /^name\s*:\s*/.exec(lines[i]);
    if (m) return { line: i + 1, column: m[0].length + 1 };
  }
  return { line: 1, column: 1 };
}

/** Parses the source and requires that it defines this formulation (its `name` is the slug). */
export function parseFor(
  name: string,
  source: string
): { definition: Definition; sourceHash: string; definitionHash: string } {
  if (typeof source !== 'string')
    throw new RegistryError(400, 'bad-request', 'source must be the YAML document as a string', {
      field: 'source'
    });
  const parsed = parseFormulation(source);
  if (!parsed.ok) throw invalidDocument(parsed.diagnostics);
  if (parsed.definition.name !== name) {
    const at = namePosition(source);
    throw invalidDocument([
      {
        ...at,
        path: 'name',
        severity: 'error',
        message: `the document is named '${parsed.definition.name}' but belongs to formulation '${name}'`
      }
    ]);
  }
  return {
    definition: parsed.definition,
    sourceHash: parsed.sourceHash,
    definitionHash: parsed.definitionHash
  };
}

async function addAuthor(versionId: string, userId: string, t: Transaction): Promise<void> {
  await exec(
    'INSERT IGNORE INTO version_authors (version_id, user_id, first_at) VALUES (?, ?, ?)',
    [versionId, userId, new Date()],
    t
  );
}

function hashes(v: { source_hash: string; definition_hash: string }) {
  return { sourceHash: v.source_hash, definitionHash: v.definition_hash };
}

/** A new draft, strictly greater than every earlier version of the formulation. */
export async function createDraft(
  actor: Viewer,
  name: string,
  input: { version: string; source: string }
): Promise<VersionDetail> {
  const version = checkVersion(input.version);
  await findFormulation(name);
  const doc = parseFor(name, input.source);
  await transact(async (t) => {
    const f = await findFormulation(name, t, true);
    const existing = newestFirst(await versionsOf(f.id, t));
    const newest = existing[0];
    if (newest && !isGreater(version, newest.version)) {
      throw conflict(
        'version-not-greater',
        `version ${version} must be greater than every earlier version of '${name}'; the newest is ${newest.version}`,
        {
          field: 'version',
          newest: newest.version
        }
      );
    }
    const id = newId();
    const now = new Date();
    await exec(
      `INSERT INTO formulation_versions (id, formulation_id, version, status, source, definition, source_hash, definition_hash, cell, author_id, created_at, updated_at)
       VALUES (?, ?, ?, 'draft', ?, ?, ?, ?, ?, ?, ?, ?)`,
      [
        id,
        f.id,
        version,
        input.source,
        JSON.stringify(doc.definition),
        doc.sourceHash,
        doc.definitionHash,
        doc.definition.cell,
        actor.id,
        now,
        now
      ],
      t
    );
    await addAuthor(id, actor.id, t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'version.create',
      subjectType: 'version',
      subject: subjectOf(name, version),
      after: { status: 'draft', sourceHash: doc.sourceHash, definitionHash: doc.definitionHash }
    });
  });
  return getVersion(actor, name, version);
}

function requireDraft(v: VersionRow, doing: string): void {
  if (v.status !== 'draft') {
    throw conflict(
      'not-draft',
      `${subjectOf(v.name, v.version)} is ${v.status}: only drafts can be ${doing}`,
      { status: v.status }
    );
  }
}

/** Replaces a draft's source (409 once it is not a draft). */
export async function replaceDraft(
  actor: Viewer,
  name: string,
  version: string,
  input: { source: string }
): Promise<VersionDetail> {
  const current = await findVersion(name, version);
  requireDraft(current, 'edited');
  const doc = parseFor(name, input.source);
  await transact(async (t) => {
    const v = await findVersion(name, version, t, true);
    requireDraft(v, 'edited');
    await exec(
      `UPDATE formulation_versions SET source = ?, definition = ?, source_hash = ?, definition_hash = ?, cell = ?, updated_at = ? WHERE id = ?`,
      [
        input.source,
        JSON.stringify(doc.definition),
        doc.sourceHash,
        doc.definitionHash,
        doc.definition.cell,
        new Date(),
        v.id
      ],
      t
    );
    await addAuthor(v.id, actor.id, t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'version.edit',
      subjectType: 'version',
      subject: subjectOf(name, version),
      before: hashes(v),
      after: { sourceHash: doc.sourceHash, definitionHash: doc.definitionHash }
    });
  });
  return getVersion(actor, name, version);
}

/** The version row if the viewer may see it (drafts only for authors, reviewers and auditors). */
export async function visibleVersion(viewer: Viewer, name: string, version: string): Promise<VersionRow> {
  const v = await findVersion(name, version);
  if (!canSee(viewer, v.status)) {
    throw forbidden(
      `${subjectOf(name, version)} is ${v.status}: drafts and versions in review are visible to the author, reviewer and auditor roles`
    );
  }
  return v;
}

export async function getVersion(viewer: Viewer, name: string, version: string): Promise<VersionDetail> {
  const v = await visibleVersion(viewer, name, version);
  const f = await findFormulation(name);
  const run = await selectOne<{ id: string; status: string }>(
    'SELECT id, status FROM verification_runs WHERE version_id = ? ORDER BY created_at DESC, id DESC LIMIT 1',
    [v.id]
  );
  const reviews = await select<{
    name: string;
    email: string;
    decision: 'approve' | 'reject';
    comment: string;
    created_at: Date;
  }>(
    `SELECT u.name, u.email, r.decision, r.comment, r.created_at FROM reviews r JOIN users u ON u.id = r.reviewer_id
     WHERE r.version_id = ? ORDER BY r.created_at, r.id`,
    [v.id]
  );
  return {
    name: v.name,
    title: f.title,
    version: v.version,
    status: v.status,
    source: v.source,
    definition: JSON.parse(v.definition) as Definition,
    sourceHash: v.source_hash,
    definitionHash: v.definition_hash,
    verification: await verificationOf(v),
    author: { name: v.author_name, email: v.author_email },
    createdAt: iso(v.created_at)!,
    updatedAt: iso(v.updated_at)!,
    submittedAt: iso(v.submitted_at),
    releasedAt: iso(v.released_at),
    withdrawn: v.withdrawn_at
      ? { at: iso(v.withdrawn_at)!, reason: v.withdrawn_reason ?? '', by: await personById(v.withdrawn_by) }
      : null,
    latestRun: run ? { id: run.id, status: run.status } : null,
    reviews: reviews.map((r) => ({
      reviewer: { name: r.name, email: r.email },
      decision: r.decision,
      comment: r.comment,
      at: iso(r.created_at)!
    }))
  };
}

async function personById(id: string | null): Promise<Person | null> {
  if (!id) return null;
  return (await selectOne<Person>('SELECT name, email FROM users WHERE id = ?', [id])) ?? null;
}

/** Released and withdrawn versions never change, so their representations may be cached for good. */
export function isImmutable(status: VersionStatus): boolean {
  return isPublished(status);
}

/** Queues a verification run of a draft's current source (202 `{ runId }` at the route). */
export async function queueRun(actor: Viewer, name: string, version: string): Promise<{ runId: string }> {
  return transact(async (t) => {
    const v = await findVersion(name, version, t, true);
    requireDraft(v, 'verified; a released version keeps the record it was approved with');
    const run = await enqueueRun(
      { source: v.source, definitionHash: v.definition_hash, versionId: v.id, requestedBy: actor.id },
      t
    );
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'version.run',
      subjectType: 'version',
      subject: subjectOf(name, version),
      after: { runId: run.id, definitionHash: v.definition_hash }
    });
    return { runId: run.id };
  });
}

/** draft → in-review; needs a passing record of the draft's current definitionHash by the current engine. */
export async function submitVersion(actor: Viewer, name: string, version: string): Promise<VersionDetail> {
  const messages: Outgoing[] = [];
  await transact(async (t) => {
    messages.length = 0;
    const v = await findVersion(name, version, t, true);
    requireDraft(v, 'submitted');
    const record = await currentRecordFor(v.definition_hash, t);
    if (!record) {
      throw conflict(
        'not-verified',
        `${subjectOf(name, version)} has no verification record of its current definition ${v.definition_hash}: queue a run first`,
        {
          definitionHash: v.definition_hash
        }
      );
    }
    if (record.verdict !== 'pass') {
      throw conflict(
        'verification-not-passing',
        `the verification record ${record.recordId} of ${subjectOf(name, version)} has verdict '${record.verdict}': only a passing record can be submitted`,
        {
          recordId: record.recordId,
          verdict: record.verdict
        }
      );
    }
    const now = new Date();
    await exec(
      `UPDATE formulation_versions SET status = 'in-review', submitted_at = ?, record_id = ?, updated_at = ? WHERE id = ?`,
      [now, record.recordId, now, v.id],
      t
    );
    await addAuthor(v.id, actor.id, t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'version.submit',
      subjectType: 'version',
      subject: subjectOf(name, version),
      before: { status: 'draft' },
      after: { status: 'in-review', recordId: record.recordId, definitionHash: v.definition_hash }
    });
    const authors = new Set(await versionAuthors(v.id, t));
    for (const reviewer of await usersWithRole('reviewer', t)) {
      if (authors.has(reviewer.id)) continue;
      messages.push({
        to: reviewer.email,
        ...reviewRequested({
          recipient: reviewer.name,
          name,
          version,
          submitter: actor.name,
          recordId: record.recordId
        })
      });
    }
  });
  await notify(messages);
  return getVersion(actor, name, version);
}
