// Form actions: the same zod schemas and service errors as the API, returned as fail() for the page.
import { fail, isHttpError, type ActionFailure } from '@sveltejs/kit';
import type { z } from 'zod';
import { ApiError } from './errors';
import { fieldMessages } from '../auth/schemas';

export interface FormFailure {
  /** which form on the page failed, when a page has several */
  formId: string | null;
  /** the sentence shown above the form */
  message: string;
  /** field name → its message */
  errors: Record<string, string>;
  /** what the person typed (never passwords), to fill the form again */
  values: Record<string, string>;
}

const SECRET = /password|current|confirm|token/i;

function keptValues(data: FormData | undefined): Record<string, string> {
  const out: Record<string, string> = {};
  if (data) for (const [k, v] of data) if (typeof v === 'string' && !SECRET.test(k)) out[k] = v;
  return out;
}

export type FormResult<T> =
  { ok: true; data: T; form: FormData } | { ok: false; failure: ActionFailure<FormFailure> };

export async function readForm<S extends z.ZodType>(
  request: Request,
  schema: S,
  formId: string | null = null
): Promise<FormResult<z.output<S>>> {
  const form = await request.formData();
  const parsed = schema.safeParse(Object.fromEntries([...form].filter(([, v]) => typeof v === 'string')));
  if (parsed.success) return { ok: true, data: parsed.data, form };
  return {
    ok: false,
    failure: fail(400, {
      formId,
      message: 'Please correct the marked fields.',
      errors: fieldMessages(parsed.error),
      values: keptValues(form)
    })
  };
}

/** A refusal decided in the action itself. */
export function failMessage(
  status: number,
  message: string,
  formId: string | null = null
): ActionFailure<FormFailure> {
  return fail(status, { formId, message, errors: {}, values: {} });
}

/** A service refusal (ApiError, or a guard's error) as a failed action with the same status; anything else is rethrown. */
export function failWith(
  e: unknown,
  opts: { form?: FormData; formId?: string } = {}
): ActionFailure<FormFailure> {
  const base = { formId: opts.formId ?? null, values: keptValues(opts.form) };
  if (e instanceof ApiError) {
    const field = (e.details as { field?: unknown } | null)?.field;
    return fail(e.status, {
      ...base,
      message: e.message,
      errors: typeof field === 'string' ? { [field]: e.message } : {}
    });
  }
  if (isHttpError(e) && e.status < 500)
    return fail(e.status, { ...base, message: e.body.message, errors: {} });
  throw e;
}
