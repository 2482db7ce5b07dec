import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { reviewSchema, reviewVersion } from '$lib/server/registry';

/** `{ decision: approve|reject, comment }` by a reviewer who wrote no part of the version: in-review → released or draft. */
export const POST = api(async ({ locals, params, request }) => {
  const user = requireRole(locals, 'reviewer');
  const body = await readJson(request, reviewSchema);
  return json(await reviewVersion(user, params.name, params.version, body));
});
