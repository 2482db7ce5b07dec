import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireRole, requireUser } from '$lib/server/auth/guards';
import { addAttachment, listAttachments, readUpload } from '$lib/server/storage';

/** The version's attachments (id, filename, kind, size, SHA-256). */
export const GET = api(async ({ locals, params }) =>
  json(await listAttachments(requireUser(locals), params.name, params.version))
);

/** Attaches a PDF, CSV or JSON file (≤ 10 MB, typed from its content) to a draft: multipart `file`, or raw bytes with ?filename=. */
export const POST = api(async ({ locals, params, request, url }) => {
  const user = requireRole(locals, 'author');
  const upload = await readUpload(request, url);
  return json(await addAttachment(user, params.name, params.version, upload), { status: 201 });
});
