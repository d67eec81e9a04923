/**
 * Versioned schema migrations.
 *
 * `schema_version` holds one row per applied migration (version, description, applied_at); the
 * archive's version is the highest row. Each migration runs in its own BEGIN IMMEDIATE transaction
 * together with the row that records it, so a crash leaves either the old or the new version, and two
 * processes opening a fresh archive at once do not both migrate (the second re-reads the version
 * inside its transaction and skips). An archive whose version is newer than this build knows is
 * refused before anything is written (ARCHIVE_TOO_NEW).
 *
 * Rules for adding a migration: append to MIGRATIONS with the next number; never edit or reorder a
 * released one; tables stay append-only (new columns that enter the record hash need a new
 * record_format, see sheets.ts). A migration holds its own SQL and its own lists of tables and
 * columns, frozen as they were when it was written: it must do the same thing on every later
 * build, so it never reads constants that later builds extend (REGISTRY_FORMAT, REGISTRY_TABLES).
 */
import type Database from 'better-sqlite3';
import { DomainError } from '../core/errors.js';
import { logUnloggedRows } from './registry.js';

export interface Migration {
  readonly version: number;
  readonly description: string;
  /** Runs inside the migration's transaction; `at` is the migration's time (the clock migrate was given). */
  readonly up: (db: Database.Database, at: string) => void;
}

/**
 * SQL for append-only triggers: no UPDATE, no DELETE, and no INSERT that collides with an existing
 * key (INSERT OR REPLACE would otherwise delete the old row without firing the DELETE trigger, since
 * recursive triggers are off by default).
 */
export function appendOnlyTriggers(table: string, keys: readonly (readonly string[])[], what: string): string {
  // '=' rather than IS: a NULL key (supersedes of an original sheet) collides with nothing.
  const collide = keys.map((k) => '(' + k.map((c) => `${c} = NEW.${c}`).join(' AND ') + ')').join(' OR ');
  return `
CREATE TRIGGER IF NOT EXISTS ${table}_no_update BEFORE UPDATE ON ${table}
BEGIN SELECT RAISE(ABORT, '${table} is append-only: ${what} are never changed in place'); END;
CREATE TRIGGER IF NOT EXISTS ${table}_no_delete BEFORE DELETE ON ${table}
BEGIN SELECT RAISE(ABORT, '${table} is append-only: ${what} are never deleted'); END;
CREATE TRIGGER IF NOT EXISTS ${table}_no_replace BEFORE INSERT ON ${table}
WHEN EXISTS (SELECT 1 FROM ${table} WHERE ${collide})
BEGIN SELECT RAISE(ABORT, '${table} is append-only: a row with that key exists and is not replaced'); END;
`;
}

const SCHEMA_VERSION_SQL = `
CREATE TABLE IF NOT EXISTS schema_version (
  version     INTEGER PRIMARY KEY,
  description TEXT NOT NULL,
  applied_at  TEXT NOT NULL
) STRICT;
${appendOnlyTriggers('schema_version', [['version']], 'applied migrations')}
`;

const V1_SQL = `
-- Users and their bearer tokens (stored only as SHA-256 of the token).
CREATE TABLE users (
  id           TEXT PRIMARY KEY,
  name         TEXT NOT NULL UNIQUE,
  role         TEXT NOT NULL CHECK (role IN ('operator', 'engineer', 'admin')),
  token_sha256 TEXT NOT NULL UNIQUE CHECK (length(token_sha256) = 64),
  created_at   TEXT NOT NULL,
  created_by   TEXT NOT NULL
) STRICT;
${appendOnlyTriggers('users', [['id'], ['name'], ['token_sha256']], 'users')}

-- The audit of users: creation, deactivation, reactivation. The latest event decides whether a user is active.
CREATE TABLE user_events (
  seq     INTEGER PRIMARY KEY AUTOINCREMENT,
  user_id TEXT NOT NULL REFERENCES users(id),
  event   TEXT NOT NULL CHECK (event IN ('created', 'deactivated', 'reactivated')),
  at      TEXT NOT NULL,
  actor   TEXT NOT NULL,
  note    TEXT
) STRICT;
CREATE INDEX user_events_user ON user_events(user_id, seq);
${appendOnlyTriggers('user_events', [['seq']], 'user events')}

-- Plant profiles: every change is a new version; sha256 is SHA-256 of profile_json (canonical JSON).
CREATE TABLE plant_versions (
  plant_id     TEXT NOT NULL,
  version      INTEGER NOT NULL CHECK (version >= 1),
  profile_json TEXT NOT NULL,
  sha256       TEXT NOT NULL CHECK (length(sha256) = 64),
  created_at   TEXT NOT NULL,
  created_by   TEXT NOT NULL,
  PRIMARY KEY (plant_id, version)
) STRICT;
${appendOnlyTriggers('plant_versions', [['plant_id', 'version']], 'plant profile versions')}

-- Signers: a PKCS#12 (itself password-protected) and its password encrypted with AES-256-GCM.
-- password_enc = 12-byte IV || 16-byte tag || ciphertext; key_fingerprint names the key it was encrypted under.
CREATE TABLE signers (
  seq                 INTEGER PRIMARY KEY AUTOINCREMENT,
  id                  TEXT NOT NULL UNIQUE,
  name                TEXT NOT NULL,
  role                TEXT NOT NULL,
  certificate_subject TEXT NOT NULL,
  user_id             TEXT REFERENCES users(id),
  demo                INTEGER NOT NULL CHECK (demo IN (0, 1)),
  p12                 BLOB NOT NULL,
  password_enc        BLOB NOT NULL,
  key_fingerprint     TEXT NOT NULL,
  created_at          TEXT NOT NULL,
  created_by          TEXT NOT NULL
) STRICT;
CREATE INDEX signers_user ON signers(user_id, seq);
${appendOnlyTriggers('signers', [['seq'], ['id']], 'signers')}

-- Sheets: the hash chain (see sheets.ts for the record hash serialisation).
CREATE TABLE sheets (
  seq            INTEGER PRIMARY KEY AUTOINCREMENT,
  id             TEXT NOT NULL UNIQUE,
  record_format  INTEGER NOT NULL,
  kind           TEXT NOT NULL,
  plant_id       TEXT,
  plant_version  INTEGER,
  sampled_at     TEXT NOT NULL,
  created_at     TEXT NOT NULL,
  created_by     TEXT NOT NULL REFERENCES users(id),
  signer_id      TEXT NOT NULL REFERENCES signers(id),
  signer_name    TEXT NOT NULL,
  signer_role    TEXT NOT NULL,
  signer_subject TEXT NOT NULL,
  request_json   TEXT NOT NULL,
  result_json    TEXT NOT NULL,
  pdf            BLOB NOT NULL,
  pdf_sha256     TEXT NOT NULL CHECK (length(pdf_sha256) = 64),
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
  supersedes     TEXT REFERENCES sheets(id),
  prev_hash      TEXT NOT NULL UNIQUE CHECK (length(prev_hash) = 64),
  record_hash    TEXT NOT NULL UNIQUE CHECK (length(record_hash) = 64),
  FOREIGN KEY (plant_id, plant_version) REFERENCES plant_versions(plant_id, version)
) STRICT;
-- A sheet is superseded at most once; two records can never name the same predecessor (no fork).
CREATE UNIQUE INDEX sheets_supersedes ON sheets(supersedes) WHERE supersedes IS NOT NULL;
CREATE INDEX sheets_sampled ON sheets(sampled_at);
CREATE INDEX sheets_plant_sampled ON sheets(plant_id, sampled_at);
${appendOnlyTriggers('sheets', [['seq'], ['id'], ['prev_hash'], ['record_hash'], ['supersedes']], 'sheets (a correction is a new sheet that supersedes the old one)')}
`;

const V2_SQL = `
-- The registry log (registry.ts): one hash-chained entry per row of users, user_events, signers.
-- As released on 2026-12-02 (a released migration is never edited). The CHECK list on
-- table_name means a later migration that registers another table must rebuild this table
-- (every row copied unchanged, triggers re-made) to widen it; the verification reports an
-- entry naming a table the build does not register in any case (one written past the CHECK).
CREATE TABLE registry_log (
  seq         INTEGER PRIMARY KEY AUTOINCREMENT,
  format      INTEGER NOT NULL,
  table_name  TEXT NOT NULL CHECK (table_name IN ('users', 'user_events', 'signers')),
  row_key     TEXT NOT NULL,
  row_sha256  TEXT NOT NULL CHECK (length(row_sha256) = 64),
  logged_at   TEXT NOT NULL,
  prev_hash   TEXT NOT NULL UNIQUE CHECK (length(prev_hash) = 64),
  record_hash TEXT NOT NULL UNIQUE CHECK (length(record_hash) = 64),
  UNIQUE (table_name, row_key)
) STRICT;
${appendOnlyTriggers('registry_log', [['seq'], ['prev_hash'], ['record_hash'], ['table_name', 'row_key']], 'registry entries')}
`;

const V3_SQL = `
-- The registry log widened to plant_versions. SQLite cannot change a CHECK in place, so the table
-- is rebuilt as V2_SQL foresaw: every entry copied unchanged (same seq, hashes and links, so the
-- chain verifies as before), then the append-only triggers made again.
CREATE TABLE registry_log_v3 (
  seq         INTEGER PRIMARY KEY AUTOINCREMENT,
  format      INTEGER NOT NULL,
  table_name  TEXT NOT NULL CHECK (table_name IN ('users', 'user_events', 'signers', 'plant_versions')),
  row_key     TEXT NOT NULL,
  row_sha256  TEXT NOT NULL CHECK (length(row_sha256) = 64),
  logged_at   TEXT NOT NULL,
  prev_hash   TEXT NOT NULL UNIQUE CHECK (length(prev_hash) = 64),
  record_hash TEXT NOT NULL UNIQUE CHECK (length(record_hash) = 64),
  UNIQUE (table_name, row_key)
) STRICT;
INSERT INTO registry_log_v3 (seq, format, table_name, row_key, row_sha256, logged_at, prev_hash, record_hash)
  SELECT seq, format, table_name, row_key, row_sha256, logged_at, prev_hash, record_hash FROM registry_log ORDER BY seq;
DROP TRIGGER registry_log_no_update;
DROP TRIGGER registry_log_no_delete;
DROP TRIGGER registry_log_no_replace;
DROP TABLE registry_log;
ALTER TABLE registry_log_v3 RENAME TO registry_log;
${appendOnlyTriggers('registry_log', [['seq'], ['prev_hash'], ['record_hash'], ['table_name', 'row_key']], 'registry entries')}
`;

/** The migrations this build knows, in order. */
export const MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    description: 'users, user events, plant profile versions, signers, sheets with hash chain; append-only triggers',
    up: (db) => db.exec(V1_SQL),
  },
  {
    version: 2,
    description: 'registry log: a hash chain over users, user events and signers; rows stored before it are logged as found',
    up: (db, at) => {
      db.exec(V2_SQL);
      // Rows stored under version 1 are logged in registry format 1 (the columns version 1 created).
      logUnloggedRows({ db }, at, { tables: ['users', 'user_events', 'signers'], format: 1, order: { users: 'created_at, id', user_events: 'seq', signers: 'seq' } });
    },
  },
  {
    version: 3,
    description: 'registry log also chains plant profile versions; versions stored before it are logged as found',
    up: (db, at) => {
      const digest = (): { n: number; last: string | null } => {
        const r = db.prepare('SELECT count(*) AS n, (SELECT record_hash FROM registry_log ORDER BY seq DESC LIMIT 1) AS last FROM registry_log').get() as { n: number; last: string | null };
        return { n: r.n, last: r.last };
      };
      const before = digest();
      db.exec(V3_SQL);
      const after = digest();
      if (after.n !== before.n || after.last !== before.last) {
        throw new Error(`migration 3: the rebuilt registry log holds ${after.n} entries ending ${after.last}, not the ${before.n} ending ${before.last} it copied`);
      }
      logUnloggedRows({ db }, at, { tables: ['plant_versions'], format: 1, order: { plant_versions: 'created_at, plant_id, version' } });
    },
  },
];

export function latestVersion(migrations: readonly Migration[] = MIGRATIONS): number {
  return migrations.length === 0 ? 0 : migrations[migrations.length - 1]!.version;
}

function checkList(migrations: readonly Migration[]): void {
  migrations.forEach((m, i) => {
    if (m.version !== i + 1) {
      throw new Error(`migration list out of order: position ${i} has version ${m.version}, expected ${i + 1}`);
    }
  });
}

/** The archive's schema version (0 for an empty database). */
export function schemaVersion(db: Database.Database): number {
  const exists = db.prepare("SELECT 1 FROM sqlite_schema WHERE type = 'table' AND name = 'schema_version'").get();
  if (!exists) return 0;
  const row = db.prepare('SELECT max(version) AS v FROM schema_version').get() as { v: number | null };
  return row.v ?? 0;
}

function tooNew(file: string, found: number, supported: number): DomainError {
  return new DomainError('ARCHIVE_TOO_NEW', {
    detail:
      `The archive ${file} has schema version ${found}, written by a newer oxidant-dosing; this build supports ` +
      `schema versions up to ${supported}. Run a release that supports schema ${found} (or newer), or point DATA_DIR ` +
      `at another folder. The archive was left unchanged.`,
    params: { file, archiveVersion: found, supportedVersion: supported },
  });
}

export interface MigrationOutcome {
  readonly from: number;
  readonly to: number;
  readonly applied: readonly number[];
}

/**
 * Bring the database to the latest version of `migrations`. Refuses (ARCHIVE_TOO_NEW) an archive
 * whose version is newer, before writing anything.
 */
export function migrate(
  db: Database.Database,
  options: { migrations?: readonly Migration[]; file?: string; now?: () => Date } = {},
): MigrationOutcome {
  const migrations = options.migrations ?? MIGRATIONS;
  const file = options.file ?? db.name;
  const now = options.now ?? (() => new Date());
  checkList(migrations);
  const supported = latestVersion(migrations);

  const before = schemaVersion(db);
  if (before > supported) throw tooNew(file, before, supported);
  if (before === supported) return { from: before, to: before, applied: [] };

  db.transaction(() => db.exec(SCHEMA_VERSION_SQL)).immediate();
  const applied: number[] = [];
  for (const m of migrations) {
    db.transaction(() => {
      const current = schemaVersion(db);
      if (current > supported) throw tooNew(file, current, supported);
      if (current >= m.version) return; // another process got there first
      const at = now().toISOString();
      m.up(db, at);
      db.prepare('INSERT INTO schema_version (version, description, applied_at) VALUES (?, ?, ?)').run(m.version, m.description, at);
      applied.push(m.version);
    }).immediate();
  }
  return { from: before, to: schemaVersion(db), applied };
}
