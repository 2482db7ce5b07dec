// The registry's whole journey and its rules, through HTTP against the built server on the real
// MariaDB, with the real verification engine behind the run queue and the real mail sink:
// create, draft, invalid draft, run, submit, self-approval refused, approval, immutable release,
// pin, manifest, lower version refused, second draft, draft pin refused, compare, withdrawal and
// its e-mail, the audit chain, and a tampered audit row detected.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { createUser, findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { closeDatabase, getSequelize } from '../../src/lib/server/db';
import type { Role } from '../../src/lib/server/auth/roles';

/** API answers are checked field by field below. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const BASE = process.env.ISOLEDGER_TEST_URL!;
const SINK = process.env.MAIL_SINK_URL!;
const tag = Math.random().toString(36).slice(2, 8);
const NAME = `bar2-journey-${tag}`;
const PROJECT = `JOURNEY-${tag.toUpperCase()}`;
/** A stiffness no other test run uses, so this run's definitions have no records yet. */
const E0 = 2_000 + Math.floor(Math.random() * 1e6);

/** The two-node bar with linear shape functions (common practice, no source). */
function bar(name: string, E: number, shape = ['(1 - xi) / 2', '(1 + xi) / 2']): string {
  return `format: 1
name: ${name}
title: Two-node bar for the registry journey
cell: interval
nodes: [[-1], [1]]
shape:
  - ${shape[0]}
  - ${shape[1]}
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${E}, nu: 0.3 }
`;
}

const tokens: Record<string, string> = {};

async function tokenFor(email: string): Promise<string> {
  const u = await findUserByEmail(email);
  if (!u) throw new Error(`no account ${email}`);
  return (await createToken(u, { name: `registry test ${tag}`, roleCeiling: null, expiresAt: null })).token;
}

async function person(email: string, roles: Role[]): Promise<string> {
  await createUser({ email, name: `Test person ${tag}`, password: 'a-long-test-password' }, null).catch(
    () => undefined
  );
  const u = (await findUserByEmail(email))!;
  for (const role of roles) {
    await getSequelize().query(
      'INSERT IGNORE INTO user_roles (user_id, role, granted_at) VALUES (?, ?, NOW(3))',
      { replacements: [u.id, role] }
    );
  }
  return tokenFor(email);
}

interface Reply {
  status: number;
  headers: Headers;
  body: Json;
  text: string;
}

async function call(
  who: string | null,
  method: string,
  path: string,
  body?: unknown,
  headers: Record<string, string> = {}
): Promise<Reply> {
  const h: Record<string, string> = { ...headers };
  if (who) h.authorization = `Bearer ${tokens[who]}`;
  if (body !== undefined) h['content-type'] = 'application/json';
  const r = await fetch(`${BASE}/api/v1${path}`, {
    method,
    headers: h,
    body: body === undefined ? undefined : JSON.stringify(body)
  });
  const text = await r.text();
  let parsed: unknown = null;
  try {
    parsed = text ? JSON.parse(text) : null;
  } catch {
    parsed = null;
  }
  return { status: r.status, headers: r.headers, body: parsed, text };
}

function expectError(r: Reply, status: number, code?: string): void {
  expect(r.status, r.text).toBe(status);
  expect(r.body?.error?.message, r.text).toEqual(expect.any(String));
  if (code) expect(r.body.error.code).toBe(code);
}

/** Queues a run of the version and waits until the queue's workers finish it; returns the record. */
async function verify(who: string, version: string): Promise<Json> {
  const q = await call(who, 'POST', `/formulations/${NAME}/versions/${version}/runs`);
  expect(q.status, q.text).toBe(202);
  expect(q.body.runId).toEqual(expect.any(String));
  for (let i = 0; i < 600; i++) {
    const run = await call(who, 'GET', `/runs/${q.body.runId}`);
    if (run.body.status === 'done') return run.body.record;
    if (run.body.status === 'failed') throw new Error(`run failed: ${run.body.error}`);
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`run ${q.body.runId} did not finish`);
}

async function auditCount(subject: string): Promise<number> {
  const [row] = await getSequelize().query<{ n: number }>(
    'SELECT COUNT(*) AS n FROM audit_events WHERE subject = ? OR subject LIKE ?',
    {
      type: QueryTypes.SELECT,
      replacements: [subject, `${subject}@%`]
    }
  );
  return Number(row.n);
}

/** The chain verdict; other test files append events meanwhile, so a result that only shows a head moved past the rows read is asked again. */
async function chainVerdict(): Promise<{ ok: boolean; events: number; firstBrokenId: number | null }> {
  let r = await call('auditor', 'GET', '/audit/verify');
  for (let i = 0; i < 5 && !r.body.ok && r.body.firstBrokenId === r.body.events + 1; i++)
    r = await call('auditor', 'GET', '/audit/verify');
  expect(r.status, r.text).toBe(200);
  return r.body;
}

async function mailTo(address: string, subjectPart: string): Promise<Json> {
  for (let i = 0; i < 100; i++) {
    const messages = (await (await fetch(SINK)).json()) as {
      to: string[];
      subject: string;
      text: string;
      html: string | null;
    }[];
    const m = messages.find((x) => x.to.includes(address) && x.subject.includes(subjectPart));
    if (m) return m;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no message to ${address} about '${subjectPart}'`);
}

beforeAll(async () => {
  for (const role of ['admin', 'author', 'reviewer', 'lead', 'auditor'])
    tokens[role] = await tokenFor(`${role}@example.com`);
  // one person who both writes and reviews: the two-person rule must stop them approving their own work
  tokens.dual = await person(`dual-${tag}@example.com`, ['author', 'reviewer']);
});

afterAll(async () => {
  await closeDatabase();
});

describe('the registry journey', () => {
  let released: Reply;
  let firstRecord: Json;

  it('creates an empty formulation (author)', async () => {
    const r = await call('dual', 'POST', '/formulations', { name: NAME, title: 'Journey bar' });
    expect(r.status, r.text).toBe(201);
    expect(r.body).toMatchObject({ name: NAME, title: 'Journey bar', versions: 0, latest: null });
    expectError(
      await call('dual', 'POST', '/formulations', { name: NAME, title: 'again' }),
      409,
      'already-exists'
    );
  });

  it('refuses an invalid draft with 422 and the diagnostics, and writes nothing', async () => {
    const before = await auditCount(NAME);
    // a third shape function for two nodes: the count of shape must equal nodes (formulation-format.md)
    const invalid = bar(NAME, E0).replace('  - (1 + xi) / 2\n', '  - (1 + xi) / 2\n  - xi\n');
    const r = await call('dual', 'POST', `/formulations/${NAME}/versions`, {
      version: '1.0.0',
      source: invalid
    });
    expectError(r, 422, 'invalid-document');
    expect(Array.isArray(r.body.error.details)).toBe(true);
    expect(r.body.error.details.length).toBeGreaterThan(0);
    for (const d of r.body.error.details) {
      expect(d).toMatchObject({
        line: expect.any(Number),
        column: expect.any(Number),
        path: expect.any(String),
        message: expect.any(String)
      });
    }
    expect(r.body.error.details.some((d: { path: string }) => d.path.startsWith('shape'))).toBe(true);
    expect((await call('dual', 'GET', `/formulations/${NAME}`)).body.versions).toEqual([]);
    expect(await auditCount(NAME)).toBe(before);
  });

  it('refuses a document that names another formulation, pointing at its name line', async () => {
    const r = await call('dual', 'POST', `/formulations/${NAME}/versions`, {
      version: '1.0.0',
      source: bar('some-other-name', E0)
    });
    expectError(r, 422, 'invalid-document');
    expect(r.body.error.details[0]).toMatchObject({ line: 2, column: 7, path: 'name' });
  });

  it('refuses a version that is not MAJOR.MINOR.PATCH', async () => {
    for (const version of ['1.0', 'v1.0.0', '1.0.0-beta.1', '01.0.0']) {
      expectError(
        await call('dual', 'POST', `/formulations/${NAME}/versions`, { version, source: bar(NAME, E0) }),
        400
      );
    }
  });

  it('creates a draft of a valid document', async () => {
    const r = await call('dual', 'POST', `/formulations/${NAME}/versions`, {
      version: '1.0.0',
      source: bar(NAME, E0)
    });
    expect(r.status, r.text).toBe(201);
    expect(r.body).toMatchObject({
      name: NAME,
      version: '1.0.0',
      status: 'draft',
      verification: null,
      releasedAt: null
    });
    expect(r.body.sourceHash).toMatch(/^sha256:[0-9a-f]{64}$/);
    expect(r.body.definitionHash).toMatch(/^sha256:[0-9a-f]{64}$/);
    expect(r.body.definition.name).toBe(NAME);
  });

  it('refuses submission without a record of the current definition', async () => {
    expectError(
      await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`),
      409,
      'not-verified'
    );
  });

  it('verifies the draft through the run queue, then refuses submission once the source changed', async () => {
    firstRecord = await verify('dual', '1.0.0');
    expect(firstRecord.verdict).toBe('pass');
    const v = await call('dual', 'GET', `/formulations/${NAME}/versions/1.0.0`);
    expect(v.body.verification).toEqual({ recordId: expect.any(String), verdict: 'pass' });
    // a change of meaning gives a new definitionHash, which has no record yet
    const edit = await call('dual', 'PUT', `/formulations/${NAME}/versions/1.0.0`, {
      source: bar(NAME, E0 + 1)
    });
    expect(edit.status, edit.text).toBe(200);
    expect(edit.body.definitionHash).not.toBe(v.body.definitionHash);
    expectError(
      await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`),
      409,
      'not-verified'
    );
    expect((await verify('dual', '1.0.0')).verdict).toBe('pass');
  });

  it('submits the verified draft; its source is then frozen', async () => {
    const r = await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`);
    expect(r.status, r.text).toBe(200);
    expect(r.body.status).toBe('in-review');
    expectError(
      await call('dual', 'PUT', `/formulations/${NAME}/versions/1.0.0`, { source: bar(NAME, E0 + 2) }),
      409,
      'not-draft'
    );
    expectError(await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`), 409);
  });

  it('refuses approval by the version’s own author, even with the reviewer role', async () => {
    const r = await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
      decision: 'approve',
      comment: 'mine'
    });
    expectError(r, 403);
    expect(r.body.error.message).toMatch(/second person/);
    expect((await call('dual', 'GET', `/formulations/${NAME}/versions/1.0.0`)).body.status).toBe('in-review');
  });

  it('releases on a second person’s approval, immutable and cacheable', async () => {
    const r = await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
      decision: 'approve',
      comment: 'checked'
    });
    expect(r.status, r.text).toBe(200);
    expect(r.body.status).toBe('released');
    expect(r.body.releasedAt).toEqual(expect.any(String));
    released = await call('lead', 'GET', `/formulations/${NAME}/versions/1.0.0`);
    expect(released.status).toBe(200);
    const etag = released.headers.get('etag')!;
    expect(etag).toBe(`"${released.body.definitionHash}"`);
    expect(released.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    const again = await call('lead', 'GET', `/formulations/${NAME}/versions/1.0.0`, undefined, {
      'if-none-match': etag
    });
    expect(again.status).toBe(304);
    expect(again.text).toBe('');
    const src = await fetch(`${BASE}/api/v1/formulations/${NAME}/versions/1.0.0/source`, {
      headers: { authorization: `Bearer ${tokens.lead}` }
    });
    expect(src.headers.get('content-type')).toMatch(/^application\/yaml/);
    expect(await src.text()).toBe(bar(NAME, E0 + 1));
  });

  it('never changes a released version (409) and leaves it as it was', async () => {
    expectError(
      await call('dual', 'PUT', `/formulations/${NAME}/versions/1.0.0`, { source: bar(NAME, E0 + 3) }),
      409,
      'not-draft'
    );
    expectError(
      await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
        decision: 'reject',
        comment: 'late'
      }),
      409
    );
    expectError(await call('dual', 'POST', `/formulations/${NAME}/versions/1.0.0/runs`), 409, 'not-draft');
    const now = await call('lead', 'GET', `/formulations/${NAME}/versions/1.0.0`);
    expect(now.body).toEqual(released.body);
  });

  it('pins the release in a project and lists it in the manifest', async () => {
    expect((await call('lead', 'POST', '/projects', { key: PROJECT, title: 'Journey project' })).status).toBe(
      201
    );
    const pin = await call('lead', 'PUT', `/projects/${PROJECT}/pins/${NAME}`, { version: '1.0.0' });
    expect(pin.status, pin.text).toBe(200);
    const m = await call('auditor', 'GET', `/projects/${PROJECT}/manifest`);
    expect(m.status).toBe(200);
    expect(m.body.project).toEqual({ key: PROJECT, title: 'Journey project' });
    expect(Date.parse(m.body.generatedAt)).not.toBeNaN();
    expect(m.body.pins).toEqual([
      {
        name: NAME,
        version: '1.0.0',
        definitionHash: released.body.definitionHash,
        sourceHash: released.body.sourceHash,
        recordId: released.body.verification.recordId,
        status: 'released'
      }
    ]);
  });

  it('refuses a version that is not greater than the newest', async () => {
    for (const version of ['0.9.0', '1.0.0']) {
      expectError(
        await call('dual', 'POST', `/formulations/${NAME}/versions`, { version, source: bar(NAME, E0 + 5) }),
        409,
        'version-not-greater'
      );
    }
  });

  it('creates a second draft, which cannot be pinned', async () => {
    const r = await call('author', 'POST', `/formulations/${NAME}/versions`, {
      version: '1.1.0',
      source: bar(NAME, E0 + 10).replace('points: 1', 'points: 2')
    });
    expect(r.status, r.text).toBe(201);
    expectError(
      await call('lead', 'PUT', `/projects/${PROJECT}/pins/${NAME}`, { version: '1.1.0' }),
      409,
      'not-released'
    );
    expect((await call('lead', 'GET', `/projects/${PROJECT}/manifest`)).body.pins[0].version).toBe('1.0.0');
  });

  it('hides the draft from people without the author, reviewer or auditor role', async () => {
    const asLead = await call('lead', 'GET', `/formulations/${NAME}`);
    expect(asLead.body.versions.map((v: { version: string }) => v.version)).toEqual(['1.0.0']);
    const asAuditor = await call('auditor', 'GET', `/formulations/${NAME}`);
    expect(asAuditor.body.versions.map((v: { version: string }) => v.version)).toEqual(['1.1.0', '1.0.0']);
    const draft = await call('lead', 'GET', `/formulations/${NAME}/versions/1.1.0`);
    expectError(draft, 403);
    expect(draft.body.error.message).toMatch(/author, reviewer and auditor/);
  });

  it('lists the formulation with the newest version each reader may see, filtered and paginated', async () => {
    const asLead = await call('lead', 'GET', `/formulations?q=${NAME}`);
    expect(asLead.status, asLead.text).toBe(200);
    expect(asLead.body).toMatchObject({ page: 1, perPage: 20, total: 1 });
    expect(asLead.body.items[0]).toMatchObject({
      name: NAME,
      versions: 1,
      latest: { version: '1.0.0', status: 'released', cell: 'interval' }
    });
    const asAuthor = await call('author', 'GET', `/formulations?q=${NAME}&status=draft`);
    expect(asAuthor.body.items.map((f: { latest: { version: string } }) => f.latest.version)).toEqual([
      '1.1.0'
    ]);
    expect((await call('author', 'GET', `/formulations?q=${NAME}&cell=interval`)).body.total).toBe(1);
    expect((await call('author', 'GET', `/formulations?q=${NAME}&cell=triangle`)).body.total).toBe(0);
    expect((await call('author', 'GET', `/formulations?q=${NAME}&per_page=1&page=2`)).body.items).toEqual([]);
    expectError(await call('lead', 'GET', `/formulations?status=draft`), 403);
    expectError(await call('lead', 'GET', `/formulations?per_page=101`), 400);
    expectError(await call('lead', 'GET', `/formulations?cell=pentagon`), 400);
    expectError(await call('lead', 'GET', `/formulations?page=zero`), 400);
  });

  it('compares the two versions: source diff, changed definition paths, checks before and after', async () => {
    expect((await verify('author', '1.1.0')).verdict).toBe('pass');
    const r = await call('auditor', 'GET', `/formulations/${NAME}/compare?from=1.0.0&to=1.1.0`);
    expect(r.status, r.text).toBe(200);
    expect(r.body.source).toContain(`--- ${NAME}@1.0.0`);
    expect(r.body.source).toContain(`+++ ${NAME}@1.1.0`);
    expect(r.body.source).toContain(`-material: { E: ${E0 + 1}, nu: 0.3 }`);
    expect(r.body.source).toContain(`+material: { E: ${E0 + 10}, nu: 0.3 }`);
    expect(r.body.definition).toEqual(expect.arrayContaining(['material.E', 'quadrature.points']));
    expect(r.body.definition).not.toContain('title');
    const ids = r.body.checks.map((c: { id: string }) => c.id);
    expect(ids).toContain('kronecker-delta');
    for (const c of r.body.checks) {
      expect(c.before).toMatchObject({ status: expect.any(String) });
      expect(c.after).toMatchObject({ status: expect.any(String) });
    }
    expectError(await call('lead', 'GET', `/formulations/${NAME}/compare?from=1.0.0&to=1.1.0`), 403);
    expectError(await call('auditor', 'GET', `/formulations/${NAME}/compare?from=1.0.0`), 400);
  });

  it('withdraws the pinned release and tells the pinning lead by e-mail, naming the project', async () => {
    expectError(
      await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/withdraw`, { reason: '  ' }),
      400
    );
    const r = await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/withdraw`, {
      reason: 'The bar area default was documented wrongly.'
    });
    expect(r.status, r.text).toBe(200);
    expect(r.body.status).toBe('withdrawn');
    expect(r.body.withdrawn.reason).toBe('The bar area default was documented wrongly.');
    const m = await mailTo('lead@example.com', `Withdrawn: ${NAME} 1.0.0`);
    expect(m.subject).toContain(PROJECT);
    expect(m.text).toContain(PROJECT);
    expect(m.text).toContain('The bar area default was documented wrongly.');
    expect(m.html).toContain(PROJECT);
    const manifest = await call('lead', 'GET', `/projects/${PROJECT}/manifest`);
    expect(manifest.body.pins[0]).toMatchObject({ version: '1.0.0', status: 'withdrawn' });
    expectError(
      await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/withdraw`, { reason: 'again' }),
      409
    );
    expectError(
      await call('lead', 'PUT', `/projects/${PROJECT}/pins/${NAME}`, { version: '1.0.0' }),
      409,
      'not-released'
    );
    const w = await call('lead', 'GET', `/formulations/${NAME}/versions/1.0.0`);
    expect(w.headers.get('etag')).toBe(`"${released.body.definitionHash}+withdrawn"`);
  });

  it('records every step in the audit trail, newest first', async () => {
    const r = await call('auditor', 'GET', `/audit?subject=${NAME}&per_page=100`);
    expect(r.status, r.text).toBe(200);
    const actions = r.body.items.map((e: { action: string }) => e.action).reverse();
    expect(actions).toEqual([
      'formulation.create',
      'version.create',
      'version.run',
      'version.edit',
      'version.run',
      'version.submit',
      'version.approve',
      'version.create',
      'version.run',
      'version.withdraw'
    ]);
    expect(r.body.total).toBe(actions.length);
    const byLead = await call('auditor', 'GET', `/audit?actor=lead@example.com&subject=${PROJECT}`);
    expect(byLead.body.items.map((e: { action: string }) => e.action)).toEqual([
      'project.pin',
      'project.create'
    ]);
  });

  it('verifies the audit chain, detects a row altered in SQL, and verifies again once restored', async () => {
    expect(await chainVerdict()).toMatchObject({ ok: true, firstBrokenId: null });
    const [event] = await getSequelize().query<{ id: number; actor_label: string }>(
      "SELECT id, actor_label FROM audit_events WHERE subject = ? AND action = 'version.approve'",
      { type: QueryTypes.SELECT, replacements: [`${NAME}@1.0.0`] }
    );
    try {
      await getSequelize().query('UPDATE audit_events SET actor_label = ? WHERE id = ?', {
        replacements: ['someone-else@example.com', event.id]
      });
      const broken = await chainVerdict();
      expect(broken.ok).toBe(false);
      expect(broken.firstBrokenId).toBe(Number(event.id));
    } finally {
      await getSequelize().query('UPDATE audit_events SET actor_label = ? WHERE id = ?', {
        replacements: [event.actor_label, event.id]
      });
    }
    expect(await chainVerdict()).toMatchObject({ ok: true });
  });
});

describe('concurrent changes', () => {
  it('creates formulations side by side without refusals, and exactly one of two with the same name', async () => {
    const names = Array.from({ length: 8 }, (_, i) => `bar2-side-${tag}-${i}`);
    const created = await Promise.all(
      names.map((name) => call('author', 'POST', '/formulations', { name, title: 'Side by side' }))
    );
    expect(created.map((r) => r.status)).toEqual(names.map(() => 201));
    const twin = `bar2-twin-${tag}`;
    const both = await Promise.all(
      [0, 1].map(() => call('author', 'POST', '/formulations', { name: twin, title: 'Twin' }))
    );
    expect(both.map((r) => r.status).sort()).toEqual([201, 409]);
    expect(await auditCount(twin)).toBe(1);
  });

  it('gives two projects their pins side by side, and one review of two simultaneous approvals', async () => {
    const name = `bar2-race-${tag}`;
    expect((await call('dual', 'POST', '/formulations', { name, title: 'Race' })).status).toBe(201);
    const draft = await call('dual', 'POST', `/formulations/${name}/versions`, {
      version: '1.0.0',
      source: bar(name, E0 + 20)
    });
    expect(draft.status, draft.text).toBe(201);
    const q = await call('dual', 'POST', `/formulations/${name}/versions/1.0.0/runs`);
    for (let i = 0; i < 600; i++) {
      const run = await call('dual', 'GET', `/runs/${q.body.runId}`);
      if (run.body.status === 'done' || run.body.status === 'failed') break;
      await new Promise((r) => setTimeout(r, 250));
    }
    expect((await call('dual', 'POST', `/formulations/${name}/versions/1.0.0/submit`)).status).toBe(200);
    const approvals = await Promise.all(
      ['reviewer', 'reviewer'].map((who) =>
        call(who, 'POST', `/formulations/${name}/versions/1.0.0/review`, { decision: 'approve', comment: '' })
      )
    );
    expect(approvals.map((r) => r.status).sort()).toEqual([200, 409]);
    expect(
      (await call('auditor', 'GET', `/audit?subject=${name}`)).body.items.filter(
        (e: { action: string }) => e.action === 'version.approve'
      )
    ).toHaveLength(1);
    const keys = [0, 1, 2].map((i) => `RACE-${tag.toUpperCase()}-${i}`);
    for (const key of keys)
      expect((await call('lead', 'POST', '/projects', { key, title: 'Race project' })).status).toBe(201);
    const pins = await Promise.all(
      keys.map((key) => call('lead', 'PUT', `/projects/${key}/pins/${name}`, { version: '1.0.0' }))
    );
    expect(pins.map((r) => r.status)).toEqual([200, 200, 200]);
  });
});
