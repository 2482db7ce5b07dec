import { api } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { recordResponse } from '$lib/server/runs/view';

/** A verification record, byte for byte as stored, with a strong ETag; 304 when the client already has it. */
export const GET = api(async ({ locals, params, request }) => {
  requireUser(locals);
  return recordResponse(params.id, request.headers.get('if-none-match'));
});
