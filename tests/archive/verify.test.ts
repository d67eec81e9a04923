/**
 * Tamper detection. Each test builds a small archive, closes it, then changes the SQLite file
 * through a raw better-sqlite3 connection (dropping the append-only triggers first, as anyone with
 * write access to the file could), reopens it and checks that verification names the damage.
 */
import { createHash } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import { recordHash, type Archive, type SheetSummary } from '../../src/archive/index.js';
import { REGISTRY_COLUMNS as REGISTRY_COLUMNS_BY_FORMAT, REGISTRY_FORMAT, missingColumns, rowDigest, REGISTRY_TABLES } from '../../src/archive/registry.js';
import type { SheetRow } from '../../src/archive/sheets.js';
import { caught, doseSheetInput, ensureAuthor, fakeVerifyPdf, openTestArchive, rawTamper, tempDataDir } from './fixtures/archive-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});

/** An archive with `n` sheets (plant profile included), closed; returns its folder and the stored summaries. */
function built(n = 4): { dir: string; file: string; sheets: SheetSummary[]; reopen: () => Archive } {
  const t = tempDataDir('verify');
  cleanups.push(t.cleanup);
  const a = openTestArchive(t.dir);
  const author = ensureAuthor(a);
  a.savePlant({ id: 'demo-plant', name: 'invented' }, { createdBy: 'x' });
  const sheets = Array.from({ length: n }, (_, i) =>
    a.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, pdfBytes: 3000 + i })),
  );
  const file = a.file;
  a.close();
  const reopen = () => {
    const b = openTestArchive(t.dir);
    cleanups.unshift(() => b.close());
    return b;
  };
  return { dir: t.dir, file, sheets, reopen };
}

const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');

describe('an untouched archive', () => {
  it('verifies as a whole and sheet by sheet, signatures included', async () => {
    const { sheets, reopen } = built(4);
    const a = reopen();
    const v = await a.verifyArchive({ verifyPdfSignature: fakeVerifyPdf });
    expect(v).toMatchObject({ valid: true, records: 4, firstBrokenId: null, problems: [], signaturesChecked: 4, plantVersions: 1 });
    expect(v.head).toEqual({ lastId: sheets[3]!.id, lastSeq: 4, recordHash: sheets[3]!.recordHash });
    for (const s of sheets) {
      expect(await a.verifySheet(s.id, { verifyPdfSignature: fakeVerifyPdf })).toEqual({
        id: s.id,
        seq: s.seq,
        valid: true,
        hashMatches: true,
        recordHashMatches: true,
        chainValid: true,
        signatureValid: true,
        signerSubjectMatches: null, // the stand-in check does not say which certificate signed
        problems: [],
      });
    }
  });

  it('an empty archive is valid with 0 records', async () => {
    const { reopen } = built(0);
    expect(await reopen().verifyArchive()).toMatchObject({ valid: true, records: 0, firstBrokenId: null });
  });

  it('without a signature verifier, signatureValid is null (not claimed)', async () => {
    const { sheets, reopen } = built(1);
    expect(await reopen().verifySheet(sheets[0]!.id, { verifyPdfSignature: null })).toMatchObject({ valid: true, signatureValid: null });
  });

  it('a verifier that throws counts as an invalid signature, with its message', async () => {
    const { sheets, reopen } = built(1);
    const v = await reopen().verifySheet(sheets[0]!.id, {
      verifyPdfSignature: async () => {
        throw new Error('no signature dictionary');
      },
    });
    expect(v).toMatchObject({ valid: false, signatureValid: false, hashMatches: true });
    expect(v.problems.join()).toContain('no signature dictionary');
  });
});

describe('tampering is detected', () => {
  it('one byte of a stored PDF: hash, record hash and signature all fail', async () => {
    const { file, sheets, reopen } = built(4);
    const victim = sheets[1]!;
    await rawTamper(file, ['sheets'], (db) => {
      const { pdf } = db.prepare('SELECT pdf FROM sheets WHERE id = ?').get(victim.id) as { pdf: Buffer };
      const i = Math.floor(pdf.length / 2);
      pdf[i] = pdf[i]! ^ 0x01;
      db.prepare('UPDATE sheets SET pdf = ? WHERE id = ?').run(pdf, victim.id);
    });
    const a = reopen();
    const s = await a.verifySheet(victim.id, { verifyPdfSignature: fakeVerifyPdf });
    expect(s).toMatchObject({ valid: false, hashMatches: false, recordHashMatches: false, chainValid: true, signatureValid: false });
    const v = await a.verifyArchive();
    expect(v).toMatchObject({ valid: false, records: 4, firstBrokenId: victim.id });
    expect(v.problems.map((p) => p.check)).toEqual(['pdf-hash', 'record-hash']);
    // the neighbours still verify on their own
    expect((await a.verifySheet(sheets[2]!.id, { verifyPdfSignature: fakeVerifyPdf })).valid).toBe(true);
  });

  it('a PDF byte changed together with pdf_sha256: the record hash still catches it', async () => {
    const { file, sheets, reopen } = built(3);
    const victim = sheets[1]!;
    await rawTamper(file, ['sheets'], (db) => {
      const { pdf } = db.prepare('SELECT pdf FROM sheets WHERE id = ?').get(victim.id) as { pdf: Buffer };
      pdf[20] = pdf[20]! ^ 0x80;
      db.prepare('UPDATE sheets SET pdf = ?, pdf_sha256 = ? WHERE id = ?').run(pdf, sha256(pdf), victim.id);
    });
    const s = await reopen().verifySheet(victim.id, { verifyPdfSignature: null });
    expect(s).toMatchObject({ valid: false, hashMatches: true, recordHashMatches: false });
  });

  it('one byte of result_json: the record hash fails', async () => {
    const { file, sheets, reopen } = built(4);
    const victim = sheets[2]!;
    await rawTamper(file, ['sheets'], (db) => {
      const { result_json } = db.prepare('SELECT result_json FROM sheets WHERE id = ?').get(victim.id) as { result_json: string };
      const changed = result_json.replace(/"value":1\.(\d)/, (_m, d: string) => `"value":1.${(Number(d) + 1) % 10}`);
      expect(changed).not.toBe(result_json);
      expect(changed.length).toBe(result_json.length);
      db.prepare('UPDATE sheets SET result_json = ? WHERE id = ?').run(changed, victim.id);
    });
    const a = reopen();
    expect(await a.verifySheet(victim.id, { verifyPdfSignature: null })).toMatchObject({ valid: false, hashMatches: true, recordHashMatches: false, chainValid: true });
    const v = await a.verifyArchive();
    expect(v.firstBrokenId).toBe(victim.id);
    expect(v.problems).toEqual([expect.objectContaining({ id: victim.id, check: 'record-hash' })]);
  });

  it('a row rewritten with a freshly computed record_hash breaks the next link', async () => {
    const { file, sheets, reopen } = built(4);
    const victim = sheets[1]!;
    await rawTamper(file, ['sheets'], (db) => {
      const row = db.prepare('SELECT * FROM sheets WHERE id = ?').get(victim.id) as SheetRow;
      const forged = { ...row, result_json: row.result_json.replace('as KMnO4', 'as Cl2') };
      db.prepare('UPDATE sheets SET result_json = ?, record_hash = ? WHERE id = ?').run(forged.result_json, recordHash(forged, sha256(row.pdf)), victim.id);
    });
    const a = reopen();
    expect((await a.verifySheet(victim.id, { verifyPdfSignature: null })).valid).toBe(true);
    const next = await a.verifySheet(sheets[2]!.id, { verifyPdfSignature: null });
    expect(next).toMatchObject({ valid: false, chainValid: false, recordHashMatches: true });
    const v = await a.verifyArchive();
    expect(v).toMatchObject({ valid: false, firstBrokenId: sheets[2]!.id });
    expect(v.problems.map((p) => p.check)).toEqual(['chain']);
  });

  it('a deleted middle row: the record after it fails (sequence gap and chain link)', async () => {
    const { file, sheets, reopen } = built(5);
    await rawTamper(file, ['sheets'], (db) => db.prepare('DELETE FROM sheets WHERE id = ?').run(sheets[2]!.id));
    const a = reopen();
    const v = await a.verifyArchive();
    expect(v).toMatchObject({ valid: false, records: 4, firstBrokenId: sheets[3]!.id });
    expect(v.problems.map((p) => [p.id, p.check])).toEqual([
      [sheets[3]!.id, 'sequence'],
      [sheets[3]!.id, 'chain'],
    ]);
    expect(await a.verifySheet(sheets[3]!.id, { verifyPdfSignature: null })).toMatchObject({ chainValid: false, recordHashMatches: true });
  });

  it('the first row deleted: the new first record does not start the chain', async () => {
    const { file, sheets, reopen } = built(3);
    await rawTamper(file, ['sheets'], (db) => db.prepare('DELETE FROM sheets WHERE seq = 1').run());
    const v = await reopen().verifyArchive();
    expect(v).toMatchObject({ valid: false, firstBrokenId: sheets[1]!.id });
  });

  it('reordered seq (two records swapped): detected', async () => {
    const { file, sheets, reopen } = built(4);
    await rawTamper(file, ['sheets'], (db) => {
      db.prepare('UPDATE sheets SET seq = 100 WHERE seq = 2').run();
      db.prepare('UPDATE sheets SET seq = 2 WHERE seq = 3').run();
      db.prepare('UPDATE sheets SET seq = 3 WHERE seq = 100').run();
    });
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.firstBrokenId).toBe(sheets[2]!.id); // now at seq 2
    expect(v.problems.map((p) => p.check)).toEqual(expect.arrayContaining(['chain', 'record-hash']));
  });

  it('the last rows deleted: the sequence counter shows the cut tail', async () => {
    const { file, reopen } = built(4);
    await rawTamper(file, ['sheets'], (db) => db.prepare('DELETE FROM sheets WHERE seq >= 3').run());
    const v = await reopen().verifyArchive();
    expect(v).toMatchObject({ valid: false, records: 2, firstBrokenId: null });
    expect(v.problems).toEqual([expect.objectContaining({ check: 'tail', message: expect.stringMatching(/last 2 record/) })]);
  });

  it('the last rows deleted and the counter reset: only a head recorded elsewhere catches it', async () => {
    const { file, sheets, reopen } = built(4);
    const head = { records: 4, recordHash: sheets[3]!.recordHash };
    await rawTamper(file, ['sheets'], (db) => {
      db.prepare('DELETE FROM sheets WHERE seq = 4').run();
      db.prepare("UPDATE sqlite_sequence SET seq = 3 WHERE name = 'sheets'").run();
    });
    const a = reopen();
    expect((await a.verifyArchive()).valid).toBe(true); // a truncated chain is still a consistent chain
    const v = await a.verifyArchive({ expectedHead: head });
    expect(v.valid).toBe(false);
    expect(v.problems.map((p) => p.check)).toEqual(['head', 'head']);
  });

  it('a plant profile changed in place: plant-hash problem', async () => {
    const { file, reopen } = built(1);
    await rawTamper(file, ['plant_versions'], (db) => db.prepare(`UPDATE plant_versions SET profile_json = '{"id":"demo-plant","name":"changed"}'`).run());
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    // its own SHA-256 and its registry entry both disagree
    expect(v.problems).toEqual([
      expect.objectContaining({ id: 'demo-plant@v1', check: 'plant-hash' }),
      expect.objectContaining({ id: 'plant_versions:demo-plant#1', check: 'registry-row-hash' }),
    ]);
  });
  it('a plant profile rewritten together with its SHA-256: the registry log still catches it, and the service will not use it', async () => {
    const { file, reopen } = built(1);
    const forged = '{"id":"demo-plant","name":"changed"}';
    await rawTamper(file, ['plant_versions'], (db) => db.prepare('UPDATE plant_versions SET profile_json = ?, sha256 = ?').run(forged, sha256(forged)));
    const a = reopen();
    const v = await a.verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.problems).toEqual([expect.objectContaining({ id: 'plant_versions:demo-plant#1', check: 'registry-row-hash' })]);
    expect(caught(() => a.getPlant('demo-plant')).code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(a.listPlants().find((p) => p.plantId === 'demo-plant')?.altered).toBe(true);
  });
});

/** Change one value minimally: flip a byte of a BLOB, one character of a text, add 1 to an integer, fill a NULL. */
function tweak(value: unknown): unknown {
  if (value === null) return 'DS-20260101-0000000000';
  if (typeof value === 'number') return value + 1;
  if (Buffer.isBuffer(value)) {
    const b = Buffer.from(value);
    b[b.length - 3] = b[b.length - 3]! ^ 0x01;
    return b;
  }
  const s = String(value);
  const i = Math.floor(s.length / 2);
  return s.slice(0, i) + (s[i] === '0' ? '1' : '0') + s.slice(i + 1);
}

describe('every stored column is covered', () => {

  const COLUMNS = [
    'seq', 'id', 'record_format', 'kind', 'plant_id', 'plant_version', 'sampled_at', 'created_at', 'created_by', 'signer_id',
    'signer_name', 'signer_role', 'signer_subject', 'request_json', 'result_json', 'pdf', 'pdf_sha256', 'content_sha256',
    'supersedes', 'prev_hash', 'record_hash',
  ];

  it('the list below names every column of the table', () => {
    const { reopen } = built(0);
    const cols = (reopen().db.prepare('PRAGMA table_info(sheets)').all() as { name: string }[]).map((c) => c.name);
    expect(cols).toEqual(COLUMNS);
  });

  it.each(COLUMNS)('changing %s of the middle record is detected', async (column) => {
    const { file, sheets, reopen } = built(3);
    const victim = sheets[1]!;
    await rawTamper(file, ['sheets'], (db) => {
      const row = db.prepare('SELECT * FROM sheets WHERE seq = 2').get() as Record<string, unknown>;
      const seq = column === 'seq' ? 50 : tweak(row[column]); // a seq +1 would collide with the next row
      db.prepare(`UPDATE sheets SET ${column} = ? WHERE seq = 2`).run(seq);
    });
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.firstBrokenId).not.toBeNull();
    if (column !== 'seq' && column !== 'id') expect(v.firstBrokenId).toBe(victim.id);
  });
});

describe('users, user events and signers are covered by the registry log', () => {
  /** Every column of every registered table, with the row it is changed in. */
  const REGISTRY_COLUMNS: Record<string, readonly string[]> = { ...REGISTRY_COLUMNS_BY_FORMAT[REGISTRY_FORMAT]! };
  const KEY: Record<string, readonly string[]> = { users: ['id'], user_events: ['seq'], signers: ['id'], plant_versions: ['plant_id', 'version'] };

  /** A value that differs from the stored one and still satisfies the table's CHECK constraints. */
  function changed(table: string, column: string, value: unknown): unknown {
    if (table === 'users' && column === 'role') return value === 'admin' ? 'operator' : 'admin';
    if (table === 'user_events' && column === 'event') return value === 'created' ? 'reactivated' : 'created';
    if (table === 'signers' && column === 'demo') return value === 1 ? 0 : 1;
    if (column === 'seq') return 50;
    return tweak(value);
  }

  it('an untouched archive logs every user, user event, signer and plant version, and verifies', async () => {
    const { reopen } = built(2);
    const a = reopen();
    const counts = ['users', 'user_events', 'signers', 'plant_versions'].map((t) => (a.db.prepare(`SELECT count(*) AS n FROM ${t}`).get() as { n: number }).n);
    const v = await a.verifyArchive();
    expect(v.valid).toBe(true);
    expect(v.registryEntries).toBe(counts.reduce((x, y) => x + y, 0));
    expect(v.registryEntries).toBeGreaterThanOrEqual(3);
  });

  it('the current format hashes every column of the registered tables', () => {
    const { reopen } = built(0);
    const a = reopen();
    for (const [table, cols] of Object.entries(REGISTRY_COLUMNS)) {
      expect((a.db.prepare(`PRAGMA table_info(${table})`).all() as { name: string }[]).map((c) => c.name)).toEqual(cols);
    }
  });

  it.each(Object.entries(REGISTRY_COLUMNS).flatMap(([t, cols]) => cols.map((c) => [t, c] as const)))('changing %s.%s is detected', async (table, column) => {
    const { file, reopen } = built(1);
    await rawTamper(file, [table], (db) => {
      const row = db.prepare(`SELECT * FROM ${table} ORDER BY rowid LIMIT 1`).get() as Record<string, unknown>;
      const keys = KEY[table]!;
      db.prepare(`UPDATE ${table} SET ${column} = ? WHERE ${keys.map((k) => `${k} = ?`).join(' AND ')}`).run(changed(table, column, row[column]), ...keys.map((k) => row[k]));
    });
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    const checks = v.problems.map((p) => p.check);
    if (KEY[table]!.includes(column)) expect(checks).toEqual(expect.arrayContaining(['registry-row-missing', 'registry-unlogged']));
    else expect(checks).toContain('registry-row-hash');
  });

  it('a user row added behind the service is reported as unlogged', async () => {
    const { file, reopen } = built(1);
    await rawTamper(file, ['users'], (db) => {
      db.prepare('INSERT INTO users (id, name, role, token_sha256, created_at, created_by) VALUES (?, ?, ?, ?, ?, ?)').run(
        'usr_SNEAKY0000000000',
        'sneaky',
        'admin',
        sha256('oxd_sneaky'),
        '2026-12-01T00:00:00.000Z',
        'nobody',
      );
    });
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.problems).toEqual(expect.arrayContaining([expect.objectContaining({ id: 'users:usr_SNEAKY0000000000', check: 'registry-unlogged' })]));
  });

  it('a signer deleted, a log entry changed, the last entry cut: each is named', async () => {
    const deleted = built(1);
    await rawTamper(deleted.file, ['signers'], (db) => db.prepare('DELETE FROM signers').run());
    expect((await deleted.reopen().verifyArchive()).problems.map((p) => p.check)).toContain('registry-row-missing');

    const edited = built(1);
    await rawTamper(edited.file, ['registry_log'], (db) => db.prepare("UPDATE registry_log SET logged_at = '2020-01-01T00:00:00.000Z' WHERE seq = 1").run());
    expect((await edited.reopen().verifyArchive()).problems.map((p) => p.check)).toContain('registry-record-hash');

    const cut = built(1);
    await rawTamper(cut.file, ['registry_log', 'signers'], (db) => {
      const last = db.prepare('SELECT seq, table_name, row_key FROM registry_log ORDER BY seq DESC LIMIT 1').get() as { seq: number; table_name: string; row_key: string };
      db.prepare('DELETE FROM registry_log WHERE seq = ?').run(last.seq);
    });
    const checks = (await cut.reopen().verifyArchive()).problems.map((p) => p.check);
    expect(checks).toEqual(expect.arrayContaining(['registry-tail', 'registry-unlogged']));
  });
  it('the last entry cut and the counter reset: only a registry head recorded elsewhere catches it', async () => {
    const { file, reopen } = built(1);
    const first = reopen();
    const recorded = (await first.verifyArchive()).registryHead;
    expect(recorded.entries).toBeGreaterThanOrEqual(3);
    expect(recorded.recordHash).toMatch(/^[0-9a-f]{64}$/);
    first.close();
    await rawTamper(file, ['registry_log', 'signers', 'plant_versions'], (db) => {
      const last = db.prepare('SELECT seq, table_name, row_key FROM registry_log ORDER BY seq DESC LIMIT 1').get() as { seq: number; table_name: string; row_key: string };
      db.prepare('DELETE FROM registry_log WHERE seq = ?').run(last.seq);
      db.prepare(`DELETE FROM ${last.table_name} WHERE CAST(${REGISTRY_TABLES[last.table_name as keyof typeof REGISTRY_TABLES]} AS TEXT) = ?`).run(last.row_key);
      db.prepare("UPDATE sqlite_sequence SET seq = seq - 1 WHERE name = 'registry_log'").run();
    });
    const a = reopen();
    expect((await a.verifyArchive()).valid).toBe(true); // a consistent, shorter log
    const v = await a.verifyArchive({ expectedRegistryHead: { entries: recorded.entries, recordHash: recorded.recordHash } });
    expect(v.valid).toBe(false);
    expect(v.problems.map((p) => p.check)).toEqual(['registry-head', 'registry-head']);
    expect(v.problems[0]!.message).toContain(recorded.recordHash);
  });

  it('a recorded registry head that is still in the log passes', async () => {
    const { reopen } = built(1);
    const a = reopen();
    const head = (await a.verifyArchive()).registryHead;
    const v = await a.verifyArchive({ expectedRegistryHead: { entries: head.entries, recordHash: head.recordHash } });
    expect(v).toMatchObject({ valid: true, problems: [] });
  });

  it('a log entry naming a table this build does not register is reported, not skipped', async () => {
    const { file, reopen } = built(1);
    await rawTamper(file, ['registry_log'], (db) => {
      db.pragma('ignore_check_constraints = ON'); // as someone editing the file can
      const last = db.prepare('SELECT seq, record_hash FROM registry_log ORDER BY seq DESC LIMIT 1').get() as { seq: number; record_hash: string };
      db.prepare('INSERT INTO registry_log (seq, format, table_name, row_key, row_sha256, logged_at, prev_hash, record_hash) VALUES (?, 1, ?, ?, ?, ?, ?, ?)').run(
        last.seq + 1, 'nonsense', 'x', '0'.repeat(64), '2026-12-01T00:00:00.000Z', last.record_hash, '1'.repeat(64));
    });
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.problems).toEqual(expect.arrayContaining([expect.objectContaining({ id: 'nonsense:x', check: 'registry-format', message: expect.stringMatching(/does not register/) })]));
  });

  it('a column the format hashes is never hashed as null when the row lacks it', () => {
    const row = { id: 'usr_1', name: 'n', role: 'admin', token_sha256: 'a'.repeat(64), created_at: 't' }; // created_by missing
    expect(missingColumns('users', row)).toEqual(['created_by']);
    expect(() => rowDigest('users', row)).toThrow(/no column created_by/);
    expect(rowDigest('users', { ...row, created_by: null })).toMatch(/^[0-9a-f]{64}$/); // a stored NULL is a value
    expect(rowDigest('users', { ...row, created_by: null }, 999)).toBeNull();
  });

  it('a registered table rebuilt without a hashed column is reported as registry-format', async () => {
    const { file, reopen } = built(1);
    await rawTamper(file, ['users'], (db) => db.exec('ALTER TABLE users DROP COLUMN created_by'));
    const v = await reopen().verifyArchive();
    expect(v.valid).toBe(false);
    expect(v.problems).toEqual(expect.arrayContaining([expect.objectContaining({ check: 'registry-format', message: expect.stringMatching(/lost column\(s\) created_by/) })]));
  });
});
