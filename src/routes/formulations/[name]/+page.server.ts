import { redirect } from '@sveltejs/kit';
import semver from 'semver';
import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { FormulationDetail } from '$lib/server/registry/formulations';
import type { VersionDetail } from '$lib/server/registry/versions';
import type { Attachment } from '$lib/server/storage/attachments';
import { apiPath, callApi, formValues, refusal } from '$lib/components/registry/api-call';
import { startingDocument, TEMPLATES } from '../new/templates';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const detail = await loadApi<FormulationDetail>(fetch, apiPath('formulations', params.name));
  // each version's reviews, submission and withdrawal, and its attachments (the source stays on the server)
  const versions = await Promise.all(
    detail.versions.map(async (v) => {
      const [full, files] = await Promise.all([
        loadApi<VersionDetail>(fetch, apiPath('formulations', params.name, 'versions', v.version)),
        callApi<Attachment[]>(
          fetch,
          'GET',
          apiPath('formulations', params.name, 'versions', v.version, 'attachments')
        )
      ]);
      return {
        ...v,
        updatedAt: full.updatedAt,
        submittedAt: full.submittedAt,
        reviews: full.reviews,
        withdrawn: full.withdrawn,
        attachments: files.ok ? files.data! : [],
        pinnedBy: detail.pins.filter((p) => p.version === v.version)
      };
    })
  );
  const newest = detail.versions[0]?.version ?? null;
  return {
    formulation: { name: detail.name, title: detail.title, owner: detail.owner, createdAt: detail.createdAt },
    versions,
    pins: detail.pins,
    newest,
    nextVersion: newest ? semver.inc(newest, 'minor')! : '1.0.0',
    roles: user.roles
  };
};

export const actions: Actions = {
  /** A new draft that starts from the newest version's source, then the workbench. */
  draft: async ({ request, params, fetch }) => {
    const form = await request.formData();
    const values = formValues(form);
    const version = values.version?.trim() ?? '';
    const from = values.from?.trim() ?? '';
    // a formulation whose first draft never came starts from the workbench's first starting document
    let source = startingDocument(TEMPLATES[0].id, params.name, values.title ?? params.name);
    if (from) {
      const r = await fetch(`${apiPath('formulations', params.name, 'versions', from)}/source`);
      if (!r.ok) {
        const answer = await callApi(fetch, 'GET', apiPath('formulations', params.name, 'versions', from));
        return refusal(answer, 'draft', values);
      }
      source = await r.text();
    }
    const created = await callApi<VersionDetail>(
      fetch,
      'POST',
      apiPath('formulations', params.name, 'versions'),
      {
        version,
        source
      }
    );
    if (!created.ok) return refusal(created, 'draft', values);
    redirect(
      303,
      `/formulations/${encodeURIComponent(params.name)}/versions/${encodeURIComponent(version)}/edit`
    );
  }
};
