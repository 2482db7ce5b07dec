import { json } from '@sveltejs/kit';
import type { z } from 'zod';
import { FORMAT_LIMITS } from '@isoledger/formulation';
import { api, ApiError, readJson, tooManyRequests } from '$lib/server/api';
import { requireUser } from '$lib/server/auth/guards';
import { hit } from '$lib/server/auth/rate-limit';
import { validateBodySchema as bodySchema } from '$lib/server/api/operations';
import { validateForWorkbench } from '$lib/server/preview';

/** The largest document the format accepts, in UTF-8 bytes. */
const DOCUMENT_LIMIT: number = FORMAT_LIMITS.documentBytes;
/** JSON may escape a byte into six characters (\u00XX), so the body may be up to six times the document, plus the wrapper. */
const BODY_LIMIT = 6 * DOCUMENT_LIMIT + 1024;
/** Per person and minute: the editor asks at most a few times a second while someone types, with its debounce. */
const VALIDATIONS_PER_MINUTE = 300;

function documentTooLarge(bytes?: number): ApiError {
  const size = bytes === undefined ? '' : ` (${bytes} bytes)`;
  return new ApiError(
    413,
    'too-large',
    `the document${size} is larger than the format's limit of ${DOCUMENT_LIMIT} bytes`,
    { maxBytes: DOCUMENT_LIMIT, ...(bytes === undefined ? {} : { bytes }) }
  );
}

/** Parses a document and, when it is valid, tabulates its shape functions over the reference cell (in the sandbox). */
export const POST = api(async ({ locals, request }) => {
  const user = requireUser(locals);
  const rate = await hit(`validate:user:${user.id}`, VALIDATIONS_PER_MINUTE, 60);
  if (!rate.allowed) {
    throw tooManyRequests(
      `more than ${VALIDATIONS_PER_MINUTE} validations a minute; wait a moment`,
      rate.retryAfterSeconds
    );
  }
  let body: z.output<typeof bodySchema>;
  try {
    body = await readJson(request, bodySchema, BODY_LIMIT);
  } catch (e) {
    if (e instanceof ApiError && e.status === 413) throw documentTooLarge();
    throw e;
  }
  const bytes = Buffer.byteLength(body.source, 'utf8');
  if (bytes > DOCUMENT_LIMIT) throw documentTooLarge(bytes);
  return json(await validateForWorkbench(body.source), { headers: { 'cache-control': 'no-store' } });
});
