// The front door: GETs of released versions, their sources and records that this process already
// holds, answered on the Node request itself, before SvelteKit builds a Request for them. A solver
// pipeline fetching its pins meets exactly what the hooks would do, in the same order and with the
// same functions: the address's rate limit, the API token, the token's rate limit, then the cached
// bytes (or 304) with the same headers. Anything else (no token, a query string, a representation
// not cached yet) goes on to SvelteKit untouched, since nothing has been counted or read for it.
import type { IncomingMessage, ServerResponse } from 'node:http';
import type { RequestEvent } from '@sveltejs/kit';
import { errorToResponse } from './errors';
import { OPERATIONS, routeIdOf, type Operation } from './operations';
import { requestIdOf, SECURITY_HEADERS, securityHeaders } from './response-headers';
import { cachedAnswer, type CachedRepresentation } from './response-cache';
import { authenticateBearer, bearerToken } from './token-batch';
import { peekCache, refuseOverAddressLimit, refuseOverTokenLimit } from './traffic';

/** Where the production entry finds the front door (set by the server hooks' init). */
export const FRONT_DOOR = Symbol.for('isoledger.front-door');

interface Route {
  op: Operation;
  routeId: string;
  names: string[];
  pattern: RegExp;
}

const ROUTES: Route[] = OPERATIONS.filter((op) => op.method === 'get' && op.cache === 'immutable').map(
  (op) => {
    const routeId = routeIdOf(op.path);
    const names = [...routeId.matchAll(/\[(\w+)\]/g)].map((m) => m[1]);
    const pattern = new RegExp(
      '^' + routeId.replace(/[.*+?^${}()|\\]/g, '\\$&').replace(/\\?\[(\w+)\\?\]/g, '([^/]+)') + '$'
    );
    return { op, routeId, names, pattern };
  }
);

function header(req: IncomingMessage, name: string): string | null {
  const v = req.headers[name];
  return typeof v === 'string' ? v : Array.isArray(v) ? v.join(', ') : null;
}

/** The client's address as adapter-node gives it to SvelteKit (ADDRESS_HEADER, XFF_DEPTH). */
function clientAddressOf(req: IncomingMessage): string {
  const name = (process.env.ADDRESS_HEADER ?? '').toLowerCase();
  if (name) {
    if (!(name in req.headers)) throw new Error(`ADDRESS_HEADER=${name} is absent from the request`);
    const value = header(req, name) ?? '';
    if (name !== 'x-forwarded-for') return value;
    const depth = parseInt(process.env.XFF_DEPTH ?? '1');
    const addresses = value.split(',');
    if (!(depth >= 1) || depth > addresses.length) throw new Error(`XFF_DEPTH is ${depth}`);
    return addresses[addresses.length - depth].trim();
  }
  return req.socket?.remoteAddress ?? '';
}

function match(path: string): { route: Route; params: Record<string, string> } | null {
  for (const route of ROUTES) {
    const m = route.pattern.exec(path);
    if (!m) continue;
    const params: Record<string, string> = {};
    try {
      route.names.forEach((n, k) => (params[n] = decodeURIComponent(m[k + 1])));
    } catch {
      return null;
    }
    return { route, params };
  }
  return null;
}

async function sendWeb(res: ServerResponse, response: Response): Promise<void> {
  const body = response.body ? Buffer.from(await response.arrayBuffer()) : undefined;
  res.statusCode = response.status;
  response.headers.forEach((value, name) => res.setHeader(name, value));
  res.end(body);
}

function sendCached(res: ServerResponse, hit: CachedRepresentation, ifNoneMatch: string | null, id: string) {
  const { status, headers, body } = cachedAnswer(hit, ifNoneMatch);
  res.statusCode = status;
  for (const [name, value] of Object.entries(headers)) res.setHeader(name, value);
  res.setHeader('x-request-id', id);
  for (const [name, value] of SECURITY_HEADERS) res.setHeader(name, value);
  res.end(body ?? undefined);
}

/** Answers the request when it is a token-bearing GET of a cached immutable representation; false leaves it alone. */
export async function frontDoor(req: IncomingMessage, res: ServerResponse): Promise<boolean> {
  const url = req.url ?? '';
  if (req.method !== 'GET' || !url.startsWith('/api/v1/') || url.includes('?')) return false;
  const authorization = header(req, 'authorization');
  if (authorization === null || bearerToken(authorization) === null) return false;
  const found = match(url);
  if (!found) return false;
  const { route, params } = found;
  const hit = peekCache(route.routeId, params);
  if (!hit) return false;

  const requestId = requestIdOf(header(req, 'x-request-id'));
  const event = {
    isSubRequest: false,
    request: { method: 'GET', headers: { get: (name: string) => header(req, name.toLowerCase()) } },
    route: { id: route.routeId },
    params,
    locals: { requestId, user: null, sessionId: null },
    getClientAddress: () => clientAddressOf(req)
  } as unknown as RequestEvent;
  try {
    const overAddress = await refuseOverAddressLimit(event, route.op);
    if (overAddress) return (await sendWeb(res, securityHeaders(overAddress, requestId)), true);
    const bearer = await authenticateBearer(authorization);
    if (!bearer.ok) return (await sendWeb(res, securityHeaders(bearer.response, requestId)), true);
    event.locals.user = bearer.user;
    const overToken = await refuseOverTokenLimit(event, route.op);
    if (overToken) return (await sendWeb(res, securityHeaders(overToken, requestId)), true);
    sendCached(res, hit, header(req, 'if-none-match'), requestId);
  } catch (error) {
    if (!res.headersSent) await sendWeb(res, securityHeaders(errorToResponse(error, requestId), requestId));
    else res.destroy();
  }
  return true;
}
