// The account rules, written once: the forms show these messages and the API returns them.
import { z } from 'zod';
import { MIN_PASSWORD_LENGTH } from './password';
import { ROLES } from './roles';

export const emailField = z
  .string({ error: 'enter your e-mail address' })
  .trim()
  .toLowerCase()
  .min(1, 'enter your e-mail address')
  .max(254, 'an e-mail address has at most 254 characters')
  .pipe(z.email({ error: 'this is not an e-mail address' }));

export const newPasswordField = z
  .string({ error: 'enter a password' })
  .min(MIN_PASSWORD_LENGTH, `a password needs at least ${MIN_PASSWORD_LENGTH} characters`)
  .max(1024, 'a password has at most 1024 characters');

const passwordField = z
  .string({ error: 'enter your password' })
  .min(1, 'enter your password')
  .max(1024, 'a password has at most 1024 characters');

export const signInSchema = z.object({ email: emailField, password: passwordField });

export const signUpSchema = z
  .object({
    name: z
      .string({ error: 'enter your name' })
      .trim()
      .min(1, 'enter your name')
      .max(120, 'a name has at most 120 characters'),
    email: emailField,
    password: newPasswordField,
    confirm: z.string().optional()
  })
  .refine((v) => v.confirm === undefined || v.confirm === v.password, {
    path: ['confirm'],
    error: 'the two passwords differ'
  });

export const changePasswordSchema = z
  .object({
    current: passwordField,
    password: newPasswordField,
    confirm: z.string({ error: 'repeat the new password' })
  })
  .refine((v) => v.confirm === v.password, { path: ['confirm'], error: 'the two new passwords differ' })
  .refine((v) => v.password !== v.current, {
    path: ['password'],
    error: 'the new password is the same as the current one'
  });

/** longest expiry a token may be given, in days */
export const MAX_TOKEN_DAYS = 366;

const blankToNull = (v: unknown) => (v === '' || v === undefined || v === null ? null : v);

export const newTokenSchema = z.object({
  name: z
    .string({ error: 'give the token a name' })
    .trim()
    .min(1, 'give the token a name')
    .max(120, 'a token name has at most 120 characters'),
  role: z.preprocess(
    blankToNull,
    z
      .enum(ROLES, {
        error: `the role ceiling must be one of ${ROLES.join(', ')} (or empty for all of your roles)`
      })
      .nullable()
  ),
  expiresInDays: z.preprocess(
    (v) => {
      const b = blankToNull(v);
      return typeof b === 'string' ? Number(b) : b;
    },
    z
      .number({ error: 'the expiry is a whole number of days' })
      .int('the expiry is a whole number of days')
      .min(1, 'the expiry is at least 1 day')
      .max(MAX_TOKEN_DAYS, `the expiry is at most ${MAX_TOKEN_DAYS} days`)
      .nullable()
  )
});

/** POST /api/v1/auth/token: credentials plus the token's name, optional role ceiling and expiry. */
export const credentialTokenSchema = newTokenSchema.extend({ email: emailField, password: passwordField });

/** Field → first message, for showing beside each form field. */
export function fieldMessages(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.map(String).join('.') || 'form';
    out[key] ??= issue.message;
  }
  return out;
}

export function expiryFromDays(days: number | null): Date | null {
  return days === null ? null : new Date(Date.now() + days * 86_400_000);
}
