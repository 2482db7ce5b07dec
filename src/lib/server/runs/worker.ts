// One verification inside a piscina worker thread. Each thread keeps one sandbox (its own
// isolate) for its whole life; the host side of the queue (pool.ts) claims runs, sends the source
// here, and turns the progress messages into heartbeats. No database access happens in a thread.
import type { MessagePort } from 'node:worker_threads';
import { SandboxPool } from '@isoledger/sandbox';
import { ENGINE_VERSION, verifySource, type Progress, type VerificationRecord } from '@isoledger/verify';

export interface VerifyTask {
  runId: string;
  source: string;
  /** the registry version that asked for the record, or null */
  version?: string | null;
  /** receives { stage, progress } messages while the checks run */
  port: MessagePort;
}

export type VerifyOutcome = { ok: true; record: VerificationRecord } | { ok: false; error: string };

let sandbox: SandboxPool | null = null;

/** Loads everything a run needs before the first run is claimed; returns the engine version of this thread. */
export async function warm(): Promise<string> {
  sandbox ??= new SandboxPool({ poolSize: 1 });
  return ENGINE_VERSION;
}

/** Lists an invalid document's diagnostics, one per line, as the author would fix them. */
function describe(e: unknown): string {
  const err = e as {
    message?: string;
    diagnostics?: { line?: number; column?: number; path?: string; message?: string }[];
  };
  const head = err?.message ?? String(e);
  if (!Array.isArray(err?.diagnostics) || err.diagnostics.length === 0) return head;
  const lines = err.diagnostics.map(
    (d) => `line ${d.line ?? '?'}, column ${d.column ?? '?'} (${d.path ?? 'document'}): ${d.message ?? ''}`
  );
  return `${head}\n${lines.join('\n')}`;
}

/** Verifies one document; failures come back as a reason rather than a thrown error, so the text survives the thread boundary. */
export default async function verifyTask(task: VerifyTask): Promise<VerifyOutcome> {
  sandbox ??= new SandboxPool({ poolSize: 1 });
  const post = (p: Progress) => task.port.postMessage({ stage: p.stage, progress: p.progress });
  try {
    const record = await verifySource(task.source, {
      sandbox,
      version: task.version ?? null,
      onProgress: post
    });
    return { ok: true, record };
  } catch (e) {
    return { ok: false, error: `verification of run ${task.runId} stopped: ${describe(e)}` };
  } finally {
    task.port.close();
  }
}
