// Pages load their data through the API (event.fetch carries the visitor's cookie or token), so the
// screens show exactly what a script would get. An API refusal becomes the page's error.
import { error } from '@sveltejs/kit';
import type { ApiErrorBody } from './errors';

export async function loadApi<T>(fetch: typeof globalThis.fetch, path: string): Promise<T> {
  const r = await fetch(path, { headers: { accept: 'application/json' } });
  if (r.ok) return (await r.json()) as T;
  let body: Partial<ApiErrorBody> = {};
  try {
    body = await r.json();
  } catch {
    // not the API's shape; the status alone tells
  }
  error(r.status, { code: body.error?.code, message: body.error?.message ?? `${path} answered ${r.status}` });
}
