// Starts and watches worker processes of the verification queue (queue-worker.ts) for the tests.
import { spawn, type ChildProcess } from 'node:child_process';
import { createRequire } from 'node:module';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import type { RunWorkerEvent } from '../../src/lib/server/runs/pool';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const SCRIPT = join(ROOT, 'tests', 'support', 'queue-worker.ts');

export type QueueLine =
  | RunWorkerEvent
  | { type: 'ready'; processId: string; workerIds: string[] }
  | { type: 'stopped' }
  | { type: 'log'; line: string };

export interface QueueProcessOptions {
  name: string;
  size?: number;
  heartbeatMs?: number;
  staleMs?: number;
  sweepMs?: number;
  idlePollMs?: number;
  drainMs?: number;
}

export interface QueueProcess {
  processId: string;
  child: ChildProcess;
  lines: QueueLine[];
  /** run ids this process claimed, in order, once per claim */
  claims(): string[];
  /** run ids this process completed with a record */
  completed(): string[];
  waitFor(what: string, test: (lines: QueueLine[]) => boolean, timeoutMs?: number): Promise<void>;
  /** SIGTERM and wait for the exit code */
  stop(): Promise<number | null>;
  /** SIGKILL at once, and wait until the process is gone */
  kill(): Promise<void>;
  stderr(): string;
}

export async function startQueueProcess(opts: QueueProcessOptions): Promise<QueueProcess> {
  const processId = `test-${opts.name}-${randomBytes(3).toString('hex')}`;
  const tsx = pathToFileURL(createRequire(join(ROOT, 'package.json')).resolve('tsx')).href;
  const env: Record<string, string> = {
    ...(process.env as Record<string, string>),
    QUEUE_PROCESS_ID: processId
  };
  const set = (k: string, v: number | undefined) => {
    if (v !== undefined) env[k] = String(v);
  };
  set('QUEUE_SIZE', opts.size);
  set('QUEUE_HEARTBEAT_MS', opts.heartbeatMs);
  set('QUEUE_STALE_MS', opts.staleMs);
  set('QUEUE_SWEEP_MS', opts.sweepMs);
  set('QUEUE_IDLE_MS', opts.idlePollMs);
  set('QUEUE_DRAIN_MS', opts.drainMs);
  const child = spawn(process.execPath, ['--no-node-snapshot', '--import', tsx, SCRIPT], {
    cwd: ROOT,
    env,
    stdio: ['pipe', 'pipe', 'pipe']
  });
  const lines: QueueLine[] = [];
  let err = '';
  let buffered = '';
  let exitCode: number | null | undefined;
  const exited = new Promise<number | null>((res) => child.once('exit', (code) => res((exitCode = code))));
  child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
    buffered += chunk;
    let nl: number;
    while ((nl = buffered.indexOf('\n')) >= 0) {
      const text = buffered.slice(0, nl);
      buffered = buffered.slice(nl + 1);
      if (text.trim()) lines.push(JSON.parse(text) as QueueLine);
    }
  });
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => {
    err += chunk;
  });

  const waitFor: QueueProcess['waitFor'] = async (what, test, timeoutMs = 60_000) => {
    const until = Date.now() + timeoutMs;
    while (!test(lines)) {
      if (exitCode !== undefined)
        throw new Error(`queue process ${processId} exited (${exitCode}) before ${what}:\n${err}`);
      if (Date.now() > until)
        throw new Error(`queue process ${processId}: no ${what} within ${timeoutMs} ms:\n${err}`);
      await new Promise((r) => setTimeout(r, 50));
    }
  };
  const proc: QueueProcess = {
    processId,
    child,
    lines,
    claims: () => lines.flatMap((l) => (l.type === 'claimed' ? [l.runId] : [])),
    completed: () => lines.flatMap((l) => (l.type === 'done' ? [l.runId] : [])),
    waitFor,
    stop: async () => {
      if (exitCode === undefined) child.kill('SIGTERM');
      return exited;
    },
    kill: async () => {
      if (exitCode === undefined) child.kill('SIGKILL');
      await exited;
    },
    stderr: () => err
  };
  await waitFor('ready line', (ls) => ls.some((l) => l.type === 'ready'), 90_000);
  return proc;
}
