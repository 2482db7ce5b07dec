// Sign-up, sign-in, sessions, rate limits, role guards and API tokens, through real HTTP against the
// built server and its MariaDB.
import { createHash } from 'node:crypto';
import { afterAll, describe, expect, it } from 'vitest';
import { Client, DEMO, DEMO_PASSWORD, freshAccount, randomAddress, signedIn } from '../support/http';
import { closeTestDb, execute, select } from '../support/db';

const SESSION = 'isoledger_session';
const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

interface ApiErrorBody {
  error: { code: string; message: string; details: unknown };
}

async function apiError(r: Response): Promise<ApiErrorBody['error']> {
  expect(r.headers.get('content-type')).toMatch(/application\/json/);
  const body = (await r.json()) as ApiErrorBody;
  expect(Object.keys(body)).toEqual(['error']);
  expect(typeof body.error.code).toBe('string');
  expect(typeof body.error.message).toBe('string');
  return body.error;
}

afterAll(async () => {
  await closeTestDb();
});

describe('sign-up and sign-in through the forms', () => {
  it('signs up through the form, sets an httpOnly SameSite=Lax session cookie and records the event', async () => {
    const client = new Client();
    const email = `Newcomer-${Date.now()}@Fenwold.example`;
    const page = await client.get('/sign-up');
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('name="confirm"');

    const r = await client.postForm('/sign-up', {
      name: 'Wilhelmina Tarrant',
      email,
      password: 'a long enough secret',
      confirm: 'a long enough secret'
    });
    expect(r.status).toBe(303);
    expect(r.headers.get('location')).toBe('/account');
    const setCookie = r.headers.getSetCookie().find((c) => c.startsWith(`${SESSION}=`));
    expect(setCookie).toBeDefined();
    expect(setCookie).toMatch(/HttpOnly/i);
    expect(setCookie).toMatch(/SameSite=Lax/i);
    // the test server's ORIGIN is http://, so the cookie is not marked Secure (it is under https)
    expect(setCookie).not.toMatch(/Secure/i);

    const me = await client.getJson<{ email: string; name: string; roles: string[]; via: string }>(
      '/api/v1/me'
    );
    expect(me).toMatchObject({
      email: email.toLowerCase(),
      name: 'Wilhelmina Tarrant',
      roles: [],
      via: 'session'
    });

    // the cookie value is not what the database stores: only its SHA-256 is there
    const token = client.cookie(SESSION)!;
    expect(await select('SELECT id FROM sessions WHERE id = ?', [token])).toHaveLength(0);
    expect(await select('SELECT id FROM sessions WHERE id = ?', [sha256(token)])).toHaveLength(1);

    const events = await select<{ action: string; subject: string }>(
      "SELECT action, subject FROM audit_events WHERE action = 'account.create' AND subject = ?",
      [email.toLowerCase()]
    );
    expect(events).toHaveLength(1);

    const account = await client.get('/account');
    expect(account.status).toBe(200);
    expect(await account.text()).toContain('Wilhelmina Tarrant');
  });

  it('refuses a short password and a mismatched confirmation with the schema messages, and creates nothing', async () => {
    const client = new Client();
    const email = `short-${Date.now()}@fenwold.example`;
    const r = await client.postForm('/sign-up', {
      name: 'Short Password',
      email,
      password: 'tiny',
      confirm: 'tinx'
    });
    expect(r.status).toBe(400);
    const html = await r.text();
    expect(html).toContain('a password needs at least 10 characters');
    expect(html).toContain('the two passwords differ');
    expect(await select('SELECT id FROM users WHERE email = ?', [email])).toHaveLength(0);
    expect(client.cookie(SESSION)).toBeUndefined();
  });

  it('refuses a second account for an existing e-mail address with 409', async () => {
    const r = await new Client().postForm('/sign-up', {
      name: 'Impostor',
      email: DEMO.author,
      password: 'another long secret',
      confirm: 'another long secret'
    });
    expect(r.status).toBe(409);
    expect(await r.text()).toContain(`an account for ${DEMO.author} already exists`);
  });

  it('signs in the demo author through the form and returns to the page asked for', async () => {
    const client = new Client();
    const r = await client.postForm('/sign-in', {
      email: 'Author@Example.com',
      password: DEMO_PASSWORD,
      next: '/account'
    });
    expect(r.status).toBe(303);
    expect(r.headers.get('location')).toBe('/account');
    const me = await client.getJson<{ email: string; roles: string[] }>('/api/v1/me');
    expect(me).toMatchObject({ email: DEMO.author, roles: ['author'] });
  });

  it('never redirects a sign-in to another site', async () => {
    const r = await new Client().postForm('/sign-in', {
      email: DEMO.author,
      password: DEMO_PASSWORD,
      next: '//elsewhere.example/x'
    });
    expect(r.status).toBe(303);
    expect(r.headers.get('location')).toBe('/');
  });

  it('refuses a wrong password without a session and says so', async () => {
    const client = new Client();
    const r = await client.postForm('/sign-in', { email: DEMO.author, password: 'not the password' });
    expect(r.status).toBe(401);
    expect(await r.text()).toContain('the e-mail address or the password is wrong');
    expect(client.cookie(SESSION)).toBeUndefined();
    expect((await client.get('/api/v1/me')).status).toBe(401);
  });

  it('gives the same answer for an unknown account as for a wrong password', async () => {
    const r = await new Client().postForm('/sign-in', {
      email: 'nobody-here@fenwold.example',
      password: 'whatever it is'
    });
    expect(r.status).toBe(401);
    expect(await r.text()).toContain('the e-mail address or the password is wrong');
  });

  it('keeps SvelteKit’s origin check on: a form post from another origin is refused', async () => {
    const r = await new Client().postForm(
      '/sign-in',
      { email: DEMO.author, password: DEMO_PASSWORD },
      { origin: 'http://elsewhere.example' }
    );
    expect(r.status).toBe(403);
    const none = await new Client().postForm(
      '/sign-in',
      { email: DEMO.author, password: DEMO_PASSWORD },
      { origin: false }
    );
    expect(none.status).toBe(403);
  });
});

describe('sign-in rate limits', () => {
  it('locks an account after 5 failed attempts, even for the right password, with a clear message', async () => {
    const person = await freshAccount('lockout');
    // every attempt from a new address, so only the account's own counter can be what stops it
    for (let i = 0; i < 5; i++) {
      const r = await new Client().postForm('/sign-in', { email: person.email, password: `wrong-${i}` });
      expect(r.status).toBe(401);
    }
    const locked = await new Client().postForm('/sign-in', {
      email: person.email,
      password: person.password
    });
    expect(locked.status).toBe(429);
    expect(await locked.text()).toMatch(
      new RegExp(`too many failed sign-in attempts for ${person.email}; try again in \\d+ minutes?`)
    );

    // the token endpoint shares the limit and answers in the API's shape with Retry-After
    const api = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: person.email, password: person.password, name: 'script' }
    });
    expect(api.status).toBe(429);
    expect(Number(api.headers.get('retry-after'))).toBeGreaterThan(0);
    expect((await apiError(api)).code).toBe('rate-limited');

    // the session that was already open is not touched by the lock
    expect((await person.client.get('/api/v1/me')).status).toBe(200);
  });

  it('does not count successful sign-ins as failures', async () => {
    const person = await freshAccount('steady');
    const client = new Client();
    for (let i = 0; i < 8; i++) await client.signIn(person.email, person.password);
    expect((await client.get('/api/v1/me')).status).toBe(200);
  });

  it('blocks an address after 20 failed attempts across accounts, naming the address as the reason', async () => {
    const address = randomAddress();
    for (let i = 0; i < 20; i++) {
      const r = await new Client({ address }).postForm('/sign-in', {
        email: `guess-${i}-${Date.now()}@fenwold.example`,
        password: 'a guessed password'
      });
      expect(r.status).toBe(401);
    }
    const blocked = await new Client({ address }).postForm('/sign-in', {
      email: DEMO.reviewer,
      password: DEMO_PASSWORD
    });
    expect(blocked.status).toBe(429);
    expect(await blocked.text()).toContain('too many failed sign-in attempts from your network address');
    // the same account from another address is fine: the account itself is not locked
    await new Client().signIn(DEMO.reviewer);
  });
});

describe('sessions', () => {
  it('refuses a session whose expiry lies in the past and deletes it', async () => {
    const person = await freshAccount('expiry');
    expect((await person.client.get('/api/v1/me')).status).toBe(200);
    await execute('UPDATE sessions SET expires_at = ? WHERE user_id = ?', [
      new Date(Date.now() - 60_000),
      person.id
    ]);
    const r = await person.client.get('/api/v1/me');
    expect(r.status).toBe(401);
    expect((await apiError(r)).code).toBe('unauthenticated');
    expect(await select('SELECT id FROM sessions WHERE user_id = ?', [person.id])).toHaveLength(0);
    // a page asks the visitor to sign in and come back
    const page = await person.client.get('/account');
    expect(page.status).toBe(303);
    expect(page.headers.get('location')).toBe('/sign-in?next=%2Faccount');
  });

  it('extends a session used in the second half of its life and sends the cookie again', async () => {
    const person = await freshAccount('sliding');
    const soon = new Date(Date.now() + 3600_000);
    await execute('UPDATE sessions SET expires_at = ? WHERE user_id = ?', [soon, person.id]);
    const r = await person.client.get('/api/v1/me');
    expect(r.status).toBe(200);
    expect(r.headers.getSetCookie().some((c) => c.startsWith(`${SESSION}=`))).toBe(true);
    const [row] = await select<{ expires_at: Date }>('SELECT expires_at FROM sessions WHERE user_id = ?', [
      person.id
    ]);
    // SESSION_DAYS defaults to 14: the new expiry is about 14 days out, far beyond the hour it had
    expect(new Date(row.expires_at).getTime() - Date.now()).toBeGreaterThan(13 * 86_400_000);
  });

  it('signs out: the session row is gone, the cookie is cleared, and the old cookie no longer works', async () => {
    const person = await freshAccount('signout');
    const oldCookie = person.client.cookie(SESSION)!;
    const r = await person.client.postForm('/sign-out', {});
    expect(r.status).toBe(303);
    expect(person.client.cookie(SESSION)).toBeUndefined();
    expect(await select('SELECT id FROM sessions WHERE user_id = ?', [person.id])).toHaveLength(0);
    const replay = new Client();
    replay.jar.set(SESSION, oldCookie);
    expect((await replay.get('/api/v1/me')).status).toBe(401);
  });

  it('changes the password through the form: the old one stops working and other sessions end', async () => {
    const person = await freshAccount('newpass');
    const other = await new Client().signIn(person.email, person.password);
    const wrong = await person.client.postForm('/account?/password', {
      current: 'not my password',
      password: 'a brand new secret',
      confirm: 'a brand new secret'
    });
    expect(wrong.status).toBe(400);
    expect(await wrong.text()).toContain('the current password is wrong');

    const ok = await person.client.postForm('/account?/password', {
      current: person.password,
      password: 'a brand new secret',
      confirm: 'a brand new secret'
    });
    expect(ok.status).toBe(200);
    expect(await ok.text()).toContain('Password changed');
    expect((await person.client.get('/api/v1/me')).status).toBe(200);
    expect((await other.get('/api/v1/me')).status).toBe(401);
    expect(
      (await new Client().postForm('/sign-in', { email: person.email, password: person.password })).status
    ).toBe(401);
    await new Client().signIn(person.email, 'a brand new secret');
    const events = await select(
      "SELECT id FROM audit_events WHERE action = 'account.password-change' AND subject = ?",
      [person.email]
    );
    expect(events).toHaveLength(1);
  });
});

describe('role guards', () => {
  it('answers 401 in the API shape when nobody is signed in', async () => {
    const r = await new Client().get('/api/v1/people');
    expect(r.status).toBe(401);
    expect((await apiError(r)).code).toBe('unauthenticated');
  });

  it('refuses the author the people list with 403 naming the admin role', async () => {
    const author = await signedIn(DEMO.author);
    const r = await author.get('/api/v1/people');
    expect(r.status).toBe(403);
    const e = await apiError(r);
    expect(e.code).toBe('forbidden');
    expect(e.message).toContain('this needs the admin role');
    expect(e.message).toContain('you hold author');

    const page = await author.get('/admin');
    expect(page.status).toBe(403);
    expect(await page.text()).toContain('this needs the admin role');
  });

  it('lets the admin list people and grant and remove a role, each with its audit event', async () => {
    const admin = await signedIn(DEMO.admin);
    const person = await freshAccount('roles');
    const people = await admin.getJson<{ email: string; roles: string[] }[]>('/api/v1/people');
    expect(people.find((p) => p.email === DEMO.reviewer)?.roles).toEqual(['reviewer']);

    const granted = await admin.sendJson<{ roles: string[] }>(
      'PUT',
      `/api/v1/people/${person.id}/roles/reviewer`,
      {}
    );
    expect(granted.roles).toEqual(['reviewer']);
    expect((await person.client.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual(['reviewer']);

    // the admin page's form does the same without JavaScript
    const form = await admin.postForm('/admin?/role', { userId: person.id, role: 'lead', grant: 'true' });
    expect(form.status).toBe(200);
    // roles are listed in the order admin, author, reviewer, lead, auditor everywhere
    expect(await form.text()).toContain(`${person.email}) now holds reviewer, lead`);
    expect((await person.client.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual([
      'reviewer',
      'lead'
    ]);

    const removed = await admin.sendJson<{ roles: string[] }>(
      'DELETE',
      `/api/v1/people/${person.id}/roles/reviewer`,
      {}
    );
    expect(removed.roles).toEqual(['lead']);
    const events = await select<{ action: string }>(
      'SELECT action FROM audit_events WHERE subject = ? ORDER BY id',
      [person.email]
    );
    expect(events.map((e) => e.action)).toEqual([
      'account.create',
      'account.role-grant',
      'account.role-grant',
      'account.role-revoke'
    ]);

    const page = await admin.get('/admin');
    expect(page.status).toBe(200);
    expect(await page.text()).toContain(person.email);
  });

  it('names an unknown role in the path', async () => {
    const admin = await signedIn(DEMO.admin);
    const bad = await admin.request('PUT', '/api/v1/people/x/roles/overlord', { json: {} });
    expect(bad.status).toBe(404);
    expect((await apiError(bad)).message).toContain("'overlord' is not a role");
  });
});

describe('API tokens', () => {
  it('creates a token from credentials, stores only its SHA-256, and authenticates with it', async () => {
    const r = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: DEMO_PASSWORD, name: 'nightly checks' }
    });
    expect(r.status).toBe(201);
    const created = (await r.json()) as {
      token: string;
      id: string;
      prefix: string;
      roleCeiling: string | null;
    };
    expect(created.token).toMatch(/^iso_[A-Za-z0-9_-]{43}$/);
    expect(created.prefix).toBe(created.token.slice(0, 12));
    expect(created.roleCeiling).toBeNull();

    const [row] = await select<{ token_hash: string; last_used_at: Date | null }>(
      'SELECT token_hash, last_used_at FROM api_tokens WHERE id = ?',
      [created.id]
    );
    expect(row.token_hash).toBe(sha256(created.token));
    expect(row.last_used_at).toBeNull();

    const bearer = new Client({ token: created.token });
    const me = await bearer.getJson<{ email: string; roles: string[]; via: string; tokenId: string }>(
      '/api/v1/me'
    );
    expect(me).toMatchObject({ email: DEMO.author, roles: ['author'], via: 'token', tokenId: created.id });
    const [used] = await select<{ last_used_at: Date | null }>(
      'SELECT last_used_at FROM api_tokens WHERE id = ?',
      [created.id]
    );
    expect(used.last_used_at).not.toBeNull();
  });

  it('refuses wrong credentials at the token endpoint with 401 in the API shape', async () => {
    const r = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: 'not it', name: 'x' }
    });
    expect(r.status).toBe(401);
    expect((await apiError(r)).code).toBe('invalid-credentials');
  });

  it('never issues a token above its owner: a ceiling the owner does not hold is refused', async () => {
    const r = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: DEMO_PASSWORD, name: 'escalation', role: 'admin' }
    });
    expect(r.status).toBe(403);
    expect((await apiError(r)).message).toContain('does not hold it');
  });

  it('caps a token at its ceiling, and follows the owner when a role is taken away', async () => {
    const owner = await freshAccount('ceiling', ['admin', 'author']);
    const make = async (role: string | null) =>
      (
        await owner.client.sendJson<{ token: string }>(
          'POST',
          '/api/v1/tokens',
          { name: `ceiling ${role}`, role },
          201
        )
      ).token;
    const full = new Client({ token: await make(null) });
    const adminOnly = new Client({ token: await make('admin') });
    const authorOnly = new Client({ token: await make('author') });

    expect((await full.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual(['admin', 'author']);
    expect((await adminOnly.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual(['admin']);
    expect((await authorOnly.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual(['author']);

    expect((await adminOnly.get('/api/v1/people')).status).toBe(200);
    const refused = await authorOnly.get('/api/v1/people');
    expect(refused.status).toBe(403);
    expect((await apiError(refused)).message).toBe('this needs the admin role; this token carries author');

    const admin = await signedIn(DEMO.admin);
    await admin.sendJson('DELETE', `/api/v1/people/${owner.id}/roles/admin`, {});
    expect((await adminOnly.get('/api/v1/people')).status).toBe(403);
    expect((await adminOnly.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual([]);
    expect((await full.getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual(['author']);
  });

  it('does not let a token mint or revoke tokens', async () => {
    const owner = await freshAccount('mint', ['author']);
    const { token, id } = await owner.client.sendJson<{ token: string; id: string }>(
      'POST',
      '/api/v1/tokens',
      { name: 'script' },
      201
    );
    const bearer = new Client({ token });
    const mint = await bearer.request('POST', '/api/v1/tokens', { json: { name: 'child' } });
    expect(mint.status).toBe(403);
    expect((await apiError(mint)).message).toContain('API tokens cannot manage tokens');
    expect((await bearer.request('DELETE', `/api/v1/tokens/${id}`)).status).toBe(403);
  });

  it('refuses a revoked token on the next request', async () => {
    const owner = await freshAccount('revoke', ['author']);
    const { token, id } = await owner.client.sendJson<{ token: string; id: string }>(
      'POST',
      '/api/v1/tokens',
      { name: 'to revoke' },
      201
    );
    const bearer = new Client({ token });
    expect((await bearer.get('/api/v1/me')).status).toBe(200);
    const revoked = await owner.client.sendJson<{ state: string }>(
      'DELETE',
      `/api/v1/tokens/${id}`,
      undefined
    );
    expect(revoked.state).toBe('revoked');
    const r = await bearer.get('/api/v1/me');
    expect(r.status).toBe(401);
    const e = await apiError(r);
    expect(e.code).toBe('token-revoked');
    expect(e.message).toContain("'to revoke'");
    const again = await owner.client.request('DELETE', `/api/v1/tokens/${id}`);
    expect(again.status).toBe(409);
    const events = await select(
      "SELECT id FROM audit_events WHERE action IN ('token.create', 'token.revoke') AND subject = ?",
      [id]
    );
    expect(events).toHaveLength(2);
  });

  it('refuses an expired token', async () => {
    const owner = await freshAccount('expire', ['author']);
    const { token, id, expiresAt } = await owner.client.sendJson<{
      token: string;
      id: string;
      expiresAt: string;
    }>('POST', '/api/v1/tokens', { name: 'short lived', expiresInDays: 1 }, 201);
    expect(new Date(expiresAt).getTime()).toBeGreaterThan(Date.now() + 23 * 3600_000);
    const bearer = new Client({ token });
    expect((await bearer.get('/api/v1/me')).status).toBe(200);
    await execute('UPDATE api_tokens SET expires_at = ? WHERE id = ?', [new Date(Date.now() - 1000), id]);
    const r = await bearer.get('/api/v1/me');
    expect(r.status).toBe(401);
    expect((await apiError(r)).code).toBe('token-expired');
    const list = await owner.client.getJson<{ id: string; state: string }[]>('/api/v1/tokens');
    expect(list.find((t) => t.id === id)?.state).toBe('expired');
  });

  it('answers 401 for an unknown token and for a malformed Authorization header', async () => {
    const unknown = await new Client({ token: 'iso_' + 'x'.repeat(43) }).get('/api/v1/me');
    expect(unknown.status).toBe(401);
    expect((await apiError(unknown)).code).toBe('token-invalid');
    const malformed = await new Client().get('/api/v1/me', { authorization: 'Basic Zm9vOmJhcg==' });
    expect(malformed.status).toBe(401);
    expect((await apiError(malformed)).message).toContain('Bearer');
  });

  it('creates a token on the account page, shows it once, lists it, and revokes it there', async () => {
    const owner = await freshAccount('page', ['author', 'reviewer']);
    const r = await owner.client.postForm('/account?/createToken', {
      name: 'solver pipeline',
      role: 'reviewer',
      expiresInDays: '30'
    });
    expect(r.status).toBe(200);
    const html = await r.text();
    const token =
      /data-testid="new-token"[^>]*value="(iso_[^"]+)"|value="(iso_[^"]+)"[^>]*data-testid="new-token"/.exec(
        html
      );
    expect(token).not.toBeNull();
    const secret = (token![1] ?? token![2])!;
    expect((await new Client({ token: secret }).getJson<{ roles: string[] }>('/api/v1/me')).roles).toEqual([
      'reviewer'
    ]);

    const later = await (await owner.client.get('/account')).text();
    expect(later).not.toContain(secret);
    expect(later).toContain('solver pipeline');
    expect(later).toContain(secret.slice(0, 12));

    const [row] =
      await owner.client.getJson<{ id: string; lastUsedAt: string | null; roleCeiling: string }[]>(
        '/api/v1/tokens'
      );
    expect(row.roleCeiling).toBe('reviewer');
    expect(row.lastUsedAt).not.toBeNull();
    const revoke = await owner.client.postForm('/account?/revokeToken', { id: row.id });
    expect(revoke.status).toBe(200);
    expect((await new Client({ token: secret }).get('/api/v1/me')).status).toBe(401);
  });

  it('names the field when the token form is filled in wrongly, and creates nothing', async () => {
    const owner = await freshAccount('badform', ['author']);
    const r = await owner.client.postForm('/account?/createToken', {
      name: '',
      role: 'author',
      expiresInDays: 'soon'
    });
    expect(r.status).toBe(400);
    const html = await r.text();
    expect(html).toContain('give the token a name');
    expect(html).toContain('the expiry is a whole number of days');
    expect(await owner.client.getJson('/api/v1/tokens')).toEqual([]);
  });
});

describe('the API error shape and request plumbing', () => {
  it('answers unknown API paths with 404 in the documented shape', async () => {
    const r = await new Client().get('/api/v1/no-such-thing');
    expect(r.status).toBe(404);
    expect(await apiError(r)).toEqual({
      code: 'not-found',
      message: 'no API route GET /api/v1/no-such-thing',
      details: null
    });
  });

  it('answers a method the route does not have with 405 in the documented shape, naming the allowed ones', async () => {
    const r = await new Client().get('/api/v1/auth/token');
    expect(r.status).toBe(405);
    const e = await apiError(r);
    expect(e.code).toBe('method-not-allowed');
    expect(e.message).toContain('GET is not allowed on /api/v1/auth/token');
    expect(r.headers.get('allow')).toContain('POST');
  });

  it('answers a malformed body with 400, a non-JSON body with 415, a missing field with 400 naming it', async () => {
    const c = new Client();
    const malformed = await c.request('POST', '/api/v1/auth/token', {
      headers: { 'content-type': 'application/json' },
      form: { a: 'b' }
    });
    expect(malformed.status).toBe(400);
    expect((await apiError(malformed)).code).toBe('malformed-json');

    const wrongType = await c.request('POST', '/api/v1/auth/token', {
      headers: { 'content-type': 'text/plain' },
      json: {}
    });
    expect(wrongType.status).toBe(415);

    const missing = await c.request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: 'x' }
    });
    expect(missing.status).toBe(400);
    const e = await apiError(missing);
    expect(e.code).toBe('invalid-request');
    expect(e.details).toEqual([{ path: 'name', message: 'give the token a name' }]);
  });

  it('answers a body above the 256 KiB limit with 413 in the documented shape', async () => {
    const r = await new Client().request('POST', '/api/v1/auth/token', {
      json: { email: DEMO.author, password: 'x', name: 'y'.repeat(300 * 1024) }
    });
    expect(r.status).toBe(413);
    const e = await apiError(r);
    expect(e.code).toBe('too-large');
    expect(e.message).toContain(`limit of ${256 * 1024} bytes`);
  });

  it('echoes a request id and sends the security headers; pages carry the CSP with frame-ancestors none', async () => {
    const api = await new Client().get('/api/v1/health', { 'x-request-id': 'probe-42' });
    expect(api.headers.get('x-request-id')).toBe('probe-42');
    expect(api.headers.get('x-content-type-options')).toBe('nosniff');
    expect(api.headers.get('referrer-policy')).toBe('same-origin');

    const page = await new Client().get('/sign-in');
    expect(page.headers.get('x-request-id')).toMatch(/^[0-9A-Z]{26}$/);
    const csp = page.headers.get('content-security-policy') ?? '';
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toContain("worker-src 'self' blob:");
    expect(csp).toMatch(/script-src 'self' 'nonce-[^']+'/);
  });

  it('lists the local mail sink’s messages in the admin outbox', async () => {
    const nodemailer = await import('nodemailer');
    const subject = `outbox probe ${Date.now()}`;
    const transport = nodemailer.createTransport(process.env.SMTP_URL!);
    await transport.sendMail({
      from: 'registry@isoledger.invalid',
      to: DEMO.lead,
      subject,
      text: 'probe body'
    });
    const admin = await signedIn(DEMO.admin);
    const outbox =
      await admin.getJson<{ to: string[]; subject: string; text: string; sentAt: string }[]>(
        '/api/v1/outbox'
      );
    const found = outbox.find((m) => m.subject === subject);
    expect(found).toMatchObject({ to: [DEMO.lead], subject, text: expect.stringContaining('probe body') });
    expect(Number.isNaN(Date.parse(found!.sentAt))).toBe(false);
    expect(await (await admin.get('/admin')).text()).toContain(subject);
    const author = await signedIn(DEMO.author);
    expect((await author.get('/api/v1/outbox')).status).toBe(403);
  });
});
