// Released and withdrawn versions never change: their representations carry a strong ETag and may
// be cached for good (a CDN or proxy serves most solver traffic from cache).
import { matchesIfNoneMatch, RECORD_CACHE_CONTROL } from '../runs/view';
import type { VersionStatus } from './access';

export const IMMUTABLE_CACHE_CONTROL = RECORD_CACHE_CONTROL;

/**
 * The strong ETag of an immutable version's representation: its hash, and for a withdrawn version
 * the status too, since withdrawal is the one change a released version's JSON ever sees.
 */
export function versionEtag(hash: string, status: VersionStatus): string {
  return status === 'withdrawn' ? `"${hash}+withdrawn"` : `"${hash}"`;
}

/** 200 with the body, or 304 when If-None-Match names the current ETag; drafts are never cached. */
export function cachedResponse(
  request: Request,
  opts: { immutable: boolean; etag: string; body: string; contentType: string }
): Response {
  if (!opts.immutable) {
    return new Response(opts.body, {
      headers: { 'content-type': opts.contentType, 'cache-control': 'private, no-store' }
    });
  }
  const headers = { etag: opts.etag, 'cache-control': IMMUTABLE_CACHE_CONTROL };
  if (matchesIfNoneMatch(request.headers.get('if-none-match'), opts.etag))
    return new Response(null, { status: 304, headers });
  return new Response(opts.body, { headers: { ...headers, 'content-type': opts.contentType } });
}
