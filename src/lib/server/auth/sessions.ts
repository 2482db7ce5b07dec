// Browser sessions. The cookie holds a random token; the sessions table holds only its SHA-256, so a
// copy of the database does not let anyone act as a signed-in person.
import { createHash } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { generateIdFromEntropySize } from 'lucia';
import { lucia, SESSION_COOKIE } from './lucia';
import type { SessionUser } from './types';

export { SESSION_COOKIE };

export interface SessionCookie {
  name: string;
  value: string;
  attributes: {
    httpOnly?: boolean;
    secure?: boolean;
    sameSite?: 'lax' | 'strict' | 'none';
    path: string;
    maxAge?: number;
    expires?: Date;
  };
}

/** Puts a session cookie (or a blank one) on the response. */
export function applyCookie(cookies: Cookies, c: SessionCookie): void {
  cookies.set(c.name, c.value, c.attributes);
}

/** The stored session id of a cookie token: sha256(token) in hex. */
export function sessionIdOf(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

function cookieFor(token: string): SessionCookie {
  const c = lucia().createSessionCookie(token);
  return { name: c.name, value: c.value, attributes: { ...c.attributes, path: '/' } };
}

/** A blank, already-expired cookie that makes the browser forget the session. */
export function blankSessionCookie(): SessionCookie {
  const c = lucia().createBlankSessionCookie();
  return { name: c.name, value: c.value, attributes: { ...c.attributes, path: '/' } };
}

/** at most one sweep of expired sessions per process in this interval (sign-ins are the trigger) */
const SWEEP_INTERVAL_MS = 10 * 60_000;
let lastSweep = 0;

export async function createSession(
  userId: string
): Promise<{ sessionId: string; expiresAt: Date; cookie: SessionCookie }> {
  const token = generateIdFromEntropySize(25);
  // expired rows are also deleted when met; this sweep keeps abandoned ones from collecting
  if (Date.now() - lastSweep > SWEEP_INTERVAL_MS) {
    lastSweep = Date.now();
    await lucia().deleteExpiredSessions();
  }
  const session = await lucia().createSession(userId, {}, { sessionId: sessionIdOf(token) });
  return { sessionId: session.id, expiresAt: session.expiresAt, cookie: cookieFor(token) };
}

export interface ValidSession {
  user: SessionUser;
  sessionId: string;
  expiresAt: Date;
  /** set when the expiry was extended: send it so the browser's cookie lasts as long */
  refreshedCookie: SessionCookie | null;
}

/** The person behind a cookie token, or null when the session is unknown, expired or its account disabled. */
export async function validateSessionToken(token: string): Promise<ValidSession | null> {
  if (!/^[a-z0-9]{16,128}$/.test(token)) return null;
  const { session, user } = await lucia().validateSession(sessionIdOf(token));
  if (!session) return null;
  return {
    user: { id: user.id, email: user.email, name: user.name, roles: user.roles },
    sessionId: session.id,
    expiresAt: session.expiresAt,
    refreshedCookie: session.fresh ? cookieFor(token) : null
  };
}

export function invalidateSession(sessionId: string): Promise<void> {
  return lucia().invalidateSession(sessionId);
}

/** Ends every session of a person, except `keep` (the one changing the password stays signed in). */
export async function invalidateUserSessions(userId: string, keep?: string): Promise<void> {
  if (!keep) return lucia().invalidateUserSessions(userId);
  for (const s of await lucia().getUserSessions(userId))
    if (s.id !== keep) await lucia().invalidateSession(s.id);
}
