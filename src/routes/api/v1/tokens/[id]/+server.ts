import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireSession } from '$lib/server/auth/guards';
import { revokeToken } from '$lib/server/auth/tokens';

/** Revokes one of the signed-in person's tokens; the next request with it is refused. */
export const DELETE = api(async ({ locals, params }) =>
  json(await revokeToken(requireSession(locals), params.id))
);
