import { fail, redirect } from '@sveltejs/kit';
import { loadApi } from '$lib/server/api';
import { callApi as send, type Answer } from '$lib/components/registry/api-call';
import { requireUserOrSignIn } from '$lib/server/auth/guards';
import type { Diagnostic } from '@isoledger/formulation';
import type { ValidationResult } from '$lib/server/preview';
import type { RunView } from '$lib/server/runs/view';
import type { VersionDetail } from '$lib/server/registry/versions';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

function versionPath(params: { name: string; version: string }): string {
  return `/api/v1/formulations/${encodeURIComponent(params.name)}/versions/${encodeURIComponent(params.version)}`;
}

export const load: PageServerLoad = async ({ locals, url, params, fetch }) => {
  const user = requireUserOrSignIn(locals, url);
  const version = await loadApi<VersionDetail>(fetch, versionPath(params));
  // a run named in the address (after Run verification without JavaScript), or one still going
  const active =
    version.latestRun && (version.latestRun.status === 'queued' || version.latestRun.status === 'running');
  const runId = url.searchParams.get('run') ?? (active ? version.latestRun!.id : null);
  const [run, validation] = await Promise.all([
    runId ? send<RunView>(fetch, 'GET', `/api/v1/runs/${encodeURIComponent(runId)}`) : null,
    send<ValidationResult>(fetch, 'POST', '/api/v1/validate', { source: version.source })
  ]);
  return {
    version,
    run: run?.ok ? run.data : null,
    validation: validation.ok ? validation.data! : null,
    canEdit: version.status === 'draft' && user.roles.includes('author'),
    submitted: url.searchParams.has('submitted')
  };
};

type Failure = {
  action: 'save' | 'run' | 'submit';
  message: string;
  diagnostics: Diagnostic[];
  source?: string;
};

function failure(action: Failure['action'], answer: Answer<unknown>, source?: string) {
  const diagnostics =
    answer.status === 422 && Array.isArray(answer.error?.details)
      ? (answer.error!.details as Diagnostic[])
      : [];
  return fail(answer.status, {
    action,
    message: answer.error?.message ?? 'the request failed',
    diagnostics,
    source
  } satisfies Failure);
}

/** Saves the posted source when it differs from the stored one; the failure to return, or null. */
async function saveIfChanged(
  event: RequestEvent,
  action: Failure['action'],
  source: FormDataEntryValue | null
) {
  if (typeof source !== 'string') return null;
  const current = await send<VersionDetail>(event.fetch, 'GET', versionPath(event.params));
  if (!current.ok) return failure(action, current);
  if (current.data!.source === source) return null;
  const saved = await send<VersionDetail>(event.fetch, 'PUT', versionPath(event.params), { source });
  return saved.ok ? null : failure(action, saved, source);
}

export const actions: Actions = {
  save: async (event) => {
    requireUserOrSignIn(event.locals, event.url);
    const source = (await event.request.formData()).get('source');
    if (typeof source !== 'string') {
      return fail(400, {
        action: 'save',
        message: 'the form sent no source',
        diagnostics: []
      } satisfies Failure);
    }
    const saved = await send<VersionDetail>(event.fetch, 'PUT', versionPath(event.params), { source });
    if (!saved.ok) return failure('save', saved, source);
    return { action: 'save' as const, saved: true, definitionHash: saved.data!.definitionHash };
  },

  run: async (event) => {
    requireUserOrSignIn(event.locals, event.url);
    const refused = await saveIfChanged(event, 'run', (await event.request.formData()).get('source'));
    if (refused) return refused;
    const queued = await send<{ runId: string }>(event.fetch, 'POST', `${versionPath(event.params)}/runs`);
    if (!queued.ok) return failure('run', queued);
    redirect(303, `${event.url.pathname}?run=${encodeURIComponent(queued.data!.runId)}`);
  },

  submit: async (event) => {
    requireUserOrSignIn(event.locals, event.url);
    const refused = await saveIfChanged(event, 'submit', (await event.request.formData()).get('source'));
    if (refused) return refused;
    const submitted = await send<VersionDetail>(event.fetch, 'POST', `${versionPath(event.params)}/submit`);
    if (!submitted.ok) return failure('submit', submitted);
    redirect(303, `${event.url.pathname}?submitted=1`);
  }
};
