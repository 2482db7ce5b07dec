// Rate limits of the API, per token and per client address, shared by every server process through
// the rate_limits table of auth/rate-limit.ts (same fixed windows, same rows).
//
// Counting every request with a database write would cost more than serving a cached version, so a
// process reserves a share of a bucket's window at a time (one locked read-modify-write) and spends
// it in memory, reserving the next share while half of the last is left. The sum of all
// reservations never exceeds the limit, so all processes together never admit more than the limit;
// at worst other processes hold unspent hits (under a share and a half each) that this one
// cannot use. Limits below 40 reserve one hit at a time, which makes them exact.
import { QueryTypes } from 'sequelize';
import { getSequelize, inTransaction } from '../db';

export interface ApiRateLimits {
  windowSeconds: number;
  /** requests per window for one API token; 0 turns the limit off */
  perToken: number;
  /** requests per window from one client address; 0 turns the limit off */
  perAddress: number;
}

/**
 * Defaults (common practice, no source): a pipeline fetching its pins makes a few requests a
 * second at most; an address may stand for a whole office behind one proxy, hence twice as many.
 */
export const DEFAULT_API_RATE_LIMITS: ApiRateLimits = { windowSeconds: 60, perToken: 1200, perAddress: 2400 };

function whole(name: string, fallback: number, min: number): number {
  const raw = process.env[name];
  if (raw === undefined || raw === '') return fallback;
  const v = Number(raw);
  if (!Number.isInteger(v) || v < min)
    throw new Error(`${name} must be a whole number ≥ ${min}, got '${raw}'`);
  return v;
}

/** From API_RATE_WINDOW_SECONDS, API_RATE_PER_TOKEN and API_RATE_PER_ADDRESS, else the defaults. */
export function apiRateLimits(): ApiRateLimits {
  return {
    windowSeconds: whole('API_RATE_WINDOW_SECONDS', DEFAULT_API_RATE_LIMITS.windowSeconds, 1),
    perToken: whole('API_RATE_PER_TOKEN', DEFAULT_API_RATE_LIMITS.perToken, 0),
    perAddress: whole('API_RATE_PER_ADDRESS', DEFAULT_API_RATE_LIMITS.perAddress, 0)
  };
}

export interface Admission {
  allowed: boolean;
  /** seconds until the window ends (0 when allowed) */
  retryAfterSeconds: number;
}

/** A share is a twentieth of the limit, at least 1 and at most this many hits. */
const MAX_SHARE = 2000;
const SHARES_PER_WINDOW = 20;
/** buckets of ended windows are dropped from memory once there are this many */
const PRUNE_AT = 10_000;
/** rows of windows older than this are deleted now and then, as auth/rate-limit.ts does */
const KEEP_MS = 24 * 3600 * 1000;
const SWEEP_EVERY = 200;

export function shareOf(limit: number): number {
  return Math.max(1, Math.min(MAX_SHARE, Math.floor(limit / SHARES_PER_WINDOW)));
}

interface Local {
  windowStart: number;
  windowEnd: number;
  /** hits this process reserved in the window, and how many of them it spent */
  reserved: number;
  spent: number;
  /** the window's limit is reached by all processes together */
  exhausted: boolean;
  reserving: Promise<void> | null;
}

/** Takes up to `want` hits of bucket's window from the shared count; how many it got. */
async function reserve(bucket: string, windowStart: Date, want: number, limit: number): Promise<number> {
  const db = getSequelize();
  return inTransaction(async (t) => {
    // the upsert takes the row's exclusive lock at once (two INSERT IGNOREs followed by locking reads
    // would deadlock), so the read below sees every other process's reservation and none in between
    const created = await db.query(
      'INSERT INTO rate_limits (bucket, window_start, hits) VALUES (?, ?, 0) ON DUPLICATE KEY UPDATE hits = hits',
      { replacements: [bucket, windowStart], transaction: t, type: QueryTypes.INSERT }
    );
    const [row] = await db.query<{ hits: number }>(
      'SELECT hits FROM rate_limits WHERE bucket = ? AND window_start = ? FOR UPDATE',
      { type: QueryTypes.SELECT, replacements: [bucket, windowStart], transaction: t }
    );
    const got = Math.max(0, Math.min(want, limit - Number(row.hits)));
    if (got > 0) {
      await db.query('UPDATE rate_limits SET hits = hits + ? WHERE bucket = ? AND window_start = ?', {
        replacements: [got, bucket, windowStart],
        transaction: t
      });
    }
    // [insertId, affectedRows]: 1 for a new window's row (0 when it existed); the bucket's older windows are of no more use
    if (Array.isArray(created) && Number(created[1]) === 1) {
      await db.query('DELETE FROM rate_limits WHERE bucket = ? AND window_start < ?', {
        replacements: [bucket, windowStart],
        transaction: t
      });
    }
    return got;
  });
}

export class SharedRateLimiter {
  private readonly buckets = new Map<string, Local>();
  private reservations = 0;

  /** Counts one request against bucket: allowed while all processes together stay within `limit`. */
  async take(bucket: string, limit: number, windowSeconds: number): Promise<Admission> {
    const span = windowSeconds * 1000;
    for (;;) {
      const now = Date.now();
      const windowStart = Math.floor(now / span) * span;
      let local = this.buckets.get(bucket);
      if (!local || local.windowStart !== windowStart) {
        if (this.buckets.size >= PRUNE_AT) this.prune(now);
        local = {
          windowStart,
          windowEnd: windowStart + span,
          reserved: 0,
          spent: 0,
          exhausted: false,
          reserving: null
        };
        this.buckets.set(bucket, local);
      }
      const share = shareOf(limit);
      if (local.spent < local.reserved) {
        local.spent++;
        // a busy bucket reserves its next share before this one runs out, so no request waits for it
        if (share > 1 && !local.reserving && !local.exhausted && local.reserved - local.spent <= share / 2)
          this.reserveFor(bucket, local, share, limit, now).catch(() => undefined);
        return { allowed: true, retryAfterSeconds: 0 };
      }
      if (local.exhausted)
        return { allowed: false, retryAfterSeconds: Math.max(1, Math.ceil((local.windowEnd - now) / 1000)) };
      // one reservation at a time per bucket; the others wait for it and try again
      await (local.reserving ?? this.reserveFor(bucket, local, share, limit, now));
    }
  }

  private reserveFor(bucket: string, local: Local, share: number, limit: number, now: number): Promise<void> {
    local.reserving = reserve(bucket.slice(0, 200), new Date(local.windowStart), share, limit)
      .then((got) => {
        local.reserved += got;
        if (got === 0) local.exhausted = true;
      })
      .finally(() => {
        local.reserving = null;
      });
    void this.sweep(now);
    return local.reserving;
  }

  private prune(now: number): void {
    for (const [k, v] of this.buckets) if (v.windowEnd <= now && !v.reserving) this.buckets.delete(k);
  }

  private async sweep(now: number): Promise<void> {
    if (++this.reservations % SWEEP_EVERY !== 0) return;
    await getSequelize()
      .query('DELETE FROM rate_limits WHERE window_start < ?', { replacements: [new Date(now - KEEP_MS)] })
      .catch(() => undefined);
  }
}
