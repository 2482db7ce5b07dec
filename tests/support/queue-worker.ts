// A verification worker process for the multi-process queue tests: the product's own worker pool
// on DATABASE_URL, reporting every claim, record and failure as one JSON line on stdout.
// Started by queue-process.ts with `node --no-node-snapshot --import tsx`; stops in order on
// SIGTERM or when its stdin closes (the test process went away).
import { startRunWorkers, type RunWorkerEvent } from '../../src/lib/server/runs/pool';
import { closeDatabase } from '../../src/lib/server/db';

type Line =
  | RunWorkerEvent
  | { type: 'ready'; processId: string; workerIds: string[] }
  | { type: 'stopped' }
  | { type: 'log'; line: string };

function out(line: Line): void {
  process.stdout.write(JSON.stringify(line) + '\n');
}

function num(name: string): number | undefined {
  const raw = process.env[name];
  return raw === undefined || raw === '' ? undefined : Number(raw);
}

const workers = await startRunWorkers({
  size: num('QUEUE_SIZE') ?? 1,
  processId: process.env.QUEUE_PROCESS_ID,
  heartbeatMs: num('QUEUE_HEARTBEAT_MS'),
  staleMs: num('QUEUE_STALE_MS'),
  sweepMs: num('QUEUE_SWEEP_MS'),
  idlePollMs: num('QUEUE_IDLE_MS'),
  drainMs: num('QUEUE_DRAIN_MS'),
  onEvent: out,
  log: (line) => out({ type: 'log', line })
});
// ready means claiming: the threads have loaded the engine
if (!(await workers.ready)) {
  out({ type: 'log', line: 'the worker threads could not start' });
  process.exit(1);
}
out({ type: 'ready', processId: workers.processId, workerIds: workers.workerIds });

let stopping = false;
async function shutdown(): Promise<void> {
  if (stopping) return;
  stopping = true;
  await workers.stop();
  await closeDatabase();
  out({ type: 'stopped' });
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown());
process.stdin.on('end', () => void shutdown());
process.stdin.resume();
