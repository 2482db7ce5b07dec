// Attachments of a draft: derivation notes (PDF) and reference data (CSV, JSON), at most 10 MB,
// typed from their content, stored in S3 with their SHA-256 kept in MariaDB, frozen once the
// version leaves draft.
import { createHash } from 'node:crypto';
import { newId } from '../ids';
import { appendAudit } from '../registry/audit';
import { actorOf, type Viewer } from '../registry/access';
import { conflict, malformed, notFound, RegistryError } from '../registry/errors';
import { exec, isDuplicateKey, iso, select, selectOne, transact } from '../registry/sql';
import { findVersion, subjectOf, type Person, type VersionRow } from '../registry/store';
import { visibleVersion } from '../registry/versions';
import { sniffAttachment, type AttachmentKind } from './sniff';
import { deleteObject, getObjectBytes, putObject } from './s3';

export const MAX_ATTACHMENT_BYTES = 10 * 1024 * 1024;
export const FILENAME_MAX = 200;

export interface Attachment {
  id: string;
  filename: string;
  kind: AttachmentKind;
  mediaType: string;
  size: number;
  sha256: string;
  uploadedBy: Person;
  createdAt: string;
}

interface AttachmentRow {
  id: string;
  version_id: string;
  filename: string;
  kind: AttachmentKind;
  media_type: string;
  size_bytes: number;
  sha256: string;
  storage_key: string;
  uploader_name: string;
  uploader_email: string;
  created_at: Date;
}

const SELECT = `SELECT a.*, u.name AS uploader_name, u.email AS uploader_email FROM attachments a JOIN users u ON u.id = a.uploaded_by`;

function toAttachment(r: AttachmentRow): Attachment {
  return {
    id: r.id,
    filename: r.filename,
    kind: r.kind,
    mediaType: r.media_type,
    size: Number(r.size_bytes),
    sha256: r.sha256,
    uploadedBy: { name: r.uploader_name, email: r.uploader_email },
    createdAt: iso(r.created_at)!
  };
}

export function tooLarge(size: number): RegistryError {
  return new RegistryError(
    413,
    'too-large',
    `attachments are at most ${MAX_ATTACHMENT_BYTES} bytes (10 MB); this one is ${size} bytes`,
    { limit: MAX_ATTACHMENT_BYTES, size }
  );
}

// folder separators and control characters
// eslint-disable-next-line no-control-regex
const UNSAFE_NAME = /[/\\\u0000-\u001F\u007F]/;

/** A plain file name: no folders, no control characters, at most 200 characters. */
export function checkFilename(filename: string): string {
  const name = filename.trim();
  if (!name || name.length > FILENAME_MAX || UNSAFE_NAME.test(name) || name === '.' || name === '..') {
    throw malformed(
      `filename '${filename}' must be a plain file name of 1 to ${FILENAME_MAX} characters without folders`,
      { field: 'filename' }
    );
  }
  return name;
}

function duplicate(name: string, version: string, filename: string): RegistryError {
  return conflict(
    'already-exists',
    `${subjectOf(name, version)} already has an attachment named '${filename}'`,
    {
      field: 'filename'
    }
  );
}

function frozen(v: VersionRow): RegistryError {
  return conflict(
    'frozen',
    `${subjectOf(v.name, v.version)} is ${v.status}: its attachments are frozen; only a draft's attachments change`,
    { status: v.status }
  );
}

export async function addAttachment(
  actor: Viewer,
  name: string,
  version: string,
  input: { filename: string; bytes: Uint8Array }
): Promise<Attachment> {
  const filename = checkFilename(input.filename);
  if (input.bytes.byteLength > MAX_ATTACHMENT_BYTES) throw tooLarge(input.bytes.byteLength);
  const v0 = await findVersion(name, version);
  if (v0.status !== 'draft') throw frozen(v0);
  const { kind, mediaType } = sniffAttachment(input.bytes, filename);
  if (
    await selectOne('SELECT id FROM attachments WHERE version_id = ? AND filename = ?', [v0.id, filename])
  ) {
    throw duplicate(name, version, filename);
  }
  const sha256 = createHash('sha256').update(input.bytes).digest('hex');
  const id = newId();
  const key = `attachments/${v0.id}/${id}`;
  // The bytes go first: a row never points at an object that is not there. Should the row then
  // not commit, the orphaned object is removed again.
  await putObject(key, input.bytes, mediaType, sha256);
  try {
    await transact(async (t) => {
      const v = await findVersion(name, version, t, true);
      if (v.status !== 'draft') throw frozen(v);
      // the draft's row lock orders uploads to one version; the unique (version, filename) decides
      await exec(
        `INSERT INTO attachments (id, version_id, filename, kind, media_type, size_bytes, sha256, storage_key, uploaded_by, created_at)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
        [id, v.id, filename, kind, mediaType, input.bytes.byteLength, sha256, key, actor.id, new Date()],
        t
      ).catch((e: unknown) => {
        throw isDuplicateKey(e) ? duplicate(name, version, filename) : e;
      });
      await appendAudit(t, {
        actor: actorOf(actor),
        action: 'attachment.add',
        subjectType: 'version',
        subject: subjectOf(name, version),
        after: { attachment: filename, kind, size: input.bytes.byteLength, sha256 }
      });
    });
  } catch (e) {
    await deleteObject(key).catch(() => undefined);
    throw e;
  }
  const row = await selectOne<AttachmentRow>(`${SELECT} WHERE a.id = ?`, [id]);
  return toAttachment(row!);
}

export async function listAttachments(viewer: Viewer, name: string, version: string): Promise<Attachment[]> {
  const v = await visibleVersion(viewer, name, version);
  const rows = await select<AttachmentRow>(`${SELECT} WHERE a.version_id = ? ORDER BY a.filename`, [v.id]);
  return rows.map(toAttachment);
}

async function findAttachment(
  versionId: string,
  id: string,
  name: string,
  version: string
): Promise<AttachmentRow> {
  const row = await selectOne<AttachmentRow>(`${SELECT} WHERE a.version_id = ? AND a.id = ?`, [
    versionId,
    id
  ]);
  if (!row) throw notFound(`${subjectOf(name, version)} has no attachment ${id}`);
  return row;
}

/** The stored bytes, checked against the SHA-256 recorded at upload. */
export async function readAttachment(
  viewer: Viewer,
  name: string,
  version: string,
  id: string
): Promise<{ attachment: Attachment; bytes: Uint8Array }> {
  const v = await visibleVersion(viewer, name, version);
  const row = await findAttachment(v.id, id, name, version);
  const bytes = await getObjectBytes(row.storage_key);
  const actual = createHash('sha256').update(bytes).digest('hex');
  if (actual !== row.sha256)
    throw new Error(
      `attachment ${id} of ${subjectOf(name, version)} does not match its recorded SHA-256 (stored ${row.sha256}, read ${actual})`
    );
  return { attachment: toAttachment(row), bytes };
}

export async function removeAttachment(
  actor: Viewer,
  name: string,
  version: string,
  id: string
): Promise<void> {
  let key = '';
  await transact(async (t) => {
    const v = await findVersion(name, version, t, true);
    if (v.status !== 'draft') throw frozen(v);
    const row = await selectOne<AttachmentRow>(
      `${SELECT} WHERE a.version_id = ? AND a.id = ?`,
      [v.id, id],
      t
    );
    if (!row) throw notFound(`${subjectOf(name, version)} has no attachment ${id}`);
    key = row.storage_key;
    await exec('DELETE FROM attachments WHERE id = ?', [id], t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'attachment.remove',
      subjectType: 'version',
      subject: subjectOf(name, version),
      before: { attachment: row.filename, kind: row.kind, size: Number(row.size_bytes), sha256: row.sha256 }
    });
  });
  await deleteObject(key).catch((e: Error) =>
    console.error(`[isoledger] attachment object ${key} not removed: ${e.message}`)
  );
}
