// Fixed-window counters in the rate_limits table, so every server process shares them. A bucket is a
// string such as 'sign-in:account:ada@example.com'; each window of `windowSeconds` counts from zero.
import { QueryTypes } from 'sequelize';
import { getSequelize, inTransaction } from '../db';

export interface RateVerdict {
  allowed: boolean;
  /** hits counted in the current window, this one included */
  hits: number;
  /** seconds until the current window ends (0 when allowed) */
  retryAfterSeconds: number;
}

/** windows older than this are deleted now and then (the longest window any caller uses is far shorter) */
const KEEP_MS = 24 * 3600 * 1000;
/** one sweep of stale windows per this many hits in a process */
const SWEEP_EVERY = 200;
let hitsSinceSweep = 0;

function windowOf(now: number, windowSeconds: number): { start: Date; end: number } {
  const span = windowSeconds * 1000;
  const start = Math.floor(now / span) * span;
  return { start: new Date(start), end: start + span };
}

/** Counts one hit against bucket; allowed while the window's count is at most `limit`. */
export async function hit(bucket: string, limit: number, windowSeconds: number): Promise<RateVerdict> {
  const now = Date.now();
  const { start, end } = windowOf(now, windowSeconds);
  const hits = await inTransaction(async (t) => {
    await getSequelize().query(
      'INSERT INTO rate_limits (bucket, window_start, hits) VALUES (?, ?, 1) ON DUPLICATE KEY UPDATE hits = hits + 1',
      { replacements: [bucket, start], transaction: t }
    );
    // the upsert holds the row lock, so this reads our own increment and no one else's in between
    const [row] = await getSequelize().query<{ hits: number }>(
      'SELECT hits FROM rate_limits WHERE bucket = ? AND window_start = ?',
      { type: QueryTypes.SELECT, replacements: [bucket, start], transaction: t }
    );
    await getSequelize().query('DELETE FROM rate_limits WHERE bucket = ? AND window_start < ?', {
      replacements: [bucket, start],
      transaction: t
    });
    return Number(row.hits);
  });
  if (++hitsSinceSweep >= SWEEP_EVERY) {
    hitsSinceSweep = 0;
    await getSequelize().query('DELETE FROM rate_limits WHERE window_start < ?', {
      replacements: [new Date(now - KEEP_MS)]
    });
  }
  const allowed = hits <= limit;
  return { allowed, hits, retryAfterSeconds: allowed ? 0 : Math.ceil((end - now) / 1000) };
}

/** Takes back one hit in the current window (a sign-in that succeeded does not count as a failure). */
export async function refund(bucket: string, windowSeconds: number): Promise<void> {
  const { start } = windowOf(Date.now(), windowSeconds);
  await getSequelize().query(
    'UPDATE rate_limits SET hits = hits - 1 WHERE bucket = ? AND window_start = ? AND hits > 0',
    {
      replacements: [bucket, start]
    }
  );
}
