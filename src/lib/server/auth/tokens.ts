// API tokens for scripts and solver pipelines. The token is shown once ('iso_' + 32 random bytes,
// base64url); only its SHA-256 is stored.
//
// Role ceiling: null means "all of the owner's roles"; a role means "only that role". Either way the
// token acts with the owner's roles *at the time of each request*, filtered by the ceiling, so a
// token never exceeds its owner: a role taken from the owner is gone from every token at once.
// Revocation and expiry take effect on the next request.
import { createHash, randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { newId } from '../ids';
import { getSequelize, inTransaction } from '../db';
import { appendAudit } from '../registry/audit';
import { ApiError } from '../api/errors';
import { parseRoles } from './adapter';
import type { Role } from './roles';
import { rolesOf } from './users';
import type { SessionUser } from './types';

export const TOKEN_PREFIX = 'iso_';
/** characters of the token kept in clear to tell tokens apart in lists ('iso_' + 8) */
const SHOWN = 12;
/** last_used_at is written at most this often per token, so busy pipelines do not write on every call */
const LAST_USED_RESOLUTION_MS = 60_000;

export interface TokenInfo {
  id: string;
  name: string;
  prefix: string;
  roleCeiling: Role | null;
  createdAt: string;
  expiresAt: string | null;
  lastUsedAt: string | null;
  revokedAt: string | null;
  state: 'active' | 'expired' | 'revoked';
}

export interface NewToken {
  name: string;
  roleCeiling: Role | null;
  expiresAt: Date | null;
}

export function tokenHash(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/** The roles a token acts with: the owner's current roles, filtered to the ceiling. */
export function effectiveRoles(ownerRoles: Role[], ceiling: Role | null): Role[] {
  return ceiling === null ? [...ownerRoles] : ownerRoles.filter((r) => r === ceiling);
}

interface TokenRow {
  id: string;
  user_id: string;
  name: string;
  prefix: string;
  role_ceiling: Role | null;
  created_at: Date;
  expires_at: Date | null;
  last_used_at: Date | null;
  revoked_at: Date | null;
}

const iso = (d: Date | string | null) => (d ? new Date(d).toISOString() : null);

function toInfo(r: TokenRow, now = Date.now()): TokenInfo {
  const state = r.revoked_at
    ? 'revoked'
    : r.expires_at && new Date(r.expires_at).getTime() <= now
      ? 'expired'
      : 'active';
  return {
    id: r.id,
    name: r.name,
    prefix: r.prefix,
    roleCeiling: r.role_ceiling,
    createdAt: iso(r.created_at)!,
    expiresAt: iso(r.expires_at),
    lastUsedAt: iso(r.last_used_at),
    revokedAt: iso(r.revoked_at),
    state
  };
}

/** Creates a token for `owner`; a ceiling must be one of the roles the account holds now. */
export async function createToken(
  owner: { id: string; email: string },
  input: NewToken
): Promise<{ token: string; info: TokenInfo }> {
  const held = await rolesOf(owner.id);
  if (input.roleCeiling && !held.includes(input.roleCeiling)) {
    throw new ApiError(
      403,
      'forbidden',
      `a token cannot carry the ${input.roleCeiling} role: ${owner.email} does not hold it (holds ${held.join(', ') || 'no roles'})`,
      { field: 'role' }
    );
  }
  if (input.expiresAt && input.expiresAt.getTime() <= Date.now()) {
    throw new ApiError(400, 'invalid-request', 'the expiry must lie in the future', {
      field: 'expiresInDays'
    });
  }
  const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
  const id = newId();
  const now = new Date();
  const row: TokenRow = {
    id,
    user_id: owner.id,
    name: input.name,
    prefix: token.slice(0, SHOWN),
    role_ceiling: input.roleCeiling,
    created_at: now,
    expires_at: input.expiresAt,
    last_used_at: null,
    revoked_at: null
  };
  await inTransaction(async (t) => {
    await getSequelize().query(
      `INSERT INTO api_tokens (id, user_id, name, token_hash, prefix, role_ceiling, created_at, expires_at)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?)`,
      {
        replacements: [
          id,
          owner.id,
          row.name,
          tokenHash(token),
          row.prefix,
          row.role_ceiling,
          now,
          row.expires_at
        ],
        transaction: t
      }
    );
    await appendAudit(t, {
      actor: { id: owner.id, label: owner.email },
      action: 'token.create',
      subjectType: 'token',
      subject: id,
      after: {
        name: row.name,
        prefix: row.prefix,
        roleCeiling: row.role_ceiling,
        expiresAt: iso(row.expires_at)
      }
    });
  });
  return { token, info: toInfo(row) };
}

export async function listTokens(userId: string): Promise<TokenInfo[]> {
  const rows = await getSequelize().query<TokenRow>(
    'SELECT id, user_id, name, prefix, role_ceiling, created_at, expires_at, last_used_at, revoked_at FROM api_tokens WHERE user_id = ? ORDER BY created_at DESC, id DESC',
    { type: QueryTypes.SELECT, replacements: [userId] }
  );
  const now = Date.now();
  return rows.map((r) => toInfo(r, now));
}

/** Revokes one of the owner's tokens; 404 for a token that is not theirs, 409 when already revoked. */
export async function revokeToken(owner: { id: string; email: string }, tokenId: string): Promise<TokenInfo> {
  return inTransaction(async (t) => {
    const [row] = await getSequelize().query<TokenRow>(
      'SELECT * FROM api_tokens WHERE id = ? AND user_id = ? FOR UPDATE',
      {
        type: QueryTypes.SELECT,
        replacements: [tokenId, owner.id],
        transaction: t
      }
    );
    if (!row) throw new ApiError(404, 'not-found', `you have no API token with id ${tokenId}`);
    if (row.revoked_at) throw new ApiError(409, 'conflict', `the token '${row.name}' is already revoked`);
    const now = new Date();
    await getSequelize().query('UPDATE api_tokens SET revoked_at = ? WHERE id = ?', {
      replacements: [now, tokenId],
      transaction: t
    });
    await appendAudit(t, {
      actor: { id: owner.id, label: owner.email },
      action: 'token.revoke',
      subjectType: 'token',
      subject: tokenId,
      before: { name: row.name, prefix: row.prefix }
    });
    return toInfo({ ...row, revoked_at: now });
  });
}

export type TokenCheck =
  { ok: true; user: SessionUser } | { ok: false; reason: 'unknown' | 'expired' | 'revoked'; message: string };

/** The person behind a bearer token, with roles capped by its ceiling; records the time of use. */
export async function authenticateToken(token: string): Promise<TokenCheck> {
  if (!token.startsWith(TOKEN_PREFIX) || token.length > 128) {
    return {
      ok: false,
      reason: 'unknown',
      message: `not an Isoledger API token (they begin with '${TOKEN_PREFIX}')`
    };
  }
  const [row] = await getSequelize().query<
    TokenRow & { email: string; person: string; disabled_at: Date | null; roles: string | null }
  >(
    `SELECT t.*, u.email, u.name AS person, u.disabled_at, GROUP_CONCAT(r.role ORDER BY r.role) AS roles
       FROM api_tokens t
       JOIN users u ON u.id = t.user_id
       LEFT JOIN user_roles r ON r.user_id = u.id
      WHERE t.token_hash = ?
      GROUP BY t.id`,
    { type: QueryTypes.SELECT, replacements: [tokenHash(token)] }
  );
  if (!row) return { ok: false, reason: 'unknown', message: 'unknown API token' };
  if (row.revoked_at) {
    return {
      ok: false,
      reason: 'revoked',
      message: `the API token '${row.name}' (${row.prefix}…) was revoked`
    };
  }
  if (row.disabled_at) {
    return {
      ok: false,
      reason: 'revoked',
      message: `the account owning the API token '${row.name}' is disabled`
    };
  }
  const now = Date.now();
  if (row.expires_at && new Date(row.expires_at).getTime() <= now) {
    return {
      ok: false,
      reason: 'expired',
      message: `the API token '${row.name}' (${row.prefix}…) expired at ${iso(row.expires_at)}`
    };
  }
  if (!row.last_used_at || now - new Date(row.last_used_at).getTime() >= LAST_USED_RESOLUTION_MS) {
    await getSequelize().query('UPDATE api_tokens SET last_used_at = ? WHERE id = ?', {
      replacements: [new Date(now), row.id]
    });
  }
  return {
    ok: true,
    user: {
      id: row.user_id,
      email: row.email,
      name: row.person,
      roles: effectiveRoles(parseRoles(row.roles), row.role_ceiling),
      tokenId: row.id
    }
  };
}
