// Version states and verdicts as words with a shape (shell/status-mark): never colour alone.
import type { StatusTone } from '$lib/components/shell/status-mark.svelte';

export type VersionStatus = 'draft' | 'in-review' | 'released' | 'withdrawn';
export type Verdict = 'pass' | 'fail' | 'incomplete';

export const STATUS_TONE: Record<string, StatusTone> = {
  draft: 'neutral',
  'in-review': 'info',
  released: 'pass',
  withdrawn: 'warn'
};

export const STATUS_MEANING: Record<VersionStatus, string> = {
  draft: 'being written; its source may still change',
  'in-review': 'waiting for a second engineer',
  released: 'approved by a reviewer; may be pinned by projects',
  withdrawn: 'no longer to be used; projects pinning it were told'
};

export const VERDICT_TONE: Record<string, StatusTone> = { pass: 'pass', fail: 'fail', incomplete: 'warn' };

/** The status of a single check in a record. */
export const CHECK_TONE: Record<string, StatusTone> = {
  pass: 'pass',
  fail: 'fail',
  error: 'fail',
  skipped: 'neutral'
};
