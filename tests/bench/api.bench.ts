// The API under load on loopback: the built server against a throwaway MariaDB, one version
// released through the API, then autocannon with 64 connections for 10 s each against the released
// version (the cached path, with an API token as a solver pipeline sends it), the catalogue list,
// and /api/v1/health of the same server as the baseline. Figures and targets are printed, never
// asserted. Rate limiting stays on, with limits no run can reach, so its cost is in the figures.
import { mkdtempSync, rmSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createRequire } from 'node:module';
import { IsoledgerClient } from '@isoledger/client';
import { loadCatalogue } from '@isoledger/formulation';
import { startMariaDb } from '../../packages/devstack/src/mariadb';
import { prepareDatabase } from '../../packages/devstack/src/prepare';
import { buildIfStale } from '../../packages/devstack/src/build';
import { startServer } from '../../packages/devstack/src/server';
import { freePort } from '../../packages/devstack/src/net';
import type { BenchRow } from './report';

export const title = 'API v1 under load: autocannon, 64 connections × 10 s each, loopback';

/** The part of autocannon's result this benchmark reads (the package ships no types). */
interface AutocannonResult {
  requests: { average: number };
  latency: { p50: number; p99: number };
  non2xx: number;
  errors: number;
  timeouts: number;
}
const autocannon = createRequire(import.meta.url)('autocannon') as (opts: {
  url: string;
  connections: number;
  duration: number;
  headers: Record<string, string>;
}) => Promise<AutocannonResult>;

const CONNECTIONS = 64;
const SECONDS = 10;
const WARM_UP_SECONDS = 1;
/** far above what 64 connections reach in a window, so nothing is refused while the limiter still counts */
const UNREACHABLE_LIMIT = '1000000000';

interface Load {
  rps: number;
  p50: number;
  p99: number;
}

async function load(url: string, headers: Record<string, string>, seconds = SECONDS): Promise<Load> {
  const r = await autocannon({ url, connections: CONNECTIONS, duration: seconds, headers });
  if (r.non2xx > 0 || r.errors > 0 || r.timeouts > 0)
    throw new Error(
      `${url}: ${r.non2xx} answers outside 2xx, ${r.errors} errors, ${r.timeouts} timeouts under load`
    );
  return { rps: r.requests.average, p50: r.latency.p50, p99: r.latency.p99 };
}

/** One version of the example catalogue, drafted, verified, submitted and approved through the API. */
async function releaseOne(base: string): Promise<{ name: string; token: string }> {
  const anonymous = new IsoledgerClient({ baseUrl: base });
  const tokenOf = async (email: string) =>
    (await anonymous.auth.createToken({ email, password: 'isoledger-demo', name: 'load benchmark' })).token;
  const author = new IsoledgerClient({ baseUrl: base, token: await tokenOf('author@example.com') });
  const reviewer = new IsoledgerClient({ baseUrl: base, token: await tokenOf('reviewer@example.com') });
  const entry = loadCatalogue().find((d) => d.file === 'tri3-membrane.formulation.yaml')!;
  const name = 'bench-tri3-membrane';
  await author.formulations.create({ name, title: 'Load benchmark triangle' });
  await author.versions.create(name, {
    version: '1.0.0',
    source: entry.source.replace(/^name: .*$/m, `name: ${name}`)
  });
  const { runId } = await author.versions.queueRun(name, '1.0.0');
  const run = await author.runs.wait(runId, { intervalMs: 250, timeoutMs: 300_000 });
  if (run.record?.verdict !== 'pass')
    throw new Error(`the benchmark version verified '${run.record?.verdict}', not pass`);
  await author.versions.submit(name, '1.0.0');
  await reviewer.versions.review(name, '1.0.0', {
    decision: 'approve',
    comment: 'Released for the load benchmark.'
  });
  return { name, token: await tokenOf('lead@example.com') };
}

export default async function (report: (row: BenchRow) => void): Promise<void> {
  const tmp = mkdtempSync(join(tmpdir(), 'isoledger-bench-api-'));
  const stops: (() => Promise<void>)[] = [];
  try {
    const db = await startMariaDb({
      dataDir: join(tmp, 'mariadb'),
      port: await freePort(),
      ephemeral: true,
      database: 'isoledger_bench',
      user: 'isoledger',
      password: randomBytes(12).toString('base64url')
    });
    stops.push(db.stop);
    process.env.DATABASE_URL = db.url;
    await prepareDatabase({ demo: true });
    buildIfStale();
    const server = await startServer({
      port: await freePort(),
      env: {
        DATABASE_URL: db.url,
        ISOLEDGER_DEMO: '1',
        API_RATE_PER_TOKEN: UNREACHABLE_LIMIT,
        API_RATE_PER_ADDRESS: UNREACHABLE_LIMIT
      },
      quiet: true
    });
    stops.push(server.stop);
    const { name, token } = await releaseOne(server.url);
    const bearer = { authorization: `Bearer ${token}` };
    const targets = {
      health: `${server.url}/api/v1/health`,
      version: `${server.url}/api/v1/formulations/${name}/versions/1.0.0`,
      list: `${server.url}/api/v1/formulations`
    };
    for (const [url, headers] of [
      [targets.health, {}],
      [targets.version, bearer],
      [targets.list, bearer]
    ] as const)
      await load(url, headers, WARM_UP_SECONDS);

    const health = await load(targets.health, {});
    const version = await load(targets.version, bearer);
    const list = await load(targets.list, bearer);

    const baseline = (v: number) => ({ name: 'GET /api/v1/health', value: v });
    report({
      name: 'GET /api/v1/health (baseline): throughput',
      value: health.rps,
      unit: 'req/s',
      higherIsBetter: true
    });
    report({
      name: 'released version (cached, token): throughput',
      value: version.rps,
      unit: 'req/s',
      higherIsBetter: true,
      baseline: baseline(health.rps),
      target: '≥ 3,000 req/s and ≥ 0.5× the baseline'
    });
    report({
      name: 'catalogue list (token): throughput',
      value: list.rps,
      unit: 'req/s',
      higherIsBetter: true,
      baseline: baseline(health.rps)
    });
    report({
      name: 'GET /api/v1/health (baseline): p50',
      value: health.p50,
      unit: 'ms',
      higherIsBetter: false
    });
    report({
      name: 'GET /api/v1/health (baseline): p99',
      value: health.p99,
      unit: 'ms',
      higherIsBetter: false
    });
    report({
      name: 'released version: p50',
      value: version.p50,
      unit: 'ms',
      higherIsBetter: false,
      baseline: baseline(health.p50)
    });
    report({
      name: 'released version: p99',
      value: version.p99,
      unit: 'ms',
      higherIsBetter: false,
      baseline: baseline(health.p99),
      target: '≤ 25 ms'
    });
    report({
      name: 'catalogue list: p50',
      value: list.p50,
      unit: 'ms',
      higherIsBetter: false,
      baseline: baseline(health.p50)
    });
    report({
      name: 'catalogue list: p99',
      value: list.p99,
      unit: 'ms',
      higherIsBetter: false,
      baseline: baseline(health.p99)
    });
  } finally {
    for (const stop of stops.reverse()) await stop().catch(() => undefined);
    rmSync(tmp, { recursive: true, force: true });
  }
}
