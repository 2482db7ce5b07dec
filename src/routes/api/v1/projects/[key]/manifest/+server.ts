import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { projectManifest } from '$lib/server/registry';

/** `{ project, generatedAt, pins: [{ name, version, definitionHash, sourceHash, recordId, status }] }` for offline checks. */
export const GET = api(async ({ locals, params }) => {
  requireUser(locals);
  return json(await projectManifest(params.key), { headers: { 'cache-control': 'private, no-store' } });
});
