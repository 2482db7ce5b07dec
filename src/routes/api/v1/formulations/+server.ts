import { json } from '@sveltejs/kit';
import { api, readJson, readQuery } from '$lib/server/api';
import { requireRole, requireUser } from '$lib/server/auth/guards';
import {
  createFormulation,
  listFormulations,
  listQuerySchema,
  newFormulationSchema
} from '$lib/server/registry';

/**
 * The catalogue: each formulation with the newest version the caller may see; `{ items, page, perPage, total }`.
 * `?q=&cell=&status=&strain=&author=&sort=&in_review=&page=&per_page=`.
 */
export const GET = api(async ({ locals, url }) => {
  const user = requireUser(locals);
  const q = readQuery(url, listQuerySchema);
  return json(
    await listFormulations(user, {
      q: q.q,
      cell: q.cell,
      status: q.status,
      strain: q.strain,
      author: q.author,
      sort: q.sort,
      inReview: q.in_review === 'true' || q.in_review === '1',
      page: q.page,
      perPage: q.per_page
    })
  );
});

/** An empty formulation `{ name, title }`; its versions come next. */
export const POST = api(async ({ locals, request }) => {
  const user = requireRole(locals, 'author');
  const body = await readJson(request, newFormulationSchema);
  return json(await createFormulation(user, body), { status: 201 });
});
