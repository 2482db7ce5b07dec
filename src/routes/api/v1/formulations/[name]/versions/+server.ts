import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { createDraft, newVersionSchema } from '$lib/server/registry';

/** A new draft `{ version, source }`: 422 with the diagnostics when the document is invalid, 409 when the version is not greater. */
export const POST = api(async ({ locals, params, request }) => {
  const user = requireRole(locals, 'author');
  const body = await readJson(request, newVersionSchema);
  return json(await createDraft(user, params.name, body), { status: 201 });
});
