// A typed, fetch-based client of every route of the Isoledger API v1 (api.md). Bearer tokens, errors
// as typed exceptions with the API's error code, page iterators, and ETag-aware caching of the
// immutable representations. Works wherever fetch does (Node.js 20, browsers, workers).
import { immutableLifetime, isFresh, MemoryCache, type CacheStore } from './cache';
import { ConnectionError, errorFromResponse, RateLimitedError } from './errors';
import type {
  Account,
  Attachment,
  AuditPage,
  ChainVerdict,
  Comparison,
  FormulationDetail,
  FormulationSummary,
  Health,
  Manifest,
  Me,
  NewToken,
  OutboxMessage,
  Page,
  ProjectDetail,
  ProjectSummary,
  Role,
  RoleChange,
  Run,
  RunQueued,
  TokenInfo,
  Validation,
  VerificationRecord,
  VersionDetail
} from './schemas';

export interface ClientOptions {
  /** the server's origin, e.g. https://isoledger.example (the /api/v1 prefix is added) */
  baseUrl: string;
  /** an API token ('iso_…'), sent as Authorization: Bearer */
  token?: string | null;
  /** a fetch of your own (a proxy agent, a test double of the network); the global fetch by default */
  fetch?: typeof globalThis.fetch;
  /** where immutable representations are kept; false turns caching off */
  cache?: CacheStore | false;
  /**
   * 'revalidate' (default) asks the server with If-None-Match every time: a 304 costs no body, and
   * withdrawal still shows (the ETag changes). 'trust' serves a fresh entry without asking at all.
   */
  cacheMode?: 'revalidate' | 'trust';
  /** how often to wait out a 429 (Retry-After) before giving up; 0 by default */
  rateLimitRetries?: number;
  /** the longest Retry-After the client waits for; a longer one is thrown at once */
  maxRetryWaitSeconds?: number;
  /** extra headers on every request */
  headers?: Record<string, string>;
}

export type Query = Record<string, string | number | boolean | null | undefined>;

export interface ListFormulationsQuery {
  q?: string;
  cell?: string;
  status?: string;
  strain?: string;
  author?: string;
  sort?: string;
  inReview?: boolean;
  page?: number;
  perPage?: number;
}

export interface AuditQuery {
  subject?: string;
  actor?: string;
  action?: string;
  from?: string;
  until?: string;
  page?: number;
  perPage?: number;
}

export interface TokenRequest {
  name: string;
  /** the role ceiling; omitted or null means all of the owner's roles */
  role?: Role | null;
  expiresInDays?: number | null;
}

/** A record with the exact bytes the server sent and their strong ETag (`"<sha-256 of the bytes>"`). */
export interface RecordWithBytes {
  record: VerificationRecord;
  text: string;
  etag: string | null;
}

export interface WaitOptions {
  intervalMs?: number;
  timeoutMs?: number;
  onProgress?(run: Run): void;
}

const API_PREFIX = '/api/v1';
const seg = (s: string) => encodeURIComponent(s);

/** Every item of a paged list, page after page, until `total` is reached. */
export async function* paginate<T>(fetchPage: (page: number) => Promise<Page<T>>): AsyncGenerator<T> {
  for (let page = 1; ; page++) {
    const p = await fetchPage(page);
    yield* p.items;
    if (p.items.length === 0 || p.page * p.perPage >= p.total) return;
  }
}

/** Collects an async iterator into an array. */
export async function collect<T>(items: AsyncIterable<T>): Promise<T[]> {
  const out: T[] = [];
  for await (const item of items) out.push(item);
  return out;
}

interface SendOptions {
  query?: Query;
  json?: unknown;
  body?: BodyInit;
  contentType?: string;
  accept?: string;
}

export class IsoledgerClient {
  readonly baseUrl: string;
  token: string | null;
  private readonly doFetch: typeof globalThis.fetch;
  private readonly cache: CacheStore | null;
  private readonly cacheMode: 'revalidate' | 'trust';
  private readonly rateLimitRetries: number;
  private readonly maxRetryWaitSeconds: number;
  private readonly headers: Record<string, string>;

  constructor(options: ClientOptions) {
    let base: URL;
    try {
      base = new URL(options.baseUrl);
    } catch {
      throw new TypeError(
        `baseUrl must be an absolute URL such as https://isoledger.example, got '${options.baseUrl}'`
      );
    }
    if (base.protocol !== 'http:' && base.protocol !== 'https:')
      throw new TypeError(`baseUrl must be http: or https:, got '${base.protocol}'`);
    this.baseUrl = base.origin + base.pathname.replace(/\/+$/, '');
    this.token = options.token ?? null;
    this.doFetch = options.fetch ?? globalThis.fetch.bind(globalThis);
    this.cache = options.cache === false ? null : (options.cache ?? new MemoryCache());
    this.cacheMode = options.cacheMode ?? 'revalidate';
    this.rateLimitRetries = options.rateLimitRetries ?? 0;
    this.maxRetryWaitSeconds = options.maxRetryWaitSeconds ?? 60;
    this.headers = { ...options.headers };
  }

  /** The full URL of an API path such as `/formulations`. */
  url(path: string, query?: Query): string {
    const u = new URL(this.baseUrl + API_PREFIX + path);
    for (const [k, v] of Object.entries(query ?? {}))
      if (v !== undefined && v !== null) u.searchParams.set(k, String(v));
    return u.toString();
  }

  /** One request; a status outside 2xx and 304 becomes the typed error of its status. */
  async send(method: string, path: string, opts: SendOptions = {}): Promise<Response> {
    const url = this.url(path, opts.query);
    const headers: Record<string, string> = { accept: opts.accept ?? 'application/json', ...this.headers };
    if (this.token) headers.authorization = `Bearer ${this.token}`;
    let body = opts.body;
    if (opts.json !== undefined) {
      headers['content-type'] = 'application/json';
      body = JSON.stringify(opts.json);
    } else if (opts.contentType) headers['content-type'] = opts.contentType;
    const cached = method === 'GET' && this.cache ? await this.cache.get(url) : undefined;
    if (cached) {
      if (this.cacheMode === 'trust' && isFresh(cached)) return cachedResponse(cached, 200);
      headers['if-none-match'] = cached.etag;
    }
    for (let attempt = 0; ; attempt++) {
      let r: Response;
      try {
        r = await this.doFetch(url, { method, headers, body });
      } catch (e) {
        throw new ConnectionError(`could not reach ${url}: ${(e as Error).message}`, url, { cause: e });
      }
      if (r.status === 304 && cached) {
        await r.body?.cancel();
        const again = { ...cached, storedAt: Date.now() };
        await this.cache!.set(url, again);
        return cachedResponse(again, 200);
      }
      if (r.ok) {
        const lifetime = method === 'GET' && this.cache ? immutableLifetime(r.headers) : null;
        if (lifetime === null) return r;
        const text = await r.text();
        const entry = {
          etag: r.headers.get('etag')!,
          body: text,
          contentType: r.headers.get('content-type') ?? 'application/octet-stream',
          storedAt: Date.now(),
          maxAgeSeconds: lifetime
        };
        await this.cache!.set(url, entry);
        return cachedResponse(entry, r.status);
      }
      const error = await errorFromResponse(r, { method, url, requestId: r.headers.get('x-request-id') });
      if (
        error instanceof RateLimitedError &&
        attempt < this.rateLimitRetries &&
        error.retryAfterSeconds <= this.maxRetryWaitSeconds
      ) {
        await new Promise((res) => setTimeout(res, error.retryAfterSeconds * 1000));
        continue;
      }
      throw error;
    }
  }

  private async json<T>(method: string, path: string, opts: SendOptions = {}): Promise<T> {
    const r = await this.send(method, path, opts);
    const text = await r.text();
    try {
      return JSON.parse(text) as T;
    } catch {
      throw new ConnectionError(
        `${method} ${this.url(path, opts.query)} answered ${r.status} with a body that is not JSON: ${text.slice(0, 200)}`,
        this.url(path, opts.query)
      );
    }
  }

  private get<T>(path: string, query?: Query): Promise<T> {
    return this.json<T>('GET', path, { query });
  }

  // ── service ──────────────────────────────────────────────────────────────────────────────────

  /** GET /health: liveness. */
  health(): Promise<Health> {
    return this.get('/health');
  }

  /** GET /openapi.json: the OpenAPI 3.1 description of the API. */
  openapi(): Promise<Record<string, unknown>> {
    return this.get('/openapi.json');
  }

  /** GET /me: who this client acts as, with the roles its token carries. */
  me(): Promise<Me> {
    return this.get('/me');
  }

  /** POST /validate: checks a document and tabulates its shape functions. */
  validate(source: string): Promise<Validation> {
    return this.json('POST', '/validate', { json: { source } });
  }

  // ── tokens ───────────────────────────────────────────────────────────────────────────────────

  readonly auth = {
    /** POST /auth/token: a token from e-mail and password (rate-limited like sign-in). */
    createToken: (input: TokenRequest & { email: string; password: string }): Promise<NewToken> =>
      this.json('POST', '/auth/token', { json: input })
  };

  /** Managing tokens needs a browser session: a token cannot mint or revoke tokens (403). */
  readonly tokens = {
    /** GET /tokens */
    list: (): Promise<TokenInfo[]> => this.get('/tokens'),
    /** POST /tokens */
    create: (input: TokenRequest): Promise<NewToken> => this.json('POST', '/tokens', { json: input }),
    /** DELETE /tokens/{id} */
    revoke: (id: string): Promise<TokenInfo> => this.json('DELETE', `/tokens/${seg(id)}`)
  };

  // ── formulations and versions ────────────────────────────────────────────────────────────────

  readonly formulations = {
    /** GET /formulations: one page of the catalogue. */
    list: (query: ListFormulationsQuery = {}): Promise<Page<FormulationSummary>> =>
      this.get('/formulations', listQuery(query)),
    /** Every formulation matching the query, page after page. */
    all: (query: Omit<ListFormulationsQuery, 'page'> = {}): AsyncGenerator<FormulationSummary> =>
      paginate((page) => this.formulations.list({ ...query, page })),
    /** POST /formulations (author) */
    create: (input: { name: string; title: string }): Promise<FormulationSummary> =>
      this.json('POST', '/formulations', { json: input }),
    /** GET /formulations/{name} */
    get: (name: string): Promise<FormulationDetail> => this.get(`/formulations/${seg(name)}`),
    /** GET /formulations/{name}/compare?from=&to= */
    compare: (name: string, range: { from?: string; to?: string } = {}): Promise<Comparison> =>
      this.get(`/formulations/${seg(name)}/compare`, range)
  };

  readonly versions = {
    /** POST /formulations/{name}/versions (author): a draft; InvalidDocumentError carries the diagnostics. */
    create: (name: string, input: { version: string; source: string }): Promise<VersionDetail> =>
      this.json('POST', `/formulations/${seg(name)}/versions`, { json: input }),
    /** GET /formulations/{name}/versions/{version}; cached by ETag once released. */
    get: (name: string, version: string): Promise<VersionDetail> => this.get(versionPath(name, version)),
    /** GET …/source: the YAML document exactly as written. */
    source: async (name: string, version: string): Promise<string> =>
      (await this.send('GET', `${versionPath(name, version)}/source`, { accept: 'application/yaml' })).text(),
    /** PUT …/{version} (author): replaces a draft's source; ConflictError once not a draft. */
    replace: (name: string, version: string, input: { source: string }): Promise<VersionDetail> =>
      this.json('PUT', versionPath(name, version), { json: input }),
    /** POST …/runs (author): queues a verification run. */
    queueRun: (name: string, version: string): Promise<RunQueued> =>
      this.json('POST', `${versionPath(name, version)}/runs`),
    /** POST …/submit (author): draft → in-review. */
    submit: (name: string, version: string): Promise<VersionDetail> =>
      this.json('POST', `${versionPath(name, version)}/submit`),
    /** POST …/review (reviewer, not an author of the version) */
    review: (
      name: string,
      version: string,
      input: { decision: 'approve' | 'reject'; comment?: string }
    ): Promise<VersionDetail> => this.json('POST', `${versionPath(name, version)}/review`, { json: input }),
    /** POST …/withdraw (reviewer): released → withdrawn. */
    withdraw: (name: string, version: string, input: { reason: string }): Promise<VersionDetail> =>
      this.json('POST', `${versionPath(name, version)}/withdraw`, { json: input })
  };

  readonly attachments = {
    /** GET …/attachments */
    list: (name: string, version: string): Promise<Attachment[]> =>
      this.get(`${versionPath(name, version)}/attachments`),
    /** POST …/attachments (author, drafts only): a PDF, CSV or JSON file, typed by its content. */
    upload: (
      name: string,
      version: string,
      file: { filename: string; bytes: Uint8Array }
    ): Promise<Attachment> =>
      this.json('POST', `${versionPath(name, version)}/attachments`, {
        query: { filename: file.filename },
        body: file.bytes as BodyInit,
        contentType: 'application/octet-stream'
      }),
    /** GET …/attachments/{id}: the bytes and the SHA-256 the server stored. */
    download: async (
      name: string,
      version: string,
      id: string
    ): Promise<{ bytes: Uint8Array; mediaType: string; sha256: string | null }> => {
      const r = await this.send('GET', `${versionPath(name, version)}/attachments/${seg(id)}`, {
        accept: '*/*'
      });
      return {
        bytes: new Uint8Array(await r.arrayBuffer()),
        mediaType: r.headers.get('content-type') ?? 'application/octet-stream',
        sha256: r.headers.get('x-content-sha256')
      };
    },
    /** DELETE …/attachments/{id} (author, drafts only) */
    remove: async (name: string, version: string, id: string): Promise<void> => {
      await (
        await this.send('DELETE', `${versionPath(name, version)}/attachments/${seg(id)}`)
      ).body?.cancel();
    }
  };

  // ── verification ─────────────────────────────────────────────────────────────────────────────

  readonly runs = {
    /** GET /runs/{id} */
    get: (id: string): Promise<Run> => this.get(`/runs/${seg(id)}`),
    /** Polls a run until it is done or failed. */
    wait: async (id: string, opts: WaitOptions = {}): Promise<Run> => {
      const interval = opts.intervalMs ?? 500;
      const until = Date.now() + (opts.timeoutMs ?? 600_000);
      for (;;) {
        const run = await this.runs.get(id);
        opts.onProgress?.(run);
        if (run.status === 'done' || run.status === 'failed') return run;
        if (Date.now() > until)
          throw new Error(`run ${id} is still ${run.status} after ${opts.timeoutMs ?? 600_000} ms`);
        await new Promise((res) => setTimeout(res, interval));
      }
    }
  };

  readonly records = {
    /** GET /records/{id}: an immutable verification record (cached by ETag). */
    get: async (id: string): Promise<VerificationRecord> => (await this.records.getWithBytes(id)).record,
    /** The record with the bytes as sent and their ETag, for integrity checks. */
    getWithBytes: async (id: string): Promise<RecordWithBytes> => {
      const r = await this.send('GET', `/records/${seg(id)}`);
      const text = await r.text();
      return { record: JSON.parse(text) as VerificationRecord, text, etag: r.headers.get('etag') };
    }
  };

  // ── projects ─────────────────────────────────────────────────────────────────────────────────

  readonly projects = {
    /** GET /projects */
    list: (): Promise<ProjectSummary[]> => this.get('/projects'),
    /** POST /projects (lead) */
    create: (input: { key: string; title: string }): Promise<ProjectSummary> =>
      this.json('POST', '/projects', { json: input }),
    /** GET /projects/{key} */
    get: (key: string): Promise<ProjectDetail> => this.get(`/projects/${seg(key)}`),
    /** PUT /projects/{key}/pins/{name} (lead): pins a released version, replacing an earlier pin. */
    pin: (key: string, name: string, version: string): Promise<ProjectDetail> =>
      this.json('PUT', `/projects/${seg(key)}/pins/${seg(name)}`, { json: { version } }),
    /** DELETE /projects/{key}/pins/{name} (lead) */
    unpin: (key: string, name: string): Promise<ProjectDetail> =>
      this.json('DELETE', `/projects/${seg(key)}/pins/${seg(name)}`),
    /** GET /projects/{key}/manifest: every pin with its hashes and record. */
    manifest: (key: string): Promise<Manifest> => this.get(`/projects/${seg(key)}/manifest`)
  };

  // ── audit and administration ─────────────────────────────────────────────────────────────────

  readonly audit = {
    /** GET /audit (auditor, admin): one page, newest first. */
    list: (query: AuditQuery = {}): Promise<AuditPage> => this.get('/audit', auditQuery(query)),
    /** Every event matching the query, newest first. */
    all: (query: Omit<AuditQuery, 'page'> = {}) => paginate((page) => this.audit.list({ ...query, page })),
    /** GET /audit/verify (auditor, admin): re-hashes the chain. */
    verify: (): Promise<ChainVerdict> => this.get('/audit/verify')
  };

  readonly people = {
    /** GET /people (admin) */
    list: (): Promise<Account[]> => this.get('/people'),
    /** PUT /people/{id}/roles/{role} (admin) */
    grantRole: (id: string, role: Role): Promise<RoleChange> =>
      this.json('PUT', `/people/${seg(id)}/roles/${seg(role)}`),
    /** DELETE /people/{id}/roles/{role} (admin); never the last admin's admin role. */
    removeRole: (id: string, role: Role): Promise<RoleChange> =>
      this.json('DELETE', `/people/${seg(id)}/roles/${seg(role)}`)
  };

  /** GET /outbox (admin): what the local mail sink received, while it is the transport. */
  outbox(): Promise<OutboxMessage[]> {
    return this.get('/outbox');
  }
}

function versionPath(name: string, version: string): string {
  return `/formulations/${seg(name)}/versions/${seg(version)}`;
}

function listQuery(q: ListFormulationsQuery): Query {
  return {
    q: q.q,
    cell: q.cell,
    status: q.status,
    strain: q.strain,
    author: q.author,
    sort: q.sort,
    in_review: q.inReview === undefined ? undefined : String(q.inReview),
    page: q.page,
    per_page: q.perPage
  };
}

function auditQuery(q: AuditQuery): Query {
  return {
    subject: q.subject,
    actor: q.actor,
    action: q.action,
    from: q.from,
    until: q.until,
    page: q.page,
    per_page: q.perPage
  };
}

function cachedResponse(
  entry: { body: string; contentType: string; etag: string },
  status: number
): Response {
  return new Response(entry.body, {
    status,
    headers: { 'content-type': entry.contentType, etag: entry.etag }
  });
}

/** Where `npm start` serves Isoledger on this machine. */
export const DEFAULT_SERVER = 'http://127.0.0.1:4310';

/**
 * Server and token for scripts: the options given, else ISOLEDGER_SERVER and ISOLEDGER_TOKEN from
 * the environment, else the local server without a token.
 */
export function connectionFrom(
  given: { server?: string; token?: string },
  env: Record<string, string | undefined> = (
    globalThis as { process?: { env: Record<string, string | undefined> } }
  ).process?.env ?? {}
): { baseUrl: string; token: string | null } {
  return {
    baseUrl: given.server || env.ISOLEDGER_SERVER || DEFAULT_SERVER,
    token: given.token || env.ISOLEDGER_TOKEN || null
  };
}
