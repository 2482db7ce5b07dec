// The registry pages call the same /api/v1 routes a script would (event.fetch carries the visitor's
// cookie). An answer is kept whole, so a refusal can be shown beside the form that caused it.
import { fail, type ActionFailure } from '@sveltejs/kit';
import type { ApiErrorBody, FormFailure } from '$lib/server/api';

export interface Answer<T> {
  ok: boolean;
  status: number;
  data: T | null;
  error: ApiErrorBody['error'] | null;
}

type Fetch = typeof globalThis.fetch;

/** `/api/v1/formulations/{name}/versions/{version}` and the like, each segment encoded. */
export function apiPath(...segments: string[]): string {
  return `/api/v1/${segments.map(encodeURIComponent).join('/')}`;
}

export async function callApi<T>(
  fetch: Fetch,
  method: string,
  path: string,
  body?: unknown
): Promise<Answer<T>> {
  const r = await fetch(path, {
    method,
    headers: {
      accept: 'application/json',
      ...(body === undefined ? {} : { 'content-type': 'application/json' })
    },
    body: body === undefined ? undefined : JSON.stringify(body)
  });
  let parsed: unknown = null;
  try {
    parsed = await r.json();
  } catch {
    // an empty or non-JSON answer: the status tells
  }
  if (r.ok) return { ok: true, status: r.status, data: parsed as T, error: null };
  const error = (parsed as Partial<ApiErrorBody> | null)?.error ?? {
    code: 'error',
    message: `${method} ${path} answered ${r.status}`,
    details: null
  };
  return { ok: false, status: r.status, data: null, error };
}

/** The field a refusal names: `details.field` of a service error, or the paths of a request the schema refused. */
export function fieldErrors(error: ApiErrorBody['error'] | null): Record<string, string> {
  if (!error) return {};
  const d = error.details as { field?: unknown } | { path?: unknown; message?: unknown }[] | null;
  if (d && !Array.isArray(d) && typeof d.field === 'string') return { [d.field]: error.message };
  const out: Record<string, string> = {};
  if (Array.isArray(d))
    for (const i of d)
      if (typeof i?.path === 'string' && i.path && typeof i.message === 'string') out[i.path] = i.message;
  return out;
}

/** A refused API call as the form's failure, with the same status and the API's own message. */
export function refusal(
  answer: Answer<unknown>,
  formId: string,
  values: Record<string, string> = {}
): ActionFailure<FormFailure> {
  return fail(answer.status, {
    formId,
    message: answer.error?.message ?? `the request answered ${answer.status}`,
    errors: fieldErrors(answer.error),
    values
  });
}

/** The posted text fields of a form (for filling it again after a refusal). */
export function formValues(form: FormData): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of form) if (typeof v === 'string') out[k] = v;
  return out;
}

/** The failure of `formId` among a page's forms, if the last action was that one and failed. */
export function failureOf(form: unknown, formId: string): FormFailure | null {
  return form && typeof form === 'object' && 'formId' in form && (form as FormFailure).formId === formId
    ? (form as FormFailure)
    : null;
}
