import { redirect } from '@sveltejs/kit';
import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { ProjectSummary } from '$lib/server/registry/projects';
import { callApi, formValues, refusal } from '$lib/components/registry/api-call';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  return {
    projects: await loadApi<ProjectSummary[]>(fetch, '/api/v1/projects'),
    isLead: user.roles.includes('lead')
  };
};

export const actions: Actions = {
  create: async ({ request, fetch }) => {
    const values = formValues(await request.formData());
    const key = (values.key ?? '').trim();
    const answer = await callApi(fetch, 'POST', '/api/v1/projects', { key, title: values.title ?? '' });
    if (!answer.ok) return refusal(answer, 'create', values);
    redirect(303, `/projects/${encodeURIComponent(key)}`);
  }
};
