import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';

/** Version of the engine; bumped on any change of a figure's meaning, so a stored record can always be replayed. */
export const ENGINE_VERSION = '1.0.0';

export type CheckStatus = 'pass' | 'fail' | 'skipped' | 'error';

/** One check of the contract: `id` never changes meaning; extra fields are check-specific figures. */
export interface CheckResult {
  id: string;
  required: boolean;
  status: CheckStatus;
  message?: string;
  metric?: number;
  tolerance?: number;
  [k: string]: unknown;
}

export interface VerificationRecord {
  engine: string;
  formulation: string;
  version: string | null;
  definitionHash: string;
  verdict: 'pass' | 'fail' | 'incomplete';
  startedAt: string;
  durationMs: number;
  checks: CheckResult[];
  /** The standing notice shown with every record: evidence, not approval for use. */
  notice?: string;
}

export interface Progress {
  stage: string;
  /** 0..1 over the whole run */
  progress: number;
}

/** Stage names in the order the engine runs them. */
export const STAGES: readonly string[] = [
  'shape functions',
  'element',
  'patch tests',
  'convergence',
  'benchmarks'
];

/** Shown beside every record and every table of checks. */
export const RECORD_NOTICE =
  'A passing record is evidence that these checks hold, not approval for use: analyses need a qualified engineer’s judgement, and local codes and licensed practice govern.';

/** The verdict rule of the contract: fail if any required check fails or errors; incomplete if none does but one was skipped; else pass. */
export function verdictOf(checks: CheckResult[]): VerificationRecord['verdict'] {
  let skipped = false;
  for (const c of checks) {
    if (!c.required) continue;
    if (c.status === 'fail' || c.status === 'error') return 'fail';
    if (c.status === 'skipped') skipped = true;
  }
  return skipped ? 'incomplete' : 'pass';
}

/** Fields of a record that differ between two runs of the same definition; excluded from its hash. */
const TIMING_FIELDS = new Set(['startedAt', 'durationMs']);

/** 'sha256:' + hex of the canonical JSON (RFC 8785) of the record without its timing fields. */
export function recordHash(record: VerificationRecord): string {
  const rest: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(record)) if (!TIMING_FIELDS.has(k)) rest[k] = v;
  const text = canonicalize(jsonSafe(rest));
  if (text === undefined) throw new TypeError('record has no JSON form');
  return 'sha256:' + createHash('sha256').update(text, 'utf8').digest('hex');
}

/**
 * A deep copy that JSON represents exactly: typed arrays become arrays, non-finite numbers become
 * null and −0 becomes 0 (JSON has neither), undefined fields are dropped. Records pass through this
 * before they leave the engine, so the stored JSON and the object a caller holds say the same thing.
 */
export function jsonSafe(value: unknown): unknown {
  if (typeof value === 'number') return Number.isFinite(value) ? (Object.is(value, -0) ? 0 : value) : null;
  if (value === null || typeof value !== 'object') return value;
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    return Array.from(value as unknown as ArrayLike<number>, (v) => jsonSafe(v));
  }
  if (Array.isArray(value)) return value.map((v) => (v === undefined ? null : jsonSafe(v)));
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(value as Record<string, unknown>)) {
    if (v === undefined || typeof v === 'function') continue;
    out[k] = jsonSafe(v);
  }
  return out;
}
