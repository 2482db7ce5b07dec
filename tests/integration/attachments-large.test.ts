// An attachment of several hundred kilobytes, well inside the 10 MB limit. The server's own request
// body limit (adapter-node's BODY_SIZE_LIMIT, 512 KB unless set) must be above 10 MB for this to
// pass: the server is started with it raised, as every deployment of Isoledger must be.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { findUserByEmail } from '../../src/lib/server/auth/users';
import { createToken } from '../../src/lib/server/auth/tokens';
import { closeDatabase } from '../../src/lib/server/db';

const BASE = process.env.ISOLEDGER_TEST_URL!;
const tag = Math.random().toString(36).slice(2, 8);
const NAME = `bar2-large-${tag}`;
let token = '';

const bar = `format: 1
name: ${NAME}
title: Two-node bar with a large table
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${6_000 + Math.floor(Math.random() * 1e6)}, nu: 0.3 }
`;

async function post(path: string, body: BodyInit, type: string): Promise<Response> {
  return fetch(`${BASE}/api/v1${path}`, {
    method: 'POST',
    headers: { authorization: `Bearer ${token}`, 'content-type': type },
    body
  });
}

beforeAll(async () => {
  const u = (await findUserByEmail('author@example.com'))!;
  token = (await createToken(u, { name: `large ${tag}`, roleCeiling: null, expiresAt: null })).token;
  expect(
    (await post('/formulations', JSON.stringify({ name: NAME, title: 'Large table' }), 'application/json'))
      .status
  ).toBe(201);
  expect(
    (
      await post(
        `/formulations/${NAME}/versions`,
        JSON.stringify({ version: '1.0.0', source: bar }),
        'application/json'
      )
    ).status
  ).toBe(201);
});

afterAll(async () => {
  await closeDatabase();
});

describe('a large attachment', () => {
  it('accepts a reference table of several hundred kilobytes and serves it back unchanged', async () => {
    const rows = ['h,energy'];
    for (let i = 1; i <= 20_000; i++)
      rows.push(`${(1 / i).toExponential(12)},${(0.1 / i).toExponential(12)}`);
    const bytes = Buffer.from(rows.join('\n') + '\n');
    expect(bytes.length).toBeGreaterThan(700_000);
    const r = await post(
      `/formulations/${NAME}/versions/1.0.0/attachments?filename=series-large.csv`,
      bytes,
      'text/csv'
    );
    const body = (await r.json()) as { id: string; sha256: string; size: number };
    expect(r.status, JSON.stringify(body)).toBe(201);
    expect(body.size).toBe(bytes.length);
    expect(body.sha256).toBe(createHash('sha256').update(bytes).digest('hex'));
    const back = await fetch(`${BASE}/api/v1/formulations/${NAME}/versions/1.0.0/attachments/${body.id}`, {
      headers: { authorization: `Bearer ${token}` }
    });
    expect(Buffer.from(await back.arrayBuffer()).equals(bytes)).toBe(true);
  });
});
