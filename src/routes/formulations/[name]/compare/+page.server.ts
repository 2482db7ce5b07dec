import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { Comparison } from '$lib/server/registry/compare';
import type { FormulationDetail } from '$lib/server/registry/formulations';
import { apiPath, callApi } from '$lib/components/registry/api-call';
import { diffRows } from '$lib/components/registry/diff-rows';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  requireUserOrSignIn(locals, url);
  const detail = await loadApi<FormulationDetail>(fetch, apiPath('formulations', params.name));
  const versions = detail.versions.map((v) => ({ version: v.version, status: v.status }));
  // without a choice: the newest version against the one before it
  const from = url.searchParams.get('from') ?? versions[1]?.version ?? '';
  const to = url.searchParams.get('to') ?? versions[0]?.version ?? '';
  const answer =
    from && to
      ? await callApi<Comparison>(
          fetch,
          'GET',
          `${apiPath('formulations', params.name, 'compare')}?${new URLSearchParams({ from, to })}`
        )
      : null;
  return {
    name: detail.name,
    title: detail.title,
    versions,
    from,
    to,
    comparison: answer?.ok ? answer.data! : null,
    diff: answer?.ok ? diffRows(answer.data!.source) : null,
    refused:
      answer && !answer.ok ? (answer.error?.message ?? `the comparison answered ${answer.status}`) : null
  };
};
