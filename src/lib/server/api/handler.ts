// The wrapper every +server.ts handler uses: export const GET = api(async (event) => json(…)).
// Whatever the handler throws (ApiError, a guard's 401/403, a zod error, anything else) comes back in
// the documented error shape; redirects pass through.
import { isRedirect, type RequestEvent } from '@sveltejs/kit';
import { errorToResponse } from './errors';

export function api<Params extends Partial<Record<string, string>> = Record<string, string>>(
  handler: (event: RequestEvent<Params>) => Response | Promise<Response>
): (event: RequestEvent<Params>) => Promise<Response> {
  return async (event) => {
    try {
      return await handler(event);
    } catch (e) {
      if (isRedirect(e)) throw e;
      return errorToResponse(e, event.locals.requestId);
    }
  };
}
