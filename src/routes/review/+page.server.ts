import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import { PER_PAGE_MAX, type FormulationSummary, type Page } from '$lib/server/registry/formulations';
import type { PageServerLoad } from './$types';

/** Enough pages of 100 for any queue a review group keeps; beyond it the page says how many more wait. */
const MAX_PAGES = 20;

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const items: FormulationSummary[] = [];
  let total = 0;
  for (let page = 1; page <= MAX_PAGES; page++) {
    const list = await loadApi<Page<FormulationSummary>>(
      fetch,
      `/api/v1/formulations?in_review=true&per_page=${PER_PAGE_MAX}&page=${page}`
    );
    items.push(...list.items);
    total = list.total;
    if (items.length >= total || list.items.length === 0) break;
  }
  // the version that has waited longest comes first
  const waiting = items
    .flatMap((f) => f.inReview.map((r) => ({ name: f.name, title: f.title, ...r })))
    .sort((a, b) => ((a.submittedAt ?? '') < (b.submittedAt ?? '') ? -1 : 1));
  return {
    waiting,
    unlisted: Math.max(0, total - items.length),
    isReviewer: user.roles.includes('reviewer'),
    me: user.email
  };
};
