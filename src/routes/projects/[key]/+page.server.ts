import { fail } from '@sveltejs/kit';
import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import { PER_PAGE_MAX, type FormulationSummary, type Page } from '$lib/server/registry/formulations';
import type { ProjectDetail } from '$lib/server/registry/projects';
import type { VersionDetail } from '$lib/server/registry/versions';
import { apiPath, callApi, formValues, refusal } from '$lib/components/registry/api-call';
import type { Actions, PageServerLoad } from './$types';

/** Pages of the catalogue read for the pin form's choices (100 formulations each). */
const MAX_CATALOGUE_PAGES = 20;

async function releasedChoices(
  fetch: typeof globalThis.fetch
): Promise<{ name: string; title: string; version: string }[]> {
  const out: { name: string; title: string; version: string }[] = [];
  for (let page = 1; page <= MAX_CATALOGUE_PAGES; page++) {
    const list = await loadApi<Page<FormulationSummary>>(
      fetch,
      `/api/v1/formulations?status=released&per_page=${PER_PAGE_MAX}&page=${page}`
    );
    for (const f of list.items)
      if (f.latest) out.push({ name: f.name, title: f.title, version: f.latest.version });
    if (page * PER_PAGE_MAX >= list.total) break;
  }
  return out;
}

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const isLead = user.roles.includes('lead');
  const project = await loadApi<ProjectDetail>(fetch, apiPath('projects', params.key));
  // a withdrawn pin is shown with the reason the reviewer gave
  const withdrawn = await Promise.all(
    project.pins
      .filter((p) => p.status === 'withdrawn')
      .map(async (p) => {
        const v = await loadApi<VersionDetail>(fetch, apiPath('formulations', p.name, 'versions', p.version));
        return {
          name: p.name,
          version: p.version,
          at: v.withdrawn?.at ?? null,
          reason: v.withdrawn?.reason ?? ''
        };
      })
  );
  return {
    project,
    withdrawn,
    choices: isLead ? await releasedChoices(fetch) : [],
    isLead
  };
};

export const actions: Actions = {
  /** Pins `name@version` (a released version), replacing the project's earlier pin of that formulation. */
  pin: async ({ request, params, fetch }) => {
    const values = formValues(await request.formData());
    const [name, version] = (values.pick ?? '').split('@');
    if (!name || !version) {
      return fail(400, {
        formId: 'pin',
        message: 'choose a released version to pin',
        errors: { pick: 'choose a version' },
        values
      });
    }
    const answer = await callApi(fetch, 'PUT', apiPath('projects', params.key, 'pins', name), { version });
    if (!answer.ok) return refusal(answer, 'pin', values);
    return { pinned: `${name} ${version}` };
  },

  unpin: async ({ request, params, fetch }) => {
    const values = formValues(await request.formData());
    const answer = await callApi(fetch, 'DELETE', apiPath('projects', params.key, 'pins', values.name ?? ''));
    if (!answer.ok) return refusal(answer, 'unpin', values);
    return { unpinned: values.name };
  }
};
