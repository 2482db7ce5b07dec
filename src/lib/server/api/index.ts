export {
  ApiError,
  apiErrorResponse,
  codeForStatus,
  errorToResponse,
  tooManyRequests,
  zodDetails
} from './errors';
export type { ApiErrorBody } from './errors';
export { api } from './handler';
export { DEFAULT_BODY_LIMIT, readBody, readJson, readQuery } from './body';
export { failMessage, failWith, readForm } from './form';
export type { FormFailure, FormResult } from './form';
export { loadApi } from './load';
