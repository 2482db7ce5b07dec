import { json } from '@sveltejs/kit';
import { api } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { verifyAuditChain } from '$lib/server/registry';

/** Re-hashes the whole chain: `{ ok, events, firstBrokenId }`. */
export const GET = api(async ({ locals }) => {
  requireRole(locals, 'auditor', 'admin');
  return json(await verifyAuditChain(), { headers: { 'cache-control': 'no-store' } });
});
