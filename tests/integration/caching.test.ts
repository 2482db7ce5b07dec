// HTTP caching of the API: released versions, their sources and records carry a strong ETag and
// `Cache-Control: public, max-age=31536000, immutable` and answer If-None-Match with 304 (RFC 9110
// §13.1.2, RFC 8246); drafts are never cached; lists carry weak ETags. The server's own cache of
// immutable representations still asks who is calling and forgets a version once it is withdrawn.
import { createHash, randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, signedIn } from '../support/http';
import { closeTestDb } from '../support/db';
import {
  catalogueSource,
  createFormulation,
  released,
  tag,
  unusedStiffness,
  withdraw
} from '../support/registry-fixtures';

const IMMUTABLE = 'public, max-age=31536000, immutable';
let author: Client;
let reviewer: Client;

beforeAll(async () => {
  [author, reviewer] = await Promise.all([signedIn(DEMO.author), signedIn(DEMO.reviewer)]);
});

afterAll(async () => {
  await closeTestDb();
});

async function releasedVersion(): Promise<{
  name: string;
  v: { definitionHash: string; sourceHash: string; verification: { recordId: string } };
}> {
  const name = `cache-${tag()}`;
  await createFormulation(author, name, 'Caching fixture');
  await released({ author, reviewer }, name, '1.0.0', catalogueSource('tri3-membrane', name));
  // the version's JSON is fetched here for the first time, so the server caches it now
  const v = await author.getJson<{
    definitionHash: string;
    sourceHash: string;
    verification: { recordId: string };
  }>(`/api/v1/formulations/${name}/versions/1.0.0`);
  return { name, v };
}

describe('immutable representations', () => {
  it('gives a released version a strong ETag of its definitionHash, immutable caching and 304 on If-None-Match', async () => {
    const { name, v } = await releasedVersion();
    const path = `/api/v1/formulations/${name}/versions/1.0.0`;
    const r = await author.get(path);
    expect(r.status).toBe(200);
    expect(r.headers.get('etag')).toBe(`"${v.definitionHash}"`);
    expect(r.headers.get('cache-control')).toBe(IMMUTABLE);
    expect((await r.json()).definitionHash).toBe(v.definitionHash);
    const etag = `"${v.definitionHash}"`;
    // If-None-Match compares weakly; a list of tags and * match too (RFC 9110 §13.1.2)
    for (const inm of [etag, `W/${etag}`, `"something-else", ${etag}`, '*']) {
      const again = await author.get(path, { 'if-none-match': inm });
      expect(again.status, inm).toBe(304);
      expect(again.headers.get('etag')).toBe(etag);
      expect(again.headers.get('cache-control')).toBe(IMMUTABLE);
      expect(await again.text()).toBe('');
    }
    const other = await author.get(path, { 'if-none-match': '"sha256:0000"' });
    expect(other.status).toBe(200);
    await other.body?.cancel();
  });

  it('caches the source by its sourceHash and the record by the SHA-256 of its bytes', async () => {
    const { name, v } = await releasedVersion();
    const source = await author.get(`/api/v1/formulations/${name}/versions/1.0.0/source`);
    expect(source.headers.get('content-type')).toMatch(/^application\/yaml/);
    expect(source.headers.get('etag')).toBe(`"${v.sourceHash}"`);
    expect(source.headers.get('cache-control')).toBe(IMMUTABLE);
    await source.body?.cancel();
    const s304 = await author.get(`/api/v1/formulations/${name}/versions/1.0.0/source`, {
      'if-none-match': `"${v.sourceHash}"`
    });
    expect(s304.status).toBe(304);

    const record = await author.get(`/api/v1/records/${v.verification.recordId}`);
    const bytes = await record.text();
    expect(record.headers.get('etag')).toBe(`"${createHash('sha256').update(bytes, 'utf8').digest('hex')}"`);
    expect(record.headers.get('cache-control')).toBe(IMMUTABLE);
    const r304 = await author.get(`/api/v1/records/${v.verification.recordId}`, {
      'if-none-match': record.headers.get('etag')!
    });
    expect(r304.status).toBe(304);
  });

  it('never caches a draft: no ETag, private, no-store, and If-None-Match is ignored', async () => {
    const name = `cache-draft-${tag()}`;
    await createFormulation(author, name, 'Caching draft');
    await author.sendJson(
      'POST',
      `/api/v1/formulations/${name}/versions`,
      { version: '1.0.0', source: catalogueSource('tri3-membrane', name, { E: unusedStiffness() }) },
      201
    );
    const r = await author.get(`/api/v1/formulations/${name}/versions/1.0.0`, { 'if-none-match': '*' });
    expect(r.status).toBe(200);
    expect(r.headers.get('etag')).toBeNull();
    expect(r.headers.get('cache-control')).toBe('private, no-store');
    await r.body?.cancel();
  });

  it('answers from its own cache only to callers the route would answer', async () => {
    const { name } = await releasedVersion();
    const path = `/api/v1/formulations/${name}/versions/1.0.0`;
    const anonymous = await new Client().get(path);
    expect(anonymous.status).toBe(401);
    expect((await anonymous.json()).error.code).toBe('unauthenticated');
    const forged = await new Client({ token: `iso_${randomBytes(32).toString('base64url')}` }).get(path, {
      'if-none-match': '*'
    });
    expect(forged.status).toBe(401);
    await forged.body?.cancel();
  });

  it('shows a withdrawal at once: a new strong ETag, and the old one no longer matches', async () => {
    const { name, v } = await releasedVersion();
    const path = `/api/v1/formulations/${name}/versions/1.0.0`;
    expect((await author.get(path, { 'if-none-match': `"${v.definitionHash}"` })).status).toBe(304);
    await withdraw(reviewer, name, '1.0.0', 'Caching fixture: withdrawn to see the ETag change.');
    const after = await author.get(path, { 'if-none-match': `"${v.definitionHash}"` });
    expect(after.status).toBe(200);
    expect(after.headers.get('etag')).toBe(`"${v.definitionHash}+withdrawn"`);
    expect(after.headers.get('cache-control')).toBe(IMMUTABLE);
    expect((await after.json()).status).toBe('withdrawn');
  });
});

describe('lists', () => {
  it('carry a weak ETag that answers 304 until the list changes', async () => {
    const prefix = `cache-list-${tag()}`;
    await createFormulation(author, `${prefix}-a`, 'Listed A');
    const path = `/api/v1/formulations?q=${prefix}`;
    const first = await author.get(path);
    const etag = first.headers.get('etag')!;
    expect(etag).toMatch(/^W\/"[A-Za-z0-9_-]+"$/);
    expect(first.headers.get('cache-control')).toBe('private, no-cache');
    expect((await first.json()).total).toBe(1);

    const same = await author.get(path, { 'if-none-match': etag });
    expect(same.status).toBe(304);
    expect(same.headers.get('etag')).toBe(etag);
    expect(await same.text()).toBe('');

    await createFormulation(author, `${prefix}-b`, 'Listed B');
    const changed = await author.get(path, { 'if-none-match': etag });
    expect(changed.status).toBe(200);
    expect(changed.headers.get('etag')).not.toBe(etag);
    expect((await changed.json()).total).toBe(2);
  });

  it('are the projects, the audit trail, the people and the tokens too', async () => {
    const admin = await signedIn(DEMO.admin);
    const auditor = await signedIn(DEMO.auditor);
    for (const [who, path] of [
      [author, '/api/v1/projects'],
      [auditor, '/api/v1/audit?per_page=5'],
      [admin, '/api/v1/people'],
      [author, '/api/v1/tokens']
    ] as const) {
      const r = await who.get(path);
      expect(r.status, path).toBe(200);
      expect(r.headers.get('etag'), path).toMatch(/^W\//);
      await r.body?.cancel();
    }
  });

  it('leave a single item, a formulation with its versions, uncached', async () => {
    const name = `cache-item-${tag()}`;
    await createFormulation(author, name, 'Not a list');
    const r = await author.get(`/api/v1/formulations/${name}`);
    expect(r.headers.get('etag')).toBeNull();
    expect(r.headers.get('cache-control')).toBe('no-store');
    await r.body?.cancel();
  });
});
