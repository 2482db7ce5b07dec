// Every request: a request id, the person behind the session cookie or the bearer token, security
// headers, and the API's error shape for unknown /api/ paths. API traffic also meets the rate
// limits, the cache of immutable representations and weak ETags on lists (api/traffic.ts).
// SvelteKit's origin check stays on.
import type { Handle, HandleServerError } from '@sveltejs/kit';
import { newId } from '$lib/server/ids';
import { apiErrorResponse } from '$lib/server/api';
import {
  applyCookie,
  blankSessionCookie,
  SESSION_COOKIE,
  validateSessionToken
} from '$lib/server/auth/sessions';
import { authenticateTokenBatched } from '$lib/server/api/token-batch';
import {
  afterRoute,
  answerFromCache,
  apiOperation,
  refuseOverAddressLimit,
  refuseOverTokenLimit
} from '$lib/server/api/traffic';

const REQUEST_ID = /^[A-Za-z0-9._:-]{1,64}$/;

// pages get their Content-Security-Policy from kit.csp (svelte.config.js, with nonces for SvelteKit's
// own scripts); anything else (JSON, files) gets this one, which allows nothing to run or frame it
const NON_PAGE_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'";

function securityHeaders(response: Response, requestId: string): Response {
  const set = (name: string, value: string) => {
    if (!response.headers.has(name)) response.headers.set(name, value);
  };
  try {
    response.headers.set('x-request-id', requestId);
    set('x-content-type-options', 'nosniff');
    set('referrer-policy', 'same-origin');
    set('x-frame-options', 'DENY');
    set('cross-origin-opener-policy', 'same-origin');
    set('permissions-policy', 'camera=(), microphone=(), geolocation=(), payment=()');
    set('content-security-policy', NON_PAGE_CSP);
  } catch {
    // a response with immutable headers (a proxied fetch) keeps its own
  }
  return response;
}

export const handle: Handle = async ({ event, resolve }) => {
  const incoming = event.request.headers.get('x-request-id');
  const requestId = incoming && REQUEST_ID.test(incoming) ? incoming : newId();
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
    const m = /^Bearer[ ]+(\S+)\s*$/i.exec(authorization);
    if (!m) {
      return securityHeaders(
        apiErrorResponse(401, 'unauthenticated', "the Authorization header must be 'Bearer <API token>'"),
        requestId
      );
    }
    const check = await authenticateTokenBatched(m[1]);
    if (!check.ok) {
      return securityHeaders(
        apiErrorResponse(
          401,
          check.reason === 'unknown' ? 'token-invalid' : `token-${check.reason}`,
          check.message
        ),
        requestId
      );
    }
    event.locals.user = check.user;
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
  if (building || runWorkers) return;
  const size = config().workers;
  if (size === 0) return;
  runWorkers = await startRunWorkers({ size, log: (line) => console.log(`[isoledger] ${line}`) });
  const workers = runWorkers;
  process.once('SIGTERM', () => void workers.stop());
  // the adapter's graceful shutdown ends here, after the last request: the database connections
  // close too, so the process exits at once
  process.once('sveltekit:shutdown', () => void workers.stop().then(closeDatabase));
};
