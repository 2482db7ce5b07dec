import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { runView } from '$lib/server/runs/view';

/** A verification run: `{ id, status, progress, stage, record }`, with `error` once failed; the browser polls this. */
export const GET = api(async ({ locals, params }) => {
  requireUser(locals);
  return json(await runView(params.id));
});
