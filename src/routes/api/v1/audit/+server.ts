import { json } from '@sveltejs/kit';
import { api, readQuery } from '$lib/server/api';
import { requireRole } from '$lib/server/auth/guards';
import { auditQuerySchema, listAudit } from '$lib/server/registry';

/** The audit trail, newest first: `?subject=&actor=&action=&from=&until=&page=&per_page=`, with the trail's actions. */
export const GET = api(async ({ locals, url }) => {
  requireRole(locals, 'auditor', 'admin');
  const q = readQuery(url, auditQuerySchema);
  return json(
    await listAudit({
      subject: q.subject,
      actor: q.actor,
      action: q.action,
      from: q.from,
      until: q.until,
      page: q.page,
      perPage: q.per_page
    })
  );
});
