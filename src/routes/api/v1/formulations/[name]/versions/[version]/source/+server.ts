import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { cachedResponse, getVersion, isImmutable, versionEtag } from '$lib/server/registry';

/** The YAML document exactly as written, `application/yaml`. */
export const GET = api(async ({ locals, params, request }) => {
  const v = await getVersion(requireUser(locals), params.name, params.version);
  return cachedResponse(request, {
    immutable: isImmutable(v.status),
    etag: versionEtag(v.sourceHash, 'released'),
    body: v.source,
    contentType: 'application/yaml; charset=utf-8'
  });
});
