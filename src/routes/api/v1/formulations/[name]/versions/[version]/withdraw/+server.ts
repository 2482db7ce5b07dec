import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { withdrawSchema, withdrawVersion } from '$lib/server/registry';

/** `{ reason }`: released → withdrawn; the leads of every project pinning it are told by e-mail. */
export const POST = api(async ({ locals, params, request }) => {
  const user = requireRole(locals, 'reviewer');
  const body = await readJson(request, withdrawSchema);
  return json(await withdrawVersion(user, params.name, params.version, body));
});
