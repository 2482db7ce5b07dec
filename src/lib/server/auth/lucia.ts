// The only file that constructs lucia. lucia 3 is no longer developed upstream; everything else talks
// to sessions.ts, so replacing it means rewriting this file and adapter.ts alone.
import { Lucia, TimeSpan } from 'lucia';
import { config } from '../config';
import { SequelizeSessionAdapter } from './adapter';
import type { Role } from './roles';

export const SESSION_COOKIE = 'isoledger_session';

function makeLucia() {
  const c = config();
  return new Lucia(new SequelizeSessionAdapter(), {
    // sliding: a session used in the second half of its life is extended to the full span again
    sessionExpiresIn: new TimeSpan(c.sessionDays, 'd'),
    sessionCookie: {
      name: SESSION_COOKIE,
      expires: true,
      attributes: { sameSite: 'lax', secure: (c.origin ?? '').startsWith('https:'), path: '/' }
    },
    getUserAttributes: (a) => ({ email: a.email, name: a.name, roles: a.roles })
  });
}

let instance: ReturnType<typeof makeLucia> | null = null;

/** Built on first use, so importing auth code does not need DATABASE_URL yet. */
export function lucia(): ReturnType<typeof makeLucia> {
  instance ??= makeLucia();
  return instance;
}

declare module 'lucia' {
  interface Register {
    Lucia: ReturnType<typeof makeLucia>;
    DatabaseUserAttributes: { email: string; name: string; roles: Role[] };
  }
}
