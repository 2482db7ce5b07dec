// Rate limits per API token and per client address, shared by several server processes on one
// MariaDB: two more processes of the built server run beside the test server with low limits, and
// requests alternate between them. 429 comes with Retry-After in the API's error shape; liveness and
// page loads are not counted; a new window admits again. The same two processes show that a
// withdrawal made in one process reaches the other's cache of released versions.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@isoledger/client';
import { startServer, type RunningServer } from '../../packages/devstack/src/server';
import { freePort } from '../../packages/devstack/src/net';
import { DEMO, DEMO_PASSWORD, randomAddress, signedIn, testUrl, type Client } from '../support/http';
import { closeTestDb, select } from '../support/db';
import { catalogueSource, createFormulation, released, tag, withdraw } from '../support/registry-fixtures';

const PER_TOKEN = 6;
const PER_ADDRESS = 10;
const WINDOW_SECONDS = 20;
/** a test starts only with this much of the window left, so its requests all fall in one window */
const ROOM_MS = 8_000;

let servers: RunningServer[] = [];
let reviewer: Client;
let author: Client;

beforeAll(async () => {
  const env = {
    ISOLEDGER_WORKERS: '0',
    ADDRESS_HEADER: 'x-forwarded-for',
    XFF_DEPTH: '1',
    API_RATE_PER_TOKEN: String(PER_TOKEN),
    API_RATE_PER_ADDRESS: String(PER_ADDRESS),
    API_RATE_WINDOW_SECONDS: String(WINDOW_SECONDS)
  };
  servers = await Promise.all([
    startServer({ port: await freePort(), env, quiet: true }),
    startServer({ port: await freePort(), env, quiet: true })
  ]);
  [author, reviewer] = await Promise.all([signedIn(DEMO.author), signedIn(DEMO.reviewer)]);
});

afterAll(async () => {
  await Promise.all(servers.map((s) => s.stop()));
  await closeTestDb();
});

/** Waits for the next window when the current one ends too soon. */
async function roomInWindow(): Promise<void> {
  const span = WINDOW_SECONDS * 1000;
  const left = span - (Date.now() % span);
  if (left < ROOM_MS) await new Promise((r) => setTimeout(r, left + 50));
}

/** Request i goes to server i mod 2. */
function call(i: number, path: string, headers: Record<string, string>): Promise<Response> {
  return fetch(`${servers[i % 2].url}${path}`, { headers });
}

async function newToken(): Promise<{ token: string; id: string }> {
  const r = await fetch(`${testUrl()}/api/v1/auth/token`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': randomAddress() },
    body: JSON.stringify({ email: DEMO.author, password: DEMO_PASSWORD, name: `rate ${tag()}` })
  });
  expect(r.status).toBe(201);
  return (await r.json()) as { token: string; id: string };
}

async function expect429(r: Response, words: RegExp): Promise<void> {
  expect(r.status).toBe(429);
  const retry = Number(r.headers.get('retry-after'));
  expect(Number.isInteger(retry)).toBe(true);
  expect(retry).toBeGreaterThanOrEqual(1);
  expect(retry).toBeLessThanOrEqual(WINDOW_SECONDS);
  const body = errorBodySchema.parse(await r.json());
  expect(body.error.code).toBe('rate-limited');
  expect(body.error.message).toMatch(words);
  expect(body.error.details).toEqual({ retryAfterSeconds: retry });
}

describe('rate limits shared by two server processes', () => {
  it(`admits ${PER_ADDRESS} requests from one address across both processes, then 429 with Retry-After`, async () => {
    await roomInWindow();
    const address = randomAddress();
    for (let i = 0; i < PER_ADDRESS; i++) {
      const r = await call(i, '/api/v1/openapi.json', { 'x-forwarded-for': address });
      expect(r.status, `request ${i + 1}`).toBe(200);
      await r.body?.cancel();
    }
    await expect429(
      await call(PER_ADDRESS, '/api/v1/openapi.json', { 'x-forwarded-for': address }),
      /network address/
    );
    await expect429(
      await call(PER_ADDRESS + 1, '/api/v1/openapi.json', { 'x-forwarded-for': address }),
      /network address/
    );
    const other = await call(0, '/api/v1/openapi.json', { 'x-forwarded-for': randomAddress() });
    expect(other.status).toBe(200);
    await other.body?.cancel();
  });

  it(`admits ${PER_TOKEN} requests with one token from any addresses, then 429; another token is not affected`, async () => {
    await roomInWindow();
    const a = await newToken();
    const b = await newToken();
    for (let i = 0; i < PER_TOKEN; i++) {
      const r = await call(i, '/api/v1/me', {
        authorization: `Bearer ${a.token}`,
        'x-forwarded-for': randomAddress()
      });
      expect(r.status, `request ${i + 1}`).toBe(200);
      await r.body?.cancel();
    }
    await expect429(
      await call(PER_TOKEN, '/api/v1/me', {
        authorization: `Bearer ${a.token}`,
        'x-forwarded-for': randomAddress()
      }),
      /API token/
    );
    const other = await call(1, '/api/v1/me', {
      authorization: `Bearer ${b.token}`,
      'x-forwarded-for': randomAddress()
    });
    expect(other.status).toBe(200);
    expect((await other.json()).tokenId).toBe(b.id);
    // the shared count: both processes together reserved exactly the limit, one hit at a time
    const rows = await select<{ hits: number }>('SELECT hits FROM rate_limits WHERE bucket = ?', [
      `api:token:${a.id}`
    ]);
    expect(rows.map((r) => Number(r.hits))).toEqual([PER_TOKEN]);
  });

  it('admits again in the next window, after the seconds Retry-After named', async () => {
    await roomInWindow();
    const address = randomAddress();
    let last: Response | null = null;
    for (let i = 0; i <= PER_ADDRESS; i++) {
      last = await call(i, '/api/v1/openapi.json', { 'x-forwarded-for': address });
      if (i < PER_ADDRESS) await last.body?.cancel();
    }
    expect(last!.status).toBe(429);
    const wait = Number(last!.headers.get('retry-after'));
    await last!.body?.cancel();
    await new Promise((r) => setTimeout(r, wait * 1000 + 100));
    const again = await call(0, '/api/v1/openapi.json', { 'x-forwarded-for': address });
    expect(again.status).toBe(200);
    await again.body?.cancel();
  });

  it('never counts liveness, nor the API reads a page makes while it renders', async () => {
    await roomInWindow();
    const address = randomAddress();
    for (let i = 0; i < PER_ADDRESS + 5; i++) {
      const r = await call(i, '/api/v1/health', { 'x-forwarded-for': address });
      expect(r.status, `health ${i + 1}`).toBe(200);
      await r.body?.cancel();
    }
    // the catalogue page loads /api/v1/formulations on the server for every view
    const cookie = `isoledger_session=${author.cookie('isoledger_session')}`;
    for (let i = 0; i < PER_ADDRESS + 2; i++) {
      const r = await call(i, '/formulations', { cookie, 'x-forwarded-for': address, accept: 'text/html' });
      expect(r.status, `page ${i + 1}`).toBe(200);
      await r.body?.cancel();
    }
    const api = await call(0, '/api/v1/formulations', { cookie, 'x-forwarded-for': address });
    expect(api.status).toBe(200);
    await api.body?.cancel();
  });
});

describe('the cache of released versions across processes', () => {
  it("shows a withdrawal made through another process within the cache's revalidation time", async () => {
    const name = `rate-cache-${tag()}`;
    await createFormulation(author, name, 'Cache across processes');
    await released({ author, reviewer }, name, '1.0.0', catalogueSource('tri3-membrane', name));
    const cookie = `isoledger_session=${author.cookie('isoledger_session')}`;
    const path = `/api/v1/formulations/${name}/versions/1.0.0`;
    const get = async () => {
      const r = await call(0, path, { cookie, 'x-forwarded-for': randomAddress() });
      expect(r.status).toBe(200);
      return ((await r.json()) as { status: string }).status;
    };
    expect(await get()).toBe('released');
    // withdrawn through the test server, a process that never held the entry
    await withdraw(reviewer, name, '1.0.0', 'Withdrawn to see the other process notice.');
    const until = Date.now() + 10_000;
    let status = await get();
    while (status !== 'withdrawn' && Date.now() < until) {
      await new Promise((r) => setTimeout(r, 200));
      status = await get();
    }
    expect(status).toBe('withdrawn');
  });
});
