import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireSession } from '$lib/server/auth/guards';
import { expiryFromDays, newTokenSchema } from '$lib/server/auth/schemas';
import { createToken, listTokens } from '$lib/server/auth/tokens';

/** The signed-in person's API tokens (never the secrets). */
export const GET = api(async ({ locals }) => json(await listTokens(requireSession(locals).id)));

/** A new token; the secret is in this response and nowhere else. */
export const POST = api(async ({ locals, request }) => {
  const user = requireSession(locals);
  const body = await readJson(request, newTokenSchema);
  const { token, info } = await createToken(user, {
    name: body.name,
    roleCeiling: body.role,
    expiresAt: expiryFromDays(body.expiresInDays)
  });
  return json({ token, ...info }, { status: 201 });
});
