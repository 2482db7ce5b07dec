// Every error status of the contract (design/api.md, "Errors") produced on a real route, each in the
// one documented shape { error: { code, message, details } }, and each described for that route in
// the OpenAPI document.
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@isoledger/client';
import { Client, DEMO, DEMO_PASSWORD, randomAddress, signedIn, testUrl } from '../support/http';
import { closeTestDb } from '../support/db';
import { catalogueSource, tag, unusedStiffness } from '../support/registry-fixtures';

type Json = Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any

let doc: Json;
let author: Client;
let reviewer: Client;

beforeAll(async () => {
  doc = (await (await fetch(`${testUrl()}/api/v1/openapi.json`)).json()) as Json;
  [author, reviewer] = await Promise.all([signedIn(DEMO.author), signedIn(DEMO.reviewer)]);
});

afterAll(async () => {
  await closeTestDb();
});

/** The body in the documented shape, and the status described for that operation in the OpenAPI document. */
async function documentedError(
  r: Response,
  status: number,
  op: { path: string; method: string }
): Promise<{ code: string; message: string; details: unknown }> {
  const text = await r.text();
  expect(r.status, text).toBe(status);
  expect(r.headers.get('content-type')).toMatch(/^application\/json/);
  const body = errorBodySchema.parse(JSON.parse(text));
  expect(body.error.message.length).toBeGreaterThan(0);
  expect(
    doc.paths[op.path][op.method].responses[String(status)],
    `${op.method} ${op.path} ${status}`
  ).toBeDefined();
  return body.error;
}

describe('error statuses in the documented shape', () => {
  it('400 for malformed JSON and for a query parameter of the wrong kind', async () => {
    const malformed = await fetch(`${testUrl()}/api/v1/formulations`, {
      method: 'POST',
      headers: {
        'content-type': 'application/json',
        cookie: `isoledger_session=${author.cookie('isoledger_session')}`,
        origin: testUrl(),
        'x-forwarded-for': author.address
      },
      body: '{"name": "unterminated'
    });
    const e = await documentedError(malformed, 400, { path: '/formulations', method: 'post' });
    expect(e.code).toBe('malformed-json');
    const q = await documentedError(await author.get('/api/v1/formulations?page=first'), 400, {
      path: '/formulations',
      method: 'get'
    });
    expect(q.code).toBe('invalid-request');
    expect(q.details).toEqual([{ path: 'page', message: 'page must be a whole number' }]);
  });

  it('401 without credentials and with an unknown token', async () => {
    const anonymous = await documentedError(await new Client().get('/api/v1/formulations'), 401, {
      path: '/formulations',
      method: 'get'
    });
    expect(anonymous.code).toBe('unauthenticated');
    const unknown = await documentedError(
      await new Client({ token: `iso_${randomBytes(32).toString('base64url')}` }).get('/api/v1/me'),
      401,
      { path: '/me', method: 'get' }
    );
    expect(unknown.code).toBe('token-invalid');
  });

  it('403 naming the role needed', async () => {
    const e = await documentedError(
      await reviewer.request('POST', '/api/v1/formulations', { json: { name: `err-${tag()}`, title: 'No' } }),
      403,
      { path: '/formulations', method: 'post' }
    );
    expect(e).toMatchObject({ code: 'forbidden', message: 'this needs the author role; you hold reviewer' });
  });

  it('404 for an unknown formulation and for an unknown API route', async () => {
    const e = await documentedError(await author.get(`/api/v1/formulations/no-such-${tag()}`), 404, {
      path: '/formulations/{name}',
      method: 'get'
    });
    expect(e.code).toBe('not-found');
    const route = await author.get('/api/v1/no-such-route');
    expect(route.status).toBe(404);
    expect(errorBodySchema.parse(await route.json()).error.code).toBe('not-found');
  });

  it('409 for a version not greater than the newest, and for submitting an unverified draft', async () => {
    const name = `err-409-${tag()}`;
    await author.sendJson('POST', '/api/v1/formulations', { name, title: 'Conflicts' }, 201);
    await author.sendJson(
      'POST',
      `/api/v1/formulations/${name}/versions`,
      // a meaning of its own, so no record of an earlier run can stand for it
      { version: '2.0.0', source: catalogueSource('bar2-linear', name, { E: unusedStiffness() }) },
      201
    );
    const older = await documentedError(
      await author.request('POST', `/api/v1/formulations/${name}/versions`, {
        json: { version: '1.9.9', source: catalogueSource('bar2-linear', name) }
      }),
      409,
      { path: '/formulations/{name}/versions', method: 'post' }
    );
    expect(older).toMatchObject({
      code: 'version-not-greater',
      details: { field: 'version', newest: '2.0.0' }
    });
    const unverified = await documentedError(
      await author.request('POST', `/api/v1/formulations/${name}/versions/2.0.0/submit`),
      409,
      { path: '/formulations/{name}/versions/{version}/submit', method: 'post' }
    );
    expect(unverified.code).toBe('not-verified');
  });

  it('413 for a body above the limit, before it is read in full', async () => {
    const e = await documentedError(
      await author.request('POST', '/api/v1/formulations', {
        json: { name: `err-${tag()}`, title: 'x'.repeat(300 * 1024) }
      }),
      413,
      { path: '/formulations', method: 'post' }
    );
    expect(e).toMatchObject({ code: 'too-large', details: { maxBytes: 256 * 1024 } });
  });

  it('415 for a body that is not JSON', async () => {
    const e = await documentedError(
      await author.request('POST', '/api/v1/formulations', {
        headers: { 'content-type': 'text/plain' },
        json: { name: `err-${tag()}`, title: 'y' }
      }),
      415,
      { path: '/formulations', method: 'post' }
    );
    expect(e.code).toBe('unsupported-media-type');
  });

  it('422 with the diagnostics of formulation-format.md for an invalid document', async () => {
    const name = `err-422-${tag()}`;
    await author.sendJson('POST', '/api/v1/formulations', { name, title: 'Invalid' }, 201);
    const source = catalogueSource('tri3-membrane', name).replace(/^cell: triangle$/m, 'cell: pentagon');
    const e = await documentedError(
      await author.request('POST', `/api/v1/formulations/${name}/versions`, {
        json: { version: '1.0.0', source }
      }),
      422,
      { path: '/formulations/{name}/versions', method: 'post' }
    );
    expect(e.code).toBe('invalid-document');
    const diagnostics = e.details as { line: number; column: number; path: string; message: string }[];
    const line = source.split('\n').findIndex((l) => l.startsWith('cell:')) + 1;
    expect(diagnostics).toContainEqual(expect.objectContaining({ line, path: 'cell' }));
    // nothing was written
    const detail = await author.getJson<{ versions: unknown[] }>(`/api/v1/formulations/${name}`);
    expect(detail.versions).toEqual([]);
  });

  it('429 with Retry-After once the sign-in failures of one address reach the limit at the token endpoint', async () => {
    const address = randomAddress();
    let last: Response | null = null;
    // 20 failures per address in a window (SIGN_IN_LIMITS of auth/credentials.ts); the 21st is refused
    for (let i = 0; i < 21; i++) {
      last = await new Client({ address }).request('POST', '/api/v1/auth/token', {
        json: { email: `nobody-${i}@fenwold.example`, password: 'wrong', name: 'x' }
      });
      if (i < 20) {
        expect(last.status).toBe(401);
        await last.body?.cancel();
      }
    }
    expect(last!.headers.get('retry-after')).toMatch(/^[1-9]\d*$/);
    const e = await documentedError(last!, 429, { path: '/auth/token', method: 'post' });
    expect(e.code).toBe('rate-limited');
    // the right password from elsewhere still works: the limit is the address's
    const ok = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: DEMO_PASSWORD, name: `after 429 ${tag()}` }
    });
    expect(ok.status).toBe(201);
  });

  it('405 for a method the route does not have, naming the allowed ones', async () => {
    const r = await author.request('PATCH', '/api/v1/formulations', { json: {} });
    expect(r.status).toBe(405);
    const body = errorBodySchema.parse(await r.json());
    expect(body.error.code).toBe('method-not-allowed');
    expect(r.headers.get('allow')).toMatch(/GET/);
  });
});
