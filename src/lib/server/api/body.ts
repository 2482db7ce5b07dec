// Request bodies and query strings, read with a size limit and checked against a zod schema.
import type { z } from 'zod';
import { ApiError } from './errors';

/**
 * 256 KiB: far above any account or registry request. It sits below adapter-node's BODY_SIZE_LIMIT
 * (512 KiB unless set), so an oversized body meets this check and gets the API's 413; a route that
 * takes larger bodies passes its own limit and needs BODY_SIZE_LIMIT raised to match.
 */
export const DEFAULT_BODY_LIMIT = 256 * 1024;

/** Reads at most maxBytes of the body (413 beyond), whatever Content-Length claims. */
export async function readBody(request: Request, maxBytes = DEFAULT_BODY_LIMIT): Promise<string> {
  const declared = Number(request.headers.get('content-length') ?? NaN);
  if (declared > maxBytes) throw tooLarge(maxBytes);
  if (!request.body) return '';
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > maxBytes) {
      await reader.cancel();
      throw tooLarge(maxBytes);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks).toString('utf8');
}

// the rest of the body is left unread, so the connection cannot carry another request
function tooLarge(maxBytes: number): ApiError {
  return new ApiError(
    413,
    'too-large',
    `the request body is larger than the limit of ${maxBytes} bytes`,
    { maxBytes },
    { connection: 'close' }
  );
}

/** A JSON body checked against schema: 415 when not JSON, 413 when too large, 400 when malformed or invalid. */
export async function readJson<S extends z.ZodType>(
  request: Request,
  schema: S,
  maxBytes = DEFAULT_BODY_LIMIT
): Promise<z.output<S>> {
  const type = request.headers.get('content-type') ?? '';
  if (!/^application\/(.+\+)?json\b/i.test(type)) {
    throw new ApiError(
      415,
      'unsupported-media-type',
      `expected Content-Type: application/json, got '${type || 'none'}'`
    );
  }
  const text = await readBody(request, maxBytes);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new ApiError(400, 'malformed-json', `the body is not valid JSON: ${(e as Error).message}`);
  }
  return schema.parse(value);
}

/** Query parameters (first value of each) checked against schema; failures are 400 with the parameter named. */
export function readQuery<S extends z.ZodType>(url: URL, schema: S): z.output<S> {
  return schema.parse(Object.fromEntries(url.searchParams));
}
