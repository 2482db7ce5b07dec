// People, roles, sessions, API tokens, shared rate-limit counters and the audit chain.
import type { QueryInterface } from 'sequelize';

const TABLE = 'ENGINE=InnoDB DEFAULT CHARSET=utf8mb4 COLLATE=utf8mb4_unicode_ci';

export async function up(q: QueryInterface): Promise<void> {
  const run = (sql: string) => q.sequelize.query(sql);
  await run(`CREATE TABLE users (
    id CHAR(26) NOT NULL PRIMARY KEY,
    email VARCHAR(254) NOT NULL,
    name VARCHAR(120) NOT NULL,
    password_hash VARCHAR(255) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    disabled_at DATETIME(3) NULL,
    UNIQUE KEY users_email (email)
  ) ${TABLE}`);
  await run(`CREATE TABLE user_roles (
    user_id CHAR(26) NOT NULL,
    role ENUM('admin','author','reviewer','lead','auditor') NOT NULL,
    granted_at DATETIME(3) NOT NULL,
    PRIMARY KEY (user_id, role),
    CONSTRAINT user_roles_user FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
  ) ${TABLE}`);
  await run(`CREATE TABLE sessions (
    id VARCHAR(64) NOT NULL PRIMARY KEY,
    user_id CHAR(26) NOT NULL,
    expires_at DATETIME(3) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    KEY sessions_user (user_id),
    CONSTRAINT sessions_user FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
  ) ${TABLE}`);
  await run(`CREATE TABLE api_tokens (
    id CHAR(26) NOT NULL PRIMARY KEY,
    user_id CHAR(26) NOT NULL,
    name VARCHAR(120) NOT NULL,
    token_hash CHAR(64) NOT NULL,
    prefix VARCHAR(16) NOT NULL,
    role_ceiling ENUM('admin','author','reviewer','lead','auditor') NULL,
    created_at DATETIME(3) NOT NULL,
    expires_at DATETIME(3) NULL,
    last_used_at DATETIME(3) NULL,
    revoked_at DATETIME(3) NULL,
    UNIQUE KEY api_tokens_hash (token_hash),
    KEY api_tokens_user (user_id),
    CONSTRAINT api_tokens_user FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
  ) ${TABLE}`);
  await run(`CREATE TABLE rate_limits (
    bucket VARCHAR(200) NOT NULL,
    window_start DATETIME(3) NOT NULL,
    hits INT UNSIGNED NOT NULL,
    PRIMARY KEY (bucket, window_start),
    KEY rate_limits_window (window_start)
  ) ${TABLE}`);
  await run(`CREATE TABLE audit_events (
    id BIGINT UNSIGNED NOT NULL PRIMARY KEY,
    at DATETIME(3) NOT NULL,
    actor_id CHAR(26) NULL,
    actor_label VARCHAR(254) NOT NULL,
    action VARCHAR(64) NOT NULL,
    subject_type VARCHAR(32) NOT NULL,
    subject VARCHAR(200) NOT NULL,
    before_summary JSON NULL,
    after_summary JSON NULL,
    prev_hash CHAR(64) NOT NULL,
    hash CHAR(64) NOT NULL,
    KEY audit_subject (subject_type, subject),
    KEY audit_actor (actor_id),
    KEY audit_action (action),
    KEY audit_at (at)
  ) ${TABLE}`);
  // One row that every append locks: the chain is extended strictly one event at a time.
  await run(`CREATE TABLE audit_head (
    id TINYINT UNSIGNED NOT NULL PRIMARY KEY,
    last_id BIGINT UNSIGNED NOT NULL,
    last_hash CHAR(64) NOT NULL
  ) ${TABLE}`);
  await run(`INSERT INTO audit_head (id, last_id, last_hash) VALUES (1, 0, REPEAT('0', 64))`);
}

export async function down(q: QueryInterface): Promise<void> {
  for (const t of [
    'audit_head',
    'audit_events',
    'rate_limits',
    'api_tokens',
    'sessions',
    'user_roles',
    'users'
  ]) {
    await q.sequelize.query(`DROP TABLE IF EXISTS ${t}`);
  }
}
