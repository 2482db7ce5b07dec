import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { submitVersion } from '$lib/server/registry';

/** draft → in-review; needs a passing verification record of the draft's current definitionHash. */
export const POST = api(async ({ locals, params }) => {
  const user = requireRole(locals, 'author');
  return json(await submitVersion(user, params.name, params.version));
});
