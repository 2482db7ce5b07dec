import { fail } from '@sveltejs/kit';
import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { ProjectSummary } from '$lib/server/registry/projects';
import type { VersionDetail } from '$lib/server/registry/versions';
import type { Attachment } from '$lib/server/storage/attachments';
import { apiPath, callApi, formValues, refusal, type Answer } from '$lib/components/registry/api-call';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const path = apiPath('formulations', params.name, 'versions', params.version);
  const [version, files, projects] = await Promise.all([
    loadApi<VersionDetail>(fetch, path),
    callApi<Attachment[]>(fetch, 'GET', `${path}/attachments`),
    user.roles.includes('lead') ? loadApi<ProjectSummary[]>(fetch, '/api/v1/projects') : Promise.resolve([])
  ]);
  return {
    version,
    attachments: files.ok ? files.data! : [],
    projects: projects.map((p) => ({ key: p.key, title: p.title })),
    roles: user.roles,
    sourcePath: `${path}/source`
  };
};

export const actions: Actions = {
  /** released → withdrawn with a reason; the leads of projects pinning it are told by e-mail. */
  withdraw: async ({ request, params, fetch }) => {
    const values = formValues(await request.formData());
    const answer = await callApi<VersionDetail>(
      fetch,
      'POST',
      `${apiPath('formulations', params.name, 'versions', params.version)}/withdraw`,
      { reason: values.reason ?? '' }
    );
    if (!answer.ok) return refusal(answer, 'withdraw', values);
    return { withdrawn: true };
  },

  /** Pins this released version in one of the projects. */
  pin: async ({ request, params, fetch }) => {
    const values = formValues(await request.formData());
    if (!values.project)
      return fail(400, {
        formId: 'pin',
        message: 'choose the project to pin it in',
        errors: { project: 'choose a project' },
        values
      });
    const answer = await callApi(fetch, 'PUT', apiPath('projects', values.project, 'pins', params.name), {
      version: params.version
    });
    if (!answer.ok) return refusal(answer, 'pin', values);
    return { pinned: values.project };
  },

  /** Attaches a PDF, CSV or JSON file to a draft. */
  attach: async ({ request, params, fetch }) => {
    const form = await request.formData();
    const file = form.get('file');
    if (!(file instanceof File) || file.size === 0) {
      return fail(400, {
        formId: 'attach',
        message: 'choose a file to attach',
        errors: { file: 'choose a file' },
        values: {}
      });
    }
    const body = new FormData();
    body.set('file', file, file.name);
    const r = await fetch(`${apiPath('formulations', params.name, 'versions', params.version)}/attachments`, {
      method: 'POST',
      headers: { accept: 'application/json' },
      body
    });
    if (!r.ok) {
      const parsed = (await r.json().catch(() => null)) as { error?: Answer<unknown>['error'] } | null;
      return refusal({ ok: false, status: r.status, data: null, error: parsed?.error ?? null }, 'attach');
    }
    return { attached: file.name };
  }
};
