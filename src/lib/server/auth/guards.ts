// The first line of every guarded load, action and API handler. A refusal is 401 (nobody signed in)
// or 403 naming the role needed; the API wrapper turns both into the documented error shape.
import { error, redirect } from '@sveltejs/kit';
import type { Role } from './roles';
import type { SessionUser } from './types';

interface WithUser {
  user: SessionUser | null;
}

export function requireUser(locals: WithUser): SessionUser {
  if (!locals.user) {
    error(401, {
      code: 'unauthenticated',
      message: 'sign in first, or send Authorization: Bearer <API token>'
    });
  }
  return locals.user;
}

/** Passes when the person (or their token) holds at least one of `roles`. */
export function requireRole(locals: WithUser, ...roles: [Role, ...Role[]]): SessionUser {
  const user = requireUser(locals);
  if (!roles.some((r) => user.roles.includes(r))) {
    const needed = roles.length === 1 ? `the ${roles[0]} role` : `one of the roles ${roles.join(', ')}`;
    const held = user.roles.length
      ? `${user.tokenId ? 'this token carries' : 'you hold'} ${user.roles.join(', ')}`
      : `${user.tokenId ? 'this token carries' : 'you hold'} no roles`;
    error(403, { code: 'forbidden', message: `this needs ${needed}; ${held}` });
  }
  return user;
}

/** For pages: a visitor who is not signed in goes to the sign-in form and comes back afterwards. */
export function requireUserOrSignIn(locals: WithUser, url: URL): SessionUser {
  if (!locals.user) redirect(303, `/sign-in?next=${encodeURIComponent(url.pathname + url.search)}`);
  return locals.user;
}

/** Session-only actions (managing tokens): a token may not mint or revoke tokens. */
export function requireSession(locals: WithUser): SessionUser {
  const user = requireUser(locals);
  if (user.tokenId) {
    error(403, {
      code: 'forbidden',
      message:
        'API tokens cannot manage tokens; sign in, or use POST /api/v1/auth/token with e-mail and password'
    });
  }
  return user;
}

/** A `next` target that stays on this site (a path, never //host or a full URL). */
export function safeNext(next: string | null | undefined, fallback = '/'): string {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/\\') ? next : fallback;
}
