// GET /api/v1/openapi.json: an OpenAPI 3.1 document that a well-known validator accepts
// (@apidevtools/swagger-parser), generated from the operations table, describing every route file
// under src/routes/api/v1 and every route of the API contract (design/api.md), with the errors
// each route answers in the documented shape.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import SwaggerParser from '@apidevtools/swagger-parser';
import { describe, expect, it } from 'vitest';
import { openApiDocument } from '../../src/lib/server/api/openapi';
import { OPERATIONS } from '../../src/lib/server/api/operations';
import { testUrl } from '../support/http';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const ROUTES = join(ROOT, 'src/routes/api/v1');

type Json = Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any

/** Every `export const METHOD` of every +server.ts under src/routes/api/v1, as "METHOD /path/{param}". */
function routeFiles(): string[] {
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir)) {
      const path = join(dir, entry);
      if (statSync(path).isDirectory()) walk(path);
      else if (entry === '+server.ts') {
        const route = '/' + relative(ROUTES, dir).split('\\').join('/');
        const openApiPath = route.replace(/\[(\w+)\]/g, '{$1}').replace(/\/$/, '');
        for (const m of readFileSync(path, 'utf8').matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g))
          out.push(`${m[1]} ${openApiPath === '/' ? '' : openApiPath}`);
      }
    }
  };
  walk(ROUTES);
  return out.sort();
}

/** The route table of the contract, shared/design/api.md ("Routes"), written out method by method. */
const CONTRACT_ROUTES = [
  'GET /formulations',
  'POST /formulations',
  'GET /formulations/{name}',
  'POST /formulations/{name}/versions',
  'PUT /formulations/{name}/versions/{version}',
  'GET /formulations/{name}/versions/{version}',
  'GET /formulations/{name}/versions/{version}/source',
  'POST /formulations/{name}/versions/{version}/runs',
  'GET /runs/{id}',
  'GET /records/{id}',
  'POST /formulations/{name}/versions/{version}/submit',
  'POST /formulations/{name}/versions/{version}/review',
  'POST /formulations/{name}/versions/{version}/withdraw',
  'GET /formulations/{name}/compare',
  'GET /projects',
  'POST /projects',
  'PUT /projects/{key}/pins/{name}',
  'DELETE /projects/{key}/pins/{name}',
  'GET /projects/{key}/manifest',
  'GET /audit',
  'GET /audit/verify',
  'POST /auth/token',
  'GET /outbox',
  'GET /openapi.json'
];

/** The error statuses of the contract (api.md, "Errors"). */
const CONTRACT_STATUSES = [400, 401, 403, 404, 409, 413, 422, 429];

async function served(): Promise<Json> {
  const r = await fetch(`${testUrl()}/api/v1/openapi.json`);
  expect(r.status).toBe(200);
  expect(r.headers.get('content-type')).toMatch(/^application\/json/);
  return (await r.json()) as Json;
}

function described(doc: Json): string[] {
  const out: string[] = [];
  for (const [path, item] of Object.entries(doc.paths as Json))
    for (const method of Object.keys(item)) out.push(`${method.toUpperCase()} ${path}`);
  return out.sort();
}

describe('the OpenAPI document', () => {
  it('is served to anyone and passes the OpenAPI 3.1 validation of @apidevtools/swagger-parser', async () => {
    const doc = await served();
    expect(doc.openapi).toBe('3.1.0');
    const checked = (await SwaggerParser.validate(structuredClone(doc) as never)) as { paths?: object };
    expect(Object.keys(checked.paths ?? {}).sort()).toEqual(Object.keys(doc.paths).sort());
    // the validator does refuse a broken document: the same one without its required `info`
    const broken = structuredClone(doc) as Record<string, unknown>;
    delete broken.info;
    await expect(SwaggerParser.validate(broken as never)).rejects.toThrow();
  });

  it('is the document generated from the operations table and its zod schemas', async () => {
    expect(await served()).toEqual(openApiDocument());
  });

  it('describes every method of every route file under src/routes/api/v1, and nothing else', async () => {
    const files = routeFiles();
    expect(files.length).toBeGreaterThan(30);
    expect(described(await served())).toEqual(files);
  });

  it('describes every route of the API contract', async () => {
    const doc = described(await served());
    for (const route of CONTRACT_ROUTES) expect(doc, route).toContain(route);
  });

  it("names each route's errors with the one error shape, 429 with Retry-After, and documents the contract's statuses", async () => {
    const doc = await served();
    const seen = new Set<number>();
    for (const op of OPERATIONS) {
      const o = doc.paths[op.path][op.method];
      const responses = o.responses as Json;
      for (const [status, r] of Object.entries(responses)) {
        const n = Number(status);
        if (n < 400) continue;
        seen.add(n);
        expect(r.content['application/json'].schema, `${op.operationId} ${status}`).toEqual({
          $ref: '#/components/schemas/Error'
        });
      }
      if (op.rateLimited !== false)
        expect(responses['429'].headers['Retry-After'], op.operationId).toBeDefined();
      if (/\{\w+\}/.test(op.path)) expect(responses['404'], op.operationId).toBeDefined();
      if (op.access.kind === 'signed-in' || op.access.kind === 'roles')
        expect(responses['401'], op.operationId).toBeDefined();
      if (op.access.kind === 'roles') expect(responses['403'].description, op.operationId).toMatch(/role/);
      if (op.body?.schema)
        expect(Object.keys(responses), op.operationId).toEqual(expect.arrayContaining(['400', '413', '415']));
    }
    for (const s of CONTRACT_STATUSES) expect([...seen], String(s)).toContain(s);
    expect(doc.components.schemas.Error.required).toEqual(['error']);
  });

  it('takes request bodies and query parameters from the schemas the routes parse with', async () => {
    const doc = await served();
    const token = doc.paths['/auth/token'].post.requestBody.content['application/json'].schema;
    // email and password are required; name too; role and expiry are optional (blank means none)
    expect(token.required.sort()).toEqual(['email', 'name', 'password']);
    expect(token.properties.role.anyOf[0].enum).toEqual(['admin', 'author', 'reviewer', 'lead', 'auditor']);
    expect(token.properties.expiresInDays.anyOf[0]).toMatchObject({
      type: 'integer',
      minimum: 1,
      maximum: 366
    });
    const review =
      doc.paths['/formulations/{name}/versions/{version}/review'].post.requestBody.content['application/json']
        .schema;
    expect(review.properties.decision.enum).toEqual(['approve', 'reject']);
    expect(review.required).toEqual(['decision']);
    const list = doc.paths['/formulations'].get.parameters.map((p: Json) => `${p.in}:${p.name}`);
    expect(list).toEqual(
      expect.arrayContaining([
        'query:q',
        'query:cell',
        'query:status',
        'query:page',
        'query:per_page',
        'header:If-None-Match'
      ])
    );
    const version = doc.paths['/formulations/{name}/versions/{version}'].get;
    expect(version.responses['200'].headers.ETag).toBeDefined();
    expect(version.responses['304']).toBeDefined();
    expect(version.responses['200'].content['application/json'].schema).toEqual({
      $ref: '#/components/schemas/VersionDetail'
    });
    expect(doc.components.schemas.VersionDetail.required).toEqual(
      expect.arrayContaining([
        'name',
        'version',
        'status',
        'source',
        'definition',
        'sourceHash',
        'definitionHash',
        'verification'
      ])
    );
  });
});
