// The verification queue and its immutable records. A run is claimed by one worker at a time
// (SELECT … FOR UPDATE SKIP LOCKED); a record is written once per completed run (unique run_id).
import type { QueryInterface } from 'sequelize';

const TABLE = 'ENGINE=InnoDB DEFAULT CHARSET=utf8mb4 COLLATE=utf8mb4_unicode_ci';

export async function up(q: QueryInterface): Promise<void> {
  const run = (sql: string) => q.sequelize.query(sql);
  await run(`CREATE TABLE verification_runs (
    id CHAR(26) NOT NULL PRIMARY KEY,
    version_id CHAR(26) NULL,
    definition_hash CHAR(71) NOT NULL,
    source MEDIUMTEXT NOT NULL,
    status ENUM('queued','running','done','failed') NOT NULL,
    progress DOUBLE NOT NULL DEFAULT 0,
    stage VARCHAR(64) NULL,
    attempts INT UNSIGNED NOT NULL DEFAULT 0,
    max_attempts INT UNSIGNED NOT NULL DEFAULT 3,
    claimed_by VARCHAR(120) NULL,
    heartbeat_at DATETIME(3) NULL,
    error TEXT NULL,
    record_id CHAR(26) NULL,
    requested_by CHAR(26) NULL,
    created_at DATETIME(3) NOT NULL,
    started_at DATETIME(3) NULL,
    finished_at DATETIME(3) NULL,
    KEY runs_queue (status, created_at),
    KEY runs_version (version_id),
    KEY runs_definition (definition_hash)
  ) ${TABLE}`);
  await run(`CREATE TABLE verification_records (
    id CHAR(26) NOT NULL PRIMARY KEY,
    run_id CHAR(26) NOT NULL,
    definition_hash CHAR(71) NOT NULL,
    engine_version VARCHAR(32) NOT NULL,
    verdict ENUM('pass','fail','incomplete') NOT NULL,
    record LONGTEXT NOT NULL,
    record_hash CHAR(71) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    UNIQUE KEY records_run (run_id),
    KEY records_definition (definition_hash, engine_version)
  ) ${TABLE}`);
}

export async function down(q: QueryInterface): Promise<void> {
  await q.sequelize.query('DROP TABLE IF EXISTS verification_records');
  await q.sequelize.query('DROP TABLE IF EXISTS verification_runs');
}
