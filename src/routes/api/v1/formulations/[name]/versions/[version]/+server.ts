import { json } from '@sveltejs/kit';
import { api, readJson } from '$lib/server/api';
import { requireRole, requireUser } from '$lib/server/auth/guards';
import {
  cachedResponse,
  getVersion,
  isImmutable,
  replaceDraft,
  sourceSchema,
  versionEtag
} from '$lib/server/registry';

/** One version; released and withdrawn ones with a strong ETag and immutable caching (304 on If-None-Match). */
export const GET = api(async ({ locals, params, request }) => {
  const v = await getVersion(requireUser(locals), params.name, params.version);
  return cachedResponse(request, {
    immutable: isImmutable(v.status),
    etag: versionEtag(v.definitionHash, v.status),
    body: JSON.stringify(v),
    contentType: 'application/json; charset=utf-8'
  });
});

/** Replaces a draft's source `{ source }`; 409 once the version is not a draft. */
export const PUT = api(async ({ locals, params, request }) => {
  const user = requireRole(locals, 'author');
  const body = await readJson(request, sourceSchema);
  return json(await replaceDraft(user, params.name, params.version, body));
});
