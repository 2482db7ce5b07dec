import { error } from '@sveltejs/kit';
import { recordHash, type VerificationRecord } from '@isoledger/verify';
import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  requireUserOrSignIn(locals, url);
  const record = await loadApi<VerificationRecord>(fetch, `/api/v1/records/${encodeURIComponent(params.id)}`);
  if (!record || !Array.isArray(record.checks)) {
    error(502, { message: `record ${params.id} came back without a list of checks` });
  }
  // Recomputed from the bytes served, so the hash shown is the one a reader can verify.
  return { id: params.id, record, recordHash: recordHash(record) };
};
