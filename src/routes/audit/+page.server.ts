import { requireRole, requireUserOrSignIn } from '$lib/server/auth/guards';
import type { AuditPage } from '$lib/server/registry/audit-trail';
import type { ChainVerdict } from '$lib/server/registry/audit';
import { callApi } from '$lib/components/registry/api-call';
import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';

/** Events per page of the trail. */
const PER_PAGE = 50;
const FILTERS = ['actor', 'action', 'subject', 'from', 'until'] as const;
const HEAD_RACE_RETRIES = 5;

const movedHead = (v: ChainVerdict) => !v.ok && v.firstBrokenId === v.events + 1;

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  requireUserOrSignIn(locals, url);
  requireRole(locals, 'auditor', 'admin');
  const filters = Object.fromEntries(
    FILTERS.map((f) => [f, url.searchParams.get(f)?.trim() ?? ''])
  ) as Record<(typeof FILTERS)[number], string>;
  const query = new URLSearchParams();
  for (const f of FILTERS) if (filters[f]) query.set(f, filters[f]);
  query.set('page', url.searchParams.get('page') || '1');
  query.set('per_page', String(PER_PAGE));
  const answer = await callApi<AuditPage>(fetch, 'GET', `/api/v1/audit?${query}`);
  return {
    filters,
    trail: answer.data,
    refused: answer.ok ? null : (answer.error?.message ?? `the audit trail answered ${answer.status}`)
  };
};

export const actions: Actions = {
  /** Re-hashes the whole chain on the server and reports where, if anywhere, it breaks. */
  verify: async ({ fetch }) => {
    let answer = await callApi<ChainVerdict>(fetch, 'GET', '/api/v1/audit/verify');
    // events appended while the chain was read leave the head one past the last row read: not a
    // break, so the chain is read again (a few times at most) before a break is reported
    for (let i = 0; i < HEAD_RACE_RETRIES && answer.ok && movedHead(answer.data!); i++) {
      answer = await callApi<ChainVerdict>(fetch, 'GET', '/api/v1/audit/verify');
    }
    if (!answer.ok) {
      return fail(answer.status, {
        formId: 'verify',
        message: answer.error?.message ?? `verification answered ${answer.status}`,
        errors: {},
        values: {}
      });
    }
    return { chain: answer.data!, checkedAt: new Date().toISOString() };
  }
};
