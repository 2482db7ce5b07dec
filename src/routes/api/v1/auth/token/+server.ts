import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { clientAddress } from '$lib/server/auth/address';
import { authenticate } from '$lib/server/auth/credentials';
import { credentialTokenSchema, expiryFromDays } from '$lib/server/auth/schemas';
import { createToken } from '$lib/server/auth/tokens';

/** A token for scripts from e-mail and password; failures share the sign-in rate limits. */
export const POST = api(async (event) => {
  const body = await readJson(event.request, credentialTokenSchema);
  const user = await authenticate({
    email: body.email,
    password: body.password,
    address: clientAddress(event)
  });
  const { token, info } = await createToken(user, {
    name: body.name,
    roleCeiling: body.role,
    expiresAt: expiryFromDays(body.expiresInDays)
  });
  return json({ token, ...info }, { status: 201 });
});
