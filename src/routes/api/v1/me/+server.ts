import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';

/** Who is asking: the signed-in person, or a token's owner with the token's capped roles. */
export const GET = api(async ({ locals }) => {
  const user = requireUser(locals);
  return json({
    id: user.id,
    email: user.email,
    name: user.name,
    roles: user.roles,
    via: user.tokenId ? 'token' : 'session',
    tokenId: user.tokenId ?? null
  });
});
