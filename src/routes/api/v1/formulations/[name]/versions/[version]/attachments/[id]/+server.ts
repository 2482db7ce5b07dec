import { api } from '$lib/server/api';
import { requireRole, requireUser } from '$lib/server/auth/guards';
import { readAttachment, removeAttachment } from '$lib/server/storage';

/** The file itself, as stored (its SHA-256 is checked on the way out). */
export const GET = api(async ({ locals, params }) => {
  const { attachment, bytes } = await readAttachment(
    requireUser(locals),
    params.name,
    params.version,
    params.id
  );
  const ascii = attachment.filename.replace(/[^\x20-\x7e]|["\\]/g, '_');
  return new Response(Buffer.from(bytes), {
    headers: {
      'content-type': attachment.mediaType,
      'content-length': String(bytes.byteLength),
      'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(attachment.filename)}`,
      'x-content-sha256': attachment.sha256,
      'cache-control': 'private, no-store'
    }
  });
});

/** Removes an attachment of a draft; 409 once the version is not a draft. */
export const DELETE = api(async ({ locals, params }) => {
  const user = requireRole(locals, 'author');
  await removeAttachment(user, params.name, params.version, params.id);
  return new Response(null, { status: 204 });
});
