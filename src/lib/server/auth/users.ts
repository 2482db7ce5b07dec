// People and their roles. Every change is written with its audit event in one transaction.
import { newId } from '../ids';
import { QueryTypes, type Transaction } from 'sequelize';
import { getSequelize, inTransaction } from '../db';
import { appendAudit, type AuditActor } from '../registry/audit';
import { hashPassword, MIN_PASSWORD_LENGTH } from './password';
import { isRole, type Role } from './roles';

export interface UserRecord {
  id: string;
  email: string;
  name: string;
  roles: Role[];
  createdAt: string;
  disabledAt: string | null;
}

export class AccountError extends Error {
  constructor(
    public code: 'invalid' | 'conflict' | 'not-found',
    message: string,
    public field?: string
  ) {
    super(message);
  }
}

const EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

export async function rolesOf(userId: string, t?: Transaction): Promise<Role[]> {
  const rows = await getSequelize().query<{ role: string }>(
    'SELECT role FROM user_roles WHERE user_id = ? ORDER BY role',
    {
      type: QueryTypes.SELECT,
      replacements: [userId],
      transaction: t
    }
  );
  return rows.map((r) => r.role).filter(isRole);
}

export async function countUsers(t?: Transaction): Promise<number> {
  const [row] = await getSequelize().query<{ n: number | bigint }>('SELECT COUNT(*) AS n FROM users', {
    type: QueryTypes.SELECT,
    transaction: t
  });
  return Number(row.n);
}

export async function findUserByEmail(
  email: string
): Promise<(UserRecord & { passwordHash: string }) | null> {
  const [row] = await getSequelize().query<{
    id: string;
    email: string;
    name: string;
    password_hash: string;
    created_at: Date;
    disabled_at: Date | null;
  }>('SELECT * FROM users WHERE email = ?', {
    type: QueryTypes.SELECT,
    replacements: [normaliseEmail(email)]
  });
  if (!row) return null;
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    passwordHash: row.password_hash,
    roles: await rolesOf(row.id),
    createdAt: new Date(row.created_at).toISOString(),
    disabledAt: row.disabled_at ? new Date(row.disabled_at).toISOString() : null
  };
}

export interface NewUser {
  email: string;
  name: string;
  password: string;
  roles?: Role[];
}

/**
 * Creates a person. On an empty database outside demo mode the first account becomes admin.
 * `actor` is who did it (null for self sign-up).
 */
export async function createUser(
  input: NewUser,
  actor: AuditActor | null,
  opts: { firstBecomesAdmin?: boolean } = {}
): Promise<UserRecord> {
  const email = normaliseEmail(input.email);
  const name = input.name.trim();
  if (!EMAIL.test(email))
    throw new AccountError('invalid', `'${input.email}' is not an e-mail address`, 'email');
  if (name.length < 1 || name.length > 120)
    throw new AccountError('invalid', 'name must be 1 to 120 characters', 'name');
  if (input.password.length < MIN_PASSWORD_LENGTH) {
    throw new AccountError(
      'invalid',
      `password must be at least ${MIN_PASSWORD_LENGTH} characters`,
      'password'
    );
  }
  const passwordHash = await hashPassword(input.password);
  return inTransaction(async (t) => {
    const [existing] = await getSequelize().query('SELECT id FROM users WHERE email = ? FOR UPDATE', {
      type: QueryTypes.SELECT,
      replacements: [email],
      transaction: t
    });
    if (existing) throw new AccountError('conflict', `an account for ${email} already exists`, 'email');
    const roles = new Set<Role>(input.roles ?? []);
    if (opts.firstBecomesAdmin && (await countUsers(t)) === 0) roles.add('admin');
    const id = newId();
    const now = new Date();
    await getSequelize().query(
      'INSERT INTO users (id, email, name, password_hash, created_at) VALUES (?, ?, ?, ?, ?)',
      {
        replacements: [id, email, name, passwordHash, now],
        transaction: t
      }
    );
    for (const role of roles) {
      await getSequelize().query('INSERT INTO user_roles (user_id, role, granted_at) VALUES (?, ?, ?)', {
        replacements: [id, role, now],
        transaction: t
      });
    }
    const sorted = [...roles].sort();
    await appendAudit(t, {
      actor: actor ?? { id, label: email },
      action: 'account.create',
      subjectType: 'user',
      subject: email,
      after: { email, name, roles: sorted }
    });
    return { id, email, name, roles: sorted, createdAt: now.toISOString(), disabledAt: null };
  });
}

/** Grants or removes one role, with its audit event. */
export async function setRole(
  userId: string,
  role: Role,
  granted: boolean,
  actor: AuditActor
): Promise<Role[]> {
  return inTransaction(async (t) => {
    const [user] = await getSequelize().query<{ email: string }>(
      'SELECT email FROM users WHERE id = ? FOR UPDATE',
      {
        type: QueryTypes.SELECT,
        replacements: [userId],
        transaction: t
      }
    );
    if (!user) throw new AccountError('not-found', `no account with id ${userId}`);
    const before = await rolesOf(userId, t);
    if (granted) {
      await getSequelize().query(
        'INSERT IGNORE INTO user_roles (user_id, role, granted_at) VALUES (?, ?, ?)',
        {
          replacements: [userId, role, new Date()],
          transaction: t
        }
      );
    } else {
      await getSequelize().query('DELETE FROM user_roles WHERE user_id = ? AND role = ?', {
        replacements: [userId, role],
        transaction: t
      });
    }
    const after = await rolesOf(userId, t);
    if (before.join() !== after.join()) {
      await appendAudit(t, {
        actor,
        action: granted ? 'account.role-grant' : 'account.role-revoke',
        subjectType: 'user',
        subject: user.email,
        before: { roles: before },
        after: { roles: after }
      });
    }
    return after;
  });
}
