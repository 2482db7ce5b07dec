// A small HTTP client for the tests: the test server's URL, a cookie jar, the Origin header that
// SvelteKit's form check wants, and a client address of its own (the test server reads
// X-Forwarded-For, so each client has its own rate-limit bucket unless a test shares one on purpose).
import { randomBytes, randomInt } from 'node:crypto';

export function testUrl(): string {
  const url = process.env.ISOLEDGER_TEST_URL;
  if (!url)
    throw new Error('ISOLEDGER_TEST_URL is not set: run the integration tests through `npm test -- <file>`');
  return url;
}

export const DEMO_PASSWORD = process.env.ISOLEDGER_DEMO_PASSWORD || 'isoledger-demo';
export const DEMO = {
  admin: 'admin@example.com',
  author: 'author@example.com',
  reviewer: 'reviewer@example.com',
  lead: 'lead@example.com',
  auditor: 'auditor@example.com'
} as const;

/** A private (RFC 1918) address nobody else in the run is likely to draw. */
export function randomAddress(): string {
  return `10.${randomInt(256)}.${randomInt(256)}.${randomInt(1, 255)}`;
}

export interface RequestOptions {
  json?: unknown;
  form?: Record<string, string>;
  headers?: Record<string, string>;
  /** the Origin header on unsafe methods; false sends none, a string sends that one */
  origin?: boolean | string;
}

export class Client {
  readonly jar = new Map<string, string>();
  address: string;
  token: string | null;

  constructor(opts: { address?: string; token?: string } = {}) {
    this.address = opts.address ?? randomAddress();
    this.token = opts.token ?? null;
  }

  cookie(name: string): string | undefined {
    return this.jar.get(name);
  }

  async request(method: string, path: string, opts: RequestOptions = {}): Promise<Response> {
    const base = testUrl();
    const headers: Record<string, string> = { 'x-forwarded-for': this.address, ...opts.headers };
    if (this.jar.size) headers.cookie = [...this.jar].map(([k, v]) => `${k}=${v}`).join('; ');
    if (this.token) headers.authorization = `Bearer ${this.token}`;
    const origin = opts.origin ?? true;
    if (method !== 'GET' && method !== 'HEAD' && origin !== false)
      headers.origin = origin === true ? base : origin;
    let body: string | undefined;
    if (opts.json !== undefined) {
      headers['content-type'] ??= 'application/json';
      body = JSON.stringify(opts.json);
    } else if (opts.form) {
      headers['content-type'] ??= 'application/x-www-form-urlencoded';
      body = new URLSearchParams(opts.form).toString();
    }
    const r = await fetch(new URL(path, base), { method, headers, body, redirect: 'manual' });
    for (const c of r.headers.getSetCookie()) {
      const [pair, ...attrs] = c.split(';');
      const eq = pair.indexOf('=');
      const name = pair.slice(0, eq).trim();
      const value = pair.slice(eq + 1).trim();
      const expired = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a)) || value === '';
      if (expired) this.jar.delete(name);
      else this.jar.set(name, value);
    }
    return r;
  }

  get(path: string, headers?: Record<string, string>): Promise<Response> {
    return this.request('GET', path, { headers });
  }

  /** A form post as a browser without JavaScript sends it: SvelteKit answers with the page, not JSON. */
  postForm(
    path: string,
    form: Record<string, string>,
    opts: Omit<RequestOptions, 'form' | 'json'> = {}
  ): Promise<Response> {
    return this.request('POST', path, { ...opts, form, headers: { accept: 'text/html', ...opts.headers } });
  }

  /** GET and parse JSON, failing with the body when the status is not the one expected. */
  async getJson<T = unknown>(path: string, status = 200): Promise<T> {
    const r = await this.get(path);
    const text = await r.text();
    if (r.status !== status)
      throw new Error(`GET ${path}: expected ${status}, got ${r.status}: ${text.slice(0, 500)}`);
    return JSON.parse(text) as T;
  }

  async sendJson<T = unknown>(method: string, path: string, json: unknown, status = 200): Promise<T> {
    const r = await this.request(method, path, { json });
    const text = await r.text();
    if (r.status !== status)
      throw new Error(`${method} ${path}: expected ${status}, got ${r.status}: ${text.slice(0, 500)}`);
    return JSON.parse(text) as T;
  }

  /** Signs in through the sign-in form; throws unless the server answers with the redirect of a success. */
  async signIn(email: string, password = DEMO_PASSWORD): Promise<this> {
    const r = await this.postForm('/sign-in', { email, password });
    if (r.status !== 303)
      throw new Error(`sign-in of ${email} failed with ${r.status}: ${(await r.text()).slice(0, 300)}`);
    return this;
  }
}

/** A signed-in client for one of the demo accounts. */
export function signedIn(email: string, password = DEMO_PASSWORD): Promise<Client> {
  return new Client().signIn(email, password);
}

export interface FreshAccount {
  client: Client;
  id: string;
  email: string;
  name: string;
  password: string;
}

/** A new account made through the sign-up form, signed in; an admin grants the roles asked for. */
export async function freshAccount(label: string, roles: string[] = []): Promise<FreshAccount> {
  const suffix = randomBytes(4).toString('hex');
  const email = `${label}-${suffix}@fenwold.example`;
  const name = `Test ${label} ${suffix}`;
  const password = `pw-${randomBytes(9).toString('base64url')}`;
  const client = new Client();
  const r = await client.postForm('/sign-up', { name, email, password, confirm: password });
  if (r.status !== 303)
    throw new Error(`sign-up of ${email} failed with ${r.status}: ${(await r.text()).slice(0, 300)}`);
  const me = await client.getJson<{ id: string }>('/api/v1/me');
  if (roles.length) {
    const admin = await signedIn(DEMO.admin);
    for (const role of roles) await admin.sendJson('PUT', `/api/v1/people/${me.id}/roles/${role}`, {});
  }
  return { client, id: me.id, email, name, password };
}
