// The account rules that need no database: token role capping, the sign-in return target, the
// token form schema, and who sees which area.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ROLES, type Role } from '../../../src/lib/server/auth/roles';
import { effectiveRoles } from '../../../src/lib/server/auth/tokens';
import { safeNext } from '../../../src/lib/server/auth/guards';
import { newTokenSchema, signUpSchema } from '../../../src/lib/server/auth/schemas';
import { areasFor } from '../../../src/lib/components/shell/nav';

const roleSet = fc.uniqueArray(fc.constantFrom(...ROLES));

describe('token role capping', () => {
  it('never gives a token a role its owner does not hold, whatever the ceiling', () => {
    fc.assert(
      fc.property(roleSet, fc.option(fc.constantFrom(...ROLES), { nil: null }), (owner, ceiling) => {
        const roles = effectiveRoles(owner as Role[], ceiling);
        expect(roles.every((r) => owner.includes(r))).toBe(true);
        if (ceiling === null) expect(roles).toEqual(owner);
        else expect(roles).toEqual(owner.includes(ceiling) ? [ceiling] : []);
      })
    );
  });
});

describe('the sign-in return target', () => {
  it('keeps paths on this site and drops anything that leaves it', () => {
    expect(safeNext('/account?tab=tokens')).toBe('/account?tab=tokens');
    for (const away of [
      '//elsewhere.example/x',
      '/\\elsewhere.example',
      'https://elsewhere.example',
      'account',
      ''
    ]) {
      expect(safeNext(away)).toBe('/');
    }
    expect(safeNext(null, '/start')).toBe('/start');
  });
});

describe('form schemas', () => {
  it('reads the token form: blank role and expiry mean none, numbers in text are days', () => {
    expect(newTokenSchema.parse({ name: ' ci ', role: '', expiresInDays: '' })).toEqual({
      name: 'ci',
      role: null,
      expiresInDays: null
    });
    expect(newTokenSchema.parse({ name: 'ci', role: 'reviewer', expiresInDays: '30' })).toEqual({
      name: 'ci',
      role: 'reviewer',
      expiresInDays: 30
    });
  });

  it('names each wrong field of the token form with its own message', () => {
    const r = newTokenSchema.safeParse({ name: '', role: 'overlord', expiresInDays: '0.5' });
    expect(r.success).toBe(false);
    const byPath = Object.fromEntries(r.error!.issues.map((i) => [i.path.join('.'), i.message]));
    expect(byPath.name).toBe('give the token a name');
    expect(byPath.role).toMatch(/^the role ceiling must be one of admin, author, reviewer, lead, auditor/);
    expect(byPath.expiresInDays).toBe('the expiry is a whole number of days');
  });

  it('normalises the e-mail address and checks the confirmation on sign-up', () => {
    const ok = signUpSchema.parse({
      name: 'A',
      email: ' Ada@Fenwold.Example ',
      password: '0123456789',
      confirm: '0123456789'
    });
    expect(ok.email).toBe('ada@fenwold.example');
    const bad = signUpSchema.safeParse({
      name: 'A',
      email: 'ada',
      password: '0123456789',
      confirm: '012345678'
    });
    expect(bad.error!.issues.map((i) => i.path.join('.')).sort()).toEqual(['confirm', 'email']);
  });
});

describe('navigation by role', () => {
  it('shows the author the shared areas only, and the admin the admin and audit areas too', () => {
    expect(areasFor(['author']).map((a) => a.label)).toEqual(['Catalogue', 'Projects', 'Account']);
    expect(areasFor(['admin']).map((a) => a.label)).toEqual([
      'Catalogue',
      'Projects',
      'Audit',
      'Admin',
      'Account'
    ]);
    expect(areasFor(['reviewer']).map((a) => a.label)).toContain('Review');
    expect(areasFor(null)).toEqual([]);
  });
});
