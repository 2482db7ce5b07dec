// The verification workers of one server process: a piscina pool of worker threads (one sandbox
// each) and, for every thread, a claim loop on the shared queue in MariaDB. While a run executes,
// its slot sends heartbeats with the progress the thread reports; a sweeper puts the runs of
// silent workers (in any process) back in the queue, at start-up and periodically.
import { existsSync } from 'node:fs';
import { hostname } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { MessageChannel } from 'node:worker_threads';
import { randomBytes } from 'node:crypto';
import { Piscina } from 'piscina';
import {
  claimNext,
  complete,
  fail,
  heartbeat,
  release,
  requeueStale,
  RunQueueError,
  type ClaimedRun
} from './queue';
import type { VerifyOutcome, VerifyTask } from './worker';

export interface RunWorkersOptions {
  /** worker threads, each claiming one run at a time */
  size: number;
  /** names this process in claimed_by; default host:pid:random */
  processId?: string;
  /** how often a running run's heartbeat is written */
  heartbeatMs?: number;
  /** a running run whose heartbeat is older than this lost its worker */
  staleMs?: number;
  /** how often the sweeper looks for such runs */
  sweepMs?: number;
  /** how long an idle slot waits before asking the queue again */
  idlePollMs?: number;
  /** how long stop() lets runs in progress finish before handing them back to the queue */
  drainMs?: number;
  /** the thread entry; default thread.mjs beside this file, or under src/lib/server/runs of the working folder */
  workerFile?: string;
  /** one line per noteworthy event (claims, records, failures, sweeps) */
  log?: (line: string) => void;
  onEvent?: (event: RunWorkerEvent) => void;
}

export type RunWorkerEvent =
  | { type: 'claimed'; runId: string; workerId: string; attempt: number }
  | { type: 'done'; runId: string; workerId: string; recordId: string }
  | { type: 'failed'; runId: string; workerId: string; reason: string }
  | { type: 'lost'; runId: string; workerId: string; reason: string }
  | { type: 'released'; runId: string; workerId: string }
  | { type: 'swept'; requeued: string[]; failed: string[] };

export interface RunWorkers {
  processId: string;
  workerIds: string[];
  /** resolves once the threads have loaded the engine and claiming began (false: they could not start) */
  ready: Promise<boolean>;
  /** runs executing now, by worker id */
  active(): Map<string, string>;
  /** stops claiming, lets runs in progress finish (up to drainMs), hands back the rest, ends the threads */
  stop(): Promise<void>;
}

/** Defaults sized so that a busy machine never looks silent: fifteen heartbeats fit in one stale period. */
export const RUN_WORKER_DEFAULTS = {
  heartbeatMs: 2_000,
  staleMs: 30_000,
  sweepMs: 10_000,
  idlePollMs: 1_000,
  drainMs: 8_000
};

/** the thread entry (plain JavaScript; it loads worker.ts through tsx) */
const WORKER_MODULE = 'thread.mjs';

/** Finds the thread entry both when this module runs from source (tsx, vitest) and from the server bundle (build/). */
export function resolveWorkerFile(explicit?: string): string {
  const candidates = [
    explicit,
    join(dirname(fileURLToPath(import.meta.url)), WORKER_MODULE),
    join(process.cwd(), 'src', 'lib', 'server', 'runs', WORKER_MODULE)
  ].filter((c): c is string => typeof c === 'string');
  const found = candidates.find((c) => existsSync(c));
  if (!found) throw new Error(`the run worker module was not found; looked at ${candidates.join(', ')}`);
  return found;
}

function positive(name: string, v: number | undefined, fallback: number): number {
  const value = v ?? fallback;
  if (!Number.isFinite(value) || value <= 0)
    throw new Error(`${name} must be a positive number of milliseconds, got ${v}`);
  return value;
}

export function defaultProcessId(): string {
  return `${hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`;
}

/** Starts `size` worker slots on the shared queue; see RunWorkersOptions for the timings. */
export async function startRunWorkers(opts: RunWorkersOptions): Promise<RunWorkers> {
  if (!Number.isInteger(opts.size) || opts.size < 1 || opts.size > 64) {
    throw new Error(`the run worker pool size must be a whole number from 1 to 64, got ${opts.size}`);
  }
  const heartbeatMs = positive('heartbeatMs', opts.heartbeatMs, RUN_WORKER_DEFAULTS.heartbeatMs);
  const staleMs = positive('staleMs', opts.staleMs, RUN_WORKER_DEFAULTS.staleMs);
  const sweepMs = positive('sweepMs', opts.sweepMs, RUN_WORKER_DEFAULTS.sweepMs);
  const idlePollMs = positive('idlePollMs', opts.idlePollMs, RUN_WORKER_DEFAULTS.idlePollMs);
  const drainMs = positive('drainMs', opts.drainMs, RUN_WORKER_DEFAULTS.drainMs);
  if (staleMs < 3 * heartbeatMs) {
    throw new Error(
      `staleMs (${staleMs}) must be at least three heartbeats (${3 * heartbeatMs} ms), or live runs would be re-queued`
    );
  }
  const processId = (opts.processId ?? defaultProcessId()).replace(/\s+/g, '-').slice(0, 100);
  const log = opts.log ?? (() => undefined);
  const emit = (e: RunWorkerEvent) => opts.onEvent?.(e);

  const piscina = new Piscina({
    filename: pathToFileURL(resolveWorkerFile(opts.workerFile)).href,
    minThreads: opts.size,
    maxThreads: opts.size,
    idleTimeout: Number.POSITIVE_INFINITY,
    // the sandbox keeps asynchronous handles open between tasks
    atomics: 'disabled'
  });
  // a thread that cannot start is reported here; without a listener it would end the process
  piscina.on('error', (e: Error) => log(`a verification worker thread failed: ${e.message}`));

  let stopping = false;
  const wakers = new Set<() => void>();
  const inflight = new Map<
    string,
    { runId: string; controller: AbortController; why: 'lost' | 'stop' | null }
  >();

  const sleep = (ms: number) =>
    new Promise<void>((res) => {
      const done = () => {
        clearTimeout(timer);
        wakers.delete(done);
        res();
      };
      const timer = setTimeout(done, ms);
      wakers.add(done);
    });

  async function sweep(): Promise<void> {
    try {
      const r = await requeueStale(staleMs);
      if (r.requeued.length || r.failed.length) {
        log(`re-queued ${r.requeued.length} and failed ${r.failed.length} run(s) whose worker went silent`);
        emit({ type: 'swept', ...r });
        for (const wake of [...wakers]) wake();
      }
    } catch (e) {
      log(`the sweep for silent runs failed: ${(e as Error).message}`);
    }
  }

  async function execute(run: ClaimedRun, workerId: string): Promise<void> {
    const controller = new AbortController();
    const entry = { runId: run.id, controller, why: null as 'lost' | 'stop' | null };
    inflight.set(workerId, entry);
    const { port1, port2 } = new MessageChannel();
    let latest: { stage: string | null; progress: number } = { stage: null, progress: 0 };
    let written: string | null = null;
    let beating = false;
    let again = false;

    const beat = async (): Promise<void> => {
      if (beating) {
        again = true;
        return;
      }
      beating = true;
      try {
        do {
          again = false;
          const snapshot = latest;
          const owned = await heartbeat(run.id, workerId, snapshot.progress, snapshot.stage);
          written = snapshot.stage;
          if (!owned && entry.why === null) {
            entry.why = 'lost';
            controller.abort();
          }
        } while (again && entry.why === null);
      } catch (e) {
        // a missed heartbeat is not fatal: the next one, or the sweeper, decides
        log(`heartbeat of run ${run.id} failed: ${(e as Error).message}`);
      } finally {
        beating = false;
      }
    };

    port1.on('message', (m: { stage?: unknown; progress?: unknown }) => {
      const stage = typeof m.stage === 'string' ? m.stage : latest.stage;
      const progress =
        typeof m.progress === 'number' && Number.isFinite(m.progress) ? m.progress : latest.progress;
      latest = { stage, progress };
      // a new stage is shown at once; progress within a stage rides on the periodic heartbeat
      if (stage !== written) void beat();
    });
    const timer = setInterval(() => void beat(), heartbeatMs);

    let outcome: VerifyOutcome | null = null;
    try {
      const task: VerifyTask = { runId: run.id, source: run.source, version: run.version, port: port2 };
      outcome = (await piscina.run(task, {
        transferList: [port2],
        signal: controller.signal
      })) as VerifyOutcome;
    } catch (e) {
      await interrupted(run, workerId, entry.why, (e as Error)?.message ?? String(e));
    } finally {
      clearInterval(timer);
      port1.close();
      inflight.delete(workerId);
    }
    if (outcome) await settle(run, workerId, outcome);
  }

  /** The thread did not return: taken away (lost), stopped by us (stop), or it died. */
  async function interrupted(
    run: ClaimedRun,
    workerId: string,
    why: 'lost' | 'stop' | null,
    message: string
  ): Promise<void> {
    if (why === 'lost') {
      const reason = `run ${run.id} was taken from ${workerId} after a silence; its work here was dropped`;
      log(reason);
      emit({ type: 'lost', runId: run.id, workerId, reason });
    } else if (why === 'stop') {
      if (await release(run.id, workerId).catch(() => false)) {
        emit({ type: 'released', runId: run.id, workerId });
      }
    } else {
      const reason = `the verification worker thread ended abnormally: ${message}`;
      await settle(run, workerId, { ok: false, error: reason });
    }
  }

  /**
   * Stores the outcome. When the database cannot be reached the run stays `running` without
   * heartbeats, so the sweeper of some process re-queues it later: nothing is lost.
   */
  async function settle(run: ClaimedRun, workerId: string, outcome: VerifyOutcome): Promise<void> {
    try {
      if (outcome.ok) {
        const recordId = await complete(run.id, workerId, outcome.record);
        log(`run ${run.id} done on ${workerId}: record ${recordId} (${outcome.record.verdict})`);
        emit({ type: 'done', runId: run.id, workerId, recordId });
      } else {
        await fail(run.id, workerId, outcome.error);
        log(`run ${run.id} failed on ${workerId}: ${outcome.error.split('\n')[0]}`);
        emit({ type: 'failed', runId: run.id, workerId, reason: outcome.error });
      }
    } catch (e) {
      if (e instanceof RunQueueError && e.code === 'mismatch') {
        await settle(run, workerId, { ok: false, error: e.message });
      } else if (e instanceof RunQueueError && e.code === 'not-owned') {
        log(e.message);
        emit({ type: 'lost', runId: run.id, workerId, reason: e.message });
      } else {
        log(
          `the outcome of run ${run.id} could not be stored; the sweeper will re-queue it: ${(e as Error).message}`
        );
      }
    }
  }

  async function slot(index: number, ready: Promise<boolean>): Promise<void> {
    const workerId = `${processId}/${index}`;
    // no claims before the threads have loaded the engine: a run never waits on a thread's start-up,
    // and a process whose threads cannot load leaves the queue to the others
    if (!(await ready)) return;
    while (!stopping) {
      let run: ClaimedRun | null = null;
      try {
        run = await claimNext(workerId);
      } catch (e) {
        log(`claiming a run failed on ${workerId}: ${(e as Error).message}`);
      }
      if (!run) {
        // jitter keeps idle slots of many processes from polling in step
        await sleep(idlePollMs * (0.75 + Math.random() * 0.5));
        continue;
      }
      log(`run ${run.id} claimed by ${workerId} (attempt ${run.attempt} of ${run.maxAttempts})`);
      emit({ type: 'claimed', runId: run.id, workerId, attempt: run.attempt });
      await execute(run, workerId);
    }
  }

  await sweep();
  const sweeper = setInterval(() => void sweep(), sweepMs);
  const workerIds = Array.from({ length: opts.size }, (_, i) => `${processId}/${i}`);
  const ready = Promise.all(workerIds.map(() => piscina.run(null, { name: 'warm' }) as Promise<string>)).then(
    (engines) => {
      log(`verification worker threads of ${processId} ready (engine ${engines[0]})`);
      return true;
    },
    (e: Error) => {
      if (!stopping)
        log(`the verification worker threads could not start; this process takes no runs: ${e.message}`);
      return false;
    }
  );
  const loops = workerIds.map((_, i) => slot(i, ready));
  log(`${opts.size} verification worker(s) started as ${processId}`);

  let stopped: Promise<void> | null = null;
  return {
    processId,
    workerIds,
    ready,
    active: () => new Map([...inflight].map(([w, e]) => [w, e.runId])),
    stop() {
      stopped ??= (async () => {
        stopping = true;
        clearInterval(sweeper);
        for (const wake of [...wakers]) wake();
        const drained = Promise.all(loops).then(() => true);
        const finished = await Promise.race([
          drained,
          new Promise<false>((r) => setTimeout(() => r(false), drainMs).unref())
        ]);
        if (!finished) {
          for (const entry of inflight.values()) {
            entry.why = 'stop';
            entry.controller.abort();
          }
        }
        // ends the threads; a warm-up still pending then resolves false and its slots return
        await piscina.destroy();
        await Promise.all(loops);
        log(`verification workers of ${processId} stopped`);
      })();
      return stopped;
    }
  };
}
