import { createHash } from 'node:crypto';
import { existsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import { ARCHIVE_FILE_NAME, MIGRATIONS, latestVersion, migrate, openArchive, schemaVersion, type Migration } from '../../src/archive/index.js';
import { tempDataDir, caught } from './fixtures/archive-fixture.js';

const SECRET = 'ab'.repeat(32);
const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function dir(): string {
  const t = tempDataDir('migrations');
  cleanups.push(t.cleanup);
  return t.dir;
}


describe('opening the archive', () => {
  it('creates a missing (nested) data folder and the database file', () => {
    const d = join(dir(), 'nested', 'reports');
    expect(existsSync(d)).toBe(false);
    const a = openArchive({ dataDir: d, signerKeySecret: SECRET });
    try {
      expect(a.file).toBe(join(d, ARCHIVE_FILE_NAME));
      expect(existsSync(a.file)).toBe(true);
    } finally {
      a.close();
    }
  });

  it('sets WAL, synchronous=FULL, foreign keys and a busy timeout', () => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: SECRET, busyTimeoutMs: 4321 });
    try {
      expect(a.db.pragma('journal_mode', { simple: true })).toBe('wal');
      expect(a.db.pragma('synchronous', { simple: true })).toBe(2); // 2 = FULL (SQLite PRAGMA synchronous docs)
      expect(a.db.pragma('foreign_keys', { simple: true })).toBe(1);
      expect(a.db.pragma('busy_timeout', { simple: true })).toBe(4321);
    } finally {
      a.close();
    }
  });

  it('refuses a file that is not a database with ARCHIVE_CORRUPT', () => {
    const d = dir();
    writeFileSync(join(d, ARCHIVE_FILE_NAME), 'this is not an SQLite file, just text '.repeat(50));
    const e = caught(() => openArchive({ dataDir: d, signerKeySecret: SECRET }));
    expect(e.code).toBe('ARCHIVE_CORRUPT');
    expect(e.detail).toContain(ARCHIVE_FILE_NAME);
  });
});

describe('migrations', () => {
  it('a fresh archive runs every migration once and records number and description', () => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: SECRET });
    try {
      expect(a.migration).toEqual({ from: 0, to: latestVersion(), applied: MIGRATIONS.map((m) => m.version) });
      const rows = a.db.prepare('SELECT version, description, applied_at FROM schema_version ORDER BY version').all() as {
        version: number;
        description: string;
        applied_at: string;
      }[];
      expect(rows.map((r) => [r.version, r.description])).toEqual(MIGRATIONS.map((m) => [m.version, m.description]));
      for (const r of rows) expect(Number.isFinite(Date.parse(r.applied_at))).toBe(true);
      const tables = (a.db.prepare("SELECT name FROM sqlite_schema WHERE type = 'table' ORDER BY name").all() as { name: string }[]).map((t) => t.name);
      expect(tables).toEqual(expect.arrayContaining(['plant_versions', 'schema_version', 'sheets', 'signers', 'user_events', 'users']));
    } finally {
      a.close();
    }
  });

  it('re-opening applies nothing and keeps the data', () => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: SECRET });
    const { user } = a.createUser({ name: 'Night operator (invented)', role: 'operator', createdBy: 'system:test' });
    a.close();
    const b = openArchive({ dataDir: d, signerKeySecret: SECRET });
    try {
      expect(b.migration).toEqual({ from: latestVersion(), to: latestVersion(), applied: [] });
      expect(b.getUser(user.id)?.name).toBe('Night operator (invented)');
      expect((b.db.prepare('SELECT count(*) AS n FROM schema_version').get() as { n: number }).n).toBe(MIGRATIONS.length);
    } finally {
      b.close();
    }
  });

  it('refuses an archive from a newer version with ARCHIVE_TOO_NEW, naming both versions, and leaves it unchanged', () => {
    const d = dir();
    openArchive({ dataDir: d, signerKeySecret: SECRET }).close();
    const file = join(d, ARCHIVE_FILE_NAME);
    const future = latestVersion() + 5;
    const raw = new Database(file);
    raw.prepare('INSERT INTO schema_version (version, description, applied_at) VALUES (?, ?, ?)').run(future, 'from the future', '2031-01-01T00:00:00.000Z');
    raw.close();

    const e = caught(() => openArchive({ dataDir: d, signerKeySecret: SECRET }));
    expect(e.code).toBe('ARCHIVE_TOO_NEW');
    expect(e.params).toMatchObject({ archiveVersion: future, supportedVersion: latestVersion() });
    expect(e.detail).toContain(`schema version ${future}`);
    expect(e.detail).toContain(`up to ${latestVersion()}`);
    expect(e.detail).toMatch(/DATA_DIR/);
    expect(e.detail).toMatch(/unchanged/);

    const check = new Database(file, { readonly: true });
    expect(schemaVersion(check)).toBe(future);
    expect((check.prepare('SELECT count(*) AS n FROM schema_version').get() as { n: number }).n).toBe(MIGRATIONS.length + 1);
    check.close();
  });

  it('a later migration runs on re-open, in its own transaction, after the earlier ones', () => {
    const d = dir();
    openArchive({ dataDir: d, signerKeySecret: SECRET }).close();
    const next: Migration = {
      version: latestVersion() + 1,
      description: 'test: add a notes table',
      up: (db) => db.exec('CREATE TABLE test_notes (id INTEGER PRIMARY KEY, text TEXT NOT NULL) STRICT'),
    };
    const a = openArchive({ dataDir: d, signerKeySecret: SECRET, migrations: [...MIGRATIONS, next] });
    try {
      expect(a.migration).toEqual({ from: latestVersion(), to: next.version, applied: [next.version] });
      expect(a.db.prepare("SELECT 1 FROM sqlite_schema WHERE name = 'test_notes'").get()).toBeDefined();
    } finally {
      a.close();
    }
    // The build without that migration now refuses the archive.
    expect(caught(() => openArchive({ dataDir: d, signerKeySecret: SECRET })).code).toBe('ARCHIVE_TOO_NEW');
  });

  it('version 2 logs the users, user events and signers a version-1 archive already holds, in order, and the archive verifies', async () => {
    const d = dir();
    const raw = new Database(join(d, ARCHIVE_FILE_NAME));
    migrate(raw, { migrations: MIGRATIONS.slice(0, 1) });
    raw.prepare('INSERT INTO users (id, name, role, token_sha256, created_at, created_by) VALUES (?, ?, ?, ?, ?, ?)').run('usr_OLD0000000000001', 'old admin', 'admin', 'a'.repeat(64), '2026-01-01T00:00:00.000Z', 'system:bootstrap');
    raw.prepare("INSERT INTO user_events (user_id, event, at, actor) VALUES (?, 'created', ?, ?)").run('usr_OLD0000000000001', '2026-01-01T00:00:00.000Z', 'system:bootstrap');
    raw.close();
    const at = new Date('2026-02-03T04:05:06.000Z');
    const a = openArchive({ dataDir: d, signerKeySecret: SECRET, now: () => at });
    try {
      expect(a.migration).toEqual({ from: 1, to: latestVersion(), applied: MIGRATIONS.slice(1).map((m) => m.version) });
      const log = a.db.prepare('SELECT seq, table_name, row_key FROM registry_log ORDER BY seq').all();
      expect(log).toEqual([
        { seq: 1, table_name: 'users', row_key: 'usr_OLD0000000000001' },
        { seq: 2, table_name: 'user_events', row_key: '1' },
      ]);
      // the backfill is stamped with the time of the upgrade, not with the rows' own times
      expect(a.db.prepare('SELECT DISTINCT logged_at, format FROM registry_log').all()).toEqual([{ logged_at: at.toISOString(), format: 1 }]);
      const v = await a.verifyArchive();
      expect(v).toMatchObject({ valid: true, registryEntries: 2 });
    } finally {
      a.close();
    }
  });

  it('version 3 widens the registry log to plant versions: its CHECK lists them and still refuses a table it does not register', () => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: SECRET });
    try {
      const sql = (a.db.prepare("SELECT sql FROM sqlite_schema WHERE name = 'registry_log'").get() as { sql: string }).sql;
      expect(sql).toContain("CHECK (table_name IN ('users', 'user_events', 'signers', 'plant_versions'))");
      expect(() =>
        a.db.prepare('INSERT INTO registry_log (format, table_name, row_key, row_sha256, logged_at, prev_hash, record_hash) VALUES (1, ?, ?, ?, ?, ?, ?)').run('plants', 'x', 'a'.repeat(64), '2026-12-01T00:00:00.000Z', 'b'.repeat(64), 'c'.repeat(64)),
      ).toThrow(/CHECK constraint failed/);
      // the rebuilt table is append-only like the one it replaced
      a.createUser({ name: 'an admin', role: 'admin', createdBy: 'system:bootstrap' });
      expect(() => a.db.prepare('DELETE FROM registry_log').run()).toThrow(/append-only/);
      expect(() => a.db.prepare("UPDATE registry_log SET logged_at = 'x'").run()).toThrow(/append-only/);
    } finally {
      a.close();
    }
  });

  it('version 3 keeps every version-2 registry entry as it was and logs the plant versions already stored, after them', async () => {
    const d = dir();
    const raw = new Database(join(d, ARCHIVE_FILE_NAME));
    migrate(raw, { migrations: MIGRATIONS.slice(0, 2) });
    raw.close();
    // a version-2 archive as that build left it: users and signers logged, plant versions not
    const a2 = openArchive({ dataDir: d, signerKeySecret: SECRET, migrations: MIGRATIONS.slice(0, 2) });
    a2.createUser({ name: 'old admin', role: 'admin', createdBy: 'system:bootstrap' });
    a2.db
      .prepare('INSERT INTO plant_versions (plant_id, version, profile_json, sha256, created_at, created_by) VALUES (?, ?, ?, ?, ?, ?)')
      .run('old-plant', 1, '{"id":"old-plant"}', createHash('sha256').update('{"id":"old-plant"}').digest('hex'), '2026-01-01T00:00:00.000Z', 'system:seed');
    const before = a2.db.prepare('SELECT * FROM registry_log ORDER BY seq').all();
    a2.close();
    const at = new Date('2026-12-04T21:00:00.000Z');
    const a = openArchive({ dataDir: d, signerKeySecret: SECRET, now: () => at });
    try {
      expect(a.migration?.applied).toContain(3);
      const after = a.db.prepare('SELECT * FROM registry_log ORDER BY seq').all() as { seq: number; table_name: string; row_key: string; logged_at: string; prev_hash: string }[];
      expect(after.slice(0, before.length)).toEqual(before);
      const added = after.slice(before.length);
      expect(added.map((e) => [e.table_name, e.row_key, e.logged_at])).toEqual([['plant_versions', 'old-plant#1', at.toISOString()]]);
      expect(added[0]!.prev_hash).toBe((before[before.length - 1] as { record_hash: string }).record_hash);
      const v = await a.verifyArchive();
      expect(v).toMatchObject({ valid: true, registryEntries: after.length });
      // from now on the version is held by the chain: its profile rewritten with a fresh SHA-256 is caught
      expect(a.getPlant('old-plant').altered).toBe(false);
    } finally {
      a.close();
    }
  });

  it('a failing migration is rolled back: no half-made table, version unchanged', () => {
    const d = dir();
    openArchive({ dataDir: d, signerKeySecret: SECRET }).close();
    const broken: Migration = {
      version: latestVersion() + 1,
      description: 'test: fails half way',
      up: (db) => {
        db.exec('CREATE TABLE half_made (x INTEGER) STRICT');
        db.exec('THIS IS NOT SQL');
      },
    };
    expect(() => openArchive({ dataDir: d, signerKeySecret: SECRET, migrations: [...MIGRATIONS, broken] })).toThrow();
    const raw = new Database(join(d, ARCHIVE_FILE_NAME), { readonly: true });
    expect(schemaVersion(raw)).toBe(latestVersion());
    expect(raw.prepare("SELECT 1 FROM sqlite_schema WHERE name = 'half_made'").get()).toBeUndefined();
    raw.close();
  });

  it('refuses a migration list that is not numbered 1, 2, 3, …', () => {
    const db = new Database(':memory:');
    const m = (version: number): Migration => ({ version, description: `m${version}`, up: () => {} });
    expect(() => migrate(db, { migrations: [m(1), m(3)] })).toThrow(/out of order/);
    expect(() => migrate(db, { migrations: [m(2)] })).toThrow(/out of order/);
    db.close();
  });
});
