import { afterEach, describe, expect, it } from 'vitest';
import { BASE_CSV_COLUMNS, DOSE_CSV_COLUMNS, csvField, type Archive, type CsvColumn } from '../../src/archive/index.js';
import { doseSheetInput, ensureAuthor, openTestArchive, tempDataDir } from './fixtures/archive-fixture.js';
import { parseCsv } from './fixtures/csv-reader.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): { archive: Archive; author: { userId: string; signerId: string } } {
  const t = tempDataDir('csv');
  const archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  const author = ensureAuthor(archive);
  archive.savePlant({ id: 'demo-plant' }, { createdBy: 'x' });
  archive.savePlant({ id: 'other-plant' }, { createdBy: 'x' });
  return { archive, author };
}


describe('csvField (RFC 4180 §2)', () => {
  it.each([
    [null, ''],
    [undefined, ''],
    [0, '0'],
    [-0.25, '-0.25'], // numbers are never defused
    [1.5e-7, '1.5e-7'],
    [true, 'true'],
    ['plain', 'plain'],
    ['a,b', '"a,b"'],
    ['say "hi"', '"say ""hi"""'],
    ['two\r\nlines', '"two\r\nlines"'],
    ['line\nfeed', '"line\nfeed"'],
    ['=HYPERLINK("x")', '"\'=HYPERLINK(""x"")"'], // OWASP CSV injection: text formula prefixed with '
    ['+1', "'+1"],
    ['-2', "'-2"],
    ['@SUM(A1)', "'@SUM(A1)"],
  ])('%j → %j', (value, text) => {
    expect(csvField(value)).toBe(text);
  });
});

describe('exportCsv', () => {
  it('has a header with units, one CRLF-terminated row per sheet, ordered by sample time', () => {
    const { archive, author } = fresh();
    archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: '2026-03-02T08:00:00Z' }));
    archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: '2026-03-01T08:00:00Z' }));
    const text = archive.exportCsv({ plantId: 'demo-plant', from: '2026-03-01', to: '2026-03-31' });
    expect(text.startsWith('sheet_id,kind,plant_id,plant_version,sampled_at_utc,created_at_utc,signer_name,status,superseded_by,supersedes,pdf_sha256,')).toBe(true);
    const rows = parseCsv(text);
    expect(rows[0]).toEqual([...BASE_CSV_COLUMNS, ...DOSE_CSV_COLUMNS].map((c) => c.header));
    expect(rows[0]).toEqual(expect.arrayContaining(['dose_mg_per_L', 'flow_m3_per_d', 'feed_kg_per_d', 'feed_lb_per_d', 'solution_L_per_h', 'iron_mg_per_L']));
    expect(rows).toHaveLength(3);
    const col = (name: string) => rows[0]!.indexOf(name);
    expect(rows.slice(1).map((r) => r[col('sampled_at_utc')])).toEqual(['2026-03-01T08:00:00.000Z', '2026-03-02T08:00:00.000Z']);
    for (const r of rows.slice(1)) expect(r).toHaveLength(rows[0]!.length);
  });

  it('converts figures to the units in the header', () => {
    const { archive, author } = fresh();
    archive.appendSheet(
      doseSheetInput(author, {
        plantId: 'demo-plant',
        plantVersion: 1,
        request: {
          oxidant: 'sodium-hypochlorite',
          flow: { value: 2, unit: 'MGD' },
          sample: { pH: 7.8, temperatureC: 15, iron: { value: 800, unit: 'ug/L' }, ammoniaN: { value: 0.1, unit: 'mg/L' } },
        },
        result: {
          dose: { value: 2.5, unit: 'mg/L', basis: 'as Cl2' },
          feed: { massRate: { value: 41.7, unit: 'lb/d' }, solutionRate: null },
          flags: [{ code: 'DBP_CAUTION', severity: 'warning' }, { code: 'LOCAL_RULES', severity: 'info' }],
        },
      }),
    );
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const get = (name: string) => rows[1]![rows[0]!.indexOf(name)];
    // 1 MGD = 3785.411784 m3/d exactly (US gallon = 3.785411784 L; NIST SP 811, 2008, appendix B)
    expect(Number(get('flow_m3_per_d'))).toBeCloseTo(2 * 3785.411784, 9);
    // 1 lb = 0.45359237 kg exactly (NIST SP 811, 2008, appendix B)
    expect(Number(get('feed_kg_per_d'))).toBeCloseTo(41.7 * 0.45359237, 12);
    expect(Number(get('feed_lb_per_d'))).toBeCloseTo(41.7, 12);
    expect(get('iron_mg_per_L')).toBe('0.8');
    expect(get('ammonia_as_N_mg_per_L')).toBe('0.1');
    expect(get('manganese_mg_per_L')).toBe('');
    expect(get('solution_L_per_h')).toBe(''); // a gas or unknown solution rate stays empty
    expect(get('dose_mg_per_L')).toBe('2.5');
    expect(get('dose_basis')).toBe('as Cl2');
    expect(get('oxidant')).toBe('sodium-hypochlorite');
    expect(get('sample_pH')).toBe('7.8');
    expect(get('sample_temperature_C')).toBe('15');
    expect(get('flags')).toBe('DBP_CAUTION(warning) LOCAL_RULES(info)');
    // no rounded text stored with these figures: the printed columns stay empty
    expect(get('dose_mg_per_L_as_printed')).toBe('');
    expect(get('feed_kg_per_d_as_printed')).toBe('');
  });

  it('carries the dose and feed as the sheet prints them beside the full values', () => {
    const { archive, author } = fresh();
    archive.appendSheet(
      doseSheetInput(author, {
        plantId: 'demo-plant',
        plantVersion: 1,
        result: {
          dose: { value: 2.2649949323382996, unit: 'mg/L', rounded: '2.26', basis: 'as Cl2' },
          feed: { massRate: { value: 9.059979729353199, unit: 'kg/d', rounded: '9.06' } },
        },
      }),
    );
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const get = (name: string) => rows[1]![rows[0]!.indexOf(name)];
    expect(get('dose_mg_per_L')).toBe('2.2649949323382996');
    expect(get('dose_mg_per_L_as_printed')).toBe('2.26');
    expect(get('feed_kg_per_d')).toBe('9.059979729353199');
    expect(get('feed_kg_per_d_as_printed')).toBe('9.06');
  });

  it('marks superseded sheets and names the correction', () => {
    const { archive, author } = fresh();
    const a = archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: '2026-03-05T07:00:00Z' }));
    const b = archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: '2026-03-05T07:00:00Z', supersedes: a.id }));
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const h = rows[0]!;
    expect(rows.slice(1).map((r) => [r[h.indexOf('sheet_id')], r[h.indexOf('status')], r[h.indexOf('superseded_by')], r[h.indexOf('supersedes')]])).toEqual([
      [a.id, 'superseded', b.id, ''],
      [b.id, 'current', '', a.id],
    ]);
  });

  it('quotes text with commas, quotes and line breaks so the file parses back', () => {
    const { archive, author } = fresh();
    const tricky = 'Night shift, "B" crew\r\nrelief';
    archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, result: { dose: { value: 1, unit: 'mg/L', basis: tricky } } }));
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    expect(rows[1]![rows[0]!.indexOf('dose_basis')]).toBe(tricky);
  });

  it('filters by plant and date range', () => {
    const { archive, author } = fresh();
    const mk = (plantId: string, sampledAt: string) => archive.appendSheet(doseSheetInput(author, { plantId, plantVersion: 1, sampledAt })).id;
    mk('demo-plant', '2026-02-28T12:00:00Z');
    const inside = mk('demo-plant', '2026-03-31T22:00:00Z');
    mk('other-plant', '2026-03-10T12:00:00Z');
    mk('demo-plant', '2026-04-01T00:00:00Z');
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant', from: '2026-03-01', to: '2026-03-31' }));
    expect(rows.slice(1).map((r) => r[0])).toEqual([inside]);
  });

  it('takes its own columns (e.g. for another result shape), after the base columns', () => {
    const { archive, author } = fresh();
    archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, kind: 'jar-test-evaluation', result: { fit: { demandMgPerL: 0.84, r2: 0.991 } } }));
    const columns: CsvColumn[] = [
      { header: 'jar_demand_mg_per_L', value: (s) => (s.result as { fit: { demandMgPerL: number } }).fit.demandMgPerL },
      { header: 'fit_r2', value: (s) => (s.result as { fit: { r2: number } }).fit.r2 },
    ];
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant', kind: 'jar-test-evaluation', columns }));
    expect(rows[0]!.slice(-2)).toEqual(['jar_demand_mg_per_L', 'fit_r2']);
    expect(rows[1]!.slice(-2)).toEqual(['0.84', '0.991']);
    expect(rows[1]![1]).toBe('jar-test-evaluation');
  });

  it('gives the sample time as written with its UTC offset and its local day, the day the from/to filter compares', () => {
    const { archive, author } = fresh();
    const mk = (written: string) =>
      archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: written, request: { oxidant: 'ozone', sampledAt: written } })).id;
    const feb28Utc = mk('2026-03-01T00:30:00+01:00'); // 2026-02-28T23:30Z, local day 1 March
    const mar31 = mk('2026-03-31T19:30:00-05:00'); // 2026-04-01T00:30Z, local day 31 March
    const zulu = mk('2026-03-15T06:00:00Z');
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant', from: '2026-03-01', to: '2026-03-31' }));
    const h = rows[0]!;
    const pick = (r: string[]) => ['sheet_id', 'sampled_at_utc', 'sampled_at_local', 'utc_offset', 'sample_day_local'].map((c) => r[h.indexOf(c)]);
    expect(rows.slice(1).map(pick)).toEqual([
      [feb28Utc, '2026-02-28T23:30:00.000Z', '2026-03-01T00:30:00', 'UTC+01:00', '2026-03-01'],
      [zulu, '2026-03-15T06:00:00.000Z', '2026-03-15T06:00:00', 'UTC+00:00', '2026-03-15'],
      [mar31, '2026-04-01T00:30:00.000Z', '2026-03-31T19:30:00', 'UTC-05:00', '2026-03-31'],
    ]);
    // the new columns follow the first eleven, which keep their places
    expect(h.slice(0, 14)).toEqual([...BASE_CSV_COLUMNS.slice(0, 11).map((c) => c.header), 'sampled_at_local', 'utc_offset', 'sample_day_local']);
  });

  it('without a written sample time the UTC time stands in, offset UTC+00:00 (as the from/to filter reads it)', () => {
    const { archive, author } = fresh();
    archive.appendSheet(doseSheetInput(author, { plantId: 'demo-plant', plantVersion: 1, sampledAt: '2026-03-02T23:30:00+00:00' }));
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const get = (name: string) => rows[1]![rows[0]!.indexOf(name)];
    expect([get('sampled_at_local'), get('utc_offset'), get('sample_day_local')]).toEqual(['2026-03-02T23:30:00.000', 'UTC+00:00', '2026-03-02']);
  });

  it('carries target residual, contact time, product strength and alkalinity from the stored result (shape of POST /api/v1/doses)', () => {
    const { archive, author } = fresh();
    // the figures as POST /api/v1/doses answers them for 12.5 % w/v hypochlorite at 2 MGD, 30 min, 1 mg/L residual
    archive.appendSheet(
      doseSheetInput(author, {
        plantId: 'demo-plant',
        plantVersion: 1,
        request: {
          oxidant: 'sodium-hypochlorite',
          targetResidual: { value: 1, unit: 'mg/L' },
          contactTime: { value: 0.5, unit: 'h' },
          product: { strength: { value: 12.5, unit: '% w/v' } },
          sample: { pH: 7.5, temperatureC: 15, alkalinity: { value: 0.12, unit: 'g/L' } },
        },
        result: {
          dose: { value: 1.3173963649386695, unit: 'mg/L', rounded: '1.32', basis: 'as Cl2' },
          terms: [
            { term: 'contaminant', id: 'iron', value: { value: 0.3173963649386695, unit: 'mg/L as Cl2', rounded: '0.317' } },
            { term: 'residual', id: 'residual', value: { value: 1, unit: 'mg/L as Cl2', rounded: '1.00' } },
          ],
          contact: { availableMinutes: 30, availableFrom: 'given', entries: [] },
          feed: {
            strength: {
              given: { value: 12.5, unit: '% w/v' },
              asFormula: 'Cl2',
              gramsPerL: { value: 125, unit: 'g/L as Cl2', rounded: '125' },
              massFraction: { value: 10.683760683760683, unit: '% w/w as Cl2', rounded: '10.7' },
            },
          },
          sideEffects: {
            alkalinityConsumed: { value: 0.48963635683030016, unit: 'mg/L as CaCO3', rounded: '0.490', basis: 'as CaCO3' },
            pH: { before: 7.5, after: 7.43, alkalinityAfter: { value: 119.51, unit: 'mg/L as CaCO3', rounded: '120' } },
          },
        },
      }),
    );
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const get = (name: string) => rows[1]![rows[0]!.indexOf(name)];
    expect(get('target_residual_mg_per_L')).toBe('1');
    expect(get('contact_time_available_min')).toBe('30');
    expect(get('contact_time_from')).toBe('given');
    expect(get('product_strength_given')).toBe('12.5 % w/v');
    expect(get('product_strength_g_per_L')).toBe('125');
    expect(get('product_strength_pct_w_w')).toBe('10.683760683760683');
    expect(get('product_strength_basis')).toBe('as Cl2');
    expect(get('alkalinity_mg_per_L_as_CaCO3')).toBe('120'); // 0.12 g/L = 120 mg/L
    expect(get('alkalinity_consumed_mg_per_L_as_CaCO3')).toBe('0.48963635683030016');
    expect(get('alkalinity_after_mg_per_L_as_CaCO3')).toBe('119.51');
    expect(get('pH_after_dosing')).toBe('7.43');
    // the columns that were there keep their places: the new ones come after feed_kg_per_d_as_printed
    const h = rows[0]!;
    expect(h.indexOf('target_residual_mg_per_L')).toBe(h.indexOf('feed_kg_per_d_as_printed') + 1);
  });

  it('takes the target residual and contact time from the request when the result has none; a figure on another basis is left empty', () => {
    const { archive, author } = fresh();
    archive.appendSheet(
      doseSheetInput(author, {
        plantId: 'demo-plant',
        plantVersion: 1,
        request: { oxidant: 'ozone', targetResidual: { value: 200, unit: 'ug/L' }, contactTime: { value: 0.25, unit: 'h' }, sample: { pH: 7 } },
        result: { dose: { value: 1, unit: 'mg/L', basis: 'as O3' }, sideEffects: { alkalinityConsumed: { value: 3, unit: 'mg/L as HCO3' } } },
      }),
    );
    const rows = parseCsv(archive.exportCsv({ plantId: 'demo-plant' }));
    const get = (name: string) => rows[1]![rows[0]!.indexOf(name)];
    expect(get('target_residual_mg_per_L')).toBe('0.2');
    expect(get('contact_time_available_min')).toBe('15');
    expect(get('alkalinity_consumed_mg_per_L_as_CaCO3')).toBe('');
    expect(get('product_strength_given')).toBe('');
  });

  it('an export of nothing is just the header line', () => {
    const { archive } = fresh();
    const text = archive.exportCsv({ plantId: 'demo-plant', from: '2026-01-01', to: '2026-01-31' });
    expect(parseCsv(text)).toHaveLength(1);
    expect(text.endsWith('\r\n')).toBe(true);
  });

  it('refuses repeated or malformed headers', () => {
    const { archive } = fresh();
    expect(() => archive.exportCsv({ columns: [{ header: 'sheet_id', value: () => 1 }] })).toThrow(/header/);
    expect(() => archive.exportCsv({ columns: [{ header: 'dose (mg/L)', value: () => 1 }] })).toThrow(/header/);
  });

  it('with bom: true starts with a UTF-8 byte-order mark', () => {
    const { archive } = fresh();
    expect(archive.exportCsv({ bom: true }).charCodeAt(0)).toBe(0xfeff);
  });
});
