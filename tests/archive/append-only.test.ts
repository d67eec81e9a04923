/**
 * The archive is append-only at the database level: SQLite triggers refuse UPDATE and DELETE on
 * every table, and an INSERT that would replace a row with the same key (INSERT OR REPLACE deletes
 * the old row without firing DELETE triggers, since recursive_triggers is off by default;
 * SQLite "The ON CONFLICT clause" and "CREATE TRIGGER" documentation).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Archive } from '../../src/archive/index.js';
import { doseSheetInput, ensureAuthor, openTestArchive, tempDataDir } from './fixtures/archive-fixture.js';

let archive: Archive;
let cleanup: () => void;
let sheetId: string;

beforeAll(() => {
  const t = tempDataDir('append-only');
  cleanup = t.cleanup;
  archive = openTestArchive(t.dir);
  const author = ensureAuthor(archive);
  archive.savePlant({ id: 'demo-plant', name: 'Invented demo plant' }, { createdBy: 'system:test' });
  sheetId = archive.appendSheet(doseSheetInput(author)).id;
  archive.appendSheet(doseSheetInput(author));
});
afterAll(() => {
  archive.close();
  cleanup();
});

const STATEMENTS: [string, string][] = [
  ['UPDATE sheets', "UPDATE sheets SET result_json = '{}' WHERE seq = 1"],
  ['UPDATE sheets (pdf)', "UPDATE sheets SET pdf = x'255044462d' WHERE seq = 1"],
  ['DELETE sheets', 'DELETE FROM sheets WHERE seq = 2'],
  ['DELETE all sheets', 'DELETE FROM sheets'],
  ['INSERT OR REPLACE sheets', 'INSERT OR REPLACE INTO sheets SELECT * FROM sheets WHERE seq = 1'],
  ['UPSERT sheets', "INSERT INTO sheets SELECT * FROM sheets WHERE seq = 1 ON CONFLICT(seq) DO UPDATE SET kind = 'x'"],
  ['UPDATE users', "UPDATE users SET role = 'admin'"],
  ['UPDATE users (token)', "UPDATE users SET token_sha256 = '" + '0'.repeat(64) + "'"],
  ['DELETE users', 'DELETE FROM users'],
  ['INSERT OR REPLACE users', 'INSERT OR REPLACE INTO users SELECT * FROM users'],
  ['UPDATE user_events', "UPDATE user_events SET event = 'deactivated'"],
  ['DELETE user_events', 'DELETE FROM user_events'],
  ['UPDATE plant_versions', "UPDATE plant_versions SET profile_json = '{}'"],
  ['DELETE plant_versions', 'DELETE FROM plant_versions'],
  ['INSERT OR REPLACE plant_versions', 'INSERT OR REPLACE INTO plant_versions SELECT * FROM plant_versions'],
  ['UPDATE signers', "UPDATE signers SET name = 'someone else'"],
  ['DELETE signers', 'DELETE FROM signers'],
  ['UPDATE schema_version', 'UPDATE schema_version SET version = 99'],
  ['DELETE schema_version', 'DELETE FROM schema_version'],
];

describe('append-only triggers', () => {
  it.each(STATEMENTS)('%s is refused', (_name, sql) => {
    const before = archive.db.prepare('SELECT (SELECT group_concat(record_hash) FROM sheets) AS s, (SELECT count(*) FROM users) AS u, (SELECT group_concat(profile_json) FROM plant_versions) AS p').get();
    expect(() => archive.db.exec(sql)).toThrow(/append-only/);
    const after = archive.db.prepare('SELECT (SELECT group_concat(record_hash) FROM sheets) AS s, (SELECT count(*) FROM users) AS u, (SELECT group_concat(profile_json) FROM plant_versions) AS p').get();
    expect(after).toEqual(before);
  });

  it('after all those attempts the archive still verifies', async () => {
    const v = await archive.verifyArchive();
    expect(v).toMatchObject({ valid: true, records: 2, firstBrokenId: null });
    expect(archive.getSheet(sheetId).seq).toBe(1);
  });
});
