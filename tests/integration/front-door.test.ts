// The front door of the production entry (server/index.js): a token-bearing GET of a cached released
// version, source or record is answered before SvelteKit, and must answer exactly as the hooks and
// routes would: the same bytes, status and headers; a revoked token refused on its next request;
// the caller's request id kept; everything else left to SvelteKit.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken, revokeToken } from '../../src/lib/server/auth/tokens';
import { Client, DEMO, signedIn } from '../support/http';
import { closeTestDb } from '../support/db';
import { catalogueSource, createFormulation, released, tag } from '../support/registry-fixtures';

let author: Client;
let reviewer: Client;
let name: string;
let recordId: string;
const path = () => `/api/v1/formulations/${name}/versions/1.0.0`;

async function tokenClient(email: string, label: string) {
  const u = (await findUserByEmail(email))!;
  const t = await createToken(u, { name: `front door ${label}`, roleCeiling: null, expiresAt: null });
  return { client: new Client({ token: t.token }), id: t.info.id, user: u };
}

/** Headers that differ between any two answers (time, ids, framing) and say nothing of the content. */
const FRAMING = new Set([
  'date',
  'x-request-id',
  'content-length',
  'transfer-encoding',
  'connection',
  'keep-alive'
]);
const headersOf = (r: Response) =>
  Object.fromEntries([...r.headers].filter(([k]) => !FRAMING.has(k)).sort(([a], [b]) => a.localeCompare(b)));

beforeAll(async () => {
  [author, reviewer] = await Promise.all([signedIn(DEMO.author), signedIn(DEMO.reviewer)]);
  name = `front-${tag()}`;
  await createFormulation(author, name, 'Front door fixture');
  await released({ author, reviewer }, name, '1.0.0', catalogueSource('tri3-membrane', name));
  // the first read goes through SvelteKit and fills the process's cache
  const v = await author.getJson<{ verification: { recordId: string } }>(path());
  recordId = v.verification.recordId;
  await (await author.get(`${path()}/source`)).text();
  await (await author.get(`/api/v1/records/${recordId}`)).text();
});

afterAll(async () => {
  await closeTestDb();
});

describe('the front door', () => {
  it('answers a cached version, source and record with the bytes, status and headers SvelteKit gives', async () => {
    const { client } = await tokenClient(DEMO.lead, 'parity');
    for (const p of [path(), `${path()}/source`, `/api/v1/records/${recordId}`]) {
      // a query string is left to SvelteKit, whose hooks answer from the same cache
      const viaKit = await client.get(`${p}?via=kit`);
      const viaDoor = await client.get(p);
      expect(viaDoor.status, p).toBe(200);
      // SvelteKit streams a body without a length; the front door sends the cached bytes with theirs
      expect(viaKit.headers.get('content-length'), p).toBeNull();
      expect(Number(viaDoor.headers.get('content-length')), p).toBeGreaterThan(0);
      expect(viaDoor.status, p).toBe(viaKit.status);
      expect(headersOf(viaDoor), p).toEqual(headersOf(viaKit));
      expect(
        Buffer.from(await viaDoor.arrayBuffer()).equals(Buffer.from(await viaKit.arrayBuffer())),
        p
      ).toBe(true);
      const etag = viaDoor.headers.get('etag')!;
      const [kit304, door304] = [
        await client.get(`${p}?via=kit`, { 'if-none-match': etag }),
        await client.get(p, { 'if-none-match': etag })
      ];
      expect([kit304.status, door304.status], p).toEqual([304, 304]);
      expect(headersOf(door304), p).toEqual(headersOf(kit304));
      expect(await door304.text()).toBe('');
    }
  });

  it('refuses a token on the request after it was revoked, in the documented error shape', async () => {
    const { client, id, user } = await tokenClient(DEMO.lead, 'revoked');
    expect((await client.get(path())).status).toBe(200);
    await revokeToken(user, id);
    const r = await client.get(path());
    expect(r.status).toBe(401);
    expect(r.headers.get('content-type')).toMatch(/^application\/json/);
    expect(r.headers.get('x-content-type-options')).toBe('nosniff');
    const body = await r.json();
    expect(body.error.code).toBe('token-revoked');
    expect(body.error.message).toMatch(/was revoked/);
  });

  it('refuses an unknown token and a malformed Authorization header as the hooks do', async () => {
    const unknown = await new Client({ token: 'iso_' + 'x'.repeat(43) }).get(path());
    expect(unknown.status).toBe(401);
    expect((await unknown.json()).error.code).toBe('token-invalid');
    const malformed = await new Client().get(path(), { authorization: 'Token abc' });
    expect(malformed.status).toBe(401);
    expect((await malformed.json()).error.message).toBe(
      "the Authorization header must be 'Bearer <API token>'"
    );
  });

  it('keeps the caller’s request id and names a new one otherwise', async () => {
    const { client } = await tokenClient(DEMO.auditor, 'request id');
    const kept = await client.get(path(), { 'x-request-id': 'pipeline-run-42.step:3' });
    expect(kept.headers.get('x-request-id')).toBe('pipeline-run-42.step:3');
    await kept.body?.cancel();
    const fresh = await client.get(path(), { 'x-request-id': 'has spaces, so not kept' });
    expect(fresh.headers.get('x-request-id')).toMatch(/^[0-9A-HJKMNP-TV-Z]{26}$/);
    await fresh.body?.cancel();
  });

  it('leaves what it does not hold to SvelteKit: an unknown version is a 404 in the documented shape', async () => {
    const { client } = await tokenClient(DEMO.lead, 'miss');
    const r = await client.get(`/api/v1/formulations/${name}/versions/9.9.9`);
    expect(r.status).toBe(404);
    expect((await r.json()).error.code).toBe('not-found');
  });
});
