import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { listPeople } from '$lib/server/auth/people';

export const GET = api(async ({ locals }) => {
  requireRole(locals, 'admin');
  return json(await listPeople());
});
