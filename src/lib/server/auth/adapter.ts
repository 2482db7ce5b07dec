// lucia's storage over our Sequelize connection: the sessions table of migration 0001, joined to the
// person and their roles in one query. A disabled account has no valid sessions.
import type { Adapter, DatabaseSession, DatabaseUser } from 'lucia';
import { QueryTypes } from 'sequelize';
import { getSequelize } from '../db';
import { isRole, ROLES, type Role } from './roles';

interface SessionRow {
  id: string;
  user_id: string;
  expires_at: Date | string;
  email: string;
  name: string;
  roles: string | null;
}

/** A GROUP_CONCAT of roles as a list in the order of ROLES (the order the database's ENUM sorts in). */
export function parseRoles(list: string | null): Role[] {
  return (list ?? '')
    .split(',')
    .filter(isRole)
    .sort((a, b) => ROLES.indexOf(a) - ROLES.indexOf(b));
}

const toSession = (r: { id: string; user_id: string; expires_at: Date | string }): DatabaseSession => ({
  id: r.id,
  userId: r.user_id,
  expiresAt: new Date(r.expires_at),
  attributes: {}
});

export class SequelizeSessionAdapter implements Adapter {
  async getSessionAndUser(sessionId: string): Promise<[DatabaseSession | null, DatabaseUser | null]> {
    const [row] = await getSequelize().query<SessionRow>(
      `SELECT s.id, s.user_id, s.expires_at, u.email, u.name, GROUP_CONCAT(r.role ORDER BY r.role) AS roles
         FROM sessions s
         JOIN users u ON u.id = s.user_id AND u.disabled_at IS NULL
         LEFT JOIN user_roles r ON r.user_id = u.id
        WHERE s.id = ?
        GROUP BY s.id`,
      { type: QueryTypes.SELECT, replacements: [sessionId] }
    );
    if (!row) {
      // a session of a disabled account (or none): lucia deletes what it is told exists without a user
      const [orphan] = await getSequelize().query<SessionRow>(
        'SELECT id, user_id, expires_at FROM sessions WHERE id = ?',
        {
          type: QueryTypes.SELECT,
          replacements: [sessionId]
        }
      );
      return [orphan ? toSession(orphan) : null, null];
    }
    return [
      toSession(row),
      { id: row.user_id, attributes: { email: row.email, name: row.name, roles: parseRoles(row.roles) } }
    ];
  }

  async getUserSessions(userId: string): Promise<DatabaseSession[]> {
    const rows = await getSequelize().query<SessionRow>(
      'SELECT id, user_id, expires_at FROM sessions WHERE user_id = ?',
      {
        type: QueryTypes.SELECT,
        replacements: [userId]
      }
    );
    return rows.map(toSession);
  }

  async setSession(session: DatabaseSession): Promise<void> {
    await getSequelize().query(
      'INSERT INTO sessions (id, user_id, expires_at, created_at) VALUES (?, ?, ?, ?)',
      {
        replacements: [session.id, session.userId, session.expiresAt, new Date()]
      }
    );
  }

  async updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
    await getSequelize().query('UPDATE sessions SET expires_at = ? WHERE id = ?', {
      replacements: [expiresAt, sessionId]
    });
  }

  async deleteSession(sessionId: string): Promise<void> {
    await getSequelize().query('DELETE FROM sessions WHERE id = ?', { replacements: [sessionId] });
  }

  async deleteUserSessions(userId: string): Promise<void> {
    await getSequelize().query('DELETE FROM sessions WHERE user_id = ?', { replacements: [userId] });
  }

  async deleteExpiredSessions(): Promise<void> {
    await getSequelize().query('DELETE FROM sessions WHERE expires_at <= ?', { replacements: [new Date()] });
  }
}
