// The admin's view of people and their roles.
import { QueryTypes } from 'sequelize';
import { getSequelize } from '../db';
import { ApiError } from '../api/errors';
import { parseRoles } from './adapter';
import type { Role } from './roles';
import { AccountError, setRole } from './users';
import type { SessionUser } from './types';

export interface Person {
  id: string;
  email: string;
  name: string;
  roles: Role[];
  createdAt: string;
  disabledAt: string | null;
}

export async function listPeople(): Promise<Person[]> {
  const rows = await getSequelize().query<{
    id: string;
    email: string;
    name: string;
    created_at: Date;
    disabled_at: Date | null;
    roles: string | null;
  }>(
    `SELECT u.id, u.email, u.name, u.created_at, u.disabled_at, GROUP_CONCAT(r.role ORDER BY r.role) AS roles
       FROM users u LEFT JOIN user_roles r ON r.user_id = u.id
      GROUP BY u.id ORDER BY u.name, u.email`,
    { type: QueryTypes.SELECT }
  );
  return rows.map((r) => ({
    id: r.id,
    email: r.email,
    name: r.name,
    roles: parseRoles(r.roles),
    createdAt: new Date(r.created_at).toISOString(),
    disabledAt: r.disabled_at ? new Date(r.disabled_at).toISOString() : null
  }));
}

/** Grants or removes a role and returns the person's roles after it. The last admin cannot lose the admin role: nobody could grant it back. */
export async function changeRole(
  actor: SessionUser,
  userId: string,
  role: Role,
  granted: boolean
): Promise<{ id: string; email: string; name: string; roles: Role[] }> {
  if (!granted && role === 'admin') {
    const [row] = await getSequelize().query<{ n: number | bigint }>(
      `SELECT COUNT(*) AS n FROM user_roles r JOIN users u ON u.id = r.user_id
        WHERE r.role = 'admin' AND u.disabled_at IS NULL AND r.user_id <> ?`,
      { type: QueryTypes.SELECT, replacements: [userId] }
    );
    if (Number(row.n) === 0) {
      throw new ApiError(
        409,
        'conflict',
        'this is the last admin: grant admin to someone else before removing it here'
      );
    }
  }
  try {
    const roles = await setRole(userId, role, granted, { id: actor.id, label: actor.email });
    const [person] = await getSequelize().query<{ email: string; name: string }>(
      'SELECT email, name FROM users WHERE id = ?',
      { type: QueryTypes.SELECT, replacements: [userId] }
    );
    return { id: userId, email: person.email, name: person.name, roles };
  } catch (e) {
    if (e instanceof AccountError && e.code === 'not-found') throw new ApiError(404, 'not-found', e.message);
    throw e;
  }
}
