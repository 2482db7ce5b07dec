// What the hooks do for API traffic besides authentication: the rate limits per address and per
// token, the server's cache of immutable representations, weak ETags on lists, and forgetting a
// version's cached representations when a request changes it.
import type { RequestEvent } from '@sveltejs/kit';
import { clientAddress } from '../auth/address';
import { errorToResponse, tooManyRequests } from './errors';
import { operationFor, routeIdOf, type Operation } from './operations';
import { apiRateLimits, SharedRateLimiter, type ApiRateLimits } from './rate-limit';
import {
  type CachedRepresentation,
  isImmutableResponse,
  ResponseCache,
  respondFromCache,
  REVALIDATE_MS,
  withWeakEtag
} from './response-cache';

const limiter = new SharedRateLimiter();
const cache = new ResponseCache();
let limits: ApiRateLimits | null = null;

export function apiOperation(event: RequestEvent): Operation | undefined {
  return operationFor(event.request.method, event.route.id);
}

/** Page loads reach the API as sub-requests of a page; they count as the page, not as API calls. */
function isLimited(event: RequestEvent, op: Operation | undefined): boolean {
  return !event.isSubRequest && op?.rateLimited !== false;
}

function seconds(n: number): string {
  return n === 1 ? '1 second' : `${n} seconds`;
}

/** 429 when the caller's address has used up its window, else null (and the request counted). */
export async function refuseOverAddressLimit(
  event: RequestEvent,
  op: Operation | undefined
): Promise<Response | null> {
  limits ??= apiRateLimits();
  if (!isLimited(event, op) || limits.perAddress === 0) return null;
  const address = clientAddress(event);
  const verdict = await limiter.take(`api:address:${address}`, limits.perAddress, limits.windowSeconds);
  if (verdict.allowed) return null;
  return errorToResponse(
    tooManyRequests(
      `more than ${limits.perAddress} API requests in ${seconds(limits.windowSeconds)} from your network address; try again in ${seconds(verdict.retryAfterSeconds)}`,
      verdict.retryAfterSeconds
    ),
    event.locals.requestId
  );
}

/** 429 when the request's API token has used up its window, else null (and the request counted). */
export async function refuseOverTokenLimit(
  event: RequestEvent,
  op: Operation | undefined
): Promise<Response | null> {
  limits ??= apiRateLimits();
  const tokenId = event.locals.user?.tokenId;
  if (!tokenId || !isLimited(event, op) || limits.perToken === 0) return null;
  const verdict = await limiter.take(`api:token:${tokenId}`, limits.perToken, limits.windowSeconds);
  if (verdict.allowed) return null;
  return errorToResponse(
    tooManyRequests(
      `more than ${limits.perToken} requests in ${seconds(limits.windowSeconds)} with this API token; try again in ${seconds(verdict.retryAfterSeconds)}`,
      verdict.retryAfterSeconds
    ),
    event.locals.requestId
  );
}

/** The route's path with its parameters encoded one way, so equal resources share one key. */
function canonicalPath(routeId: string, params: Partial<Record<string, string>>): string {
  return routeId.replace(/\[(\w+)\]/g, (_, k: string) => encodeURIComponent(params[k] ?? ''));
}

/** The immutable representation this process holds for a route and its parameters, if fresh. */
export function peekCache(
  routeId: string,
  params: Partial<Record<string, string>>
): CachedRepresentation | undefined {
  return cache.get(canonicalPath(routeId, params));
}

/** A signed-in GET of an immutable representation this process holds, answered without the route. */
export function answerFromCache(event: RequestEvent, op: Operation | undefined): Response | null {
  if (event.request.method !== 'GET' || op?.cache !== 'immutable' || !event.locals.user || !event.route.id)
    return null;
  const hit = cache.get(canonicalPath(event.route.id, event.params));
  return hit ? respondFromCache(hit, event.request.headers.get('if-none-match')) : null;
}

const VERSION_ROUTE = routeIdOf('/formulations/{name}/versions/{version}');

/** Keeps immutable answers, gives lists their weak ETag, and forgets a version's entries when it changes. */
export async function afterRoute(
  event: RequestEvent,
  op: Operation | undefined,
  response: Response
): Promise<Response> {
  if (!op || !event.route.id) return response;
  const method = event.request.method;
  if (method === 'GET' && op.cache === 'immutable' && isImmutableResponse(response)) {
    const body = new Uint8Array(await response.arrayBuffer());
    cache.set(canonicalPath(event.route.id, event.params), {
      body,
      etag: response.headers.get('etag')!,
      contentType: response.headers.get('content-type') ?? 'application/octet-stream',
      cacheControl: response.headers.get('cache-control')!,
      storedAt: Date.now(),
      revalidateAfterMs: op.changesOnWithdrawal ? REVALIDATE_MS : Infinity
    });
    return new Response(body as BodyInit, { status: response.status, headers: response.headers });
  }
  if (method === 'GET' && op.cache === 'list')
    return withWeakEtag(response, event.request.headers.get('if-none-match'));
  if (
    method !== 'GET' &&
    method !== 'HEAD' &&
    response.status < 300 &&
    event.params.name &&
    event.params.version
  ) {
    cache.deletePrefix(canonicalPath(VERSION_ROUTE, event.params));
  }
  return response;
}
