// `npm test`: the whole suite against real parts. Starts a throwaway MariaDB on a free loopback port
// with a temporary data folder, the mail sink and the S3 fake, builds the app when stale, serves
// it, runs vitest (unit, integration, browser) and stops everything at the end.
// Arguments go to vitest (`npm test -- tests/unit/kernel`); when every path given is under
// tests/unit, no services are started.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, mkdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { startMariaDb } from './mariadb';
import { startMailSink } from './mail-sink';
import { startS3 } from './s3';
import { buildIfStale } from './build';
import { startServer, nodeFlags } from './server';
import { freePort } from './net';
import { ROOT } from './paths';
import { ensureDebianPackage } from './system';
import { prepareDatabase } from './prepare';

const args = process.argv.slice(2);
const paths = args.filter((a) => !a.startsWith('-'));
const unitOnly = paths.length > 0 && paths.every((p) => p.startsWith('tests/unit'));

const stops: (() => Promise<void>)[] = [];
const SUMMARY = join(ROOT, 'test-artifacts', 'vitest-results.json');

/** One plain closing line, `Tests: N passed, N failed, N skipped`, read from vitest's JSON report. */
function printSummary(): void {
  try {
    const r = JSON.parse(readFileSync(SUMMARY, 'utf8')) as {
      numPassedTests: number;
      numFailedTests: number;
      numPendingTests: number;
      numTodoTests: number;
    };
    console.log(
      `\nTests: ${r.numPassedTests} passed, ${r.numFailedTests} failed, ${r.numPendingTests + r.numTodoTests} skipped`
    );
  } catch {
    console.log('\nTests: no results were written');
  }
}
const tmp = mkdtempSync(join(tmpdir(), 'isoledger-test-'));

async function cleanup(): Promise<void> {
  for (const stop of stops.reverse()) await stop().catch(() => undefined);
  rmSync(tmp, { recursive: true, force: true });
}

function runVitest(env: Record<string, string>): Promise<number> {
  return new Promise((res) => {
    const child = spawn(
      process.execPath,
      [
        ...nodeFlags(),
        join(ROOT, 'node_modules', 'vitest', 'vitest.mjs'),
        'run',
        '--reporter=default',
        '--reporter=json',
        `--outputFile.json=${SUMMARY}`,
        ...args
      ],
      {
        cwd: ROOT,
        stdio: 'inherit',
        env: { ...process.env, ...env }
      }
    );
    const forward = (sig: NodeJS.Signals) => child.kill(sig);
    process.on('SIGINT', forward);
    process.on('SIGTERM', forward);
    child.on('exit', (code) => res(code ?? 1));
  });
}

let code = 1;
try {
  const env: Record<string, string> = { ISOLEDGER_ARTIFACTS: join(ROOT, 'test-artifacts') };
  mkdirSync(env.ISOLEDGER_ARTIFACTS, { recursive: true });
  if (!unitOnly) {
    env.CHROMIUM_PATH =
      process.env.CHROMIUM_PATH ??
      ensureDebianPackage('chromium', ['chromium', 'chromium-browser'], 'the browser tests');
    const db = await startMariaDb({
      dataDir: join(tmp, 'mariadb'),
      port: await freePort(),
      ephemeral: true,
      database: 'isoledger_test',
      user: 'isoledger',
      password: randomBytes(12).toString('base64url')
    });
    stops.push(db.stop);
    const mail = await startMailSink({ smtpPort: await freePort(), httpPort: await freePort() });
    stops.push(mail.stop);
    const s3 = await startS3({
      port: await freePort(),
      directory: join(tmp, 's3'),
      bucket: 'isoledger-test'
    });
    stops.push(s3.stop);
    Object.assign(env, {
      DATABASE_URL: db.url,
      TEST_SCRATCH_DATABASE_URL: await db.createDatabase('isoledger_scratch'),
      SMTP_URL: mail.smtpUrl,
      MAIL_SINK_URL: mail.listUrl,
      S3_ENDPOINT: s3.endpoint,
      S3_BUCKET: s3.bucket,
      S3_ACCESS_KEY_ID: s3.accessKeyId,
      S3_SECRET_ACCESS_KEY: s3.secretAccessKey,
      ISOLEDGER_DEMO: '1'
    });
    Object.assign(process.env, env);
    await prepareDatabase({ demo: true, log: console.log });
    buildIfStale();
    // the tests act from distinct client addresses (X-Forwarded-For), as behind a proxy
    const serverEnv = { ...env, ADDRESS_HEADER: 'x-forwarded-for', XFF_DEPTH: '1' };
    const server = await startServer({
      port: await freePort(),
      env: serverEnv,
      quiet: !process.env.ISOLEDGER_TEST_SERVER_LOG
    });
    stops.push(server.stop);
    env.ISOLEDGER_TEST_URL = server.url;
    console.log(`[isoledger] test stack ready: server ${server.url}, database on 127.0.0.1:${db.port}`);
  }
  rmSync(SUMMARY, { force: true });
  code = await runVitest(env);
  printSummary();
} catch (e) {
  console.error(`[isoledger] ${(e as Error).stack ?? e}`);
  code = 1;
} finally {
  await cleanup();
}
process.exit(code);
