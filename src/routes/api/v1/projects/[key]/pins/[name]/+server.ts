import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { pinSchema, pinVersion, unpinFormulation } from '$lib/server/registry';

/** Pins `{ version }` (released only), replacing the project's earlier pin of this formulation. */
export const PUT = api(async ({ locals, params, request }) => {
  const user = requireRole(locals, 'lead');
  const body = await readJson(request, pinSchema);
  return json(await pinVersion(user, params.key, params.name, body));
});

export const DELETE = api(async ({ locals, params }) => {
  const user = requireRole(locals, 'lead');
  return json(await unpinFormulation(user, params.key, params.name));
});
