import { createHash } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import {
  HASHED_COLUMNS,
  ZERO_HASH,
  isValidSheetId,
  newSheetId,
  normalizeTimestamp,
  sheetContentSha256,
  type Archive,
} from '../../src/archive/index.js';
import { doseSheetInput, ensureAuthor, openTestArchive, tempDataDir, caught } from './fixtures/archive-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): { archive: Archive; author: { userId: string; signerId: string } } {
  const t = tempDataDir('sheets');
  const archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  return { archive, author: ensureAuthor(archive) };
}
const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');

describe('sheet ids', () => {
  it.each([
    ['', false],
    ['DS-', false],
    ['../../etc/passwd', false],
    ['DS-20260314-7K3M9QXA2B/../x', false],
    ['DS-20260314-7K3M9QXA2B\n', false],
    [' DS-20260314-7K3M9QXA2B', false],
    ['ds-20260314-7k3m9qxa2b', false], // lower case
    ['DS-20261314-7K3M9QXA2B', false], // month 13
    ['DS-20260300-7K3M9QXA2B', false], // day 0
    ['DS-20260314-7K3M9QXA2I', false], // I is not Crockford base32
    ['DS-20260314-7K3M9QXA2', false], // 9 characters
    ['XX-20260314-7K3M9QXA2B', false],
    ['DS-20260314-7K3M9QXA2B', true],
    ['JT-20261231-0000000000', true],
  ])('isValidSheetId(%j) = %s', (id, ok) => {
    expect(isValidSheetId(id)).toBe(ok);
  });

  it('newSheetId makes valid, distinct ids with the UTC day', () => {
    const ids = new Set(Array.from({ length: 500 }, () => newSheetId('dose', new Date('2026-03-14T23:59:59Z'))));
    expect(ids.size).toBe(500);
    for (const id of ids) {
      expect(isValidSheetId(id)).toBe(true);
      expect(id.startsWith('DS-20260314-')).toBe(true);
    }
    expect(newSheetId('jar-test-evaluation').startsWith('JT-')).toBe(true);
  });
});

describe('timestamps', () => {
  it.each([
    ['2026-03-14T08:30:00Z', '2026-03-14T08:30:00.000Z'],
    ['2026-03-14T08:30+01:00', '2026-03-14T07:30:00.000Z'],
    ['2026-03-14T00:30:00.5-05:00', '2026-03-14T05:30:00.500Z'],
    ['2026-03-14T08:30:00', null], // no zone: ambiguous
    ['2026-02-30T08:30:00Z', null],
    ['2026-03-14 08:30:00Z', null],
    ['14/03/2026 08:30', null],
    ['2026-03-14T24:00:00Z', null],
  ])('normalizeTimestamp(%j) = %j', (text, iso) => {
    expect(normalizeTimestamp(text)).toBe(iso);
  });
});

describe('the hash chain', () => {
  it('hashes every column but record_hash (checked against the table definition)', () => {
    const { archive } = fresh();
    const columns = (archive.db.prepare('PRAGMA table_info(sheets)').all() as { name: string }[]).map((c) => c.name);
    expect([...HASHED_COLUMNS]).toEqual(columns.filter((c) => c !== 'record_hash'));
  });

  it('links each record to the previous one; the first to 64 zeros', () => {
    const { archive, author } = fresh();
    const stored = Array.from({ length: 5 }, () => archive.appendSheet(doseSheetInput(author)));
    expect(stored.map((s) => s.seq)).toEqual([1, 2, 3, 4, 5]);
    expect(stored[0]!.prevHash).toBe(ZERO_HASH);
    for (let i = 1; i < stored.length; i++) expect(stored[i]!.prevHash).toBe(stored[i - 1]!.recordHash);
    expect(new Set(stored.map((s) => s.recordHash)).size).toBe(5);
  });

  it('record_hash is SHA-256 of the documented serialisation (recomputed here independently)', () => {
    const { archive, author } = fresh();
    archive.appendSheet(doseSheetInput(author));
    const { id } = archive.appendSheet(doseSheetInput(author, { supersedes: null }));
    const row = archive.db.prepare('SELECT * FROM sheets WHERE id = ?').get(id) as Record<string, unknown>;
    // sheets.ts: every column but record_hash; the pdf BLOB enters as the hex SHA-256 of its bytes;
    // plus "format": "oxd-sheet-record/1"; keys sorted; no whitespace.
    const obj: Record<string, unknown> = { format: 'oxd-sheet-record/1' };
    for (const [k, v] of Object.entries(row)) {
      if (k === 'record_hash') continue;
      obj[k] = k === 'pdf' ? sha256(v as Buffer) : v;
    }
    const text = JSON.stringify(obj, Object.keys(obj).sort());
    expect(row['record_hash']).toBe(sha256(text));
    expect(row['pdf_sha256']).toBe(sha256(row['pdf'] as Buffer));
  });

  it('content_sha256 can be computed before rendering and equals the stored one', () => {
    const { archive, author } = fresh();
    const input = doseSheetInput(author, { sampledAt: '2026-03-14T08:30:00+01:00' });
    const expected = sheetContentSha256(input);
    const stored = archive.appendSheet({ ...input, contentSha256: expected });
    expect(stored.contentSha256).toBe(expected);
    expect(stored.sampledAt).toBe('2026-03-14T07:30:00.000Z');
    expect(caught(() => archive.appendSheet({ ...doseSheetInput(author), contentSha256: expected })).code).toBe('INTERNAL');
  });
});

describe('storing and reading', () => {
  it('getSheet returns request and result as stored; getSheetPdf the exact bytes', () => {
    const { archive, author } = fresh();
    const input = doseSheetInput(author);
    const stored = archive.appendSheet(input);
    const got = archive.getSheet(stored.id);
    expect(got.request).toEqual(input.request);
    expect(got.result).toEqual(input.result);
    expect(got).toMatchObject({ id: input.id, kind: 'dose', createdBy: author.userId, supersededBy: null, pdfBytes: input.pdf.length });
    expect(got.signer).toMatchObject({ id: author.signerId, role: 'Shift operator' });
    expect(archive.getSheetPdf(stored.id).equals(Buffer.from(input.pdf))).toBe(true);
  });

  it('unknown and malformed ids: SHEET_NOT_FOUND and ID_INVALID', () => {
    const { archive } = fresh();
    expect(caught(() => archive.getSheet('DS-20260314-0000000000')).code).toBe('SHEET_NOT_FOUND');
    expect(caught(() => archive.getSheetPdf('DS-20260314-0000000000')).code).toBe('SHEET_NOT_FOUND');
    expect(caught(() => archive.getSheet("DS-1' OR '1'='1")).code).toBe('ID_INVALID');
    expect(caught(() => archive.getSheetPdf('../reports/x')).code).toBe('ID_INVALID');
  });

  it('a retried append (same id, same content and PDF) returns the stored record; other content is refused', () => {
    const { archive, author } = fresh();
    const input = doseSheetInput(author);
    const first = archive.appendSheet(input);
    expect(archive.appendSheet(input)).toEqual(first);
    expect(archive.listSheets()).toHaveLength(1);
    const e = caught(() => archive.appendSheet({ ...input, result: { other: true } }));
    expect(e.code).toBe('ID_INVALID');
    expect(e.detail).toMatch(/already in the archive/);
  });

  it.each([
    ['a sample time without a zone', { sampledAt: '2026-03-14T08:30:00' }, 'VALIDATION_FAILED', '/sampledAt'],
    ['a sample time decades ahead', { sampledAt: '2099-01-01T00:00:00Z' }, 'VALIDATION_FAILED', '/sampledAt'],
    ['an unknown kind', { kind: 'memo' as never }, 'VALIDATION_FAILED', '/kind'],
    ['a malformed id', { id: 'DS-../../x' }, 'ID_INVALID', '/id'],
    ['a malformed plant id', { plantId: 'Plant One' }, 'ID_INVALID', '/plantId'],
    ['a plant version that does not exist', { plantId: 'demo-plant', plantVersion: 3 }, 'PLANT_NOT_FOUND', '/plantVersion'],
    ['a plant version without plant', { plantVersion: 1 }, 'VALIDATION_FAILED', '/plantVersion'],
    ['an unknown signer', { signerId: 'sig_0000000000000000' }, 'SIGNER_INVALID', '/signerId'],
    ['a malformed supersedes', { supersedes: 'yesterday' }, 'ID_INVALID', '/supersedes'],
  ])('refuses %s, naming the field', (_n, overrides, code, pointer) => {
    const { archive, author } = fresh();
    archive.savePlant({ id: 'demo-plant' }, { createdBy: 'x' });
    const e = caught(() => archive.appendSheet(doseSheetInput(author, overrides)));
    expect(e.code).toBe(code);
    expect(e.fields[0]?.pointer).toBe(pointer);
    expect(archive.listSheets()).toHaveLength(0);
  });

  it.each([
    ['bytes that are not a PDF', { pdf: Buffer.from('hello') }],
    ['a NaN in the result', { result: { dose: { value: Number.NaN, unit: 'mg/L' } } }],
    ['binary data in the request', { request: { blob: new Uint8Array(3) } }],
  ])('refuses %s (INTERNAL: a bug of the caller, nothing stored)', (_n, overrides) => {
    const { archive, author } = fresh();
    expect(caught(() => archive.appendSheet(doseSheetInput(author, overrides as never))).code).toBe('INTERNAL');
    expect(archive.listSheets()).toHaveLength(0);
  });

  it('an unknown creator is refused (AUTH_REQUIRED)', () => {
    const { archive, author } = fresh();
    expect(caught(() => archive.appendSheet(doseSheetInput({ ...author, userId: 'usr_ZZZZZZZZZZZZZZZZ' }))).code).toBe('AUTH_REQUIRED');
  });

  it('stores the plant and the profile version the sheet was computed with', () => {
    const { archive, author } = fresh();
    const p = archive.savePlant({ id: 'demo-plant', flow: 1 }, { createdBy: 'x' });
    const s = archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: p.version }));
    expect(archive.getSheet(s.id)).toMatchObject({ plantId: 'demo-plant', plantVersion: 1 });
  });
});

describe('supersede rules', () => {
  it('a correction names the sheet it supersedes, which then shows who superseded it', () => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const b = archive.appendSheet(doseSheetInput(author, { supersedes: a.id }));
    expect(b.supersedes).toBe(a.id);
    expect(archive.getSheet(a.id).supersededBy).toBe(b.id);
    expect(archive.getSheet(b.id).supersededBy).toBeNull();
    // a correction of the correction is fine
    const c = archive.appendSheet(doseSheetInput(author, { supersedes: b.id }));
    expect(archive.listSheets().map((s) => [s.id, s.supersededBy])).toEqual([
      [a.id, b.id],
      [b.id, c.id],
      [c.id, null],
    ]);
  });

  it('a correction must be of the same kind and plant: SHEET_SUPERSEDES_OTHER at /supersedes, nothing stored', () => {
    const { archive, author } = fresh();
    archive.savePlant({ id: 'plant-a' }, { createdBy: 'x' });
    const ofPlant = archive.appendSheet(doseSheetInput(author, { plantId: 'plant-a', plantVersion: 1 }));
    const noPlant = archive.appendSheet(doseSheetInput(author));
    const cases = [
      doseSheetInput(author, { supersedes: ofPlant.id }), // a sheet without plant correcting a plant's sheet
      doseSheetInput(author, { plantId: 'plant-a', plantVersion: 1, supersedes: noPlant.id }),
      doseSheetInput(author, { kind: 'jar-test-evaluation', supersedes: noPlant.id }),
    ];
    for (const input of cases) {
      const e = caught(() => archive.appendSheet(input));
      expect(e.code).toBe('SHEET_SUPERSEDES_OTHER');
      expect(e.fields[0]?.pointer).toBe('/supersedes');
    }
    expect(archive.listSheets()).toHaveLength(2);
    expect(archive.getSheet(ofPlant.id).supersededBy).toBeNull();
  });

  it('superseding an unknown sheet is SHEET_SUPERSEDES_UNKNOWN at /supersedes', () => {
    const { archive, author } = fresh();
    const e = caught(() => archive.appendSheet(doseSheetInput(author, { supersedes: 'DS-20260101-0000000000' })));
    expect(e.code).toBe('SHEET_SUPERSEDES_UNKNOWN');
    expect(e.fields[0]?.pointer).toBe('/supersedes');
  });

  it('a sheet is superseded at most once: the second try is SHEET_ALREADY_SUPERSEDED naming the first correction', () => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    const b = archive.appendSheet(doseSheetInput(author, { supersedes: a.id }));
    const e = caught(() => archive.appendSheet(doseSheetInput(author, { supersedes: a.id })));
    expect(e.code).toBe('SHEET_ALREADY_SUPERSEDED');
    expect(e.params).toMatchObject({ supersedes: a.id, supersededBy: b.id });
    expect(e.detail).toContain(b.id);
    expect(archive.listSheets()).toHaveLength(2);
  });

  it('the database itself refuses a second row superseding the same sheet (unique index), even past the code', () => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author));
    archive.appendSheet(doseSheetInput(author, { supersedes: a.id }));
    expect(() =>
      archive.db
        .prepare(
          `INSERT INTO sheets SELECT 99, 'DS-20260101-0000000001', record_format, kind, plant_id, plant_version, sampled_at, created_at, created_by,
             signer_id, signer_name, signer_role, signer_subject, request_json, result_json, pdf, pdf_sha256, content_sha256, supersedes,
             '${'9'.repeat(64)}', '${'8'.repeat(64)}' FROM sheets WHERE seq = 2`,
        )
        .run(),
    ).toThrow(/UNIQUE|append-only/);
  });
});

describe('listSheets', () => {
  it('filters by plant and sample time; a date-only "to" includes that whole UTC day', () => {
    const { archive, author } = fresh();
    archive.savePlant({ id: 'plant-a' }, { createdBy: 'x' });
    archive.savePlant({ id: 'plant-b' }, { createdBy: 'x' });
    const mk = (plantId: string, sampledAt: string) => archive.appendSheet(doseSheetInput(author, { plantId, plantVersion: 1, sampledAt })).id;
    const feb28 = mk('plant-a', '2026-02-28T23:59:59Z');
    const mar01 = mk('plant-a', '2026-03-01T00:00:00Z');
    const mar31late = mk('plant-a', '2026-03-31T23:59:59.999Z');
    const apr01 = mk('plant-a', '2026-04-01T00:00:00Z');
    mk('plant-b', '2026-03-15T12:00:00Z');
    const mar15 = mk('plant-a', '2026-03-15T13:00:00+01:00'); // 12:00Z, appended last, sorted by sample time

    expect(archive.listSheets({ plantId: 'plant-a', from: '2026-03-01', to: '2026-03-31' }).map((s) => s.id)).toEqual([mar01, mar15, mar31late]);
    expect(archive.listSheets({ plantId: 'plant-a', to: '2026-02-28' }).map((s) => s.id)).toEqual([feb28]);
    expect(archive.listSheets({ plantId: 'plant-a', from: '2026-04-01T00:00:00Z' }).map((s) => s.id)).toEqual([apr01]);
    expect(archive.listSheets({ from: '2026-03-15T12:00:00Z', to: '2026-03-15T12:00:00Z' })).toHaveLength(2);
    expect(archive.listSheets()).toHaveLength(6);
    expect(archive.listSheets({ plantId: 'plant-a', limit: 2 }).map((s) => s.id)).toEqual([feb28, mar01]);
  });

  it("a date-only range is the sample's own local day, as its request wrote sampledAt (a monthly report files night samples right)", () => {
    const { archive, author } = fresh();
    archive.savePlant({ id: 'plant-a' }, { createdBy: 'x' });
    const mk = (sampledAt: string, inRequest = true) => {
      const input = doseSheetInput(author, { plantId: 'plant-a', plantVersion: 1, sampledAt });
      return archive.appendSheet({ ...input, request: { ...(input.request as object), ...(inRequest ? { sampledAt } : {}) } }).id;
    };
    const dec01Night = mk('2026-12-01T00:30:00+01:00'); // 2026-11-30T23:30Z: December at the plant
    const nov30Evening = mk('2026-11-30T20:00:00-05:00'); // 2026-12-01T01:00Z: November at the plant
    const dec31Late = mk('2026-12-31T23:50:00+14:00'); // 2026-12-31T09:50Z
    const jan01Early = mk('2027-01-01T00:10:00-12:00'); // 2027-01-01T12:10Z
    const utcOnly = mk('2026-12-15T12:00:00Z', false); // no sampledAt in the request: the UTC day
    const dec = archive.listSheets({ plantId: 'plant-a', from: '2026-12-01', to: '2026-12-31' }).map((s) => s.id);
    expect(dec.sort()).toEqual([dec01Night, dec31Late, utcOnly].sort());
    expect(archive.listSheets({ plantId: 'plant-a', from: '2026-11-01', to: '2026-11-30' }).map((s) => s.id)).toEqual([nov30Evening]);
    expect(archive.listSheets({ plantId: 'plant-a', from: '2027-01-01' }).map((s) => s.id)).toEqual([jan01Early]);
    // a date-time bound is an instant, whatever the offsets: 2026-12-01T00:00Z onwards
    expect(archive.listSheets({ plantId: 'plant-a', from: '2026-12-01T00:00:00Z', to: '2026-12-01T23:59:59Z' }).map((s) => s.id)).toEqual([nov30Evening]);
  });

  it.each([
    [{ from: '2026-13-01' }, '/from'],
    [{ to: 'yesterday' }, '/to'],
    [{ from: '2026-03-10', to: '2026-03-01' }, '/to'],
    [{ plantId: '../x' }, '/plantId'],
    [{ limit: 0 }, '/limit'],
    [{ limit: 1.5 }, '/limit'],
  ])('refuses a bad query %j naming the parameter', (query, pointer) => {
    const { archive } = fresh();
    expect(caught(() => archive.listSheets(query)).fields[0]?.pointer).toBe(pointer);
  });
});
