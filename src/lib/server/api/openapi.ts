// The OpenAPI 3.1 document of the API, generated from the operations table: request parameters and
// bodies from the zod schemas the routes parse with, answers from the wire schemas the client's
// types come from. Built once per process.
import { z } from 'zod';
import { errorBodySchema, wireRegistry, wireSchemas } from '@isoledger/client/schemas';
import { DEFAULT_BODY_LIMIT } from './body';
import { OPERATIONS, PATH_PARAMETERS, type Operation } from './operations';
import { IMMUTABLE_CACHE_CONTROL } from '../registry/caching';

type Json = Record<string, unknown>;

const SCHEMA_REF = (id: string) => `#/components/schemas/${id}`;
const DATE_TIME = 'date-time';

/**
 * Adjustments every generated schema gets: an object property that accepts `undefined` (a
 * preprocess that fills a default, an optional field) is not required; date-times keep their
 * format without zod's long regular expression.
 */
function override(ctx: { zodSchema: unknown; jsonSchema: Json }): void {
  const def = (ctx.zodSchema as { _zod: { def: { type: string; shape?: Record<string, z.ZodType> } } })._zod
    .def;
  const js = ctx.jsonSchema;
  if (def.type === 'object' && def.shape && Array.isArray(js.required)) {
    const required = (js.required as string[]).filter((k) => !def.shape![k]?.safeParse(undefined).success);
    if (required.length) js.required = required;
    else delete js.required;
  }
  if (js.format === DATE_TIME) delete js.pattern;
  // zod's bounds of a safe integer say nothing a reader needs
  if (js.minimum === Number.MIN_SAFE_INTEGER) delete js.minimum;
  if (js.maximum === Number.MAX_SAFE_INTEGER) delete js.maximum;
}

/** What each query parameter of the API means. */
const QUERY_TEXT: Record<string, string> = {
  q: 'words of the name, title or summary',
  cell: 'reference cell: interval, triangle, quadrilateral, tetrahedron, hexahedron',
  status: 'version status: draft, in-review, released, withdrawn',
  strain: 'a built-in strain kind, or custom',
  author: "part of the name or e-mail of the latest version's author or of the owner",
  sort: 'name, title or updated; a leading - reverses',
  in_review: 'only formulations with a version waiting for review',
  page: 'page number, from 1',
  per_page: 'items per page, 1 to 100 (default 20)',
  subject: 'a subject; a formulation name also matches its versions',
  actor: "the actor's e-mail address or account id",
  action: 'an action (version.approve) or a family by its first word (version)',
  from: 'events at or after this ISO 8601 date or instant',
  until: 'events at or before this ISO 8601 date or instant (a bare date: that whole day)',
  filename: 'the file name, when the body is the raw bytes',
  'compareVersions.from': 'the version compared from, MAJOR.MINOR.PATCH (required)',
  'compareVersions.to': 'the version compared to, MAJOR.MINOR.PATCH (required)'
};

function clean(schema: Json): Json {
  const { $schema: _s, $id: _i, ...rest } = schema;
  return rest;
}

/** A request schema inline, as the caller sends it. */
function inputSchema(schema: z.ZodType): Json {
  return clean(z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any', override }) as Json);
}

/** Every answer schema as a component, referring to each other by $ref. */
function componentSchemas(): { schemas: Record<string, Json>; ids: Map<z.ZodType, string> } {
  const generated = z.toJSONSchema(wireRegistry, {
    io: 'output',
    unrepresentable: 'any',
    uri: SCHEMA_REF,
    override
  }) as { schemas: Record<string, Json> };
  const schemas: Record<string, Json> = {};
  for (const [id, s] of Object.entries(generated.schemas)) schemas[id] = clean(s);
  const ids = new Map<z.ZodType, string>();
  for (const [id, schema] of wireSchemas) ids.set(schema, id);
  return { schemas, ids };
}

/** An answer schema: a $ref to its component, or a list of one. */
function outputSchema(schema: z.ZodType, ids: Map<z.ZodType, string>): Json {
  const id = ids.get(schema);
  if (id) return { $ref: SCHEMA_REF(id) };
  const item = schema instanceof z.ZodArray ? ids.get(schema.element as z.ZodType) : undefined;
  if (item) return { type: 'array', items: { $ref: SCHEMA_REF(item) } };
  throw new Error('an answer schema must be a named wire schema of @isoledger/client, or a list of one');
}

const ERROR_TEXT: Record<number, string> = {
  400: 'malformed: bad JSON, or a parameter or field of the wrong kind (`details` names each)',
  401: 'not signed in, or the token is unknown, expired or revoked',
  403: 'signed in, but not allowed (the message says which role is needed)',
  404: 'no such resource',
  409: 'conflict',
  413: 'the body is larger than the limit (`details.maxBytes`)',
  415: 'the body is not JSON',
  422: 'the document is invalid',
  429: 'rate-limited: wait the seconds in Retry-After',
  502: 'an upstream service did not answer'
};

function errorResponse(status: number, description: string): Json {
  const r: Json = {
    description,
    content: { 'application/json': { schema: { $ref: SCHEMA_REF('Error') } } }
  };
  if (status === 429) {
    r.headers = {
      'Retry-After': { description: 'seconds until the window ends', schema: { type: 'integer', minimum: 1 } }
    };
  }
  return r;
}

/** Every status an operation can answer besides its success, with why. */
export function errorStatuses(op: Operation): Map<number, string> {
  const out = new Map<number, string>();
  const add = (status: number, why: string) => {
    const before = out.get(status);
    out.set(status, before && before !== why ? `${before}; ${why}` : why);
  };
  const hasParams = /\{\w+\}/.test(op.path);
  if (op.query || op.body?.schema) add(400, ERROR_TEXT[400]);
  if (op.access.kind !== 'anyone' && op.access.kind !== 'credentials') add(401, ERROR_TEXT[401]);
  if (op.access.kind === 'roles')
    add(
      403,
      `needs ${op.access.roles.length === 1 ? `the ${op.access.roles[0]} role` : `one of the roles ${op.access.roles.join(', ')}`}`
    );
  if (op.access.kind === 'session') add(403, 'API tokens cannot manage tokens; sign in');
  if (op.access.kind === 'signed-in' && op.tag === 'versions')
    add(403, 'drafts and versions in review are for authors, reviewers and auditors');
  if (hasParams || op.path === '/outbox') add(404, ERROR_TEXT[404]);
  if (op.body) add(413, ERROR_TEXT[413]);
  if (op.body?.schema) add(415, ERROR_TEXT[415]);
  for (const e of op.errors ?? []) add(e.status, e.description);
  if (op.rateLimited !== false) add(429, ERROR_TEXT[429]);
  return new Map([...out].sort((a, b) => a[0] - b[0]));
}

function parameters(op: Operation): Json[] {
  const list: Json[] = [];
  for (const [, name] of op.path.matchAll(/\{(\w+)\}/g)) {
    const p = PATH_PARAMETERS[name];
    if (!p) throw new Error(`operation ${op.operationId}: no schema for path parameter {${name}}`);
    list.push({
      name,
      in: 'path',
      required: true,
      description: p.description,
      schema: inputSchema(p.schema)
    });
  }
  if (op.query) {
    const q = inputSchema(op.query) as { properties?: Record<string, Json>; required?: string[] };
    for (const [name, schema] of Object.entries(q.properties ?? {}))
      list.push({
        name,
        in: 'query',
        required: q.required?.includes(name) ?? false,
        description: QUERY_TEXT[`${op.operationId}.${name}`] ?? QUERY_TEXT[name] ?? name,
        schema
      });
  }
  if (op.cache === 'immutable' || op.cache === 'list') {
    list.push({
      name: 'If-None-Match',
      in: 'header',
      required: false,
      description: 'the ETag of a copy you hold; 304 when it is still current',
      schema: { type: 'string' }
    });
  }
  return list;
}

function security(op: Operation): Json[] | undefined {
  if (op.access.kind === 'anyone' || op.access.kind === 'credentials') return [];
  if (op.access.kind === 'session') return [{ session: [] }];
  return undefined;
}

function successResponse(op: Operation, ids: Map<z.ZodType, string>): Json {
  const s = op.success;
  const r: Json = { description: s.description };
  if (s.schema) r.content = { 'application/json': { schema: outputSchema(s.schema, ids) } };
  else if (s.media) r.content = { [s.media.type]: { schema: s.media.schema } };
  if (op.cache === 'immutable') {
    r.headers = {
      ETag: { description: 'strong validator of this representation', schema: { type: 'string' } },
      'Cache-Control': {
        description: `\`${IMMUTABLE_CACHE_CONTROL}\` for released and withdrawn versions and for records; drafts are not cached`,
        schema: { type: 'string' }
      }
    };
  } else if (op.cache === 'list') {
    r.headers = { ETag: { description: 'weak validator of this list', schema: { type: 'string' } } };
  }
  return r;
}

function operationObject(op: Operation, ids: Map<z.ZodType, string>): Json {
  const o: Json = {
    operationId: op.operationId,
    tags: [op.tag],
    summary: op.summary,
    description: [op.description, accessText(op)].filter(Boolean).join('\n\n')
  };
  const params = parameters(op);
  if (params.length) o.parameters = params;
  if (op.body) {
    const content: Json = {};
    if (op.body.schema) content['application/json'] = { schema: inputSchema(op.body.schema) };
    for (const [type, schema] of Object.entries(op.body.media ?? {})) content[type] = { schema };
    o.requestBody = {
      required: true,
      description: `${op.body.description} (at most ${op.body.maxBytes ?? DEFAULT_BODY_LIMIT} bytes)`,
      content
    };
  }
  const responses: Json = { [String(op.success.status)]: successResponse(op, ids) };
  if (op.cache === 'immutable' || op.cache === 'list')
    responses['304'] = { description: 'If-None-Match names the current ETag: nothing changed' };
  for (const [status, why] of errorStatuses(op)) responses[String(status)] = errorResponse(status, why);
  o.responses = responses;
  const sec = security(op);
  if (sec) o.security = sec;
  return o;
}

function accessText(op: Operation): string {
  switch (op.access.kind) {
    case 'anyone':
      return 'Anyone may call this.';
    case 'credentials':
      return 'Anyone with valid credentials.';
    case 'signed-in':
      return 'Anyone signed in (session or token).';
    case 'session':
      return 'A signed-in browser session; API tokens are refused.';
    case 'roles':
      return `Needs ${op.access.roles.length === 1 ? `the ${op.access.roles[0]} role` : `one of the roles ${op.access.roles.join(', ')}`}.`;
  }
}

let built: Json | null = null;

/** The OpenAPI 3.1 document (the same object every time in a process). */
export function openApiDocument(): Json {
  if (built) return built;
  const { schemas, ids } = componentSchemas();
  if (!ids.has(errorBodySchema)) throw new Error('the Error schema is not among the components');
  const paths: Record<string, Json> = {};
  for (const op of OPERATIONS) {
    paths[op.path] ??= {};
    paths[op.path][op.method] = operationObject(op, ids);
  }
  built = {
    openapi: '3.1.0',
    info: {
      title: 'Isoledger API',
      version: '1.0.0',
      summary: 'A registry of verified finite element formulations',
      description:
        'JSON over HTTP. Browser sessions and API tokens (`Authorization: Bearer iso_…`) reach the same routes. Every error is `{ "error": { "code", "message", "details" } }`. Requests are rate-limited per token and per client address (429 with Retry-After). A passing verification record is evidence, not approval for use: analyses need a qualified engineer’s judgement, and local codes and licensed practice govern.'
    },
    servers: [{ url: '/api/v1' }],
    tags: ['service', 'accounts', 'formulations', 'versions', 'verification', 'projects', 'audit'].map(
      (name) => ({
        name
      })
    ),
    security: [{ bearer: [] }, { session: [] }],
    paths,
    components: {
      schemas,
      securitySchemes: {
        bearer: {
          type: 'http',
          scheme: 'bearer',
          description:
            "an API token ('iso_' + 43 characters), created on the account page or at POST /auth/token"
        },
        session: {
          type: 'apiKey',
          in: 'cookie',
          name: 'isoledger_session',
          description: 'the browser session'
        }
      }
    }
  };
  return built;
}
