// Every registry route × every role, allowed or refused as api.md's route table says: nobody
// signed in → 401; a signed-in person without the role → 403 naming the role; allowed → anything
// but 401/403 (requests are built so that an allowed one is then refused for its content, 400,
// 404 or 409, and changes nothing, or reads).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createUser, findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { closeDatabase } from '../../src/lib/server/db';

/** API answers are checked field by field below. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const BASE = process.env.ISOLEDGER_TEST_URL!;
const tag = Math.random().toString(36).slice(2, 8);
const NAME = `bar2-roles-${tag}`;
const PROJECT = `ROLES-${tag.toUpperCase()}`;
const E = 3_000 + Math.floor(Math.random() * 1e6);

const ROLES = ['admin', 'author', 'reviewer', 'lead', 'auditor', 'none'] as const;
type Who = (typeof ROLES)[number];
const tokens = {} as Record<Who, string>;

function bar(E: number): string {
  return `format: 1
name: ${NAME}
title: Two-node bar for the role table
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${E}, nu: 0.3 }
`;
}

async function call(who: Who | null, method: string, path: string, body?: unknown) {
  const headers: Record<string, string> = {};
  if (who) headers.authorization = `Bearer ${tokens[who]}`;
  if (body !== undefined) headers['content-type'] = 'application/json';
  const r = await fetch(`${BASE}/api/v1${path}`, {
    method,
    headers,
    body: body === undefined ? undefined : JSON.stringify(body)
  });
  const text = await r.text();
  let json: Json = null;
  try {
    json = JSON.parse(text);
  } catch {
    json = null;
  }
  return { status: r.status, json, text };
}

async function waitForRun(runId: string): Promise<void> {
  for (let i = 0; i < 600; i++) {
    const r = await call('author', 'GET', `/runs/${runId}`);
    if (r.json.status === 'done') return;
    if (r.json.status === 'failed') throw new Error(r.json.error);
    await new Promise((res) => setTimeout(res, 250));
  }
  throw new Error(`run ${runId} did not finish`);
}

beforeAll(async () => {
  for (const role of ROLES.filter((r) => r !== 'none')) {
    const u = (await findUserByEmail(`${role}@example.com`))!;
    tokens[role] = (await createToken(u, { name: `roles ${tag}`, roleCeiling: null, expiresAt: null })).token;
  }
  const nobody = await createUser(
    { email: `nobody-${tag}@example.com`, name: 'Person without roles', password: 'a-long-test-password' },
    null
  );
  tokens.none = (
    await createToken(nobody, { name: `roles ${tag}`, roleCeiling: null, expiresAt: null })
  ).token;
  // fixtures: 1.0.0 released, 1.1.0 a draft, a project pinning 1.0.0
  expect(
    (await call('author', 'POST', '/formulations', { name: NAME, title: 'Role table bar' })).status
  ).toBe(201);
  expect(
    (await call('author', 'POST', `/formulations/${NAME}/versions`, { version: '1.0.0', source: bar(E) }))
      .status
  ).toBe(201);
  const run = await call('author', 'POST', `/formulations/${NAME}/versions/1.0.0/runs`);
  await waitForRun(run.json.runId);
  expect((await call('author', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`)).status).toBe(200);
  expect(
    (
      await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
        decision: 'approve',
        comment: ''
      })
    ).status
  ).toBe(200);
  expect(
    (await call('author', 'POST', `/formulations/${NAME}/versions`, { version: '1.1.0', source: bar(E + 1) }))
      .status
  ).toBe(201);
  expect(
    (await call('lead', 'POST', '/projects', { key: PROJECT, title: 'Role table project' })).status
  ).toBe(201);
  expect((await call('lead', 'PUT', `/projects/${PROJECT}/pins/${NAME}`, { version: '1.0.0' })).status).toBe(
    200
  );
});

afterAll(async () => {
  await closeDatabase();
});

const SIGNED_IN: readonly Who[] = ROLES;
const DRAFT_READERS: readonly Who[] = ['author', 'reviewer', 'auditor'];

interface Row {
  route: string;
  method: string;
  path: () => string;
  body?: unknown;
  allowed: readonly Who[];
  /** the role the 403 message must name */
  needs?: string;
}

// Bodies of the mutations are refused after the role check (bad name, bad version, wrong status …).
const TABLE: Row[] = [
  { route: 'list formulations', method: 'GET', path: () => '/formulations', allowed: SIGNED_IN },
  {
    route: 'create formulation',
    method: 'POST',
    path: () => '/formulations',
    body: { name: 'X', title: 't' },
    allowed: ['author'],
    needs: 'author'
  },
  { route: 'formulation detail', method: 'GET', path: () => `/formulations/${NAME}`, allowed: SIGNED_IN },
  {
    route: 'create draft',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions`,
    body: { version: 'bad', source: '' },
    allowed: ['author'],
    needs: 'author'
  },
  {
    route: 'replace draft source',
    method: 'PUT',
    path: () => `/formulations/${NAME}/versions/1.0.0`,
    body: { source: bar(E) },
    allowed: ['author'],
    needs: 'author'
  },
  {
    route: 'released version',
    method: 'GET',
    path: () => `/formulations/${NAME}/versions/1.0.0`,
    allowed: SIGNED_IN
  },
  {
    route: 'released source',
    method: 'GET',
    path: () => `/formulations/${NAME}/versions/1.0.0/source`,
    allowed: SIGNED_IN
  },
  {
    route: 'draft version',
    method: 'GET',
    path: () => `/formulations/${NAME}/versions/1.1.0`,
    allowed: DRAFT_READERS,
    needs: 'author, reviewer and auditor'
  },
  {
    route: 'draft source',
    method: 'GET',
    path: () => `/formulations/${NAME}/versions/1.1.0/source`,
    allowed: DRAFT_READERS,
    needs: 'author, reviewer and auditor'
  },
  {
    route: 'queue run',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions/1.0.0/runs`,
    allowed: ['author'],
    needs: 'author'
  },
  {
    route: 'submit',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions/1.0.0/submit`,
    allowed: ['author'],
    needs: 'author'
  },
  {
    route: 'review',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions/1.0.0/review`,
    body: { decision: 'approve' },
    allowed: ['reviewer'],
    needs: 'reviewer'
  },
  {
    route: 'withdraw',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions/1.1.0/withdraw`,
    body: { reason: 'x' },
    allowed: ['reviewer'],
    needs: 'reviewer'
  },
  {
    route: 'compare released',
    method: 'GET',
    path: () => `/formulations/${NAME}/compare?from=1.0.0&to=1.0.0`,
    allowed: SIGNED_IN
  },
  {
    route: 'compare with draft',
    method: 'GET',
    path: () => `/formulations/${NAME}/compare?from=1.0.0&to=1.1.0`,
    allowed: DRAFT_READERS,
    needs: 'author, reviewer and auditor'
  },
  { route: 'list projects', method: 'GET', path: () => '/projects', allowed: SIGNED_IN },
  {
    route: 'create project',
    method: 'POST',
    path: () => '/projects',
    body: { key: 'lower-case', title: 't' },
    allowed: ['lead'],
    needs: 'lead'
  },
  { route: 'project detail', method: 'GET', path: () => `/projects/${PROJECT}`, allowed: SIGNED_IN },
  {
    route: 'pin',
    method: 'PUT',
    path: () => `/projects/${PROJECT}/pins/${NAME}`,
    body: { version: '1.1.0' },
    allowed: ['lead'],
    needs: 'lead'
  },
  {
    route: 'unpin',
    method: 'DELETE',
    path: () => `/projects/${PROJECT}/pins/no-such-formulation`,
    allowed: ['lead'],
    needs: 'lead'
  },
  { route: 'manifest', method: 'GET', path: () => `/projects/${PROJECT}/manifest`, allowed: SIGNED_IN },
  {
    route: 'audit trail',
    method: 'GET',
    path: () => '/audit',
    allowed: ['auditor', 'admin'],
    needs: 'auditor, admin'
  },
  {
    route: 'audit verify',
    method: 'GET',
    path: () => '/audit/verify',
    allowed: ['auditor', 'admin'],
    needs: 'auditor, admin'
  },
  {
    route: 'list attachments',
    method: 'GET',
    path: () => `/formulations/${NAME}/versions/1.0.0/attachments`,
    allowed: SIGNED_IN
  },
  {
    route: 'add attachment',
    method: 'POST',
    path: () => `/formulations/${NAME}/versions/1.0.0/attachments`,
    allowed: ['author'],
    needs: 'author'
  }
];

describe('every registry route × role (api.md)', () => {
  for (const row of TABLE) {
    it(`${row.method} ${row.route}: 401 for nobody signed in`, async () => {
      const r = await call(null, row.method, row.path(), row.body);
      expect(r.status, r.text).toBe(401);
      expect(r.json.error.code).toBe('unauthenticated');
    });
    for (const who of ROLES) {
      const allowed = row.allowed.includes(who);
      it(`${row.method} ${row.route}: ${allowed ? 'allowed' : 'refused'} for ${who === 'none' ? 'a person without roles' : who}`, async () => {
        const r = await call(who, row.method, row.path(), row.body);
        if (allowed) {
          expect([401, 403], r.text).not.toContain(r.status);
          expect(r.status, r.text).toBeLessThan(500);
        } else {
          expect(r.status, r.text).toBe(403);
          expect(r.json.error.code).toBe('forbidden');
          expect(r.json.error.message).toContain(row.needs);
        }
      });
    }
  }

  it('left the fixtures as they were: the allowed requests changed nothing', async () => {
    const f = await call('auditor', 'GET', `/formulations/${NAME}`);
    expect(
      f.json.versions.map((v: { version: string; status: string }) => `${v.version} ${v.status}`)
    ).toEqual(['1.1.0 draft', '1.0.0 released']);
    const m = await call('lead', 'GET', `/projects/${PROJECT}/manifest`);
    expect(m.json.pins.map((p: { version: string }) => p.version)).toEqual(['1.0.0']);
    expect(
      (await call('lead', 'GET', '/projects')).json.some((p: { key: string }) => p.key === 'lower-case')
    ).toBe(false);
  });
});
