// The server's own cache of immutable API representations (released versions, their sources,
// records), in front of the routes: a shared cache in the HTTP sense, except that it still asks
// who is calling. Solver pipelines fetch the same released definitions over and over; this answers
// them without the database, after authentication and the rate limits.
//
// A record and a released version's source never change. A released version's JSON changes once,
// when it is withdrawn; this process forgets the entry when it withdraws it, and other processes
// look again after REVALIDATE_MS. That is far tighter than the year every browser and proxy may
// keep it (Cache-Control: immutable); the manifest, which decides what a solver runs, is never cached.
import { createHash } from 'node:crypto';
import { matchesIfNoneMatch } from '../runs/view';

export interface CachedRepresentation {
  body: Uint8Array;
  etag: string;
  contentType: string;
  cacheControl: string;
  storedAt: number;
  /** ms after storedAt when the route is asked again; Infinity for bytes that never change */
  revalidateAfterMs: number;
}

/** How long another process's withdrawal may take to show in this one's answers. */
export const REVALIDATE_MS = 1000;
const MAX_ENTRIES = 2000;
const MAX_BYTES = 64 * 1024 * 1024;

export class ResponseCache {
  private readonly entries = new Map<string, CachedRepresentation>();
  private bytes = 0;

  /** A fresh entry, or undefined (and the stale one dropped). */
  get(key: string, now = Date.now()): CachedRepresentation | undefined {
    const e = this.entries.get(key);
    if (!e) return undefined;
    if (now - e.storedAt >= e.revalidateAfterMs) {
      this.delete(key);
      return undefined;
    }
    this.entries.delete(key);
    this.entries.set(key, e);
    return e;
  }

  set(key: string, entry: CachedRepresentation): void {
    if (entry.body.byteLength > MAX_BYTES / 16) return;
    this.delete(key);
    this.entries.set(key, entry);
    this.bytes += entry.body.byteLength;
    while (this.entries.size > MAX_ENTRIES || this.bytes > MAX_BYTES)
      this.delete(this.entries.keys().next().value!);
  }

  delete(key: string): void {
    const e = this.entries.get(key);
    if (!e) return;
    this.entries.delete(key);
    this.bytes -= e.body.byteLength;
  }

  /** Forgets every entry under a path prefix (a version and everything below it). */
  deletePrefix(prefix: string): void {
    for (const key of [...this.entries.keys()])
      if (key === prefix || key.startsWith(prefix + '/')) this.delete(key);
  }

  get size(): number {
    return this.entries.size;
  }
}

/** The cached answer as status, headers and bytes: 304 when If-None-Match names its ETag, else 200. */
export function cachedAnswer(
  entry: CachedRepresentation,
  ifNoneMatch: string | null
): { status: 200 | 304; headers: Record<string, string>; body: Uint8Array | null } {
  const headers = { etag: entry.etag, 'cache-control': entry.cacheControl };
  if (matchesIfNoneMatch(ifNoneMatch, entry.etag)) return { status: 304, headers, body: null };
  return { status: 200, headers: { ...headers, 'content-type': entry.contentType }, body: entry.body };
}

/** The cached answer as a web Response. */
export function respondFromCache(entry: CachedRepresentation, ifNoneMatch: string | null): Response {
  const { status, headers, body } = cachedAnswer(entry, ifNoneMatch);
  return new Response(body as BodyInit | null, { status, headers });
}

/** A response worth keeping: 200, a strong ETag, and the route's word that it is immutable. */
export function isImmutableResponse(r: Response): boolean {
  const etag = r.headers.get('etag');
  return (
    r.status === 200 &&
    !!etag &&
    !etag.startsWith('W/') &&
    /\bimmutable\b/.test(r.headers.get('cache-control') ?? '')
  );
}

/** A weak ETag of a list's bytes: equal bytes, equal tag. */
export function weakEtag(body: Uint8Array): string {
  return `W/"${createHash('sha256').update(body).digest('base64url').slice(0, 27)}"`;
}

/** Lists may be stored by the browser but are asked for again each time (cheaply, with If-None-Match). */
export const LIST_CACHE_CONTROL = 'private, no-cache';

/** Gives a 200 JSON list a weak ETag, and answers 304 when the caller already has these bytes. */
export async function withWeakEtag(r: Response, ifNoneMatch: string | null): Promise<Response> {
  if (r.status !== 200 || r.headers.has('etag') || r.headers.has('cache-control')) return r;
  const body = new Uint8Array(await r.arrayBuffer());
  const etag = weakEtag(body);
  const headers = new Headers(r.headers);
  headers.set('etag', etag);
  headers.set('cache-control', LIST_CACHE_CONTROL);
  if (matchesIfNoneMatch(ifNoneMatch, etag)) {
    headers.delete('content-type');
    headers.delete('content-length');
    return new Response(null, { status: 304, headers });
  }
  return new Response(body as BodyInit, { status: 200, headers });
}
