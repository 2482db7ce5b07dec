// @isoledger/client against the built server and its MariaDB: every route through the typed client,
// every answer parsed with the wire schema the OpenAPI document describes it with, refusals as typed
// errors with the API's code, page iteration, ETag revalidation of immutable representations, and
// the token rules (ceiling, expiry and revocation on the next request, last use on the account page).
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { z } from 'zod';
import {
  collect,
  ConflictError,
  ForbiddenError,
  InvalidDocumentError,
  IsoledgerClient,
  MemoryCache,
  NotFoundError,
  UnauthenticatedError,
  accountSchema,
  attachmentSchema,
  auditPageSchema,
  chainVerdictSchema,
  comparisonSchema,
  formulationDetailSchema,
  formulationPageSchema,
  formulationSummarySchema,
  healthSchema,
  manifestSchema,
  meSchema,
  newTokenResultSchema,
  outboxMessageSchema,
  projectDetailSchema,
  projectSummarySchema,
  recordSchema,
  roleChangeSchema,
  runQueuedSchema,
  runSchema,
  tokenInfoSchema,
  validationSchema,
  versionDetailSchema,
  type Role
} from '@isoledger/client';
import { DEMO, DEMO_PASSWORD, freshAccount, randomAddress, testUrl } from '../support/http';
import { closeTestDb, execute } from '../support/db';
import { catalogueSource, tag, unusedStiffness } from '../support/registry-fixtures';

/** A client acting as one of the demo accounts through an API token of its own, from an address of its own. */
async function tokenClient(
  email: string,
  role: Role | null = null,
  cache?: MemoryCache | false
): Promise<IsoledgerClient> {
  const anonymous = new IsoledgerClient({
    baseUrl: testUrl(),
    headers: { 'x-forwarded-for': randomAddress() }
  });
  const created = await anonymous.auth.createToken({
    email,
    password: DEMO_PASSWORD,
    name: `client test ${tag()}`,
    role
  });
  newTokenResultSchema.parse(created);
  return new IsoledgerClient({
    baseUrl: testUrl(),
    token: created.token,
    cache,
    headers: { 'x-forwarded-for': randomAddress() }
  });
}

/** Parses with the wire schema (strict objects: an undocumented field fails) and returns the value. */
function conforms<S extends z.ZodType>(schema: S, value: unknown): z.output<S> {
  const r = schema.safeParse(value);
  if (!r.success)
    throw new Error(`the answer does not match its schema: ${JSON.stringify(r.error.issues.slice(0, 5))}`);
  return r.data;
}

/** The typed error a call throws. */
async function refusal(call: Promise<unknown>): Promise<unknown> {
  try {
    await call;
  } catch (e) {
    return e;
  }
  throw new Error('expected the call to be refused');
}

const NAME = `client-${tag()}`;
const KEY = `CLIENT-${tag().toUpperCase()}`;
let author: IsoledgerClient;
let reviewer: IsoledgerClient;
let lead: IsoledgerClient;
let auditor: IsoledgerClient;
let admin: IsoledgerClient;

beforeAll(async () => {
  [author, reviewer, lead, auditor, admin] = await Promise.all([
    tokenClient(DEMO.author),
    tokenClient(DEMO.reviewer),
    tokenClient(DEMO.lead),
    tokenClient(DEMO.auditor),
    tokenClient(DEMO.admin)
  ]);
});

afterAll(async () => {
  await closeTestDb();
});

describe('the registry through the typed client', () => {
  it('drafts, verifies, submits, approves, pins and lists, each answer matching its wire schema', async () => {
    conforms(healthSchema, await author.health());
    const me = conforms(meSchema, await author.me());
    expect(me).toMatchObject({ email: DEMO.author, via: 'token' });

    conforms(
      formulationSummarySchema,
      await author.formulations.create({ name: NAME, title: 'Client test triangle' })
    );
    const source = catalogueSource('tri3-membrane', NAME, { title: 'Client test triangle' });
    const draft = conforms(
      versionDetailSchema,
      await author.versions.create(NAME, { version: '1.0.0', source })
    );
    expect(draft.status).toBe('draft');

    const attached = conforms(
      attachmentSchema,
      await author.attachments.upload(NAME, '1.0.0', {
        filename: 'series.json',
        bytes: new TextEncoder().encode('{"h":[0.5,0.25],"error":[0.02,0.005]}')
      })
    );
    expect(attached.kind).toBe('json');
    const listed = await author.attachments.list(NAME, '1.0.0');
    expect(listed.map((a) => conforms(attachmentSchema, a).id)).toEqual([attached.id]);
    const file = await author.attachments.download(NAME, '1.0.0', attached.id);
    expect(new TextDecoder().decode(file.bytes)).toBe('{"h":[0.5,0.25],"error":[0.02,0.005]}');
    expect(file.sha256).toBe(attached.sha256);
    await author.attachments.remove(NAME, '1.0.0', attached.id);
    expect(await author.attachments.list(NAME, '1.0.0')).toEqual([]);

    const queued = conforms(runQueuedSchema, await author.versions.queueRun(NAME, '1.0.0'));
    const run = conforms(
      runSchema,
      await author.runs.wait(queued.runId, { intervalMs: 250, timeoutMs: 180_000 })
    );
    expect(run.status).toBe('done');
    expect(run.record?.verdict).toBe('pass');

    expect(conforms(versionDetailSchema, await author.versions.submit(NAME, '1.0.0')).status).toBe(
      'in-review'
    );
    const released = conforms(
      versionDetailSchema,
      await reviewer.versions.review(NAME, '1.0.0', {
        decision: 'approve',
        comment: 'Record read; released.'
      })
    );
    expect(released.status).toBe('released');

    const got = conforms(versionDetailSchema, await author.versions.get(NAME, '1.0.0'));
    expect(got.definitionHash).toBe(draft.definitionHash);
    expect(await author.versions.source(NAME, '1.0.0')).toBe(source);
    const record = conforms(recordSchema, await author.records.get(got.verification!.recordId));
    expect(record.definitionHash).toBe(got.definitionHash);

    conforms(projectSummarySchema, await lead.projects.create({ key: KEY, title: 'Client test project' }));
    const pinned = conforms(projectDetailSchema, await lead.projects.pin(KEY, NAME, '1.0.0'));
    expect(pinned.pins.map((p) => `${p.name}@${p.version}`)).toEqual([`${NAME}@1.0.0`]);
    const manifest = conforms(manifestSchema, await author.projects.manifest(KEY));
    expect(manifest.pins).toEqual([
      {
        name: NAME,
        version: '1.0.0',
        definitionHash: got.definitionHash,
        sourceHash: got.sourceHash,
        recordId: got.verification!.recordId,
        status: 'released'
      }
    ]);
    const projects = await author.projects.list();
    expect(projects.map((p) => conforms(projectSummarySchema, p).key)).toContain(KEY);
    conforms(projectDetailSchema, await author.projects.get(KEY));

    const detail = conforms(formulationDetailSchema, await author.formulations.get(NAME));
    expect(detail.pins).toEqual([{ project: KEY, title: 'Client test project', version: '1.0.0' }]);
    const page = conforms(formulationPageSchema, await author.formulations.list({ q: NAME }));
    expect(page.items.map((f) => f.name)).toEqual([NAME]);

    const unpinned = conforms(projectDetailSchema, await lead.projects.unpin(KEY, NAME));
    expect(unpinned.pins).toEqual([]);
  });

  it('compares two versions, validates a document and reads the audit trail, the people and the outbox', async () => {
    const name = `client-cmp-${tag()}`;
    await author.formulations.create({ name, title: 'Client compare' });
    await author.versions.create(name, { version: '1.0.0', source: catalogueSource('tri3-membrane', name) });
    await author.versions.create(name, {
      version: '1.1.0',
      source: catalogueSource('tri3-membrane', name, { E: unusedStiffness() })
    });
    const cmp = conforms(
      comparisonSchema,
      await author.formulations.compare(name, { from: '1.0.0', to: '1.1.0' })
    );
    expect(cmp.definition).toContain('material.E');

    const checked = conforms(validationSchema, await author.validate(catalogueSource('tri3-membrane', name)));
    expect(checked.ok).toBe(true);

    const trail = conforms(auditPageSchema, await auditor.audit.list({ subject: name, perPage: 5 }));
    expect(trail.items.map((e) => e.action)).toEqual([
      'version.create',
      'version.create',
      'formulation.create'
    ]);
    expect(conforms(chainVerdictSchema, await auditor.audit.verify()).events).toBeGreaterThan(0);

    const people = await admin.people.list();
    for (const p of people) conforms(accountSchema, p);
    const lead = people.find((p) => p.email === DEMO.lead)!;
    expect(conforms(roleChangeSchema, await admin.people.grantRole(lead.id, 'lead')).roles).toContain('lead');
    for (const m of await admin.outbox()) conforms(outboxMessageSchema, m);
  });

  it('walks every page of the catalogue with the page iterator, each item once', async () => {
    const prefix = `client-page-${tag()}`;
    for (let i = 0; i < 5; i++)
      await author.formulations.create({ name: `${prefix}-${i}`, title: `Paged ${i}` });
    const first = await author.formulations.list({ q: prefix, perPage: 2 });
    expect(first.total).toBe(5);
    const all = await collect(author.formulations.all({ q: prefix, perPage: 2, sort: 'name' }));
    expect(all.map((f) => f.name)).toEqual([0, 1, 2, 3, 4].map((i) => `${prefix}-${i}`));
    const events = await collect(auditor.audit.all({ subject: `${prefix}-3`, perPage: 1 }));
    expect(events.map((e) => e.action)).toEqual(['formulation.create']);
  });
});

describe('refusals as typed errors carrying the API code', () => {
  it('throws NotFoundError, ConflictError, InvalidDocumentError and ForbiddenError with code and message', async () => {
    const missing = await refusal(author.formulations.get(`no-such-${tag()}`));
    expect(missing).toBeInstanceOf(NotFoundError);
    expect(missing).toMatchObject({ status: 404, code: 'not-found' });

    const name = `client-err-${tag()}`;
    await author.formulations.create({ name, title: 'Client refusals' });
    const bad = await refusal(
      author.versions.create(name, { version: '1.0.0', source: 'format: 1\nname: x\n' })
    );
    expect(bad).toBeInstanceOf(InvalidDocumentError);
    expect((bad as InvalidDocumentError).code).toBe('invalid-document');
    expect((bad as InvalidDocumentError).diagnostics.length).toBeGreaterThan(0);
    expect((bad as InvalidDocumentError).diagnostics[0]).toEqual(
      expect.objectContaining({
        line: expect.any(Number),
        column: expect.any(Number),
        message: expect.any(String)
      })
    );

    await author.versions.create(name, { version: '1.0.0', source: catalogueSource('tri3-membrane', name) });
    const older = await refusal(
      author.versions.create(name, { version: '0.9.0', source: catalogueSource('tri3-membrane', name) })
    );
    expect(older).toBeInstanceOf(ConflictError);
    expect((older as ConflictError).code).toBe('version-not-greater');

    const notAuthor = await refusal(reviewer.formulations.create({ name: `nope-${tag()}`, title: 'x' }));
    expect(notAuthor).toBeInstanceOf(ForbiddenError);
    expect((notAuthor as ForbiddenError).message).toBe(
      'this needs the author role; this token carries reviewer'
    );
  });
});

describe('API tokens through the client', () => {
  it('never carries more than the ceiling, and never a role the owner lacks', async () => {
    const owner = await freshAccount('client-ceiling', ['author', 'auditor']);
    const anonymous = new IsoledgerClient({
      baseUrl: testUrl(),
      headers: { 'x-forwarded-for': randomAddress() }
    });
    const created = await anonymous.auth.createToken({
      email: owner.email,
      password: owner.password,
      name: 'auditor only',
      role: 'auditor'
    });
    const capped = new IsoledgerClient({
      baseUrl: testUrl(),
      token: created.token,
      headers: { 'x-forwarded-for': randomAddress() }
    });
    expect((await capped.me()).roles).toEqual(['auditor']);
    const refused = await refusal(capped.formulations.create({ name: `capped-${tag()}`, title: 'x' }));
    expect(refused).toBeInstanceOf(ForbiddenError);
    expect((refused as ForbiddenError).message).toBe(
      'this needs the author role; this token carries auditor'
    );

    const above = await refusal(
      anonymous.auth.createToken({
        email: owner.email,
        password: owner.password,
        name: 'above',
        role: 'admin'
      })
    );
    expect(above).toBeInstanceOf(ForbiddenError);
    expect((above as ForbiddenError).code).toBe('forbidden');
  });

  it('is refused on the very next request once expired or revoked, and its last use shows on the account page', async () => {
    const owner = await freshAccount('client-tokens', ['author']);
    const make = async (name: string) =>
      owner.client.sendJson<{ token: string; id: string }>('POST', '/api/v1/tokens', { name }, 201);
    const a = await make(`pipeline ${tag()}`);
    const b = await make(`spare ${tag()}`);
    const viaA = new IsoledgerClient({
      baseUrl: testUrl(),
      token: a.token,
      headers: { 'x-forwarded-for': owner.client.address }
    });
    expect((await viaA.me()).tokenId).toBe(a.id);

    const listed = await owner.client.getJson<unknown[]>('/api/v1/tokens');
    const infoA = listed.map((t) => conforms(tokenInfoSchema, t)).find((t) => t.id === a.id)!;
    expect(infoA.lastUsedAt).not.toBeNull();
    const page = await (await owner.client.get('/account')).text();
    const row = page.split('<tr').find((r) => r.includes(`<td>${infoA.name}</td>`))!;
    expect(row).toContain(infoA.lastUsedAt!.replace('T', ' ').slice(0, 16) + ' UTC');
    expect(page.split('<tr').find((r) => r.includes(`<td>`) && r.includes('never used'))).toBeDefined();

    await owner.client.sendJson('DELETE', `/api/v1/tokens/${a.id}`, undefined);
    const revoked = await refusal(viaA.me());
    expect(revoked).toBeInstanceOf(UnauthenticatedError);
    expect((revoked as UnauthenticatedError).code).toBe('token-revoked');

    const viaB = new IsoledgerClient({
      baseUrl: testUrl(),
      token: b.token,
      headers: { 'x-forwarded-for': owner.client.address }
    });
    expect((await viaB.me()).tokenId).toBe(b.id);
    await execute('UPDATE api_tokens SET expires_at = ? WHERE id = ?', [new Date(Date.now() - 1000), b.id]);
    const expired = await refusal(viaB.me());
    expect(expired).toBeInstanceOf(UnauthenticatedError);
    expect((expired as UnauthenticatedError).code).toBe('token-expired');
  });
});

describe('ETag-aware caching of immutable representations', () => {
  /** The real fetch, with each status it saw written down. */
  function recordingFetch(seen: { url: string; status: number; ifNoneMatch: string | null }[]): typeof fetch {
    return async (input, init) => {
      const r = await fetch(input, init);
      const h = new Headers(init?.headers);
      seen.push({ url: String(input), status: r.status, ifNoneMatch: h.get('if-none-match') });
      return r;
    };
  }

  it('revalidates a released version and its record with If-None-Match and serves the 304 from its cache', async () => {
    const name = `client-cache-${tag()}`;
    await author.formulations.create({ name, title: 'Client cache' });
    await author.versions.create(name, { version: '1.0.0', source: catalogueSource('tri3-membrane', name) });
    const { runId } = await author.versions.queueRun(name, '1.0.0');
    await author.runs.wait(runId, { intervalMs: 250, timeoutMs: 180_000 });
    await author.versions.submit(name, '1.0.0');
    await reviewer.versions.review(name, '1.0.0', { decision: 'approve', comment: 'Cache fixture.' });

    const seen: { url: string; status: number; ifNoneMatch: string | null }[] = [];
    const cache = new MemoryCache();
    const c = new IsoledgerClient({
      baseUrl: testUrl(),
      token: author.token,
      cache,
      fetch: recordingFetch(seen),
      headers: { 'x-forwarded-for': randomAddress() }
    });
    const first = await c.versions.get(name, '1.0.0');
    const again = await c.versions.get(name, '1.0.0');
    expect(again).toEqual(first);
    expect(seen.map((s) => s.status)).toEqual([200, 304]);
    expect(seen[1].ifNoneMatch).toBe(`"${first.definitionHash}"`);
    const rec1 = await c.records.getWithBytes(first.verification!.recordId);
    const rec2 = await c.records.getWithBytes(first.verification!.recordId);
    expect(rec2.text).toBe(rec1.text);
    expect(seen.slice(2).map((s) => s.status)).toEqual([200, 304]);
    expect(cache.size).toBe(2);

    // a draft is never cached: no validator is sent for it
    await author.versions.create(name, {
      version: '1.1.0',
      source: catalogueSource('tri3-membrane', name, { E: unusedStiffness() })
    });
    await c.versions.get(name, '1.1.0');
    await c.versions.get(name, '1.1.0');
    expect(seen.slice(4).map((s) => [s.status, s.ifNoneMatch])).toEqual([
      [200, null],
      [200, null]
    ]);

    // 'trust' serves a fresh entry without asking; withdrawal then shows only on revalidation
    const trusting = new IsoledgerClient({
      baseUrl: testUrl(),
      token: author.token,
      cache,
      cacheMode: 'trust',
      fetch: recordingFetch(seen),
      headers: { 'x-forwarded-for': randomAddress() }
    });
    const before = seen.length;
    expect((await trusting.versions.get(name, '1.0.0')).status).toBe('released');
    expect(seen.length).toBe(before);
    await reviewer.versions.withdraw(name, '1.0.0', { reason: 'Cache fixture withdrawn.' });
    const revalidated = await c.versions.get(name, '1.0.0');
    expect(revalidated.status).toBe('withdrawn');
    expect(seen.at(-1)!.status).toBe(200);
  });

  it('asks again when the server refuses the token, even with a cached copy', async () => {
    const name = `client-cache-auth-${tag()}`;
    await author.formulations.create({ name, title: 'Client cache auth' });
    await author.versions.create(name, { version: '1.0.0', source: catalogueSource('tri3-membrane', name) });
    const { runId } = await author.versions.queueRun(name, '1.0.0');
    await author.runs.wait(runId, { intervalMs: 250, timeoutMs: 180_000 });
    await author.versions.submit(name, '1.0.0');
    await reviewer.versions.review(name, '1.0.0', { decision: 'approve', comment: 'Cache fixture.' });
    const cache = new MemoryCache();
    const c = new IsoledgerClient({
      baseUrl: testUrl(),
      token: author.token,
      cache,
      headers: { 'x-forwarded-for': randomAddress() }
    });
    await c.versions.get(name, '1.0.0');
    c.token = `iso_${randomBytes(32).toString('base64url')}`;
    const refused = await refusal(c.versions.get(name, '1.0.0'));
    expect(refused).toBeInstanceOf(UnauthenticatedError);
    expect((refused as UnauthenticatedError).code).toBe('token-invalid');
  });
});
