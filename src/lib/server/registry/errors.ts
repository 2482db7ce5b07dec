// The registry's refusals, each with the HTTP status and code of api.md's error shape. They are
// ApiErrors, so the API wrapper and form actions render them as `{ error: { code, message, details } }`.
import { ApiError } from '../api/errors';

export type RegistryStatus = 400 | 403 | 404 | 409 | 413 | 415 | 422;

export class RegistryError extends ApiError {
  constructor(status: RegistryStatus, code: string, message: string, details: unknown = null) {
    super(status, code, message, details);
    this.name = 'RegistryError';
  }
}

export const malformed = (message: string, details?: unknown) =>
  new RegistryError(400, 'bad-request', message, details);
export const forbidden = (message: string, details?: unknown) =>
  new RegistryError(403, 'forbidden', message, details);
export const notFound = (message: string) => new RegistryError(404, 'not-found', message);
export const conflict = (code: string, message: string, details?: unknown) =>
  new RegistryError(409, code, message, details);
