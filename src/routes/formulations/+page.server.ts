import { requireUserOrSignIn } from '$lib/server/auth/guards';
import { seesDrafts, VERSION_STATUSES } from '$lib/server/registry/access';
import { CELLS, LIST_SORTS, PER_PAGE_MAX, STRAIN_FILTERS } from '$lib/server/registry/formulations';
import type { FormulationSummary, Page } from '$lib/server/registry/formulations';
import { callApi } from '$lib/components/registry/api-call';
import type { PageServerLoad } from './$types';

/** Rows per page unless the reader asks for another count. */
const PER_PAGE = 20;

/** The catalogue's filters, exactly as they travel in the address (and on to the API). */
const FILTERS = ['q', 'cell', 'strain', 'status', 'author', 'sort'] as const;

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const filters = Object.fromEntries(
    FILTERS.map((f) => [f, url.searchParams.get(f)?.trim() ?? ''])
  ) as Record<(typeof FILTERS)[number], string>;
  const query = new URLSearchParams();
  for (const f of FILTERS) if (filters[f]) query.set(f, filters[f]);
  const perPage = url.searchParams.get('per_page')?.trim() ?? '';
  query.set('page', url.searchParams.get('page') || '1');
  query.set('per_page', perPage || String(PER_PAGE));
  const answer = await callApi<Page<FormulationSummary>>(fetch, 'GET', `/api/v1/formulations?${query}`);
  return {
    filters,
    /** a page size the reader asked for in the address, kept by every link and by the filter form */
    perPage,
    list: answer.data,
    refused: answer.ok
      ? null
      : { status: answer.status, message: answer.error?.message ?? 'the catalogue could not be read' },
    options: {
      cells: CELLS,
      strains: STRAIN_FILTERS,
      statuses: VERSION_STATUSES.filter((s) => seesDrafts(user) || s === 'released' || s === 'withdrawn'),
      sorts: LIST_SORTS,
      perPageMax: PER_PAGE_MAX
    },
    isAuthor: user.roles.includes('author')
  };
};
