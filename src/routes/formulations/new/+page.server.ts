import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { readForm } from '$lib/server/api';
import { requireRole, requireUserOrSignIn } from '$lib/server/auth/guards';
import { checkName, checkTitle } from '$lib/server/registry/formulations';
import { newFormulationSchema, newVersionSchema } from '$lib/server/registry/schemas';
import { checkVersion } from '$lib/server/registry/semver-order';
import { startingDocument, TEMPLATES } from './templates';
import type { ApiErrorBody } from '$lib/server/api';
import type { Actions, PageServerLoad } from './$types';

/** The first version a new formulation gets unless the author says otherwise. */
const FIRST_VERSION = '0.1.0';

const newElementSchema = newFormulationSchema.extend({
  version: newVersionSchema.shape.version,
  start: z.enum(TEMPLATES.map((t) => t.id) as [string, ...string[]], {
    error: 'choose one of the starting documents'
  })
});

export const load: PageServerLoad = ({ locals, url }) => {
  const user = requireUserOrSignIn(locals, url);
  return {
    isAuthor: user.roles.includes('author'),
    firstVersion: FIRST_VERSION,
    templates: TEMPLATES.map((t) => ({ id: t.id, label: t.label }))
  };
};

async function post(fetch: typeof globalThis.fetch, path: string, body: unknown) {
  const r = await fetch(path, {
    method: 'POST',
    headers: { 'content-type': 'application/json', accept: 'application/json' },
    body: JSON.stringify(body)
  });
  const parsed = (await r.json().catch(() => null)) as Partial<ApiErrorBody> | null;
  return { ok: r.ok, status: r.status, error: parsed?.error ?? null };
}

export const actions: Actions = {
  default: async ({ locals, request, fetch }) => {
    requireRole(locals, 'author');
    const parsed = await readForm(request, newElementSchema);
    if (!parsed.ok) return parsed.failure;
    const values = {
      name: parsed.data.name,
      title: parsed.data.title,
      version: parsed.data.version,
      start: parsed.data.start
    };

    // the registry's own rules, checked before anything is created so a refusal leaves nothing behind
    const errors: Record<string, string> = {};
    for (const [field, check] of [
      ['name', checkName],
      ['title', checkTitle],
      ['version', checkVersion]
    ] as const) {
      try {
        check(values[field]);
      } catch (e) {
        errors[field] = (e as Error).message;
      }
    }
    if (Object.keys(errors).length)
      return fail(400, { message: 'Please correct the marked fields.', errors, values });

    const title = values.title.trim();
    const created = await post(fetch, '/api/v1/formulations', { name: values.name, title });
    if (!created.ok) {
      const field = (created.error?.details as { field?: string } | null)?.field;
      const message = created.error?.message ?? `creating the formulation answered ${created.status}`;
      return fail(created.status, { message, errors: field ? { [field]: message } : {}, values });
    }
    const source = startingDocument(values.start, values.name, title);
    const draft = await post(fetch, `/api/v1/formulations/${encodeURIComponent(values.name)}/versions`, {
      version: values.version,
      source
    });
    if (!draft.ok) {
      const message = `the formulation '${values.name}' was created, but its first draft was refused: ${draft.error?.message ?? draft.status}`;
      return fail(draft.status, { message, errors: {}, values });
    }
    redirect(
      303,
      `/formulations/${encodeURIComponent(values.name)}/versions/${encodeURIComponent(values.version)}/edit`
    );
  }
};
