// The one error shape of the HTTP API: { "error": { "code", "message", "details" } } with the fitting
// status. Services throw ApiError; route handlers wrapped in api() and the hooks turn it into JSON.
import { isHttpError } from '@sveltejs/kit';
import { ZodError } from 'zod';

export interface ApiErrorBody {
  error: { code: string; message: string; details: unknown };
}

/** A refusal the caller can act on: status, a stable machine code, a sentence for people, optional details. */
export class ApiError extends Error {
  constructor(
    public readonly status: number,
    public readonly code: string,
    message: string,
    public readonly details: unknown = null,
    public readonly headers: Record<string, string> = {}
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

/** 429 with Retry-After in whole seconds. */
export function tooManyRequests(message: string, retryAfterSeconds: number): ApiError {
  const seconds = Math.max(1, Math.ceil(retryAfterSeconds));
  return new ApiError(
    429,
    'rate-limited',
    message,
    { retryAfterSeconds: seconds },
    { 'retry-after': String(seconds) }
  );
}

const CODE_BY_STATUS: Record<number, string> = {
  400: 'bad-request',
  401: 'unauthenticated',
  403: 'forbidden',
  404: 'not-found',
  405: 'method-not-allowed',
  409: 'conflict',
  413: 'too-large',
  415: 'unsupported-media-type',
  422: 'invalid-document',
  429: 'rate-limited',
  500: 'internal'
};

export function codeForStatus(status: number): string {
  return CODE_BY_STATUS[status] ?? (status >= 500 ? 'internal' : 'error');
}

/** Zod issues as [{ path: 'a.b', message }] — the `details` of a 400. */
export function zodDetails(e: ZodError): { path: string; message: string }[] {
  return e.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

export function apiErrorResponse(
  status: number,
  code: string,
  message: string,
  details: unknown = null,
  headers: Record<string, string> = {}
): Response {
  const body: ApiErrorBody = { error: { code, message, details } };
  return new Response(JSON.stringify(body), {
    status,
    headers: { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store', ...headers }
  });
}

/** Any thrown value → the documented shape. Unknown errors become 500 naming the request id. */
export function errorToResponse(e: unknown, requestId: string): Response {
  if (e instanceof ApiError) return apiErrorResponse(e.status, e.code, e.message, e.details, e.headers);
  if (e instanceof ZodError) {
    const details = zodDetails(e);
    const first = details[0];
    const message = first
      ? `invalid request: ${first.path ? `${first.path}: ` : ''}${first.message}`
      : 'invalid request';
    return apiErrorResponse(400, 'invalid-request', message, details);
  }
  if (isHttpError(e)) {
    const body = e.body as { code?: string; message: string };
    return apiErrorResponse(e.status, body.code ?? codeForStatus(e.status), body.message);
  }
  console.error(`[isoledger] request ${requestId} failed:`, e);
  return apiErrorResponse(
    500,
    'internal',
    `internal error; quote request id ${requestId} when reporting it`,
    {
      requestId
    }
  );
}
