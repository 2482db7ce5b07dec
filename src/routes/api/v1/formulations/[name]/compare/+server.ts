import { json } from '@sveltejs/kit';
import { api, readQuery } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { compareQuerySchema, compareVersions } from '$lib/server/registry';

/** `?from=&to=`: `{ source: <unified diff>, definition: [changed paths], checks: [metric before/after] }`. */
export const GET = api(async ({ locals, params, url }) => {
  const user = requireUser(locals);
  const q = readQuery(url, compareQuerySchema);
  return json(await compareVersions(user, params.name, q.from ?? null, q.to ?? null));
});
