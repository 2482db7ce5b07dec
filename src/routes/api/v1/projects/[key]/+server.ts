import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { getProject } from '$lib/server/registry';

/** The project with its pins. */
export const GET = api(async ({ locals, params }) => {
  requireUser(locals);
  return json(await getProject(params.key));
});
