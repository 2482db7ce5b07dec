// The registry: formulations, their versions (draft → in-review → released → withdrawn), the people
// who wrote each version, reviews, projects with their pins, and attachments kept in S3.
import type { QueryInterface } from 'sequelize';

const TABLE = 'ENGINE=InnoDB DEFAULT CHARSET=utf8mb4 COLLATE=utf8mb4_unicode_ci';

export async function up(q: QueryInterface): Promise<void> {
  const run = (sql: string) => q.sequelize.query(sql);
  await run(`CREATE TABLE formulations (
    id CHAR(26) NOT NULL PRIMARY KEY,
    name VARCHAR(64) NOT NULL,
    title VARCHAR(120) NOT NULL,
    owner_id CHAR(26) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    UNIQUE KEY formulations_name (name),
    CONSTRAINT formulations_owner FOREIGN KEY (owner_id) REFERENCES users (id)
  ) ${TABLE}`);
  await run(`CREATE TABLE formulation_versions (
    id CHAR(26) NOT NULL PRIMARY KEY,
    formulation_id CHAR(26) NOT NULL,
    version VARCHAR(64) NOT NULL,
    status ENUM('draft','in-review','released','withdrawn') NOT NULL,
    source MEDIUMTEXT NOT NULL,
    definition LONGTEXT NOT NULL,
    source_hash CHAR(71) NOT NULL,
    definition_hash CHAR(71) NOT NULL,
    cell VARCHAR(16) NOT NULL,
    author_id CHAR(26) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    updated_at DATETIME(3) NOT NULL,
    submitted_at DATETIME(3) NULL,
    record_id CHAR(26) NULL,
    released_at DATETIME(3) NULL,
    released_by CHAR(26) NULL,
    withdrawn_at DATETIME(3) NULL,
    withdrawn_by CHAR(26) NULL,
    withdrawn_reason TEXT NULL,
    UNIQUE KEY versions_formulation_version (formulation_id, version),
    KEY versions_status (status),
    KEY versions_definition (definition_hash),
    CONSTRAINT versions_formulation FOREIGN KEY (formulation_id) REFERENCES formulations (id),
    CONSTRAINT versions_author FOREIGN KEY (author_id) REFERENCES users (id)
  ) ${TABLE}`);
  // Everyone who wrote any part of a version: none of them may approve it.
  await run(`CREATE TABLE version_authors (
    version_id CHAR(26) NOT NULL,
    user_id CHAR(26) NOT NULL,
    first_at DATETIME(3) NOT NULL,
    PRIMARY KEY (version_id, user_id),
    CONSTRAINT version_authors_version FOREIGN KEY (version_id) REFERENCES formulation_versions (id),
    CONSTRAINT version_authors_user FOREIGN KEY (user_id) REFERENCES users (id)
  ) ${TABLE}`);
  await run(`CREATE TABLE reviews (
    id CHAR(26) NOT NULL PRIMARY KEY,
    version_id CHAR(26) NOT NULL,
    reviewer_id CHAR(26) NOT NULL,
    decision ENUM('approve','reject') NOT NULL,
    comment TEXT NOT NULL,
    record_id CHAR(26) NULL,
    created_at DATETIME(3) NOT NULL,
    KEY reviews_version (version_id),
    CONSTRAINT reviews_version FOREIGN KEY (version_id) REFERENCES formulation_versions (id),
    CONSTRAINT reviews_reviewer FOREIGN KEY (reviewer_id) REFERENCES users (id)
  ) ${TABLE}`);
  await run(`CREATE TABLE projects (
    id CHAR(26) NOT NULL PRIMARY KEY,
    \`key\` VARCHAR(32) NOT NULL,
    title VARCHAR(120) NOT NULL,
    lead_id CHAR(26) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    UNIQUE KEY projects_key (\`key\`),
    CONSTRAINT projects_lead FOREIGN KEY (lead_id) REFERENCES users (id)
  ) ${TABLE}`);
  // At most one version of each formulation per project (the primary key).
  await run(`CREATE TABLE project_pins (
    project_id CHAR(26) NOT NULL,
    formulation_id CHAR(26) NOT NULL,
    version_id CHAR(26) NOT NULL,
    pinned_by CHAR(26) NOT NULL,
    pinned_at DATETIME(3) NOT NULL,
    PRIMARY KEY (project_id, formulation_id),
    KEY pins_version (version_id),
    CONSTRAINT pins_project FOREIGN KEY (project_id) REFERENCES projects (id),
    CONSTRAINT pins_formulation FOREIGN KEY (formulation_id) REFERENCES formulations (id),
    CONSTRAINT pins_version FOREIGN KEY (version_id) REFERENCES formulation_versions (id),
    CONSTRAINT pins_user FOREIGN KEY (pinned_by) REFERENCES users (id)
  ) ${TABLE}`);
  await run(`CREATE TABLE attachments (
    id CHAR(26) NOT NULL PRIMARY KEY,
    version_id CHAR(26) NOT NULL,
    filename VARCHAR(200) NOT NULL,
    kind ENUM('pdf','csv','json') NOT NULL,
    media_type VARCHAR(64) NOT NULL,
    size_bytes INT UNSIGNED NOT NULL,
    sha256 CHAR(64) NOT NULL,
    storage_key VARCHAR(200) NOT NULL,
    uploaded_by CHAR(26) NOT NULL,
    created_at DATETIME(3) NOT NULL,
    UNIQUE KEY attachments_version_name (version_id, filename),
    CONSTRAINT attachments_version FOREIGN KEY (version_id) REFERENCES formulation_versions (id),
    CONSTRAINT attachments_user FOREIGN KEY (uploaded_by) REFERENCES users (id)
  ) ${TABLE}`);
}

export async function down(q: QueryInterface): Promise<void> {
  for (const t of [
    'attachments',
    'project_pins',
    'projects',
    'reviews',
    'version_authors',
    'formulation_versions',
    'formulations'
  ]) {
    await q.sequelize.query(`DROP TABLE IF EXISTS ${t}`);
  }
}
