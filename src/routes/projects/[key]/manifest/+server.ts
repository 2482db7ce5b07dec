import { requireUser } from '$lib/server/auth/guards';
import { apiPath } from '$lib/components/registry/api-call';
import type { RequestHandler } from './$types';

/** The project's manifest from the API, as a file to save: `<KEY>-manifest.json`. */
export const GET: RequestHandler = async ({ locals, params, fetch }) => {
  requireUser(locals);
  const r = await fetch(apiPath('projects', params.key, 'manifest'), {
    headers: { accept: 'application/json' }
  });
  const body = await r.text();
  const headers: Record<string, string> = {
    'content-type': r.headers.get('content-type') ?? 'application/json; charset=utf-8',
    'cache-control': 'private, no-store'
  };
  if (r.ok) headers['content-disposition'] = `attachment; filename="${params.key}-manifest.json"`;
  return new Response(body, { status: r.status, headers });
};
