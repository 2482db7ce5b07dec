import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { queueRun } from '$lib/server/registry';

/** Queues a verification run of the draft's current source; 202 `{ runId }` (follow it at /api/v1/runs/{id}). */
export const POST = api(async ({ locals, params }) => {
  const user = requireRole(locals, 'author');
  return json(await queueRun(user, params.name, params.version), { status: 202 });
});
