// The verification queue: enqueue and read runs and records here; pool.ts starts the workers.
export {
  claimNext,
  complete,
  DEFAULT_MAX_ATTEMPTS,
  enqueueRun,
  fail,
  getRecord,
  getRun,
  heartbeat,
  latestRecordFor,
  recordEtag,
  release,
  requeueStale,
  RunQueueError
} from './queue';
export type { ClaimedRun, EnqueuedRun, NewRun, Run, RunStatus, StoredRecord, SweepResult } from './queue';
export { recordResponse, runView, RECORD_CACHE_CONTROL } from './view';
export type { RunView } from './view';
