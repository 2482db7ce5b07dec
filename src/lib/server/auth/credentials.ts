// Sign-up, sign-in and password change: the rules shared by the forms and the token endpoint.
import { QueryTypes } from 'sequelize';
import { config } from '../config';
import { getSequelize, inTransaction } from '../db';
import { appendAudit } from '../registry/audit';
import { ApiError, tooManyRequests } from '../api/errors';
import { hashPassword, verifyPassword } from './password';
import { hit, refund } from './rate-limit';
import { AccountError, createUser, findUserByEmail, normaliseEmail, type UserRecord } from './users';
import { invalidateUserSessions } from './sessions';
import type { SessionUser } from './types';

/** Failed sign-ins allowed per account and per client address in one window (common practice, no source). */
export const SIGN_IN_LIMITS = {
  windowSeconds: 15 * 60,
  perAccount: 5,
  perAddress: 20
} as const;

const WRONG = 'the e-mail address or the password is wrong';

function minutes(seconds: number): string {
  const m = Math.ceil(seconds / 60);
  return m === 1 ? '1 minute' : `${m} minutes`;
}

// verifying against a real hash when the account does not exist keeps both answers equally slow
let dummyHash: Promise<string> | null = null;
const dummy = () => (dummyHash ??= hashPassword('not-a-password-of-anyone'));

/**
 * Checks e-mail and password. Every attempt counts against the account's and the address's buckets;
 * a successful one is taken back, so only failures lock anyone out.
 */
export async function authenticate(input: {
  email: string;
  password: string;
  address: string;
}): Promise<UserRecord> {
  const email = normaliseEmail(input.email);
  const { windowSeconds, perAccount, perAddress } = SIGN_IN_LIMITS;
  const accountBucket = `sign-in:account:${email}`.slice(0, 200);
  const addressBucket = `sign-in:address:${input.address}`.slice(0, 200);
  const byAddress = await hit(addressBucket, perAddress, windowSeconds);
  if (!byAddress.allowed) {
    throw tooManyRequests(
      `too many failed sign-in attempts from your network address; try again in ${minutes(byAddress.retryAfterSeconds)}`,
      byAddress.retryAfterSeconds
    );
  }
  const byAccount = await hit(accountBucket, perAccount, windowSeconds);
  if (!byAccount.allowed) {
    throw tooManyRequests(
      `too many failed sign-in attempts for ${email}; try again in ${minutes(byAccount.retryAfterSeconds)}`,
      byAccount.retryAfterSeconds
    );
  }
  const user = await findUserByEmail(email);
  const ok = user
    ? await verifyPassword(user.passwordHash, input.password)
    : await verifyPassword(await dummy(), input.password);
  if (!user || !ok || user.disabledAt)
    throw new ApiError(401, 'invalid-credentials', WRONG, { field: 'password' });
  await refund(addressBucket, windowSeconds);
  await refund(accountBucket, windowSeconds);
  const { passwordHash: _omit, ...record } = user;
  return record;
}

/** A new account with no roles, except that the first account on an empty production database is admin. */
export async function signUp(input: { name: string; email: string; password: string }): Promise<UserRecord> {
  try {
    return await createUser(input, null, { firstBecomesAdmin: config().production });
  } catch (e) {
    if (e instanceof AccountError) {
      throw new ApiError(
        e.code === 'conflict' ? 409 : 400,
        e.code === 'conflict' ? 'conflict' : 'invalid-request',
        e.message,
        {
          field: e.field ?? null
        }
      );
    }
    throw e;
  }
}

/** Replaces the password after checking the current one; every other session of the person ends. */
export async function changePassword(
  user: SessionUser,
  input: { current: string; next: string; address: string },
  keepSessionId: string | null
): Promise<void> {
  try {
    await authenticate({ email: user.email, password: input.current, address: input.address });
  } catch (e) {
    if (e instanceof ApiError && e.code === 'invalid-credentials') {
      throw new ApiError(400, 'invalid-request', 'the current password is wrong', { field: 'current' });
    }
    throw e;
  }
  const hash = await hashPassword(input.next);
  await inTransaction(async (t) => {
    await getSequelize().query('UPDATE users SET password_hash = ? WHERE id = ?', {
      replacements: [hash, user.id],
      transaction: t,
      type: QueryTypes.UPDATE
    });
    await appendAudit(t, {
      actor: { id: user.id, label: user.email },
      action: 'account.password-change',
      subjectType: 'user',
      subject: user.email
    });
  });
  await invalidateUserSessions(user.id, keepSessionId ?? undefined);
}
