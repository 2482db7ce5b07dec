// Every request: a request id, the person behind the session cookie or the bearer token, security
// headers, and the API's error shape for unknown /api/ paths. API traffic also meets the rate
// limits, the cache of immutable representations and weak ETags on lists (api/traffic.ts).
// SvelteKit's origin check stays on.
import type { Handle, HandleServerError } from '@sveltejs/kit';
import { apiErrorResponse } from '$lib/server/api';
import {
  applyCookie,
  blankSessionCookie,
  SESSION_COOKIE,
  validateSessionToken
} from '$lib/server/auth/sessions';
import { authenticateBearer } from '$lib/server/api/token-batch';
import { requestIdOf, securityHeaders } from '$lib/server/api/response-headers';
import { frontDoor, FRONT_DOOR } from '$lib/server/api/front-door';
import {
  afterRoute,
  answerFromCache,
  apiOperation,
  refuseOverAddressLimit,
  refuseOverTokenLimit
} from '$lib/server/api/traffic';

export const handle: Handle = async ({ event, resolve }) => {
  const requestId = requestIdOf(event.request.headers.get('x-request-id'));
  event.locals.requestId = requestId;
  event.locals.user = null;
  event.locals.sessionId = null;
  const isApi = event.url.pathname === '/api' || event.url.pathname.startsWith('/api/');

  if (isApi && event.route.id === null) {
    return securityHeaders(
      apiErrorResponse(404, 'not-found', `no API route ${event.request.method} ${event.url.pathname}`),
      requestId
    );
  }

  // API traffic: the address's rate limit before anything touches the database for the caller
  const operation = isApi ? apiOperation(event) : undefined;
  if (isApi) {
    const refused = await refuseOverAddressLimit(event, operation);
    if (refused) return securityHeaders(refused, requestId);
  }

  const authorization = event.request.headers.get('authorization');
  if (authorization !== null) {
    const bearer = await authenticateBearer(authorization);
    if (!bearer.ok) return securityHeaders(bearer.response, requestId);
    event.locals.user = bearer.user;
  } else {
    const token = event.cookies.get(SESSION_COOKIE);
    if (token) {
      const session = await validateSessionToken(token);
      if (session) {
        event.locals.user = session.user;
        event.locals.sessionId = session.sessionId;
        if (session.refreshedCookie) applyCookie(event.cookies, session.refreshedCookie);
      } else {
        applyCookie(event.cookies, blankSessionCookie());
      }
    }
  }

  if (isApi) {
    const refused = await refuseOverTokenLimit(event, operation);
    if (refused) return securityHeaders(refused, requestId);
    const cached = answerFromCache(event, operation);
    if (cached) return securityHeaders(cached, requestId);
  }

  let response = await resolve(event);
  if (isApi) response = await afterRoute(event, operation, response);
  if (isApi && response.status === 405 && !/json/.test(response.headers.get('content-type') ?? '')) {
    const allow = response.headers.get('allow') ?? '';
    return securityHeaders(
      apiErrorResponse(
        405,
        'method-not-allowed',
        `${event.request.method} is not allowed on ${event.url.pathname}${allow ? ` (allowed: ${allow})` : ''}`,
        null,
        allow ? { allow } : {}
      ),
      requestId
    );
  }
  if (isApi && !response.headers.has('cache-control')) {
    try {
      response.headers.set('cache-control', 'no-store');
    } catch {
      // immutable headers: leave as they are
    }
  }
  return securityHeaders(response, requestId);
};

export const handleError: HandleServerError = ({ error, event, status, message }) => {
  const requestId = event.locals.requestId ?? 'unknown';
  if (status >= 500)
    console.error(
      `[isoledger] request ${requestId} ${event.request.method} ${event.url.pathname} failed:`,
      error
    );
  return {
    code: status >= 500 ? 'internal' : undefined,
    message: status >= 500 ? `internal error; quote request id ${requestId} when reporting it` : message
  };
};

// ── Verification workers ─────────────────────────────────────────────────────────────────────
// Started once with the server (ISOLEDGER_WORKERS threads; 0 makes this a web-only process) and
// stopped in order on SIGTERM, so runs in progress finish or go back to the queue.
import type { ServerInit } from '@sveltejs/kit';
import { building } from '$app/environment';
import { config } from '$lib/server/config';
import { closeDatabase } from '$lib/server/db';
import { startRunWorkers, type RunWorkers } from '$lib/server/runs/pool';

let runWorkers: RunWorkers | null = null;

export const init: ServerInit = async () => {
  if (building) return;
  // the production entry (server/index.js) answers cached immutable reads here before SvelteKit
  (globalThis as Record<symbol, unknown>)[FRONT_DOOR] = frontDoor;
  if (runWorkers) return;
  const size = config().workers;
  if (size === 0) return;
  runWorkers = await startRunWorkers({ size, log: (line) => console.log(`[isoledger] ${line}`) });
  const workers = runWorkers;
  process.once('SIGTERM', () => void workers.stop());
  // the adapter's graceful shutdown ends here, after the last request: the database connections
  // close too, so the process exits at once
  process.once('sveltekit:shutdown', () => void workers.stop().then(closeDatabase));
};
