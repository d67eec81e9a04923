/**
 * Every read of a record recomputes its record hash (and, for one record, its PDF hash) and says so:
 * `integrity` and `status` of getSheet, listSheets and the CSV export. A record changed in the file
 * is "altered", never "current". Also: the correction reason (inside the stored request, so inside
 * both hashes) and the oxidant and printed dose of a summary.
 *
 * Independent check: SHA-256 with node:crypto (FIPS 180-4); the file is changed through a raw
 * better-sqlite3 connection (rawTamper), as someone with file access could.
 */
import { createHash } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import { localSampleTime, type Archive } from '../../src/archive/index.js';
import { doseSheetInput, ensureAuthor, fakeVerifyPdf, openTestArchive, rawTamper, tempDataDir, caught } from './fixtures/archive-fixture.js';
import { csvRecords } from './fixtures/csv-reader.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): { archive: Archive; author: { userId: string; signerId: string }; dir: string; reopen: () => Archive } {
  const t = tempDataDir('integrity');
  let archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  const reopen = () => {
    archive.close();
    archive = openTestArchive(t.dir);
    return archive;
  };
  return { archive, author: ensureAuthor(archive), dir: t.dir, reopen };
}
const file = (dir: string) => `${dir}/oxidant-dosing.sqlite`;
const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');


describe('integrity on every read', () => {
  it('an untouched record: getSheet hashes the record and the PDF, the list and the CSV the record', () => {
    const { archive, author } = fresh();
    const input = doseSheetInput(author);
    const s = archive.appendSheet(input);
    expect(s.integrity).toEqual({ recordHashMatches: true, pdfHashMatches: true, checked: 'record hash and PDF hash', problems: [] });
    expect(s.status).toBe('current');
    const got = archive.getSheet(s.id);
    expect(got.integrity).toEqual({ recordHashMatches: true, pdfHashMatches: true, checked: 'record hash and PDF hash', problems: [] });
    expect(got.status).toBe('current');
    expect(sha256(archive.getSheetPdf(s.id))).toBe(got.pdfSha256);
    expect(archive.listSheets()[0]).toMatchObject({ status: 'current', integrity: { recordHashMatches: true, pdfHashMatches: true, checked: 'record hash and PDF hash' } });
    expect(csvRecords(archive.exportCsv()).rows[0]).toMatchObject({ status: 'current', integrity: 'record hash matches', verification_url: `/api/v1/sheets/${s.id}/verification` });
  });

  it.each([
    ['result_json (the dose)', `UPDATE sheets SET result_json = replace(result_json, '"value":1.', '"value":9.') WHERE seq = 2`],
    ['request_json', `UPDATE sheets SET request_json = replace(request_json, '"pH":7.2', '"pH":6.2') WHERE seq = 2`],
    ['sampled_at', `UPDATE sheets SET sampled_at = '2026-03-01T09:00:00.000Z' WHERE seq = 2`],
    ['signer_name', `UPDATE sheets SET signer_name = 'Someone else' WHERE seq = 2`],
    ['record_hash itself', `UPDATE sheets SET record_hash = '${'a'.repeat(64)}' WHERE seq = 2`],
    ['result_json made unreadable', `UPDATE sheets SET result_json = '{not json' WHERE seq = 2`],
    ['record_format', `UPDATE sheets SET record_format = 7 WHERE seq = 2`],
  ])('a changed %s: getSheet, listSheets and the CSV say "altered" for that record only, as the archive walk does', async (_what, sql) => {
    const { archive, author, dir, reopen } = fresh();
    const ids = [1, 2, 3].map(() => archive.appendSheet(doseSheetInput(author)).id);
    archive.close();
    await rawTamper(file(dir), ['sheets'], (db) => {
      expect(db.prepare(sql).run().changes).toBe(1);
    });
    const a = reopen();
    const walk = await a.verifyArchive({ verifyPdfSignature: fakeVerifyPdf });
    expect(walk.firstBrokenId).toBe(ids[1]);

    const one = a.getSheet(ids[1]!);
    expect(one.status).toBe('altered');
    expect(one.integrity.recordHashMatches).toBe(false);
    expect(one.integrity.pdfHashMatches).toBe(true);
    expect(one.integrity.problems.length).toBeGreaterThan(0);
    expect(a.getSheet(ids[0]!).status).toBe('current');
    expect(a.getSheet(ids[2]!).status).toBe('current'); // its own columns still hash; its chain link is verification's check

    const listed = new Map(a.listSheets().map((s) => [s.id, s]));
    expect(listed.get(ids[1]!)).toMatchObject({ status: 'altered', integrity: { recordHashMatches: false, checked: 'record hash and PDF hash' } });
    expect([listed.get(ids[0]!)!.status, listed.get(ids[2]!)!.status]).toEqual(['current', 'current']);

    const rows = new Map(csvRecords(a.exportCsv()).rows.map((r) => [r['sheet_id'], r]));
    expect(rows.get(ids[1]!)).toMatchObject({ status: 'altered', integrity: 'altered' });
    expect(rows.get(ids[0]!)).toMatchObject({ status: 'current', integrity: 'record hash matches' });
  });

  it('changed PDF bytes (one byte flipped): getSheet, the list and the CSV all hash the bytes and say altered, as the walk does', async () => {
    const { archive, author, dir, reopen } = fresh();
    const id = archive.appendSheet(doseSheetInput(author)).id;
    archive.close();
    await rawTamper(file(dir), ['sheets'], (db) => {
      const { pdf } = db.prepare('SELECT pdf FROM sheets WHERE id = ?').get(id) as { pdf: Buffer };
      const changed = Buffer.from(pdf);
      changed[20] = changed[20]! ^ 0xff;
      db.prepare('UPDATE sheets SET pdf = ? WHERE id = ?').run(changed, id);
    });
    const a = reopen();
    expect(a.getSheet(id)).toMatchObject({ status: 'altered', integrity: { pdfHashMatches: false, recordHashMatches: false, checked: 'record hash and PDF hash' } });
    const listed = a.listSheets()[0]!;
    expect(listed).toMatchObject({ status: 'altered', integrity: { pdfHashMatches: false, recordHashMatches: false, checked: 'record hash and PDF hash' } });
    // the same words on every route: the digest of the bytes as stored (node:crypto, FIPS 180-4)
    const stored = a.getSheetPdf(id);
    expect(listed.integrity.problems).toContain(`the stored PDF hashes to ${sha256(stored)}, not to the recorded ${listed.pdfSha256}`);
    expect(listed.integrity).toEqual(a.getSheet(id).integrity);
    expect(csvRecords(a.exportCsv()).rows[0]).toMatchObject({ sheet_id: id, status: 'altered', integrity: 'altered' });
    expect((await a.verifyArchive()).firstBrokenId).toBe(id);
  });

  it('an altered record that was corrected is "altered", not "superseded"; its correction stays "current"', async () => {
    const { archive, author, dir, reopen } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const b = archive.appendSheet(doseSheetInput(author, { supersedes: a.id, request: { oxidant: 'potassium-permanganate', supersedes: a.id, correctionReason: 'iron re-run' } }));
    expect(archive.getSheet(a.id).status).toBe('superseded');
    archive.close();
    await rawTamper(file(dir), ['sheets'], (db) => {
      db.prepare(`UPDATE sheets SET plant_version = 3 WHERE id = ?`).run(a.id);
    });
    const r = reopen();
    expect(r.getSheet(a.id)).toMatchObject({ status: 'altered', supersededBy: b.id });
    expect(r.getSheet(b.id).status).toBe('current');
  });
});

describe('correction reason (inside the stored request, so inside both hashes)', () => {
  const req = (extra: Record<string, unknown>) => ({ oxidant: 'sodium-hypochlorite', sample: { pH: 7 }, ...extra });

  it('is read back from the request; a sheet without one (every earlier record) reads null and still verifies', async () => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const b = archive.appendSheet(doseSheetInput(author, { supersedes: a.id, request: req({ correctionReason: 'Iron was 1.5 mg/L, not 0.15 (lab re-run)' }) }));
    expect(a.correctionReason).toBeNull();
    expect(b.correctionReason).toBe('Iron was 1.5 mg/L, not 0.15 (lab re-run)');
    expect(archive.getSheet(b.id).correctionReason).toBe('Iron was 1.5 mg/L, not 0.15 (lab re-run)');
    expect(archive.listSheets().map((s) => s.correctionReason)).toEqual([null, 'Iron was 1.5 mg/L, not 0.15 (lab re-run)']);
    expect(csvRecords(archive.exportCsv()).rows.map((r) => r['correction_reason'])).toEqual(['', 'Iron was 1.5 mg/L, not 0.15 (lab re-run)']);
    expect(await archive.verifyArchive({ verifyPdfSignature: fakeVerifyPdf })).toMatchObject({ valid: true, records: 2 });
  });

  it('is covered by the record hash: changing it in the file makes the record "altered"', async () => {
    const { archive, author, dir, reopen } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const b = archive.appendSheet(doseSheetInput(author, { supersedes: a.id, request: req({ correctionReason: 'wrong flow meter reading' }) }));
    archive.close();
    await rawTamper(file(dir), ['sheets'], (db) => {
      db.prepare(`UPDATE sheets SET request_json = replace(request_json, 'wrong flow', 'typo in flow') WHERE id = ?`).run(b.id);
    });
    const r = reopen();
    expect(r.getSheet(b.id)).toMatchObject({ status: 'altered', correctionReason: 'typo in flow meter reading' });
    expect((await r.verifyArchive()).firstBrokenId).toBe(b.id);
  });

  it.each([
    ['without supersedes', { correctionReason: 'a reason' }, false, /only with supersedes/],
    ['too short', { correctionReason: 'ab' }, true, /3 to 500/],
    ['only blanks', { correctionReason: '     ' }, true, /3 to 500/],
    ['too long', { correctionReason: 'x'.repeat(501) }, true, /3 to 500/],
    ['not text', { correctionReason: 42 }, true, /3 to 500/],
  ])('is refused %s (VALIDATION_FAILED at /request/correctionReason), and nothing is stored', (_what, extra, correction, message) => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const e = caught(() => archive.appendSheet(doseSheetInput(author, { ...(correction ? { supersedes: a.id } : {}), request: req(extra) })));
    expect(e.code).toBe('VALIDATION_FAILED');
    expect(e.fields[0]!.pointer).toBe('/request/correctionReason');
    expect(e.detail).toMatch(message);
    expect(archive.listSheets()).toHaveLength(1);
  });
});

describe('oxidant and printed dose of a summary', () => {
  it.each([
    [
      'a dose sheet: the result’s dose with its printed text',
      'dose' as const,
      { oxidant: 'sodium-hypochlorite' },
      { dose: { value: 2.2649949323382996, unit: 'mg/L', rounded: '2.26', basis: 'as Cl2' } },
      'sodium-hypochlorite',
      { value: 2.2649949323382996, unit: 'mg/L', basis: 'as Cl2', rounded: '2.26', what: 'dose' },
    ],
    [
      'a dose sheet without rounded text: rounded to 3 significant figures, half to even (2.265 → 2.26)',
      'dose' as const,
      { oxidant: 'ozone' },
      { dose: { value: 2.265, unit: 'mg/L', basis: 'as O3' } },
      'ozone',
      { value: 2.265, unit: 'mg/L', basis: 'as O3', rounded: '2.26', what: 'dose' },
    ],
    [
      'a jar-test evaluation: its recommended dose (stored shape of POST /api/v1/jar-tests/evaluations)',
      'jar-test-evaluation' as const,
      { oxidant: 'potassium-permanganate' },
      { format: 'oxd-jar-test-evaluation/1', oxidant: { id: 'potassium-permanganate', name: 'Potassium permanganate', basis: 'as KMnO4' }, evaluation: { recommendedDose: { doseMgPerL: 3 } } },
      'potassium-permanganate',
      { value: 3, unit: 'mg/L', basis: 'as KMnO4', rounded: '3.00', what: 'recommended dose' },
    ],
    [
      'a jar-test evaluation that recommends no dose',
      'jar-test-evaluation' as const,
      {},
      { oxidant: { id: 'chlorine-dioxide', basis: 'as ClO2' }, evaluation: { recommendedDose: null } },
      'chlorine-dioxide',
      null,
    ],
    ['a jar-test plan', 'jar-test-plan' as const, { oxidant: 'ozone' }, { jars: [] }, 'ozone', null],
  ])('%s', (_what, kind, request, result, oxidant, dose) => {
    const { archive, author } = fresh();
    const s = archive.appendSheet(doseSheetInput(author, { kind, request, result }));
    expect([s.oxidant, s.dose]).toEqual([oxidant, dose]);
    expect([archive.listSheets()[0]!.oxidant, archive.listSheets()[0]!.dose]).toEqual([oxidant, dose]);
  });
});

describe('localSampleTime (the sample time as written, with its offset)', () => {
  it.each([
    ['2026-12-01T00:30:00+01:00', '2026-11-30T23:30:00.000Z', { local: '2026-12-01T00:30:00', offset: '+01:00', day: '2026-12-01', written: true }],
    ['2026-11-30T19:30-05:00', '2026-12-01T00:30:00.000Z', { local: '2026-11-30T19:30', offset: '-05:00', day: '2026-11-30', written: true }],
    ['2026-12-01T06:30:00.250Z', '2026-12-01T06:30:00.250Z', { local: '2026-12-01T06:30:00.250', offset: '+00:00', day: '2026-12-01', written: true }],
    ['2026-12-01T14:45:00+14:00', '2026-12-01T00:45:00.000Z', { local: '2026-12-01T14:45:00', offset: '+14:00', day: '2026-12-01', written: true }],
    // nothing written (or not a date-time with a zone): the UTC time stands in, as in the from/to filter
    [undefined, '2026-12-01T06:30:00.000Z', { local: '2026-12-01T06:30:00.000', offset: '+00:00', day: '2026-12-01', written: false }],
    ['2026-12-01T06:30:00', '2026-12-01T06:30:00.000Z', { local: '2026-12-01T06:30:00.000', offset: '+00:00', day: '2026-12-01', written: false }],
  ])('%j (stored %s) → %j', (written, utc, expected) => {
    expect(localSampleTime(written, utc)).toEqual(expected);
  });
});
