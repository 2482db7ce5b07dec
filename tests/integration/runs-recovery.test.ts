// A worker process that dies in the middle of a run (SIGKILL: no chance to clean up) leaves the
// run to the sweeper of another process, which re-queues it; it then finishes exactly once with
// one record. A worker process stopped in order (SIGTERM) hands its run back without spending an attempt.
import { afterAll, describe, expect, it } from 'vitest';
import { closeDatabase } from '../../src/lib/server/db';
import { enqueueRun, getRun } from '../../src/lib/server/runs/queue';
import { brickSource, probe, stiffnessBase } from '../support/queue-documents';
import { recordsOfRuns, waitForRuns } from '../support/queue-db';
import { startQueueProcess, type QueueProcess } from '../support/queue-process';

const started: QueueProcess[] = [];
const base = stiffnessBase();
let next = 0;

/** The brick takes long enough to verify that a process can be stopped while its run is in progress. */
const freshBrick = () => probe(brickSource(base + next++));

/**
 * Queues bricks one at a time until `proc` holds one of them in progress (running, a stage
 * reported: the engine is at work). Other workers on the queue may take some of them first; those
 * just finish elsewhere. Returns the run held and every run queued.
 */
async function holdOne(proc: QueueProcess): Promise<{ held: string; ids: string[] }> {
  const ids: string[] = [];
  for (let offered = 0; offered < 8; offered++) {
    const id = (await enqueueRun(freshBrick())).id;
    ids.push(id);
    const until = Date.now() + 5_000;
    while (Date.now() < until) {
      if (proc.claims().includes(id)) {
        for (;;) {
          const run = await getRun(id);
          if (run?.status === 'running' && run.claimedBy?.startsWith(proc.processId) && run.stage !== null) {
            return { held: id, ids };
          }
          if (run?.status !== 'running')
            throw new Error(`run ${id} ended (${run?.status}) before it could be interrupted`);
          await new Promise((r) => setTimeout(r, 25));
        }
      }
      await new Promise((r) => setTimeout(r, 25));
    }
  }
  throw new Error(`${proc.processId} did not take any of the runs offered:\n${proc.stderr()}`);
}

async function start(opts: Parameters<typeof startQueueProcess>[0]): Promise<QueueProcess> {
  const p = await startQueueProcess(opts);
  started.push(p);
  return p;
}

afterAll(async () => {
  await Promise.all(started.map((p) => p.stop()));
  await closeDatabase();
});

describe('a worker process lost in the middle of a run', () => {
  it('leaves the run re-queued by another process’s sweeper, finished exactly once with one record', async () => {
    // heartbeats every 200 ms; quick polling so this process claims before slower workers do
    const doomed = await start({ name: 'doomed', size: 1, heartbeatMs: 200, staleMs: 8_000, idlePollMs: 50 });
    const { held: victim, ids } = await holdOne(doomed);
    await doomed.kill();
    expect(doomed.completed()).not.toContain(victim);
    expect(await getRun(victim)).toMatchObject({ status: 'running', attempts: 1 });

    // the rescuer's sweeper takes 8 s of silence for a lost worker: four of the test server's 2 s
    // heartbeat periods, so runs that live workers hold are never taken from them
    const rescuer = await start({
      name: 'rescuer',
      size: 1,
      heartbeatMs: 500,
      staleMs: 8_000,
      sweepMs: 500,
      idlePollMs: 100
    });
    const rows = await waitForRuns(ids, 300_000, () => rescuer.stderr());
    const row = rows.find((r) => r.id === victim)!;
    expect(row.status).toBe('done');
    // claimed twice: once by the process that died, once by the one that finished it
    expect(row.attempts).toBe(2);
    expect(row.claimed_by!.startsWith(doomed.processId)).toBe(false);
    expect(row.error).toContain(`re-queued: attempt 1 of 3: worker ${doomed.processId}/0 sent no heartbeat`);
    const records = await recordsOfRuns([victim]);
    expect(records).toHaveLength(1);
    expect(records[0].id).toBe(row.record_id);
    expect(records[0].definition_hash).toBe(row.definition_hash);
    expect(rows.every((r) => r.status === 'done')).toBe(true);
    expect(await recordsOfRuns(ids)).toHaveLength(ids.length);
  }, 420_000);
});

describe('a worker process stopped in order', () => {
  it('hands its run in progress back to the queue without spending an attempt, and exits', async () => {
    const leaving = await start({
      name: 'leaving',
      size: 1,
      heartbeatMs: 200,
      staleMs: 8_000,
      idlePollMs: 50,
      drainMs: 100
    });
    const { held: handed, ids } = await holdOne(leaving);
    expect(await leaving.stop()).toBe(0);
    expect(leaving.lines.some((l) => l.type === 'released' && l.runId === handed)).toBe(true);
    expect(leaving.lines.at(-1)?.type).toBe('stopped');

    await start({ name: 'after-leaving', size: 1, heartbeatMs: 500, staleMs: 8_000, idlePollMs: 100 });
    const rows = await waitForRuns(ids, 300_000);
    const row = rows.find((r) => r.id === handed)!;
    expect(row.status).toBe('done');
    expect(row.attempts).toBe(1);
    expect(await recordsOfRuns([handed])).toHaveLength(1);
  }, 420_000);
});
