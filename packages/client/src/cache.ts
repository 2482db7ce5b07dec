// Client-side cache of immutable representations (released versions, their sources, records). The
// server marks them `Cache-Control: public, max-age=31536000, immutable` with a strong ETag; the
// client keeps the body under the URL and asks again with If-None-Match, so a 304 costs no body.

export interface CacheEntry {
  etag: string;
  body: string;
  contentType: string;
  /** ms since the epoch when the server last confirmed the entry */
  storedAt: number;
  /** freshness lifetime the server gave (max-age) */
  maxAgeSeconds: number;
}

/** Where entries live: a Map by default; pipelines may plug in a store that outlives the process. */
export interface CacheStore {
  get(key: string): CacheEntry | undefined | Promise<CacheEntry | undefined>;
  set(key: string, entry: CacheEntry): void | Promise<void>;
  delete(key: string): void | Promise<void>;
}

/** A bounded in-memory store; the entry used longest ago goes first. */
export class MemoryCache implements CacheStore {
  private readonly entries = new Map<string, CacheEntry>();
  constructor(private readonly maxEntries = 500) {}

  get(key: string): CacheEntry | undefined {
    const e = this.entries.get(key);
    if (e) {
      this.entries.delete(key);
      this.entries.set(key, e);
    }
    return e;
  }

  set(key: string, entry: CacheEntry): void {
    this.entries.delete(key);
    this.entries.set(key, entry);
    while (this.entries.size > this.maxEntries) this.entries.delete(this.entries.keys().next().value!);
  }

  delete(key: string): void {
    this.entries.delete(key);
  }

  get size(): number {
    return this.entries.size;
  }
}

/** The max-age of a response the server declared immutable with a strong validator, else null. */
export function immutableLifetime(headers: Headers): number | null {
  const cc = (headers.get('cache-control') ?? '').toLowerCase();
  const etag = headers.get('etag');
  if (!etag || etag.startsWith('W/') || !/\bimmutable\b/.test(cc) || /\b(no-store|private)\b/.test(cc))
    return null;
  const m = /\bmax-age=(\d+)/.exec(cc);
  return m ? Number(m[1]) : null;
}

export function isFresh(entry: CacheEntry, now = Date.now()): boolean {
  return now - entry.storedAt < entry.maxAgeSeconds * 1000;
}
