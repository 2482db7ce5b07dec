import { loadApi } from '$lib/server/api';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import { compareChecks, type Comparison } from '$lib/server/registry/compare';
import type { FormulationDetail } from '$lib/server/registry/formulations';
import type { RecordCheck } from '$lib/server/registry/verification';
import type { VersionDetail } from '$lib/server/registry/versions';
import { apiPath, callApi, formValues, refusal } from '$lib/components/registry/api-call';
import { diffRows } from '$lib/components/registry/diff-rows';
import semver from 'semver';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const [version, detail] = await Promise.all([
    loadApi<VersionDetail>(fetch, apiPath('formulations', params.name, 'versions', params.version)),
    loadApi<FormulationDetail>(fetch, apiPath('formulations', params.name))
  ]);
  // the newest release below this version; a withdrawn one when nothing released remains
  const older = detail.versions.filter((v) => semver.lt(v.version, version.version));
  const previous =
    older.find((v) => v.status === 'released') ?? older.find((v) => v.status === 'withdrawn') ?? null;

  let comparison: Comparison | null = null;
  let checks = null;
  if (previous) {
    comparison = await loadApi<Comparison>(
      fetch,
      `${apiPath('formulations', params.name, 'compare')}?${new URLSearchParams({ from: previous.version, to: version.version })}`
    );
    checks = comparison.checks;
  } else if (version.verification) {
    const record = await loadApi<{ checks: RecordCheck[] }>(
      fetch,
      apiPath('records', version.verification.recordId)
    );
    checks = compareChecks([], record.checks);
  }
  return {
    version: { ...version, definition: undefined },
    previous: previous ? { version: previous.version, status: previous.status } : null,
    definitionPaths: comparison?.definition ?? null,
    diff: comparison ? diffRows(comparison.source) : null,
    checks,
    isReviewer: user.roles.includes('reviewer'),
    ownVersion: version.author.email === user.email
  };
};

export const actions: Actions = {
  /** approve (in-review → released) or reject with a comment (→ draft), through the review route. */
  decide: async ({ request, params, fetch }) => {
    const values = formValues(await request.formData());
    const answer = await callApi<VersionDetail>(
      fetch,
      'POST',
      `${apiPath('formulations', params.name, 'versions', params.version)}/review`,
      { decision: values.decision, comment: values.comment ?? '' }
    );
    if (!answer.ok) return refusal(answer, 'decide', values);
    return { decided: answer.data!.status === 'released' ? ('approved' as const) : ('rejected' as const) };
  }
};
