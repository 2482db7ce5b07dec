import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole, requireUser } from '$lib/server/auth/guards';
import { createProject, listProjects, newProjectSchema } from '$lib/server/registry';

export const GET = api(async ({ locals }) => {
  requireUser(locals);
  return json(await listProjects());
});

/** A project `{ key, title }`; its creator is its lead. */
export const POST = api(async ({ locals, request }) => {
  const user = requireRole(locals, 'lead');
  const body = await readJson(request, newProjectSchema);
  return json(await createProject(user, body), { status: 201 });
});
