// @isoledger/client: a typed client of the Isoledger HTTP API v1, for solver pipelines, scripts and
// the command line. Its types come from the same zod schemas the server's OpenAPI document uses.
export { IsoledgerClient, paginate, collect, connectionFrom, DEFAULT_SERVER } from './client';
export type {
  ClientOptions,
  Query,
  ListFormulationsQuery,
  AuditQuery,
  TokenRequest,
  RecordWithBytes,
  WaitOptions
} from './client';
export {
  IsoledgerApiError,
  BadRequestError,
  UnauthenticatedError,
  ForbiddenError,
  NotFoundError,
  MethodNotAllowedError,
  ConflictError,
  TooLargeError,
  UnsupportedMediaTypeError,
  InvalidDocumentError,
  RateLimitedError,
  ServerError,
  ConnectionError,
  errorFromResponse
} from './errors';
export type { ErrorContext } from './errors';
export { MemoryCache, immutableLifetime, isFresh } from './cache';
export type { CacheEntry, CacheStore } from './cache';
export * from './schemas';
