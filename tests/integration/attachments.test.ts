// Attachments of a draft through HTTP against the built server, stored in the S3 fake with their
// SHA-256 in MariaDB: typed from the content (never the name), at most 10 MB, sign-in to read,
// frozen once the version is released.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { GetObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { closeDatabase, getSequelize } from '../../src/lib/server/db';

/** API answers are checked field by field below. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const BASE = process.env.ISOLEDGER_TEST_URL!;
const tag = Math.random().toString(36).slice(2, 8);
const NAME = `bar2-files-${tag}`;
const E = 4_000 + Math.floor(Math.random() * 1e6);
const tokens: Record<string, string> = {};
const path = (rest = '') => `${BASE}/api/v1/formulations/${NAME}/versions/1.0.0/attachments${rest}`;

const bar = `format: 1
name: ${NAME}
title: Two-node bar with attachments
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${E}, nu: 0.3 }
`;

// The smallest file that starts with a PDF header (ISO 32000-1, 7.5.2); the server reads the magic bytes only.
const PDF = Buffer.from(
  '%PDF-1.7\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n',
  'latin1'
);
const CSV = Buffer.from('h,stiffness\n0.5,1.0e6\n0.25,1.1e6\n0.125,"1.2e6"\n');
const JSON_DATA = Buffer.from(JSON.stringify({ series: [{ h: 0.5, l2: 0.01 }] }));
const PNG = Buffer.from([
  0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52
]);

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function raw(
  who: string | null,
  filename: string,
  bytes: Uint8Array<ArrayBuffer>,
  type = 'application/octet-stream'
) {
  const headers: Record<string, string> = { 'content-type': type };
  if (who) headers.authorization = `Bearer ${tokens[who]}`;
  const r = await fetch(path(`?filename=${encodeURIComponent(filename)}`), {
    method: 'POST',
    headers,
    body: bytes
  });
  return { status: r.status, json: (await r.json().catch(() => null)) as Json };
}

async function get(who: string | null, rest = '') {
  const r = await fetch(path(rest), { headers: who ? { authorization: `Bearer ${tokens[who]}` } : {} });
  return r;
}

async function json(who: string, method: string, url: string, body?: unknown) {
  const r = await fetch(`${BASE}/api/v1${url}`, {
    method,
    headers: {
      authorization: `Bearer ${tokens[who]}`,
      ...(body ? { 'content-type': 'application/json' } : {})
    },
    body: body ? JSON.stringify(body) : undefined
  });
  return { status: r.status, json: (await r.json().catch(() => null)) as Json };
}

async function attachmentRows(): Promise<
  { id: string; filename: string; sha256: string; storage_key: string; size_bytes: number }[]
> {
  return getSequelize().query(
    `SELECT a.id, a.filename, a.sha256, a.storage_key, a.size_bytes FROM attachments a
     JOIN formulation_versions v ON v.id = a.version_id JOIN formulations f ON f.id = v.formulation_id WHERE f.name = ? ORDER BY a.filename`,
    { type: QueryTypes.SELECT, replacements: [NAME] }
  );
}

const s3 = new S3Client({
  region: process.env.S3_REGION ?? 'us-east-1',
  endpoint: process.env.S3_ENDPOINT,
  forcePathStyle: true,
  credentials: {
    accessKeyId: process.env.S3_ACCESS_KEY_ID!,
    secretAccessKey: process.env.S3_SECRET_ACCESS_KEY!
  }
});

async function storedBytes(key: string): Promise<Uint8Array | null> {
  try {
    const out = await s3.send(new GetObjectCommand({ Bucket: process.env.S3_BUCKET, Key: key }));
    return await out.Body!.transformToByteArray();
  } catch (e) {
    if ((e as { name?: string }).name === 'NoSuchKey') return null;
    throw e;
  }
}

beforeAll(async () => {
  for (const role of ['author', 'reviewer', 'lead']) {
    const u = (await findUserByEmail(`${role}@example.com`))!;
    tokens[role] = (
      await createToken(u, { name: `attachments ${tag}`, roleCeiling: null, expiresAt: null })
    ).token;
  }
  expect(
    (await json('author', 'POST', '/formulations', { name: NAME, title: 'Bar with attachments' })).status
  ).toBe(201);
  expect(
    (await json('author', 'POST', `/formulations/${NAME}/versions`, { version: '1.0.0', source: bar })).status
  ).toBe(201);
});

afterAll(async () => {
  s3.destroy();
  await closeDatabase();
});

describe('attachments of a draft', () => {
  it('stores a PDF sent as raw bytes, typed from its content, with its SHA-256 in MariaDB and the bytes in S3', async () => {
    const r = await raw('author', 'derivation notes.pdf', PDF);
    expect(r.status, JSON.stringify(r.json)).toBe(201);
    expect(r.json).toMatchObject({
      filename: 'derivation notes.pdf',
      kind: 'pdf',
      mediaType: 'application/pdf',
      size: PDF.length,
      sha256: sha(PDF)
    });
    const [row] = await attachmentRows();
    expect(row.sha256).toBe(sha(PDF));
    expect(Buffer.from((await storedBytes(row.storage_key))!)).toEqual(PDF);
  });

  it('stores a CSV sent as multipart form data', async () => {
    const form = new FormData();
    form.append('file', new Blob([CSV]), 'reference.csv');
    // a script that posts a form names this site as its origin (SvelteKit refuses cross-site form posts)
    const r = await fetch(path(), {
      method: 'POST',
      headers: { authorization: `Bearer ${tokens.author}`, origin: BASE },
      body: form
    });
    const body = (await r.json()) as Json;
    expect(r.status, JSON.stringify(body)).toBe(201);
    expect(body).toMatchObject({ filename: 'reference.csv', kind: 'csv', sha256: sha(CSV) });
  });

  it('types a file from its content, not from a name that says nothing (JSON named .dat)', async () => {
    const r = await raw('author', 'series.dat', JSON_DATA, 'application/json');
    expect(r.status, JSON.stringify(r.json)).toBe(201);
    expect(r.json.kind).toBe('json');
  });

  it('refuses content that its name contradicts, or that is none of PDF, CSV and JSON (415)', async () => {
    const mismatch = await raw('author', 'table.csv', PDF);
    expect(mismatch.status).toBe(415);
    expect(mismatch.json.error.message).toMatch(/named \.csv but its content is PDF/);
    const png = await raw('author', 'figure.png', PNG);
    expect(png.status).toBe(415);
    expect(png.json.error.code).toBe('unsupported-media-type');
    const prose = await raw('author', 'notes.txt', Buffer.from('The element passes the patch test.\n'));
    expect(prose.status).toBe(415);
    expect(prose.json.error.message).toMatch(/neither JSON nor CSV/);
    const ragged = await raw('author', 'ragged.csv', Buffer.from('a,b,c\n1,2\n'));
    expect(ragged.status).toBe(415);
  });

  it('refuses JSON that does not parse and empty files (422), and a second file of the same name (409)', async () => {
    const broken = await raw('author', 'broken.json', Buffer.from('{ "h": 0.5, '));
    expect(broken.status).toBe(422);
    expect(broken.json.error.message).toMatch(/does not parse/);
    expect((await raw('author', 'empty.csv', Buffer.alloc(0))).status).toBe(422);
    const again = await raw('author', 'derivation notes.pdf', PDF);
    expect(again.status).toBe(409);
  });

  it('refuses a file over 10 MB with 413 in the API error shape', async () => {
    const big = Buffer.alloc(10 * 1024 * 1024 + 1, 0x41);
    const r = await raw('author', 'big.csv', big);
    expect(r.status).toBe(413);
    expect(r.json.error.code).toBe('too-large');
    expect(r.json.error.message).toContain('10 MB');
  });

  it('wrote nothing for the refused files', async () => {
    expect((await attachmentRows()).map((r) => r.filename)).toEqual([
      'derivation notes.pdf',
      'reference.csv',
      'series.dat'
    ]);
  });

  it('lists and serves files to signed-in readers only, with the stored bytes', async () => {
    expect((await get(null)).status).toBe(401);
    const list = await get('author');
    const items = (await list.json()) as { id: string; filename: string }[];
    expect(items.map((i) => i.filename)).toEqual(['derivation notes.pdf', 'reference.csv', 'series.dat']);
    const pdf = items[0];
    expect((await get(null, `/${pdf.id}`)).status).toBe(401);
    // a draft's files are visible to the roles that see drafts
    expect((await get('lead', `/${pdf.id}`)).status).toBe(403);
    const r = await get('reviewer', `/${pdf.id}`);
    expect(r.status).toBe(200);
    expect(r.headers.get('content-type')).toBe('application/pdf');
    expect(r.headers.get('content-disposition')).toContain('attachment; filename="derivation notes.pdf"');
    expect(r.headers.get('x-content-sha256')).toBe(sha(PDF));
    expect(Buffer.from(await r.arrayBuffer())).toEqual(PDF);
    expect((await get('author', '/01ARZ3NDEKTSV4RRFFQ69G5FAV')).status).toBe(404);
  });

  it('removes a draft’s file from MariaDB and from S3', async () => {
    const rows = await attachmentRows();
    const dat = rows.find((r) => r.filename === 'series.dat')!;
    const r = await fetch(path(`/${dat.id}`), {
      method: 'DELETE',
      headers: { authorization: `Bearer ${tokens.author}` }
    });
    expect(r.status).toBe(204);
    expect((await attachmentRows()).map((x) => x.filename)).not.toContain('series.dat');
    expect(await storedBytes(dat.storage_key)).toBeNull();
  });

  it('freezes the files once the version is released (409), and still serves them', async () => {
    const run = await json('author', 'POST', `/formulations/${NAME}/versions/1.0.0/runs`);
    for (let i = 0; i < 600; i++) {
      const s = await json('author', 'GET', `/runs/${run.json.runId}`);
      if (s.json.status === 'done' || s.json.status === 'failed') break;
      await new Promise((res) => setTimeout(res, 250));
    }
    expect((await json('author', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`)).status).toBe(200);
    const frozenInReview = await raw('author', 'late.csv', CSV);
    expect(frozenInReview.status).toBe(409);
    expect(
      (
        await json('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
          decision: 'approve',
          comment: 'ok'
        })
      ).status
    ).toBe(200);
    const late = await raw('author', 'late.csv', CSV);
    expect(late.status).toBe(409);
    expect(late.json.error.code).toBe('frozen');
    const [first] = await attachmentRows();
    const del = await fetch(path(`/${first.id}`), {
      method: 'DELETE',
      headers: { authorization: `Bearer ${tokens.author}` }
    });
    expect(del.status).toBe(409);
    const r = await get('lead', `/${first.id}`);
    expect(r.status).toBe(200);
    expect(sha(new Uint8Array(await r.arrayBuffer()))).toBe(first.sha256);
    expect((await attachmentRows()).length).toBe(2);
  });
});
