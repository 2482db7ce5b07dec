// Two server processes' worker pools on one queue: no run is claimed twice, every run ends with
// exactly one record, and a burst of 200 runs all finish. The test server's own workers (and
// other test files') may take part; they are simply more claimers, and the counts below include them.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDatabase, inTransaction } from '../../src/lib/server/db';
import { enqueueRun } from '../../src/lib/server/runs/queue';
import { barSource, probe, stiffnessBase } from '../support/queue-documents';
import { recordsOfRuns, waitForRuns, type RunRowView } from '../support/queue-db';
import { startQueueProcess, type QueueProcess } from '../support/queue-process';

let first: QueueProcess;
let second: QueueProcess;
const base = stiffnessBase();
let next = 0;

/** Queues `count` distinct bar documents in one transaction: they become visible to every worker at once. */
async function queueBurst(count: number, label: string): Promise<string[]> {
  const docs = Array.from({ length: count }, () => probe(barSource(base + next++, label)));
  return inTransaction(async (t) => {
    const ids: string[] = [];
    for (const doc of docs) {
      const run = await enqueueRun(doc, t);
      expect(run.status).toBe('queued');
      ids.push(run.id);
    }
    return ids;
  });
}

function progressNote(): string {
  return [first, second]
    .map((p) => `${p.processId}: ${p.claims().length} claims, ${p.completed().length} done\n${p.stderr()}`)
    .join('\n');
}

/** Every run done once: one claim (attempts = 1), one record naming it, the record of its own definition. */
async function expectEachDoneOnce(ids: string[], rows: RunRowView[]): Promise<void> {
  expect(rows.filter((r) => r.status !== 'done').map((r) => `${r.id} ${r.status}: ${r.error}`)).toEqual([]);
  expect(rows.map((r) => r.attempts)).toEqual(rows.map(() => 1));
  const records = await recordsOfRuns(ids);
  expect(records).toHaveLength(ids.length);
  expect(new Set(records.map((r) => r.run_id)).size).toBe(ids.length);
  const byRun = new Map(records.map((r) => [r.run_id, r]));
  for (const row of rows) {
    expect(row.record_id).toBe(byRun.get(row.id)!.id);
    expect(byRun.get(row.id)!.definition_hash).toBe(row.definition_hash);
  }
}

beforeAll(async () => {
  const timings = { heartbeatMs: 500, staleMs: 20_000, sweepMs: 5_000, idlePollMs: 100 };
  [first, second] = await Promise.all([
    startQueueProcess({ name: 'share-a', size: 2, ...timings }),
    startQueueProcess({ name: 'share-b', size: 2, ...timings })
  ]);
});

afterAll(async () => {
  await Promise.all([first?.stop(), second?.stop()]);
  await closeDatabase();
});

describe('two worker processes on one queue', () => {
  it('never claim the same run: every run is claimed once and done once with one record', async () => {
    const ids = await queueBurst(30, 'shared queue');
    const rows = await waitForRuns(ids, 240_000, progressNote);
    await expectEachDoneOnce(ids, rows);

    const ours = new Set(ids);
    const a = first.claims().filter((id) => ours.has(id));
    const b = second.claims().filter((id) => ours.has(id));
    // each process claimed some of the burst, and no run appears in both claim logs
    expect(a.length).toBeGreaterThan(0);
    expect(b.length).toBeGreaterThan(0);
    expect(new Set(a).size).toBe(a.length);
    expect(new Set(b).size).toBe(b.length);
    expect(a.filter((id) => b.includes(id))).toEqual([]);
    // the row names the process that made its record: the claim logs and the rows agree
    for (const row of rows) {
      const inA = a.includes(row.id);
      const inB = b.includes(row.id);
      if (inA) expect(row.claimed_by!.startsWith(first.processId)).toBe(true);
      if (inB) expect(row.claimed_by!.startsWith(second.processId)).toBe(true);
      if (!inA && !inB) expect(row.claimed_by!.startsWith('test-share-')).toBe(false);
    }
  }, 300_000);

  it('finish 200 runs queued at once with 200 records', async () => {
    const ids = await queueBurst(200, 'burst of 200');
    const rows = await waitForRuns(ids, 540_000, progressNote);
    await expectEachDoneOnce(ids, rows);
  }, 600_000);
});
