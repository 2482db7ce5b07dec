// Headers every response carries (the hooks add them to SvelteKit's answers, the front door to its
// own), and the request id a response names.
import { newId } from '../ids';

const REQUEST_ID = /^[A-Za-z0-9._:-]{1,64}$/;

// pages get their Content-Security-Policy from kit.csp (svelte.config.js, with nonces for SvelteKit's
// own scripts); anything else (JSON, files) gets this one, which allows nothing to run or frame it
const NON_PAGE_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'";

/** Security headers, each set unless the response has it already. */
export const SECURITY_HEADERS: readonly (readonly [string, string])[] = [
  ['x-content-type-options', 'nosniff'],
  ['referrer-policy', 'same-origin'],
  ['x-frame-options', 'DENY'],
  ['cross-origin-opener-policy', 'same-origin'],
  ['permissions-policy', 'camera=(), microphone=(), geolocation=(), payment=()'],
  ['content-security-policy', NON_PAGE_CSP]
];

/** The caller's X-Request-Id when it is a plain token of at most 64 characters, else a new id. */
export function requestIdOf(incoming: string | null | undefined): string {
  return incoming && REQUEST_ID.test(incoming) ? incoming : newId();
}

/** The request id and the security headers on a web Response. */
export function securityHeaders(response: Response, requestId: string): Response {
  try {
    response.headers.set('x-request-id', requestId);
    for (const [name, value] of SECURITY_HEADERS)
      if (!response.headers.has(name)) response.headers.set(name, value);
  } catch {
    // a response with immutable headers (a proxied fetch) keeps its own
  }
  return response;
}
