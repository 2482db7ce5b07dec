// What the API shows of runs and records (api.md): the run with its record once done, and the
// record itself as immutable bytes with a strong validator.
import { ApiError } from '../api/errors';
import { getRecord, getRun, recordEtag, type RunStatus, type StoredRecord } from './queue';
import type { VerificationRecord } from '@isoledger/verify';

export interface RunView {
  id: string;
  status: RunStatus;
  progress: number;
  stage: string | null;
  record: VerificationRecord | null;
  /** present only when the run failed: why */
  error?: string;
}

function notFound(what: string, id: string): ApiError {
  return new ApiError(404, 'not-found', `no verification ${what} with id '${id}'`);
}

export async function runView(id: string): Promise<RunView> {
  const run = await getRun(id);
  if (!run) throw notFound('run', id);
  const stored = run.status === 'done' && run.recordId ? await getRecord(run.recordId) : null;
  const view: RunView = {
    id: run.id,
    status: run.status,
    progress: run.progress,
    stage: run.stage,
    record: stored?.record ?? null
  };
  if (run.status === 'failed') view.error = run.error ?? 'the run failed without a reason';
  return view;
}

/** A record is never rewritten, so browsers, proxies and CDNs may keep it for good. */
export const RECORD_CACHE_CONTROL = 'public, max-age=31536000, immutable';

/** RFC 9110 §13.1.2: If-None-Match compares weakly, and `*` matches any current representation. */
export function matchesIfNoneMatch(header: string | null, etag: string): boolean {
  if (!header) return false;
  if (header.trim() === '*') return true;
  const opaque = etag.replace(/^W\//, '');
  return header.split(',').some((tag) => tag.trim().replace(/^W\//, '') === opaque);
}

export async function recordResponse(id: string, ifNoneMatch: string | null): Promise<Response> {
  const stored: StoredRecord | null = await getRecord(id);
  if (!stored) throw notFound('record', id);
  const etag = recordEtag(stored);
  const headers = { etag, 'cache-control': RECORD_CACHE_CONTROL };
  if (matchesIfNoneMatch(ifNoneMatch, etag)) return new Response(null, { status: 304, headers });
  return new Response(stored.json, {
    status: 200,
    headers: { ...headers, 'content-type': 'application/json; charset=utf-8' }
  });
}
