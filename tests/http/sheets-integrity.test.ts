/**
 * Reads of archived sheets report the integrity of the record (record hash, and on one record the
 * PDF hash, recomputed on every read); an altered record is never served as "current". The list
 * carries oxidant and printed dose; the CSV the local sample time with its offset and the figures a
 * monthly report needs; a correction carries its reason.
 *
 * Independent checks: SHA-256 with node:crypto (FIPS 180-4); the archive file changed through a raw
 * better-sqlite3 connection, as someone with file access could. The samples are invented; the demo
 * plant is the invented one in tables/demo/demo-plant.json.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { createHash } from 'node:crypto';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { buildApp } from '../../src/http/app.js';
import { pdfFile, pdfText } from '../sheets/tools.js';
import { csvRecords } from '../archive/fixtures/csv-reader.js';

const BOOTSTRAP = 'sheets-integrity-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');
const DAY_MS = 86_400_000;
const pad = (n: number) => String(n).padStart(2, '0');
/** 00:30 local time at UTC+01:00, `days` days ago: 23:30 UTC of the day before. */
function localHalfPastMidnight(days: number): { written: string; utc: string; localDay: string } {
  const utc = new Date(Date.now() - days * DAY_MS);
  utc.setUTCHours(23, 30, 0, 0);
  const local = new Date(utc.getTime() + 3_600_000);
  const localDay = `${local.getUTCFullYear()}-${pad(local.getUTCMonth() + 1)}-${pad(local.getUTCDate())}`;
  return { written: `${localDay}T00:30:00+01:00`, utc: utc.toISOString(), localDay };
}

/**
 * Invented sample at the demo plant, potassium permanganate: dose 2.181997 mg/L printed "2.18"
 * (hand calculation in tests/http/sheets.test.ts: iron 1.5 × 0.943278 + manganese 0.4 × 1.917701;
 * the demo plant's target residual is 0).
 */
const EXPECTED_DOSE = (158.032 / (3 * 55.845)) * 1.5 + ((2 * 158.032) / (3 * 54.938)) * 0.4;
function sheetBody(sampledAt: string, extra: Record<string, unknown> = {}) {
  return {
    plantId: 'demo-groundwater',
    oxidant: 'potassium-permanganate',
    sample: { pH: 7.2, temperatureC: 12, iron: { value: 1.5, unit: 'mg/L' }, manganese: { value: 0.4, unit: 'mg/L' }, alkalinity: { value: 120, unit: 'mg/L' } },
    sampledAt,
    ...extra,
  };
}


describe('integrity, oxidant, dose, local time and correction reason through the HTTP contract', () => {
  let app: FastifyInstance;
  let dataDir: string;
  const sample = localHalfPastMidnight(4);
  const ids: Record<'first' | 'other' | 'fix' | 'bare', string> = { first: '', other: '', fix: '', bare: '' };
  const post = (body: unknown) => app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: body as Record<string, unknown> });

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'oxd-http-integrity-'));
    app = await buildApp({ dataDir, bootstrapToken: BOOTSTRAP });
    const first = await post(sheetBody(sample.written));
    expect(first.statusCode, first.body).toBe(201);
    ids.first = first.json().id;
    const other = await post(sheetBody(sample.written, { sampleLabel: 'second well (invented)' }));
    expect(other.statusCode, other.body).toBe(201);
    ids.other = other.json().id;
  });
  afterAll(async () => {
    await app?.close();
  });

  it('a correction with a reason stores it (answer, metadata, list, CSV) and has no warning', async () => {
    const reason = 'Iron was re-run by the lab: 1.5 mg/L confirmed, manganese 0.4 mg/L (invented)';
    const r = await post(sheetBody(sample.written, { supersedes: ids.first, correctionReason: reason }));
    expect(r.statusCode, r.body).toBe(201);
    expect(r.json()).toMatchObject({ supersedes: ids.first, correctionReason: reason, warnings: [] });
    ids.fix = r.json().id;
    const m = (await app.inject({ method: 'GET', url: `/api/v1/sheets/${ids.fix}` })).json();
    expect(m).toMatchObject({ correctionReason: reason, supersedes: ids.first, status: 'current' });
    expect(m.request.correctionReason).toBe(reason); // stored in the request, inside content and record hash
    // and printed on the corrected sheet, beside the id it supersedes
    const pdf = await app.inject({ method: 'GET', url: `/api/v1/sheets/${ids.fix}/pdf` });
    const text = pdfText(pdfFile(pdf.rawPayload, 'correction-reason')).replace(/\s+/g, ' ');
    expect(text).toContain('Reason for correction');
    expect(text).toContain('Iron was re-run by the lab');
    expect((await app.inject({ method: 'GET', url: `/api/v1/sheets/${ids.first}` })).json()).toMatchObject({ status: 'superseded', supersededBy: ids.fix, correctionReason: null });
  });

  it('a correction without a reason is accepted (the existing contract) with a warning in the answer', async () => {
    const r = await post(sheetBody(sample.written, { supersedes: ids.other }));
    expect(r.statusCode, r.body).toBe(201);
    expect(r.json().correctionReason).toBeNull();
    expect(r.json().warnings).toHaveLength(1);
    expect(r.json().warnings[0]).toMatch(/without a correctionReason/);
    ids.bare = r.json().id;
  });

  it.each([
    ['without supersedes', { correctionReason: 'a reason with no sheet to correct' }],
    ['too short', { supersedes: 'DS-20260101-0000000000', correctionReason: 'ab' }],
    ['starting with a blank', { supersedes: 'DS-20260101-0000000000', correctionReason: ' leading blank' }],
    ['too long', { supersedes: 'DS-20260101-0000000000', correctionReason: 'x'.repeat(501) }],
    ['with a control character', { supersedes: 'DS-20260101-0000000000', correctionReason: 'bell \u0007 here' }],
  ])('a correctionReason %s is a 400 problem naming /correctionReason, and nothing is stored', async (_what, extra) => {
    const before = (await app.inject({ method: 'GET', url: '/api/v1/archive/verification' })).json().records;
    const r = await post(sheetBody(sample.written, extra));
    expect(r.statusCode, r.body).toBe(400);
    expect(r.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/correctionReason');
    expect((await app.inject({ method: 'GET', url: '/api/v1/archive/verification' })).json().records).toBe(before);
  });

  it('the list carries oxidant, the printed dose, status and the integrity found (record hash and PDF hash) for every sheet', async () => {
    const r = await app.inject({ method: 'GET', url: `/api/v1/sheets?plantId=demo-groundwater&from=${sample.localDay}&to=${sample.localDay}` });
    expect(r.statusCode).toBe(200);
    const sheets = r.json().sheets as Record<string, any>[];
    expect(sheets.map((s) => s.id).sort()).toEqual(Object.values(ids).sort());
    for (const s of sheets) {
      expect(s.oxidant).toBe('potassium-permanganate');
      expect(s.dose).toMatchObject({ unit: 'mg/L', basis: 'as KMnO4', rounded: '2.18', what: 'dose' });
      expect(Math.abs(s.dose.value - EXPECTED_DOSE)).toBeLessThan(1e-9);
      expect(s.integrity).toMatchObject({ recordHashMatches: true, pdfHashMatches: true, checked: 'record hash and PDF hash', problems: [], verificationUrl: `/api/v1/sheets/${s.id}/verification` });
      // the contract fields are all still there
      for (const k of ['id', 'seq', 'kind', 'plantId', 'sampledAt', 'sha256', 'contentSha256', 'supersedes', 'supersededBy', 'prevHash', 'recordHash', 'pdfUrl', 'verificationUrl']) expect(s).toHaveProperty(k);
    }
    expect(Object.fromEntries(sheets.map((s) => [s.id, s.status]))).toEqual({ [ids.first]: 'superseded', [ids.other]: 'superseded', [ids.fix]: 'current', [ids.bare]: 'current' });
  });

  it('the metadata hashes the record and the PDF on the read; the PDF served hashes to sha256', async () => {
    const m = await app.inject({ method: 'GET', url: `/api/v1/sheets/${ids.fix}` });
    expect(m.headers['x-sheet-integrity']).toBe('record hash matches');
    expect(m.json().integrity).toMatchObject({ recordHashMatches: true, pdfHashMatches: true, checked: 'record hash and PDF hash', problems: [] });
    const pdf = await app.inject({ method: 'GET', url: m.json().pdfUrl });
    expect(pdf.headers['x-sheet-integrity']).toBe('record hash matches');
    expect(sha256(pdf.rawPayload)).toBe(m.json().sha256);
  });

  it('the CSV gives the local sample time as written with its offset and local day, and the figures of a monthly report', async () => {
    const r = await app.inject({ method: 'GET', url: `/api/v1/sheets/export.csv?plantId=demo-groundwater&from=${sample.localDay}&to=${sample.localDay}` });
    expect(r.statusCode).toBe(200);
    const { header, rows } = csvRecords(r.body);
    expect(rows).toHaveLength(4);
    for (const h of ['sampled_at_local', 'utc_offset', 'sample_day_local', 'integrity', 'verification_url', 'correction_reason', 'target_residual_mg_per_L', 'contact_time_available_min', 'product_strength_given', 'product_strength_g_per_L', 'alkalinity_mg_per_L_as_CaCO3', 'alkalinity_consumed_mg_per_L_as_CaCO3']) {
      expect(header).toContain(h);
    }
    const row = rows.find((x) => x['sheet_id'] === ids.fix)!;
    // 00:30 at UTC+01:00 is 23:30 UTC the day before: the local day is the one the filter took
    expect(row['sampled_at_utc']).toBe(sample.utc);
    expect(row['sampled_at_local']).toBe(`${sample.localDay}T00:30:00`);
    expect(row['utc_offset']).toBe('UTC+01:00');
    expect(row['sample_day_local']).toBe(sample.localDay);
    expect(row['sampled_at_utc']!.slice(0, 10)).not.toBe(sample.localDay);
    expect(row).toMatchObject({ status: 'current', integrity: 'record hash matches', oxidant: 'potassium-permanganate', dose_basis: 'as KMnO4' });
    expect(row['correction_reason']).toMatch(/^Iron was re-run/);
    // the demo plant (tables/demo/demo-plant.json, invented): target residual 0, contact volume ÷ flow,
    // a 2 % w/w permanganate batch (20 g/L at the density of water); the request's alkalinity
    expect(Number(row['target_residual_mg_per_L'])).toBe(0);
    expect(row['contact_time_from']).toBe('contact volume / flow'); // written in ASCII in the CSV
    expect(Number(row['contact_time_available_min'])).toBeGreaterThan(0);
    expect(row['product_strength_given']).toBe('2 % w/w');
    expect(Number(row['product_strength_g_per_L'])).toBeCloseTo(20, 9);
    expect(row['product_strength_basis']).toBe('as KMnO4');
    expect(Number(row['alkalinity_mg_per_L_as_CaCO3'])).toBe(120);
    expect(Number(row['alkalinity_consumed_mg_per_L_as_CaCO3'])).toBeGreaterThan(0);
  });

  it('a sheet whose result was edited in the file: metadata, list, CSV and PDF say "altered", never "current"', async () => {
    const target = ids.fix;
    const raw = new Database(join(dataDir, 'oxidant-dosing.sqlite'));
    try {
      raw.exec('DROP TRIGGER IF EXISTS sheets_no_update');
      const row = raw.prepare('SELECT result_json FROM sheets WHERE id = ?').get(target) as { result_json: string };
      const edited = row.result_json.replace(/"rounded":"2\.18"/, '"rounded":"1.18"');
      expect(edited).not.toBe(row.result_json);
      expect(raw.prepare('UPDATE sheets SET result_json = ? WHERE id = ?').run(edited, target).changes).toBe(1);
    } finally {
      raw.close();
    }
    // the existing checks catch it, as before
    expect((await app.inject({ method: 'GET', url: '/api/v1/archive/verification' })).json()).toMatchObject({ valid: false, firstBrokenId: target });
    expect((await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}/verification` })).json()).toMatchObject({ valid: false, recordHashMatches: false, hashMatches: true });

    const m = await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}` });
    expect(m.statusCode).toBe(200);
    expect(m.headers['x-sheet-integrity']).toBe('altered');
    expect(m.json().status).toBe('altered');
    expect(m.json().integrity).toMatchObject({ recordHashMatches: false, pdfHashMatches: true, checked: 'record hash and PDF hash' });
    expect(m.json().integrity.message).toMatch(/^ALTERED/);
    expect(m.json().integrity.message).toContain(`/api/v1/sheets/${target}/verification`);
    expect(m.json().integrity.message).toContain('/api/v1/archive/verification');

    const list = (await app.inject({ method: 'GET', url: '/api/v1/sheets?plantId=demo-groundwater' })).json().sheets as Record<string, any>[];
    const listed = list.find((s) => s.id === target)!;
    expect(listed.status).toBe('altered');
    expect(listed.integrity).toMatchObject({ recordHashMatches: false, pdfHashMatches: true, checked: 'record hash and PDF hash' });
    // the untouched sheets still read as they were
    expect(list.filter((s) => s.id !== target).map((s) => s.status).sort()).toEqual(['current', 'superseded', 'superseded']);

    const { rows } = csvRecords((await app.inject({ method: 'GET', url: '/api/v1/sheets/export.csv?plantId=demo-groundwater' })).body);
    expect(rows.find((x) => x['sheet_id'] === target)).toMatchObject({ status: 'altered', integrity: 'altered', verification_url: `/api/v1/sheets/${target}/verification` });
    expect(rows.filter((x) => x['status'] === 'current').map((x) => x['sheet_id'])).toEqual([ids.bare]);

    const pdf = await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}/pdf` });
    expect(pdf.statusCode).toBe(200); // the signed bytes as stored: the evidence of what was issued
    expect(pdf.headers['x-sheet-integrity']).toBe('altered');
  });
});

describe('a sheet whose stored PDF bytes were changed reads "altered" on every route', () => {
  let app: FastifyInstance;
  let dataDir: string;
  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'oxd-http-integrity-pdf-'));
    app = await buildApp({ dataDir, bootstrapToken: BOOTSTRAP });
  });
  afterAll(async () => {
    await app?.close();
  });

  it('byte 30000 of the PDF flipped: the record, the list, the CSV, the PDF header and the verification agree', async () => {
    const sampledAt = new Date(Date.now() - 3_600_000).toISOString();
    const ok = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody(sampledAt) });
    const bad = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody(sampledAt, { sampleLabel: 'second tap (invented)' }) });
    expect([ok.statusCode, bad.statusCode]).toEqual([201, 201]);
    const target = bad.json().id as string;
    const raw = new Database(join(dataDir, 'oxidant-dosing.sqlite'));
    let changed: Buffer;
    try {
      raw.exec('DROP TRIGGER IF EXISTS sheets_no_update');
      const { pdf } = raw.prepare('SELECT pdf FROM sheets WHERE id = ?').get(target) as { pdf: Buffer };
      expect(pdf.length).toBeGreaterThan(30_000);
      changed = Buffer.from(pdf);
      changed[30_000] = changed[30_000]! ^ 0x01;
      expect(raw.prepare('UPDATE sheets SET pdf = ? WHERE id = ?').run(changed, target).changes).toBe(1);
    } finally {
      raw.close();
    }
    const recorded = bad.json().sha256 as string;
    const problem = `the stored PDF hashes to ${sha256(changed)}, not to the recorded ${recorded}`;
    const one = await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}` });
    expect(one.json()).toMatchObject({ status: 'altered', integrity: { recordHashMatches: false, pdfHashMatches: false } });
    const list = (await app.inject({ method: 'GET', url: '/api/v1/sheets?plantId=demo-groundwater' })).json().sheets as Record<string, any>[];
    const listed = list.find((s) => s.id === target)!;
    expect(listed).toMatchObject({ status: 'altered', integrity: { recordHashMatches: false, pdfHashMatches: false, checked: 'record hash and PDF hash' } });
    expect(listed.integrity.problems).toContain(problem);
    expect(list.find((s) => s.id === ok.json().id)).toMatchObject({ status: 'current', integrity: { recordHashMatches: true, pdfHashMatches: true } });
    const { rows } = csvRecords((await app.inject({ method: 'GET', url: '/api/v1/sheets/export.csv?plantId=demo-groundwater' })).body);
    expect(rows.find((x) => x['sheet_id'] === target)).toMatchObject({ status: 'altered', integrity: 'altered' });
    expect(rows.find((x) => x['sheet_id'] === ok.json().id)).toMatchObject({ status: 'current', integrity: 'record hash matches' });
    expect((await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}/pdf` })).headers['x-sheet-integrity']).toBe('altered');
    expect((await app.inject({ method: 'GET', url: `/api/v1/sheets/${target}/verification` })).json()).toMatchObject({ valid: false, hashMatches: false, recordHashMatches: false });
  });
});

describe('a jar-test evaluation edited in the file is served as altered too', () => {
  let app: FastifyInstance;
  let dataDir: string;
  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'oxd-http-integrity-jar-'));
    app = await buildApp({ dataDir, bootstrapToken: BOOTSTRAP });
  });
  afterAll(async () => {
    await app?.close();
  });

  it('GET /api/v1/jar-tests/evaluations/:id and its PDF say "altered", with the verification URL', async () => {
    const mgL = (value: number) => ({ value, unit: 'mg/L' });
    // invented permanganate jars: residual = dose − 1.0 mg/L; iron and manganese met from 1.5 mg/L
    const jars = [0.5, 1, 1.5, 2, 2.5].map((d) => ({
      dose: mgL(d),
      results: [{ contactTimeMin: 20, residualOxidant: mgL(Math.max(0, d - 1)), iron: mgL(d >= 1.5 ? 0.05 : 0.5), manganese: mgL(d >= 1.5 ? 0.02 : 0.2) }],
    }));
    const r = await app.inject({
      method: 'POST',
      url: '/api/v1/jar-tests/evaluations',
      headers: admin,
      payload: { oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 12, iron: mgL(1), manganese: mgL(0.3) }, jarVolume: { value: 2, unit: 'L' }, jars, plantContactTimeMin: 20 },
    });
    expect(r.statusCode, r.body).toBe(201);
    const id = r.json().id as string;
    const fresh = await app.inject({ method: 'GET', url: `/api/v1/jar-tests/evaluations/${id}` });
    expect(fresh.headers['x-sheet-integrity']).toBe('record hash matches');
    expect(fresh.json().archive.status).toBe('current');
    const raw = new Database(join(dataDir, 'oxidant-dosing.sqlite'));
    try {
      raw.exec('DROP TRIGGER IF EXISTS sheets_no_update');
      const row = raw.prepare('SELECT result_json FROM sheets WHERE id = ?').get(id) as { result_json: string };
      const edited = row.result_json.replace(/"doseMgPerL":1\.5/, '"doseMgPerL":0.5');
      expect(edited).not.toBe(row.result_json);
      raw.prepare('UPDATE sheets SET result_json = ? WHERE id = ?').run(edited, id);
    } finally {
      raw.close();
    }
    const g = await app.inject({ method: 'GET', url: `/api/v1/jar-tests/evaluations/${id}` });
    expect(g.statusCode).toBe(200);
    expect(g.headers['x-sheet-integrity']).toBe('altered');
    expect(g.json().archive.status).toBe('altered');
    expect(g.json().archive.integrity.message).toMatch(/^ALTERED/);
    expect(g.json().archive.integrity.verificationUrl).toBe(`/api/v1/sheets/${id}/verification`);
    expect((await app.inject({ method: 'GET', url: `/api/v1/jar-tests/evaluations/${id}/pdf` })).headers['x-sheet-integrity']).toBe('altered');
  });
});
