// The registry's e-mail through the real local SMTP sink: review requested → reviewers; approved
// or rejected → the author; a new release of a pinned formulation → the pinning leads; withdrawn →
// the leads of every project pinning that version, naming the projects. Plain text and HTML.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { closeDatabase } from '../../src/lib/server/db';
import { notify } from '../../src/lib/server/mail/notify';

/** API answers are checked field by field below. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const BASE = process.env.ISOLEDGER_TEST_URL!;
const SINK = process.env.MAIL_SINK_URL!;
const tag = Math.random().toString(36).slice(2, 8);
const NAME = `bar2-mail-${tag}`;
const ROAD = `ROAD-${tag.toUpperCase()}`;
const TOWER = `TOWER-${tag.toUpperCase()}`;
const E = 5_000 + Math.floor(Math.random() * 1e6);
const tokens: Record<string, string> = {};

const bar = (E: number) => `format: 1
name: ${NAME}
title: Two-node bar for the mail test
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${E}, nu: 0.3 }
`;

interface Sunk {
  to: string[];
  subject: string;
  text: string;
  html: string | null;
}

async function call(who: string, method: string, url: string, body?: unknown) {
  const r = await fetch(`${BASE}/api/v1${url}`, {
    method,
    headers: {
      authorization: `Bearer ${tokens[who]}`,
      ...(body ? { 'content-type': 'application/json' } : {})
    },
    body: body ? JSON.stringify(body) : undefined
  });
  const json = (await r.json().catch(() => null)) as Json;
  expect(r.status, JSON.stringify(json)).toBeLessThan(300);
  return json;
}

async function verified(version: string): Promise<void> {
  const { runId } = await call('author', 'POST', `/formulations/${NAME}/versions/${version}/runs`);
  for (let i = 0; i < 600; i++) {
    const run = await call('author', 'GET', `/runs/${runId}`);
    if (run.status === 'done') return;
    if (run.status === 'failed') throw new Error(run.error);
    await new Promise((r) => setTimeout(r, 250));
  }
}

async function messages(): Promise<Sunk[]> {
  return (await (await fetch(SINK)).json()) as Sunk[];
}

/** Waits for the messages to `to` about this test's formulation whose subject starts with `prefix`, newest first. */
async function waitFor(to: string, prefix: string, count = 1): Promise<Sunk[]> {
  for (let i = 0; i < 100; i++) {
    const found = (await messages()).filter(
      (m) => m.to.includes(to) && m.subject.startsWith(prefix) && m.subject.includes(NAME)
    );
    if (found.length >= count) return found;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no message '${prefix} … ${NAME}'`);
}

function plainAndHtml(m: Sunk, ...phrases: string[]): void {
  expect(m.html).toEqual(expect.stringContaining('<p>'));
  for (const p of phrases) {
    expect(m.text).toContain(p);
    expect(m.html).toContain(p);
  }
  // the safety notice travels with every message
  expect(m.text).toContain('evidence, not approval for use');
}

beforeAll(async () => {
  for (const role of ['author', 'reviewer', 'lead', 'admin']) {
    const u = (await findUserByEmail(`${role}@example.com`))!;
    tokens[role] = (await createToken(u, { name: `mail ${tag}`, roleCeiling: null, expiresAt: null })).token;
  }
  await call('author', 'POST', '/formulations', { name: NAME, title: 'Mail bar' });
  await call('author', 'POST', `/formulations/${NAME}/versions`, { version: '1.0.0', source: bar(E) });
  await verified('1.0.0');
});

afterAll(async () => {
  await closeDatabase();
});

describe('registry e-mail', () => {
  it('asks the reviewers for a review when a version is submitted', async () => {
    await call('author', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`);
    const [m] = await waitFor('reviewer@example.com', 'Review requested:');
    expect(m.to).toEqual(['reviewer@example.com']);
    expect(m.subject).toBe(`Review requested: ${NAME} 1.0.0`);
    plainAndHtml(m, 'Idris Kettleby submitted', 'verification record');
  });

  it('tells the author when a review rejects the version, with the comment', async () => {
    await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
      decision: 'reject',
      comment: 'Say which quadrature you chose & why.'
    });
    const [m] = await waitFor('author@example.com', 'Changes requested:');
    expect(m.to).toEqual(['author@example.com']);
    expect(m.text).toContain('Say which quadrature you chose & why.');
    // the HTML escapes what people typed
    expect(m.html).toContain('Say which quadrature you chose &amp; why.');
  });

  it('tells the author when the version is approved and released', async () => {
    await call('author', 'POST', `/formulations/${NAME}/versions/1.0.0/submit`);
    await waitFor('reviewer@example.com', 'Review requested:', 2);
    await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/review`, {
      decision: 'approve',
      comment: 'Fine now.'
    });
    const [m] = await waitFor('author@example.com', 'Released:');
    expect(m.to).toEqual(['author@example.com']);
    plainAndHtml(m, 'approved and released', 'Fine now.');
  });

  it('tells the leads of projects pinning the formulation about a new release', async () => {
    await call('lead', 'POST', '/projects', { key: ROAD, title: 'Road deck' });
    await call('lead', 'POST', '/projects', { key: TOWER, title: 'Tower frame' });
    await call('lead', 'PUT', `/projects/${ROAD}/pins/${NAME}`, { version: '1.0.0' });
    await call('lead', 'PUT', `/projects/${TOWER}/pins/${NAME}`, { version: '1.0.0' });
    await call('author', 'POST', `/formulations/${NAME}/versions`, { version: '1.1.0', source: bar(E + 1) });
    await verified('1.1.0');
    await call('author', 'POST', `/formulations/${NAME}/versions/1.1.0/submit`);
    await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.1.0/review`, {
      decision: 'approve',
      comment: ''
    });
    const [m] = await waitFor('lead@example.com', 'New release:');
    expect(m.to).toEqual(['lead@example.com']);
    expect(m.subject).toBe(`New release: ${NAME} 1.1.0`);
    plainAndHtml(m, ROAD, TOWER, 'pins 1.0.0');
  });

  it('tells the lead of every project pinning a withdrawn version, naming the projects', async () => {
    // the tower project moves on to 1.1.0; only the road project still pins 1.0.0
    await call('lead', 'PUT', `/projects/${TOWER}/pins/${NAME}`, { version: '1.1.0' });
    await call('reviewer', 'POST', `/formulations/${NAME}/versions/1.0.0/withdraw`, {
      reason: 'The area default was wrong.'
    });
    const [m] = await waitFor('lead@example.com', 'Withdrawn:');
    expect(m.to).toEqual(['lead@example.com']);
    expect(m.subject).toContain(ROAD);
    expect(m.subject).not.toContain(TOWER);
    plainAndHtml(m, ROAD, 'Road deck', 'The area default was wrong.');
    expect(m.text).not.toContain(TOWER);
  });

  it('shows the messages in the admin outbox', async () => {
    const r = await fetch(`${BASE}/api/v1/outbox`, { headers: { authorization: `Bearer ${tokens.admin}` } });
    expect(r.status).toBe(200);
    const outbox = (await r.json()) as { subject: string }[];
    expect(outbox.some((m) => m.subject === `New release: ${NAME} 1.1.0`)).toBe(true);
  });

  it('reports a message it cannot deliver instead of throwing, so the change it reports stands', async () => {
    const saved = process.env.SMTP_URL;
    const logged: string[] = [];
    // port 9 (discard) on loopback: nothing listens there in the test stack
    process.env.SMTP_URL = 'smtp://127.0.0.1:9';
    try {
      const result = await notify(
        [{ to: 'lead@example.com', subject: 'undeliverable', text: 't', html: '<p>t</p>' }],
        (s) => logged.push(s)
      );
      expect(result).toEqual({ sent: 0, failed: 1 });
      expect(logged[0]).toContain("mail to lead@example.com ('undeliverable') not sent");
    } finally {
      process.env.SMTP_URL = saved;
    }
  });
});
