// Bearer tokens checked once per batch: requests with the same token that arrive in one turn of the
// event loop share one database lookup, sent after the last of them arrived. Every request of a
// batch arrived before its lookup started, so a revocation or expiry committed before any of them
// arrived is seen by all of them: revocation still takes effect on the next request.
import { authenticateToken, type TokenCheck } from '../auth/tokens';
import type { SessionUser } from '../auth/types';
import { apiErrorResponse } from './errors';

const waiting = new Map<string, Promise<TokenCheck>>();

export async function authenticateTokenBatched(token: string): Promise<TokenCheck> {
  let check = waiting.get(token);
  if (!check) {
    check = new Promise<TokenCheck>((resolve, reject) => {
      setImmediate(() => {
        waiting.delete(token);
        authenticateToken(token).then(resolve, reject);
      });
    });
    waiting.set(token, check);
  }
  const result = await check;
  // each request gets its own copy of the person, so none can change another's
  return result.ok ? { ok: true, user: { ...result.user, roles: [...result.user.roles] } } : result;
}

const BEARER = /^Bearer[ ]+(\S+)\s*$/i;

/** The API token of an Authorization header, or null when the header is not 'Bearer <token>'. */
export function bearerToken(authorization: string): string | null {
  return BEARER.exec(authorization)?.[1] ?? null;
}

/** The person behind an Authorization header, or the 401 that refuses it. */
export async function authenticateBearer(
  authorization: string
): Promise<{ ok: true; user: SessionUser } | { ok: false; response: Response }> {
  const token = bearerToken(authorization);
  if (token === null)
    return {
      ok: false,
      response: apiErrorResponse(
        401,
        'unauthenticated',
        "the Authorization header must be 'Bearer <API token>'"
      )
    };
  const check = await authenticateTokenBatched(token);
  if (!check.ok)
    return {
      ok: false,
      response: apiErrorResponse(
        401,
        check.reason === 'unknown' ? 'token-invalid' : `token-${check.reason}`,
        check.message
      )
    };
  return { ok: true, user: check.user };
}
