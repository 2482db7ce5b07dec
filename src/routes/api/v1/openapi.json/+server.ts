import { api } from '$lib/server/api';
import { openApiDocument } from '$lib/server/api/openapi';

const body = () => JSON.stringify(openApiDocument());
let text: string | null = null;

/** The OpenAPI 3.1 description of every route, generated from the schemas the routes use. */
export const GET = api(
  () =>
    new Response((text ??= body()), {
      headers: { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'public, max-age=300' }
    })
);
