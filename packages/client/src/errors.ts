// Every refusal of the API as a typed exception carrying the error `code` of api.md's error shape,
// so a pipeline can branch on `instanceof NotFoundError` or on `error.code === 'version-not-greater'`.
import type { Diagnostic } from './schemas';

export interface ErrorContext {
  method: string;
  url: string;
  /** the server's x-request-id, to quote when reporting a fault */
  requestId: string | null;
}

/** An answer of the API outside 2xx and 304. */
export class IsoledgerApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details: unknown;
  readonly method: string;
  readonly url: string;
  readonly requestId: string | null;

  constructor(status: number, code: string, message: string, details: unknown, context: ErrorContext) {
    super(message);
    this.name = new.target.name;
    this.status = status;
    this.code = code;
    this.details = details;
    this.method = context.method;
    this.url = context.url;
    this.requestId = context.requestId;
  }
}

/** 400: the request is malformed (bad JSON, a parameter of the wrong kind); `details` names the fields. */
export class BadRequestError extends IsoledgerApiError {}
/** 401: no session or token, or the token is unknown, expired or revoked (`code` says which). */
export class UnauthenticatedError extends IsoledgerApiError {}
/** 403: signed in, but without the role the route needs (the message names it). */
export class ForbiddenError extends IsoledgerApiError {}
/** 404: no such formulation, version, project, run, record or route. */
export class NotFoundError extends IsoledgerApiError {}
/** 405: the route exists but not with this method. */
export class MethodNotAllowedError extends IsoledgerApiError {}
/** 409: a conflict with the registry's state (immutable version, version not greater, already pinned …). */
export class ConflictError extends IsoledgerApiError {}
/** 413: the body is larger than the route accepts. */
export class TooLargeError extends IsoledgerApiError {}
/** 415: the body is not of a media type the route reads. */
export class UnsupportedMediaTypeError extends IsoledgerApiError {}

/** 422: the formulation document is invalid; `diagnostics` lists every problem with line and column. */
export class InvalidDocumentError extends IsoledgerApiError {
  get diagnostics(): Diagnostic[] {
    return Array.isArray(this.details) ? (this.details as Diagnostic[]) : [];
  }
}

/** 429: rate-limited; wait `retryAfterSeconds` (the Retry-After header) before the next request. */
export class RateLimitedError extends IsoledgerApiError {
  readonly retryAfterSeconds: number;
  constructor(
    status: number,
    code: string,
    message: string,
    details: unknown,
    context: ErrorContext,
    retryAfterSeconds: number
  ) {
    super(status, code, message, details, context);
    this.retryAfterSeconds = retryAfterSeconds;
  }
}

/** 5xx: the server failed; quote `requestId` when reporting it. */
export class ServerError extends IsoledgerApiError {}

/** The server could not be reached at all, or answered with something that is not the API. */
export class ConnectionError extends Error {
  readonly code = 'unreachable';
  constructor(
    message: string,
    readonly url: string,
    options?: { cause?: unknown }
  ) {
    super(message, options);
    this.name = 'ConnectionError';
  }
}

const BY_STATUS: Record<number, typeof IsoledgerApiError> = {
  400: BadRequestError,
  401: UnauthenticatedError,
  403: ForbiddenError,
  404: NotFoundError,
  405: MethodNotAllowedError,
  409: ConflictError,
  413: TooLargeError,
  415: UnsupportedMediaTypeError,
  422: InvalidDocumentError
};

function retryAfter(header: string | null, details: unknown): number {
  const fromHeader = header === null ? NaN : Number(header);
  if (Number.isFinite(fromHeader) && fromHeader >= 0) return fromHeader;
  if (header) {
    const at = Date.parse(header);
    if (Number.isFinite(at)) return Math.max(0, Math.ceil((at - Date.now()) / 1000));
  }
  const fromBody = (details as { retryAfterSeconds?: unknown } | null)?.retryAfterSeconds;
  return typeof fromBody === 'number' ? fromBody : 1;
}

/** The typed error of a response outside 2xx; a body not in the API's shape still gives status and text. */
export async function errorFromResponse(
  response: Response,
  context: ErrorContext
): Promise<IsoledgerApiError> {
  const text = await response.text().catch(() => '');
  let code = `http-${response.status}`;
  let message = `${context.method} ${context.url} answered ${response.status} ${response.statusText}`.trim();
  let details: unknown = null;
  try {
    const body = JSON.parse(text) as { error?: { code?: unknown; message?: unknown; details?: unknown } };
    if (body && typeof body.error === 'object' && body.error !== null) {
      if (typeof body.error.code === 'string') code = body.error.code;
      if (typeof body.error.message === 'string') message = body.error.message;
      details = body.error.details ?? null;
    }
  } catch {
    if (text) message += `: ${text.slice(0, 200)}`;
  }
  if (response.status === 429) {
    return new RateLimitedError(
      429,
      code,
      message,
      details,
      context,
      retryAfter(response.headers.get('retry-after'), details)
    );
  }
  const Kind = BY_STATUS[response.status] ?? (response.status >= 500 ? ServerError : IsoledgerApiError);
  return new Kind(response.status, code, message, details, context);
}
