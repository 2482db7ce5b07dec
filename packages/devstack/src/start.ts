// `npm start`: the product with demo data on this machine. Starts MariaDB (data in .data/), the
// mail sink and the S3 fake on loopback, migrates, seeds the demo, builds when stale and serves
// on http://127.0.0.1:4310 (PORT overrides). Ctrl-C stops everything it started.
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { startMariaDb } from './mariadb';
import { startMailSink } from './mail-sink';
import { startS3 } from './s3';
import { buildIfStale } from './build';
import { startServer } from './server';
import { ROOT } from './paths';
import { prepareDatabase } from './prepare';

const DATA = join(ROOT, '.data');
const port = Number(process.env.PORT ?? 4310);
const stops: (() => Promise<void>)[] = [];
let stopping = false;

async function stopAll(code: number): Promise<never> {
  if (!stopping) {
    stopping = true;
    for (const stop of stops.reverse()) await stop().catch(() => undefined);
  }
  process.exit(code);
}
process.on('SIGINT', () => void stopAll(0));
process.on('SIGTERM', () => void stopAll(0));

/** A password for the local database user, made once and kept in .data/ (never committed). */
function localSecret(): string {
  const file = join(DATA, 'local-db-password');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(DATA, { recursive: true });
  const s = randomBytes(18).toString('base64url');
  writeFileSync(file, s + '\n', { mode: 0o600 });
  return s;
}

try {
  console.log('[isoledger] starting the local database …');
  const db = await startMariaDb({
    dataDir: join(DATA, 'mariadb'),
    port: Number(process.env.ISOLEDGER_DB_PORT ?? 4311),
    database: 'isoledger',
    user: 'isoledger',
    password: localSecret()
  });
  stops.push(db.stop);
  const mail = await startMailSink({
    smtpPort: 4312,
    httpPort: 4313,
    file: join(DATA, 'mail', 'messages.jsonl')
  });
  stops.push(mail.stop);
  const s3 = await startS3({ port: 4314, directory: join(DATA, 's3'), bucket: 'isoledger-attachments' });
  stops.push(s3.stop);

  const env: Record<string, string> = {
    DATABASE_URL: db.url,
    SMTP_URL: mail.smtpUrl,
    MAIL_SINK_URL: mail.listUrl,
    S3_ENDPOINT: s3.endpoint,
    S3_BUCKET: s3.bucket,
    S3_ACCESS_KEY_ID: s3.accessKeyId,
    S3_SECRET_ACCESS_KEY: s3.secretAccessKey,
    ISOLEDGER_DEMO: '1'
  };
  Object.assign(process.env, env);
  const seeded = await prepareDatabase({ demo: true, catalogue: true, log: console.log });

  buildIfStale();
  const server = await startServer({ port, env });
  stops.push(server.stop);
  server.process.on('exit', (code) => {
    if (!stopping) {
      console.error(`[isoledger] the server stopped (exit ${code}); stopping the local services`);
      void stopAll(code ?? 1);
    }
  });

  console.log(`
  Isoledger is running at ${server.url}
  ${seeded.created ? 'Demo data seeded.' : 'Existing data in .data/ reused.'}

  Demo accounts (password: ${process.env.ISOLEDGER_DEMO_PASSWORD ? 'the value of ISOLEDGER_DEMO_PASSWORD' : 'isoledger-demo'}):
${seeded.accounts.map((a) => `    ${a.email.padEnd(24)} ${a.roles.join(', ')}`).join('\n')}

  Local mail sink: ${mail.smtpUrl} (messages in the admin outbox)
  Local S3 fake:   ${s3.endpoint} (bucket ${s3.bucket})

  A passing verification record is evidence, not approval for use. Press Ctrl-C to stop.
`);
} catch (e) {
  console.error(`[isoledger] ${(e as Error).message}`);
  await stopAll(1);
}
