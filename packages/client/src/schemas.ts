// What the Isoledger API v1 answers, as zod schemas (api.md, verification.md, formulation-format.md).
// One source of truth for three readers: the server's OpenAPI document describes its responses
// with them, the client's types are inferred from them, and the integration tests parse the live
// responses with them, so an undocumented or missing field fails a test. Objects are strict for
// that reason; the check records keep their check-specific figures open.
import { z } from 'zod';

/** Names the schemas that become `components.schemas` of the OpenAPI document. */
export const wireRegistry = z.registry<{ id: string; description?: string }>();

/** The same schemas by id. */
export const wireSchemas = new Map<string, z.ZodType>();

function named<S extends z.ZodType>(schema: S, id: string, description: string): S {
  wireRegistry.add(schema, { id, description });
  wireSchemas.set(id, schema);
  return schema;
}

const instant = z.iso.datetime({ offset: true });
const hash = z.string().regex(/^sha256:[0-9a-f]{64}$/);

export const ROLE_NAMES = ['admin', 'author', 'reviewer', 'lead', 'auditor'] as const;
export const VERSION_STATUSES = ['draft', 'in-review', 'released', 'withdrawn'] as const;
export const VERDICTS = ['pass', 'fail', 'incomplete'] as const;
export const RUN_STATUSES = ['queued', 'running', 'done', 'failed'] as const;

export const roleSchema = named(
  z.enum(ROLE_NAMES),
  'Role',
  'a role; a token never carries more than its owner holds'
);
export const versionStatusSchema = named(
  z.enum(VERSION_STATUSES),
  'VersionStatus',
  'draft → in-review → released → withdrawn; a rejected review returns to draft'
);
export const verdictSchema = named(z.enum(VERDICTS), 'Verdict', 'the verdict of a verification record');

export const errorBodySchema = named(
  z.strictObject({
    error: z.strictObject({
      code: z.string().meta({ description: 'stable machine code, e.g. not-found, version-not-greater' }),
      message: z.string().meta({ description: 'a sentence for people naming what is wrong' }),
      details: z.unknown().meta({
        description: 'null, the field or value concerned, or for 422 the diagnostics of the document'
      })
    })
  }),
  'Error',
  'the one error shape of the API'
);

export const personSchema = named(
  z.strictObject({ name: z.string(), email: z.string() }),
  'Person',
  'a person named in the registry'
);

export const diagnosticSchema = named(
  z.strictObject({
    line: z.int().min(1),
    column: z.int().min(1),
    path: z
      .string()
      .meta({ description: "where in the document: 'shape[2]', 'strain.B'; empty for the whole" }),
    message: z.string(),
    severity: z.enum(['error', 'warning'])
  }),
  'Diagnostic',
  'one problem of a formulation document, in its own 1-based line and column'
);

const customStrainSchema = z.strictObject({
  dofs: z.array(z.string()),
  components: z.array(z.string()),
  B: z.string(),
  D: z.string(),
  weight: z.string(),
  rigid_modes: z.array(z.string()),
  patch: z.strictObject({ displacement: z.array(z.string()) }).optional(),
  convergence: z
    .strictObject({ displacement: z.array(z.string()), body_force: z.array(z.string()) })
    .optional()
});

export const definitionSchema = named(
  z.strictObject({
    format: z.literal(1),
    name: z.string(),
    title: z.string(),
    summary: z.string().optional(),
    cell: z.enum(['interval', 'triangle', 'quadrilateral', 'tetrahedron', 'hexahedron']),
    coordinates: z.array(z.string()),
    nodes: z.array(z.array(z.number())),
    definitions: z.array(z.string()),
    shape: z.array(z.string()),
    derivatives: z.array(z.array(z.string())),
    strain: z.union([
      z.enum(['bar', 'plane-stress', 'plane-strain', 'axisymmetric', 'solid']),
      customStrainSchema
    ]),
    quadrature: z.union([
      z.strictObject({ rule: z.literal('gauss'), points: z.int() }),
      z.strictObject({ rule: z.literal('simplex'), degree: z.int() }),
      z.strictObject({ rule: z.literal('explicit'), points: z.array(z.array(z.number())) })
    ]),
    material: z.strictObject({ E: z.number(), nu: z.number() }),
    thickness: z.number().optional(),
    area: z.number().optional()
  }),
  'Definition',
  'the parsed document, every expression re-printed in canonical form (formulation-format.md)'
);

export const recordRefSchema = named(
  z.strictObject({ recordId: z.string(), verdict: verdictSchema }),
  'RecordRef',
  'the verification record a version cites'
);

export const checkResultSchema = named(
  z.looseObject({
    id: z.string(),
    required: z.boolean(),
    status: z.enum(['pass', 'fail', 'skipped', 'error']),
    message: z.string().optional(),
    metric: z.number().nullable().optional(),
    tolerance: z.number().nullable().optional()
  }),
  'CheckResult',
  'one check of the record; check-specific figures (spectrum, variants, series) ride along'
);

export const recordSchema = named(
  z.strictObject({
    engine: z.string(),
    formulation: z.string(),
    version: z.string().nullable(),
    definitionHash: hash,
    verdict: verdictSchema,
    startedAt: instant,
    durationMs: z.number(),
    checks: z.array(checkResultSchema),
    notice: z.string().optional()
  }),
  'VerificationRecord',
  'an immutable verification record (verification.md); a passing record is evidence, not approval for use'
);

export const versionDetailSchema = named(
  z.strictObject({
    name: z.string(),
    title: z.string(),
    version: z.string(),
    status: versionStatusSchema,
    source: z.string(),
    definition: definitionSchema,
    sourceHash: hash,
    definitionHash: hash,
    verification: recordRefSchema.nullable(),
    author: personSchema,
    createdAt: instant,
    updatedAt: instant,
    submittedAt: instant.nullable(),
    releasedAt: instant.nullable(),
    withdrawn: z.strictObject({ at: instant, reason: z.string(), by: personSchema.nullable() }).nullable(),
    latestRun: z.strictObject({ id: z.string(), status: z.string() }).nullable(),
    reviews: z.array(
      z.strictObject({
        reviewer: personSchema,
        decision: z.enum(['approve', 'reject']),
        comment: z.string(),
        at: instant
      })
    )
  }),
  'VersionDetail',
  'one version with its source, parsed definition, hashes and cited record'
);

export const formulationSummarySchema = named(
  z.strictObject({
    name: z.string(),
    title: z.string(),
    owner: personSchema,
    createdAt: instant,
    versions: z.int().min(0),
    latest: z
      .strictObject({
        version: z.string(),
        status: versionStatusSchema,
        cell: z.string(),
        strain: z.string(),
        definitionHash: hash,
        author: personSchema,
        updatedAt: instant,
        releasedAt: instant.nullable(),
        verification: recordRefSchema.nullable()
      })
      .nullable(),
    inReview: z.array(
      z.strictObject({ version: z.string(), author: personSchema, submittedAt: instant.nullable() })
    )
  }),
  'FormulationSummary',
  'a formulation of the catalogue with the newest version the caller may see'
);

/** `{ items, page, perPage, total }` of any item schema. */
export const pageOf = <S extends z.ZodType>(item: S) =>
  z.strictObject({
    items: z.array(item),
    page: z.int().min(1),
    perPage: z.int().min(1),
    total: z.int().min(0)
  });

export const formulationPageSchema = named(
  pageOf(formulationSummarySchema),
  'FormulationPage',
  'one page of the catalogue'
);

export const versionSummarySchema = named(
  z.strictObject({
    version: z.string(),
    status: versionStatusSchema,
    cell: z.string(),
    sourceHash: hash,
    definitionHash: hash,
    author: personSchema,
    createdAt: instant,
    releasedAt: instant.nullable(),
    withdrawnAt: instant.nullable(),
    verification: recordRefSchema.nullable()
  }),
  'VersionSummary',
  'a version as the formulation detail lists it'
);

export const formulationDetailSchema = named(
  z.strictObject({
    name: z.string(),
    title: z.string(),
    owner: personSchema,
    createdAt: instant,
    versions: z.array(versionSummarySchema),
    pins: z.array(z.strictObject({ project: z.string(), title: z.string(), version: z.string() }))
  }),
  'FormulationDetail',
  'a formulation with its versions, newest first, and the projects pinning it'
);

const checkSideSchema = z.strictObject({ status: z.string(), metric: z.number().nullable() }).nullable();
const compareEndSchema = z.strictObject({
  version: z.string(),
  status: z.string(),
  definitionHash: hash,
  recordId: z.string().nullable()
});

export const comparisonSchema = named(
  z.strictObject({
    name: z.string(),
    from: compareEndSchema,
    to: compareEndSchema,
    source: z.string().meta({ description: 'unified diff of the two sources' }),
    definition: z.array(z.string()).meta({ description: 'paths of the definition whose values differ' }),
    checks: z.array(
      z.strictObject({
        id: z.string(),
        required: z.boolean(),
        before: checkSideSchema,
        after: checkSideSchema
      })
    )
  }),
  'Comparison',
  'what changed between two versions'
);

export const runQueuedSchema = named(
  z.strictObject({ runId: z.string() }),
  'RunQueued',
  'a queued verification run'
);

export const runSchema = named(
  z.strictObject({
    id: z.string(),
    status: z.enum(RUN_STATUSES),
    progress: z.number().min(0).max(1),
    stage: z.string().nullable(),
    record: recordSchema.nullable(),
    error: z.string().optional()
  }),
  'Run',
  'a verification run; `record` once done, `error` once failed'
);

export const attachmentSchema = named(
  z.strictObject({
    id: z.string(),
    filename: z.string(),
    kind: z.enum(['pdf', 'csv', 'json']),
    mediaType: z.string(),
    size: z.int().min(0),
    sha256: z.string().regex(/^[0-9a-f]{64}$/),
    uploadedBy: personSchema,
    createdAt: instant
  }),
  'Attachment',
  'a file attached to a version (evidence such as a derivation or a comparison table)'
);

export const projectSummarySchema = named(
  z.strictObject({
    key: z.string(),
    title: z.string(),
    lead: personSchema,
    createdAt: instant,
    pins: z.int().min(0)
  }),
  'ProjectSummary',
  'a project and how many formulations it pins'
);

export const pinSchema = named(
  z.strictObject({
    name: z.string(),
    title: z.string(),
    version: z.string(),
    status: versionStatusSchema,
    definitionHash: hash,
    sourceHash: hash,
    recordId: z.string().nullable(),
    pinnedBy: personSchema,
    pinnedAt: instant
  }),
  'Pin',
  'a released version pinned by a project'
);

export const projectDetailSchema = named(
  z.strictObject({
    key: z.string(),
    title: z.string(),
    lead: personSchema,
    createdAt: instant,
    pins: z.array(pinSchema)
  }),
  'ProjectDetail',
  'a project with its pins'
);

export const manifestSchema = named(
  z.strictObject({
    project: z.strictObject({ key: z.string(), title: z.string() }),
    generatedAt: instant,
    pins: z.array(
      z.strictObject({
        name: z.string(),
        version: z.string(),
        definitionHash: hash,
        sourceHash: hash,
        recordId: z.string().nullable(),
        status: versionStatusSchema
      })
    )
  }),
  'Manifest',
  'every pin of a project with its hashes and record, so a solver can check what it runs'
);

export const auditEventSchema = named(
  z.strictObject({
    id: z.int(),
    at: instant,
    actorId: z.string().nullable(),
    actorLabel: z.string(),
    action: z.string(),
    subjectType: z.string(),
    subject: z.string(),
    before: z.unknown(),
    after: z.unknown(),
    prevHash: z.string().regex(/^[0-9a-f]{64}$/),
    hash: z.string().regex(/^[0-9a-f]{64}$/)
  }),
  'AuditEvent',
  'one event of the hash-chained audit trail'
);

export const auditPageSchema = named(
  pageOf(auditEventSchema).extend({ actions: z.array(z.string()) }),
  'AuditPage',
  'one page of the audit trail, newest first, with every action the trail holds'
);

export const chainVerdictSchema = named(
  z.strictObject({ ok: z.boolean(), events: z.int().min(0), firstBrokenId: z.int().nullable() }),
  'ChainVerdict',
  'the audit chain re-hashed'
);

export const tokenInfoSchema = named(
  z.strictObject({
    id: z.string(),
    name: z.string(),
    prefix: z.string(),
    roleCeiling: roleSchema.nullable(),
    createdAt: instant,
    expiresAt: instant.nullable(),
    lastUsedAt: instant.nullable(),
    revokedAt: instant.nullable(),
    state: z.enum(['active', 'expired', 'revoked'])
  }),
  'TokenInfo',
  'an API token as listed (never its secret)'
);

export const newTokenResultSchema = named(
  tokenInfoSchema.extend({
    token: z.string().meta({ description: 'the secret, shown in this response only' })
  }),
  'NewToken',
  'a token just created, with its secret'
);

export const meSchema = named(
  z.strictObject({
    id: z.string(),
    email: z.string(),
    name: z.string(),
    roles: z.array(roleSchema),
    via: z.enum(['session', 'token']),
    tokenId: z.string().nullable()
  }),
  'Me',
  'who is asking, with the roles this request carries'
);

export const accountSchema = named(
  z.strictObject({
    id: z.string(),
    email: z.string(),
    name: z.string(),
    roles: z.array(roleSchema),
    createdAt: instant,
    disabledAt: instant.nullable()
  }),
  'Account',
  'a person as the admin sees them'
);

export const roleChangeSchema = named(
  z.strictObject({ id: z.string(), email: z.string(), name: z.string(), roles: z.array(roleSchema) }),
  'RoleChange',
  "a person's roles after a grant or removal"
);

export const outboxMessageSchema = named(
  z.strictObject({ to: z.array(z.string()), subject: z.string(), text: z.string(), sentAt: instant }),
  'OutboxMessage',
  'a message the local mail sink received'
);

export const healthSchema = named(
  z.strictObject({ ok: z.literal(true), service: z.literal('isoledger'), api: z.literal(1) }),
  'Health',
  'liveness'
);

const shapePreviewSchema = z.strictObject({
  cell: z.string(),
  dim: z.union([z.literal(1), z.literal(2), z.literal(3)]),
  coordinates: z.array(z.string()),
  vertices: z.array(z.array(z.number())),
  edges: z.array(z.array(z.int())),
  faces: z.array(z.array(z.int())),
  nodes: z.array(z.array(z.number())),
  plot: z.strictObject({
    kind: z.enum(['line', 'area', 'surface']),
    points: z.array(z.array(z.number())),
    patches: z.array(z.array(z.int()))
  }),
  N: z.array(z.array(z.number())),
  precision: z.number()
});

export const validationSchema = named(
  z.strictObject({
    ok: z.boolean(),
    diagnostics: z.array(diagnosticSchema),
    definitionHash: hash.optional(),
    definition: definitionSchema.optional(),
    preview: shapePreviewSchema.nullable().optional(),
    previewNote: z.string().optional(),
    symbols: z
      .strictObject({
        cell: z.string(),
        coordinates: z.array(z.string()),
        fields: z.record(z.string(), z.array(z.string())),
        helpers: z.array(z.string()),
        functions: z.array(z.string())
      })
      .nullable()
  }),
  'Validation',
  'a document checked, with a tabulation of its shape functions when it is valid'
);

export type ApiErrorBody = z.infer<typeof errorBodySchema>;
export type Role = z.infer<typeof roleSchema>;
export type VersionStatus = z.infer<typeof versionStatusSchema>;
export type Verdict = z.infer<typeof verdictSchema>;
export type Person = z.infer<typeof personSchema>;
export type Diagnostic = z.infer<typeof diagnosticSchema>;
export type Definition = z.infer<typeof definitionSchema>;
export type RecordRef = z.infer<typeof recordRefSchema>;
export type CheckResult = z.infer<typeof checkResultSchema>;
export type VerificationRecord = z.infer<typeof recordSchema>;
export type VersionDetail = z.infer<typeof versionDetailSchema>;
export type FormulationSummary = z.infer<typeof formulationSummarySchema>;
export type FormulationDetail = z.infer<typeof formulationDetailSchema>;
export type VersionSummary = z.infer<typeof versionSummarySchema>;
export interface Page<T> {
  items: T[];
  page: number;
  perPage: number;
  total: number;
}
export type Comparison = z.infer<typeof comparisonSchema>;
export type RunQueued = z.infer<typeof runQueuedSchema>;
export type Run = z.infer<typeof runSchema>;
export type Attachment = z.infer<typeof attachmentSchema>;
export type ProjectSummary = z.infer<typeof projectSummarySchema>;
export type Pin = z.infer<typeof pinSchema>;
export type ProjectDetail = z.infer<typeof projectDetailSchema>;
export type Manifest = z.infer<typeof manifestSchema>;
export type ManifestPin = Manifest['pins'][number];
export type AuditEvent = z.infer<typeof auditEventSchema>;
export type AuditPage = z.infer<typeof auditPageSchema>;
export type ChainVerdict = z.infer<typeof chainVerdictSchema>;
export type TokenInfo = z.infer<typeof tokenInfoSchema>;
export type NewToken = z.infer<typeof newTokenResultSchema>;
export type Me = z.infer<typeof meSchema>;
export type Account = z.infer<typeof accountSchema>;
export type RoleChange = z.infer<typeof roleChangeSchema>;
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;
export type Health = z.infer<typeof healthSchema>;
export type Validation = z.infer<typeof validationSchema>;
