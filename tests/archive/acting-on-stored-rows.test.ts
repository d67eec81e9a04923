/**
 * The service acts only on stored rows that pass their hash check: a token's user (and its events),
 * a plant profile version, a signer. A copy of an archive is changed through a raw better-sqlite3
 * connection (rawTamper), as someone with file access could; the archive then refuses to act on the
 * changed row (ARCHIVE_RECORD_ALTERED, naming it) while the archive walk reports the same row.
 *
 * Independent check: SHA-256 with node:crypto (FIPS 180-4) for the plant profile's hash.
 */
import { createHash, randomBytes } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import type { Archive } from '../../src/archive/index.js';
import { doseSheetInput, ensureAuthor, fakeVerifyPdf, openTestArchive, rawTamper, tempDataDir, caught } from './fixtures/archive-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): { archive: Archive; reopen: () => Archive; file: string } {
  const t = tempDataDir('acting');
  let archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  return {
    archive,
    file: `${t.dir}/oxidant-dosing.sqlite`,
    reopen: () => {
      archive.close();
      archive = openTestArchive(t.dir);
      return archive;
    },
  };
}
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex');

describe("a token's user is believed only when its record passes the registry check", () => {
  it('an operator whose role was changed to admin in the file is refused, not acted on; the walk names the row', async () => {
    const { archive, reopen, file } = fresh();
    const { user, token } = archive.createUser({ name: 'Shift operator (invented)', role: 'operator', createdBy: 'system:test' });
    const other = archive.createUser({ name: 'Other operator (invented)', role: 'operator', createdBy: 'system:test' });
    expect(archive.authenticate(token)).toMatchObject({ id: user.id, role: 'operator' });
    archive.close();
    await rawTamper(file, ['users'], (db) => {
      expect(db.prepare("UPDATE users SET role = 'admin' WHERE id = ?").run(user.id).changes).toBe(1);
    });
    const a = reopen();
    const e = caught(() => a.authenticate(token));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(e.detail).toContain(user.id);
    expect(e.detail).toContain('does not hash to its logged SHA-256');
    expect(caught(() => a.getUser(user.id)).code).toBe('ARCHIVE_RECORD_ALTERED');
    // an untouched user still works
    expect(a.authenticate(other.token)).toMatchObject({ id: other.user.id, role: 'operator' });
    const walk = await a.verifyArchive();
    expect(walk.problems).toContainEqual(expect.objectContaining({ id: `users:${user.id}`, check: 'registry-row-hash' }));
  });

  it('a token hash swapped into another user row is refused', async () => {
    const { archive, reopen, file } = fresh();
    const admin = archive.createUser({ name: 'Admin (invented)', role: 'admin', createdBy: 'system:test' });
    const op = archive.createUser({ name: 'Operator (invented)', role: 'operator', createdBy: 'system:test' });
    archive.close();
    // the operator's token hash moved onto the admin row (the admin's own token hash discarded)
    await rawTamper(file, ['users'], (db) => {
      db.prepare('UPDATE users SET token_sha256 = ? WHERE id = ?').run('0'.repeat(64), op.user.id);
      db.prepare('UPDATE users SET token_sha256 = ? WHERE id = ?').run(sha256(op.token), admin.user.id);
    });
    const a = reopen();
    const e = caught(() => a.authenticate(op.token));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(e.detail).toContain(admin.user.id);
  });

  it.each([
    ['changed to "reactivated"', "UPDATE user_events SET event = 'reactivated' WHERE user_id = ? AND event = 'deactivated'"],
    ['deleted', "DELETE FROM user_events WHERE user_id = ? AND event = 'deactivated'"],
  ])('a deactivation %s in the file does not bring the token back', async (_what, sql) => {
    const { archive, reopen, file } = fresh();
    const { user, token } = archive.createUser({ name: 'Leaver (invented)', role: 'engineer', createdBy: 'system:test' });
    archive.deactivateUser({ userId: user.id, by: 'system:test' });
    expect(archive.authenticate(token)).toBeNull();
    archive.close();
    await rawTamper(file, ['user_events'], (db) => {
      expect(db.prepare(sql).run(user.id).changes).toBe(1);
    });
    const a = reopen();
    expect(caught(() => a.authenticate(token)).code).toBe('ARCHIVE_RECORD_ALTERED');
  });

  it('a user row inserted outside the service (no registry entry) is refused', async () => {
    const { archive, reopen, file } = fresh();
    archive.createUser({ name: 'Someone (invented)', role: 'operator', createdBy: 'system:test' });
    archive.close();
    const forged = 'oxd_forged-token-for-a-row-inserted-outside-the-service';
    await rawTamper(file, ['users'], (db) => {
      db.prepare("INSERT INTO users (id, name, role, token_sha256, created_at, created_by) VALUES ('usr_forged', 'Forged admin', 'admin', ?, '2026-12-01T00:00:00.000Z', 'system:test')").run(sha256(forged));
    });
    const a = reopen();
    const e = caught(() => a.authenticate(forged));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(e.detail).toContain('has no registry entry');
  });

  it('deactivating a user whose record fails its check is still allowed (it is the remedy)', async () => {
    const { archive, reopen, file } = fresh();
    const { user, token } = archive.createUser({ name: 'Operator (invented)', role: 'operator', createdBy: 'system:test' });
    archive.close();
    await rawTamper(file, ['users'], (db) => {
      db.prepare("UPDATE users SET role = 'admin' WHERE id = ?").run(user.id);
    });
    const a = reopen();
    expect(a.deactivateUser({ userId: user.id, by: 'system:test', note: 'record altered' }).active).toBe(false);
    expect(caught(() => a.authenticate(token)).code).toBe('ARCHIVE_RECORD_ALTERED');
  });
});

describe('a plant profile version is used only when it hashes to its sha256', () => {
  const PLANT = {
    id: 'probe-us',
    name: 'US demo plant (invented)',
    flow: { value: 1.5, unit: 'MGD' },
    products: [{ oxidant: 'potassium-permanganate', purity: 0.97 }],
  };

  it('a flow changed 1.5 → 1.6 MGD in the file: getPlant refuses naming plant and version; the list marks it; the walk reports it', async () => {
    const { archive, reopen, file } = fresh();
    const saved = archive.savePlant(PLANT, { createdBy: 'usr_eng' });
    expect(saved.altered).toBe(false);
    expect(archive.getPlant('probe-us').sha256).toBe(sha256(JSON.stringify({ flow: { unit: 'MGD', value: 1.5 }, id: 'probe-us', name: PLANT.name, products: [{ oxidant: 'potassium-permanganate', purity: 0.97 }] })));
    archive.close();
    await rawTamper(file, ['plant_versions'], (db) => {
      expect(db.prepare(`UPDATE plant_versions SET profile_json = replace(profile_json, '"value":1.5', '"value":1.6') WHERE plant_id = 'probe-us'`).run().changes).toBe(1);
    });
    const a = reopen();
    const e = caught(() => a.getPlant('probe-us'));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(e.detail).toContain('Plant probe-us version 1');
    expect(e.params).toMatchObject({ plantId: 'probe-us', version: 1 });
    expect(caught(() => a.getPlant('probe-us', 1)).code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(a.listPlants()).toEqual([expect.objectContaining({ plantId: 'probe-us', version: 1, altered: true })]);
    expect(a.plantHistory('probe-us')[0]!.altered).toBe(true);
    const walk = await a.verifyArchive();
    expect(walk.problems).toContainEqual(expect.objectContaining({ id: 'probe-us@v1', check: 'plant-hash' }));
    // storing the right profile again appends version 2, which is served; version 1 stays as found
    const again = a.savePlant(PLANT, { createdBy: 'usr_eng' });
    expect(again).toMatchObject({ version: 2, changed: true, altered: false });
    expect(a.getPlant('probe-us')).toMatchObject({ version: 2, profile: { flow: { value: 1.5, unit: 'MGD' } } });
  });

  it('a profile made unreadable (not JSON) is refused the same way, not a crash', async () => {
    const { archive, reopen, file } = fresh();
    archive.savePlant(PLANT, { createdBy: 'usr_eng' });
    archive.close();
    await rawTamper(file, ['plant_versions'], (db) => {
      db.prepare(`UPDATE plant_versions SET profile_json = '{not json' WHERE plant_id = 'probe-us'`).run();
    });
    const a = reopen();
    expect(caught(() => a.getPlant('probe-us')).code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(a.listPlants()[0]!.altered).toBe(true);
  });
});

describe('a signer is opened, and recorded on a sheet, only when its row passes the registry check', () => {
  it('a certificate subject changed in the file: getSigner/getSignerForUser refuse; appendSheet refuses to record it', async () => {
    const { archive, reopen, file } = fresh();
    const author = ensureAuthor(archive);
    const own = archive.addSigner({
      name: 'Operator (invented)',
      role: 'Shift operator',
      certificateSubject: 'CN=Operator (invented), O=Example Water Works (invented)',
      p12: randomBytes(64),
      password: 'p12-password (invented)',
      userId: author.userId,
      createdBy: 'system:test',
    });
    expect(archive.getSigner(own.id)?.certificateSubject).toBe('CN=Operator (invented), O=Example Water Works (invented)');
    archive.close();
    await rawTamper(file, ['signers'], (db) => {
      expect(db.prepare(`UPDATE signers SET certificate_subject = 'CN=Chief Engineer (fake)' WHERE id = ?`).run(own.id).changes).toBe(1);
    });
    const a = reopen();
    for (const read of [() => a.getSigner(own.id), () => a.getSignerForUser(author.userId)]) {
      const e = caught(read);
      expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
      expect(e.detail).toContain(own.id);
    }
    const e = caught(() => a.appendSheet(doseSheetInput(author, { signerId: own.id })));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(a.chainHead().records).toBe(0);
    // the default (untouched) signer still signs
    expect(a.appendSheet(doseSheetInput(author)).signer.id).toBe(author.signerId);
    expect(a.hasDefaultSigner()).toBe(true);
  });
});

describe('per-sheet verification compares the recorded signer subject with the certificate in the signature', () => {
  it.each([
    ['the same subject', 'CN=Demo Signer (invented),O=Example Water Works (invented)', true],
    ['another subject', 'CN=Jane Roe (invented)', false],
  ])('a signature by %s', async (_what, subject, matches) => {
    const { archive } = fresh();
    const author = ensureAuthor(archive);
    const s = archive.appendSheet(doseSheetInput(author));
    expect(s.signer.subject).toBe('CN=Demo Signer (invented),O=Example Water Works (invented)');
    const check = (pdf: Buffer) => ({ signatureValid: fakeVerifyPdf(pdf), signerSubject: subject });
    const v = await archive.verifySheet(s.id, { verifyPdfSignature: check });
    expect(v.signatureValid).toBe(true);
    expect(v.signerSubjectMatches).toBe(matches);
    expect(v.valid).toBe(matches);
    if (!matches) expect(v.problems.join(' ')).toContain('but the PDF was signed with the certificate "CN=Jane Roe (invented)"');
    const walk = await archive.verifyArchive({ verifyPdfSignature: check });
    expect(walk.valid).toBe(matches);
    if (!matches) expect(walk.problems).toContainEqual(expect.objectContaining({ id: s.id, check: 'signer-subject' }));
  });

  it('a check that does not say which certificate signed leaves signerSubjectMatches null', async () => {
    const { archive } = fresh();
    const author = ensureAuthor(archive);
    const s = archive.appendSheet(doseSheetInput(author));
    const v = await archive.verifySheet(s.id, { verifyPdfSignature: fakeVerifyPdf });
    expect(v).toMatchObject({ valid: true, signerSubjectMatches: null });
  });
});
