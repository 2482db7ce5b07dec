// Every operation of the HTTP API v1 (api.md) in one table: method, path, who may call it, the zod
// schemas of its parameters and body (the very objects the routes parse with) and of its answers
// (the client's wire schemas). The OpenAPI document is generated from this table; the hooks read
// the caching kind of each route from it; a test checks the table against the route files.
import { z } from 'zod';
import * as wire from '@isoledger/client/schemas';
import { credentialTokenSchema, newTokenSchema } from '../auth/schemas';
import { ROLES, type Role } from '../auth/roles';
import {
  auditQuerySchema,
  compareQuerySchema,
  listQuerySchema,
  newFormulationSchema,
  newProjectSchema,
  newVersionSchema,
  pinSchema,
  reviewSchema,
  sourceSchema,
  withdrawSchema
} from '../registry/schemas';
import { NAME_PATTERN } from '../registry/formulations';
import { PROJECT_KEY } from '../registry/projects';

/** POST /api/v1/validate: the document to check (the route parses its body with this). */
export const validateBodySchema = z.object({ source: z.string({ error: 'source must be a string' }) });

export type Access =
  /** no credentials needed */
  | { kind: 'anyone' }
  /** e-mail and password in the body (the token endpoint) */
  | { kind: 'credentials' }
  /** any signed-in person or token */
  | { kind: 'signed-in' }
  /** a browser session; tokens are refused */
  | { kind: 'session' }
  /** at least one of these roles */
  | { kind: 'roles'; roles: readonly Role[] };

/**
 * How a successful GET may be cached: `immutable` (strong ETag, cached for good, served from the
 * server's own cache), `list` (weak ETag, revalidated), or `none` (no-store).
 */
export type CacheKind = 'immutable' | 'list' | 'none';

export interface Success {
  status: 200 | 201 | 202 | 204;
  description: string;
  /** JSON body schema; absent for 204 and for non-JSON bodies */
  schema?: z.ZodType;
  /** for bodies that are not JSON */
  media?: { type: string; schema: Record<string, unknown> };
}

export interface RequestBody {
  description: string;
  /** JSON body, read with readJson and this schema */
  schema?: z.ZodType;
  /** a body that is not JSON: media type → JSON Schema */
  media?: Record<string, Record<string, unknown>>;
  /** largest body accepted, bytes */
  maxBytes?: number;
}

export interface Operation {
  method: 'get' | 'post' | 'put' | 'delete';
  /** OpenAPI path under /api/v1, e.g. /formulations/{name} */
  path: string;
  operationId: string;
  tag: string;
  summary: string;
  description?: string;
  access: Access;
  query?: z.ZodObject;
  body?: RequestBody;
  success: Success;
  /** statuses this operation answers besides the ones its access, parameters and body imply */
  errors?: { status: number; description: string }[];
  cache?: CacheKind;
  /** an immutable representation that still changes once, when the version is withdrawn */
  changesOnWithdrawal?: boolean;
  /** false for liveness, which load balancers call without end */
  rateLimited?: boolean;
}

/** The schema of each path parameter, by name. */
export const PATH_PARAMETERS: Record<string, { schema: z.ZodType; description: string }> = {
  name: {
    schema: z.string().regex(NAME_PATTERN),
    description: "the formulation's name (the document's slug)"
  },
  version: {
    schema: z.string().regex(/^\d+\.\d+\.\d+$/),
    description: 'MAJOR.MINOR.PATCH (Semantic Versioning 2.0.0)'
  },
  key: { schema: z.string().regex(PROJECT_KEY), description: "the project's key" },
  id: { schema: z.string().min(1), description: 'the id' },
  role: { schema: z.enum(ROLES), description: 'a role' }
};

const signedIn: Access = { kind: 'signed-in' };
const roles = (...r: Role[]): Access => ({ kind: 'roles', roles: r });
const conflict = (description: string) => ({ status: 409, description });
const invalid = { status: 422, description: 'the document is invalid; `details` lists its diagnostics' };

const json = (status: Success['status'], schema: z.ZodType, description: string): Success => ({
  status,
  schema,
  description
});

export const OPERATIONS: readonly Operation[] = [
  {
    method: 'get',
    path: '/health',
    operationId: 'health',
    tag: 'service',
    summary: 'Liveness',
    access: { kind: 'anyone' },
    success: json(200, wire.healthSchema, 'the server is up'),
    rateLimited: false
  },
  {
    method: 'get',
    path: '/openapi.json',
    operationId: 'openapi',
    tag: 'service',
    summary: 'This description of the API (OpenAPI 3.1)',
    access: { kind: 'anyone' },
    success: {
      status: 200,
      description: 'the OpenAPI document',
      media: { type: 'application/json', schema: { type: 'object' } }
    }
  },
  {
    method: 'get',
    path: '/me',
    operationId: 'me',
    tag: 'accounts',
    summary: 'Who is asking',
    description: "The signed-in person, or a token's owner with the token's capped roles.",
    access: signedIn,
    success: json(200, wire.meSchema, 'the caller')
  },
  {
    method: 'post',
    path: '/auth/token',
    operationId: 'createTokenFromCredentials',
    tag: 'accounts',
    summary: 'Create an API token from e-mail and password',
    description:
      'For scripts. The token never carries a role its owner does not hold; failed attempts share the sign-in rate limits.',
    access: { kind: 'credentials' },
    body: { description: 'credentials and the new token', schema: credentialTokenSchema },
    success: json(201, wire.newTokenResultSchema, 'the token; its secret appears in this response only'),
    errors: [
      { status: 401, description: 'the e-mail address or the password is wrong' },
      { status: 403, description: 'the role ceiling is a role the account does not hold' }
    ]
  },
  {
    method: 'get',
    path: '/tokens',
    operationId: 'listTokens',
    tag: 'accounts',
    summary: "The signed-in person's API tokens",
    access: { kind: 'session' },
    success: json(200, z.array(wire.tokenInfoSchema), 'the tokens, newest first, never their secrets'),
    cache: 'list'
  },
  {
    method: 'post',
    path: '/tokens',
    operationId: 'createToken',
    tag: 'accounts',
    summary: 'Create an API token',
    access: { kind: 'session' },
    body: { description: 'name, optional role ceiling and expiry', schema: newTokenSchema },
    success: json(201, wire.newTokenResultSchema, 'the token; its secret appears in this response only')
  },
  {
    method: 'delete',
    path: '/tokens/{id}',
    operationId: 'revokeToken',
    tag: 'accounts',
    summary: 'Revoke an API token',
    description: 'The next request with the token is refused.',
    access: { kind: 'session' },
    success: json(200, wire.tokenInfoSchema, 'the token, revoked'),
    errors: [conflict('the token is already revoked')]
  },
  {
    method: 'get',
    path: '/people',
    operationId: 'listPeople',
    tag: 'accounts',
    summary: 'People and their roles',
    access: roles('admin'),
    success: json(200, z.array(wire.accountSchema), 'everyone with an account'),
    cache: 'list'
  },
  {
    method: 'put',
    path: '/people/{id}/roles/{role}',
    operationId: 'grantRole',
    tag: 'accounts',
    summary: 'Grant a role',
    access: roles('admin'),
    success: json(200, wire.roleChangeSchema, "the person's roles after the grant")
  },
  {
    method: 'delete',
    path: '/people/{id}/roles/{role}',
    operationId: 'removeRole',
    tag: 'accounts',
    summary: 'Remove a role',
    access: roles('admin'),
    success: json(200, wire.roleChangeSchema, "the person's roles after the removal"),
    errors: [conflict("the last admin's admin role cannot be removed")]
  },
  {
    method: 'get',
    path: '/formulations',
    operationId: 'listFormulations',
    tag: 'formulations',
    summary: 'The catalogue',
    description:
      'Each formulation with the newest version the caller may see; filters apply to that version. Paginated: `page`, `per_page` ≤ 100, `total`.',
    access: signedIn,
    query: listQuerySchema,
    success: json(200, wire.formulationPageSchema, 'one page of the catalogue'),
    cache: 'list'
  },
  {
    method: 'post',
    path: '/formulations',
    operationId: 'createFormulation',
    tag: 'formulations',
    summary: 'Create an empty formulation',
    access: roles('author'),
    body: { description: 'its name (the slug) and title', schema: newFormulationSchema },
    success: json(201, wire.formulationSummarySchema, 'the formulation, without versions yet'),
    errors: [conflict('a formulation of that name exists')]
  },
  {
    method: 'get',
    path: '/formulations/{name}',
    operationId: 'getFormulation',
    tag: 'formulations',
    summary: 'A formulation with its versions',
    description: 'Drafts and versions in review only for authors, reviewers and auditors.',
    access: signedIn,
    success: json(200, wire.formulationDetailSchema, 'the formulation')
  },
  {
    method: 'get',
    path: '/formulations/{name}/compare',
    operationId: 'compareVersions',
    tag: 'formulations',
    summary: 'What changed between two versions',
    access: signedIn,
    query: compareQuerySchema,
    success: json(
      200,
      wire.comparisonSchema,
      'the unified source diff, changed definition paths and check metrics'
    )
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions',
    operationId: 'createDraft',
    tag: 'versions',
    summary: 'Create a draft version',
    access: roles('author'),
    body: { description: 'the version number and the YAML document', schema: newVersionSchema },
    success: json(201, wire.versionDetailSchema, 'the draft'),
    errors: [conflict('the version is not greater than every earlier version'), invalid]
  },
  {
    method: 'get',
    path: '/formulations/{name}/versions/{version}',
    operationId: 'getVersion',
    tag: 'versions',
    summary: 'One version',
    description:
      'Released and withdrawn versions carry a strong ETag and `Cache-Control: public, max-age=31536000, immutable`; If-None-Match gives 304.',
    access: signedIn,
    success: json(200, wire.versionDetailSchema, 'the version'),
    cache: 'immutable',
    changesOnWithdrawal: true
  },
  {
    method: 'put',
    path: '/formulations/{name}/versions/{version}',
    operationId: 'replaceDraft',
    tag: 'versions',
    summary: "Replace a draft's source",
    access: roles('author'),
    body: { description: 'the new YAML document', schema: sourceSchema },
    success: json(200, wire.versionDetailSchema, 'the draft'),
    errors: [conflict('the version is no longer a draft'), invalid]
  },
  {
    method: 'get',
    path: '/formulations/{name}/versions/{version}/source',
    operationId: 'getSource',
    tag: 'versions',
    summary: 'The YAML document exactly as written',
    access: signedIn,
    success: {
      status: 200,
      description: 'the source',
      media: { type: 'application/yaml', schema: { type: 'string' } }
    },
    cache: 'immutable'
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions/{version}/runs',
    operationId: 'queueRun',
    tag: 'verification',
    summary: 'Queue a verification run of a draft',
    access: roles('author'),
    success: json(202, wire.runQueuedSchema, 'the run, queued; follow it at /runs/{id}'),
    errors: [conflict('the version is not a draft')]
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions/{version}/submit',
    operationId: 'submitVersion',
    tag: 'versions',
    summary: 'Submit a draft for review',
    description: 'Needs a passing verification record of the current definitionHash.',
    access: roles('author'),
    success: json(200, wire.versionDetailSchema, 'the version, in review'),
    errors: [conflict('not a draft, not verified, or its record does not pass')]
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions/{version}/review',
    operationId: 'reviewVersion',
    tag: 'versions',
    summary: 'Approve or reject a version in review',
    description: 'By a reviewer who is not an author of the version (two people, always).',
    access: roles('reviewer'),
    body: { description: 'the decision and a comment', schema: reviewSchema },
    success: json(200, wire.versionDetailSchema, 'the version, released or back to draft'),
    errors: [conflict('the version is not in review')]
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions/{version}/withdraw',
    operationId: 'withdrawVersion',
    tag: 'versions',
    summary: 'Withdraw a released version',
    description: 'Every project pinning it is told by e-mail.',
    access: roles('reviewer'),
    body: { description: 'the reason', schema: withdrawSchema },
    success: json(200, wire.versionDetailSchema, 'the version, withdrawn'),
    errors: [conflict('the version is not released')]
  },
  {
    method: 'get',
    path: '/formulations/{name}/versions/{version}/attachments',
    operationId: 'listAttachments',
    tag: 'versions',
    summary: "A version's attachments",
    access: signedIn,
    success: json(200, z.array(wire.attachmentSchema), 'the attachments'),
    cache: 'list'
  },
  {
    method: 'post',
    path: '/formulations/{name}/versions/{version}/attachments',
    operationId: 'addAttachment',
    tag: 'versions',
    summary: 'Attach a PDF, CSV or JSON file to a draft',
    description:
      'Multipart field `file`, or the raw bytes with `?filename=`; the kind is read from the content.',
    access: roles('author'),
    query: z.object({ filename: z.string().optional() }),
    body: {
      description: 'the file (≤ 10 MB)',
      media: {
        'multipart/form-data': {
          type: 'object',
          properties: { file: { type: 'string', contentMediaType: 'application/octet-stream' } },
          required: ['file']
        },
        'application/octet-stream': { type: 'string', contentMediaType: 'application/octet-stream' }
      },
      maxBytes: 10 * 1024 * 1024
    },
    success: json(201, wire.attachmentSchema, 'the attachment'),
    errors: [conflict('the version is not a draft')]
  },
  {
    method: 'get',
    path: '/formulations/{name}/versions/{version}/attachments/{id}',
    operationId: 'getAttachment',
    tag: 'versions',
    summary: 'An attachment, as stored',
    access: signedIn,
    success: {
      status: 200,
      description: 'the bytes; X-Content-SHA256 carries their hash',
      media: {
        type: 'application/octet-stream',
        schema: { type: 'string', contentMediaType: 'application/octet-stream' }
      }
    }
  },
  {
    method: 'delete',
    path: '/formulations/{name}/versions/{version}/attachments/{id}',
    operationId: 'removeAttachment',
    tag: 'versions',
    summary: 'Remove an attachment of a draft',
    access: roles('author'),
    success: { status: 204, description: 'removed' },
    errors: [conflict('the version is not a draft')]
  },
  {
    method: 'get',
    path: '/runs/{id}',
    operationId: 'getRun',
    tag: 'verification',
    summary: 'A verification run',
    access: signedIn,
    success: json(200, wire.runSchema, 'the run; its record once done')
  },
  {
    method: 'get',
    path: '/records/{id}',
    operationId: 'getRecord',
    tag: 'verification',
    summary: 'A verification record',
    description:
      'Byte for byte as stored, with a strong ETag (the SHA-256 of the bytes) and immutable caching. A passing record is evidence, not approval for use.',
    access: signedIn,
    success: json(200, wire.recordSchema, 'the record'),
    cache: 'immutable'
  },
  {
    method: 'post',
    path: '/validate',
    operationId: 'validateDocument',
    tag: 'verification',
    summary: 'Check a document and tabulate its shape functions',
    access: signedIn,
    body: { description: 'the YAML document', schema: validateBodySchema, maxBytes: 6 * 64 * 1024 + 1024 },
    success: json(200, wire.validationSchema, 'the diagnostics, and a preview when the document is valid')
  },
  {
    method: 'get',
    path: '/projects',
    operationId: 'listProjects',
    tag: 'projects',
    summary: 'The projects',
    access: signedIn,
    success: json(200, z.array(wire.projectSummarySchema), 'every project'),
    cache: 'list'
  },
  {
    method: 'post',
    path: '/projects',
    operationId: 'createProject',
    tag: 'projects',
    summary: 'Create a project',
    access: roles('lead'),
    body: { description: 'its key and title', schema: newProjectSchema },
    success: json(201, wire.projectSummarySchema, 'the project; its creator is its lead'),
    errors: [conflict('a project with that key exists')]
  },
  {
    method: 'get',
    path: '/projects/{key}',
    operationId: 'getProject',
    tag: 'projects',
    summary: 'A project with its pins',
    access: signedIn,
    success: json(200, wire.projectDetailSchema, 'the project')
  },
  {
    method: 'put',
    path: '/projects/{key}/pins/{name}',
    operationId: 'pinVersion',
    tag: 'projects',
    summary: 'Pin a released version',
    description: "At most one version of each formulation; replaces the project's earlier pin of it.",
    access: roles('lead'),
    body: { description: 'the version', schema: pinSchema },
    success: json(200, wire.projectDetailSchema, 'the project with its pins'),
    errors: [conflict('the version is not released, or is pinned already')]
  },
  {
    method: 'delete',
    path: '/projects/{key}/pins/{name}',
    operationId: 'unpinFormulation',
    tag: 'projects',
    summary: 'Unpin a formulation',
    access: roles('lead'),
    success: json(200, wire.projectDetailSchema, 'the project with its pins')
  },
  {
    method: 'get',
    path: '/projects/{key}/manifest',
    operationId: 'getManifest',
    tag: 'projects',
    summary: "The project's manifest",
    description:
      'Every pin with its definitionHash, sourceHash, record id and status, so a solver can check offline that what it runs is what was approved.',
    access: signedIn,
    success: json(200, wire.manifestSchema, 'the manifest')
  },
  {
    method: 'get',
    path: '/audit',
    operationId: 'listAudit',
    tag: 'audit',
    summary: 'The audit trail, newest first',
    access: roles('auditor', 'admin'),
    query: auditQuerySchema,
    success: json(200, wire.auditPageSchema, 'one page of events'),
    cache: 'list'
  },
  {
    method: 'get',
    path: '/audit/verify',
    operationId: 'verifyAudit',
    tag: 'audit',
    summary: 'Re-hash the whole audit chain',
    access: roles('auditor', 'admin'),
    success: json(200, wire.chainVerdictSchema, 'whether the chain holds, and the first broken event')
  },
  {
    method: 'get',
    path: '/outbox',
    operationId: 'outbox',
    tag: 'service',
    summary: 'What the local mail sink received',
    description: 'Only while the local mail sink is the transport; 404 otherwise.',
    access: roles('admin'),
    success: json(200, z.array(wire.outboxMessageSchema), 'the messages, newest first'),
    errors: [{ status: 502, description: 'the local mail sink did not answer' }]
  }
];

/** The SvelteKit route id of an OpenAPI path: /formulations/{name} → /api/v1/formulations/[name]. */
export function routeIdOf(path: string): string {
  return '/api/v1' + path.replace(/\{(\w+)\}/g, '[$1]');
}

const byRoute = new Map<string, Operation>();
for (const op of OPERATIONS) byRoute.set(`${op.method.toUpperCase()} ${routeIdOf(op.path)}`, op);

/** The operation a request reached, by its route id and method (HEAD answers as GET). */
export function operationFor(method: string, routeId: string | null): Operation | undefined {
  if (!routeId) return undefined;
  return byRoute.get(`${method === 'HEAD' ? 'GET' : method} ${routeId}`);
}
