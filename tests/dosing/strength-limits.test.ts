/**
 * The strongest solution each product can be fed as (tables/strength-limits.json, checked by src/dosing/strength-limits.ts), through
 * parseDoseRequest and computeDose: a strength no solution can have is refused naming
 * /product/strength/value with the limit and its source; a possible but unusual one gets a warning.
 *
 * Limits and their sources (the figures below are worked by hand from them):
 * - potassium permanganate: solubility 4.4 g / 100 g water at 10 °C, 6.4 at 20, 9.0 at 30 and 22.2
 *   at 60 °C, the solubility table of tables/oxidants.json (Perry's Chemical Engineers' Handbook,
 *   8th ed., section 2, from memory; verify);
 * - calcium hypochlorite: roughly 21 g Ca(OCl)2 per 100 mL water at about 25 °C (from memory of
 *   the CRC Handbook, 97th ed., physical constants of inorganic compounds; verify);
 * - sodium hypochlorite: strongest grade 15 trade % = 150 g/L available chlorine at 1.21 kg/L
 *   (White's Handbook 5th ed., from memory); refused above 200 g/L (common practice);
 * - sodium permanganate: strongest grade 40 % w/w at 1.37 kg/L (ANSI/AWWA B603, from memory);
 *   refused above 50 % w/w (common practice);
 * - hydrogen peroxide: strongest tabled 50 % w/w at 1.20 kg/L (CRC Handbook 97th ed.,
 *   concentrative properties, from memory); refused above 80 % w/w (common practice: 70 % is the
 *   strongest technical grade, from memory).
 * Trade percent of hypochlorite is % w/v: g/L available chlorine ÷ 10 (White's Handbook).
 */
import { describe, expect, it } from 'vitest';
import { buildDosingContext, computeDose, parseDoseRequest, type DoseResult } from '../../src/dosing/index.js';
import { checkStrengthLimits, defaultStrengthLimits, strengthLimitProblem } from '../../src/dosing/strength-limits.js';
import { isDomainError, type DomainError } from '../../src/core/errors.js';
import { context, tables } from './fixture.js';

// Invented sample: a groundwater with a little iron, at 10 °C.
const request = (oxidant: string, strength: { value: number; unit: string }, extra: Record<string, unknown> = {}, temperatureC = 10) => ({
  oxidant,
  flow: { value: 1000, unit: 'm3/d' },
  sample: { pH: 7.2, temperatureC, iron: { value: 1, unit: 'mg/L' } },
  product: { strength, ...((extra['product'] as object | undefined) ?? {}) },
  ...Object.fromEntries(Object.entries(extra).filter(([k]) => k !== 'product')),
});
const run = (body: unknown): DoseResult => computeDose(parseDoseRequest(body), context);
const refusal = (body: unknown): DomainError => {
  try {
    run(body);
  } catch (e) {
    if (isDomainError(e)) return e;
    throw e;
  }
  throw new Error('accepted');
};
const flag = (r: DoseResult, code: string) => r.flags.find((f) => f.code === code);
const kgL = (value: number) => ({ density: { value, unit: 'kg/L' } });

describe('refused: a strength no solution of the product can have (400 QUANTITY_OUT_OF_RANGE at /product/strength/value)', () => {
  type Case = [name: string, oxidant: string, strength: { value: number; unit: string }, extra: Record<string, unknown>, message: RegExp, source: string];
  const cases: Case[] = [
    // edge cases first: just above each limit
    ['hypochlorite 200.5 g/L: above 200 g/L (a third above 15 trade %, common practice)', 'sodium-hypochlorite', { value: 200.5, unit: 'g/L' }, {}, /above 200 g\/L/, 'operator-practice'],
    ['hypochlorite 20.1 % w/v (trade %) = 201 g/L', 'sodium-hypochlorite', { value: 20.1, unit: '% w/v' }, {}, /20\.1 % w\/v \(201 g\/L\) available chlorine as Cl2 is above 200 g\/L/, 'operator-practice'],
    ['hypochlorite 16.1 % w/w at 1.25 kg/L = 16.1 × 1.25 × 10 = 201.25 g/L', 'sodium-hypochlorite', { value: 16.1, unit: '% w/w' }, { product: kgL(1.25) }, /201\.[23] g\/L at the given density 1\.25 kg\/L/, 'operator-practice'],
    ['hypochlorite 16.6 % w/w, no density: above 200 / (10 × 1.21) = 16.53 % w/w', 'sodium-hypochlorite', { value: 16.6, unit: '% w/w' }, {}, /above 16\.5 % w\/w \(200 g\/L through the 1\.21 kg\/L/, 'operator-practice'],
    ['permanganate 18.2 % w/w: 18.2 × 100 / 81.8 = 22.25 g per 100 g water, above 22.2 at 60 °C', 'potassium-permanganate', { value: 18.2, unit: '% w/w' }, {}, /would be 22\.25 g KMnO4 per 100 g water, above the 22\.2 g KMnO4 per 100 g water that dissolve at 60 °C/, 'perry-8-solubility'],
    ['permanganate 182 g/L, no density (water): 18 200 / 818 = 22.25 g per 100 g water', 'potassium-permanganate', { value: 182, unit: 'g/L' }, {}, /22\.25 g KMnO4 per 100 g water \(taking the solution as 1\.00 kg\/L/, 'perry-8-solubility'],
    ['calcium hypochlorite 17.4 % w/w: 1740 / 82.6 = 21.07 g per 100 g water, above 21', 'calcium-hypochlorite', { value: 17.4, unit: '% w/w' }, {}, /21\.07 g available chlorine as Cl2 per 100 g water, above the 21 g Ca\(OCl\)2/, 'crc-97-inorganic-constants'],
    ['sodium permanganate 50.1 % w/w: above 50 % w/w (a quarter above the 40 % concentrate)', 'sodium-permanganate', { value: 50.1, unit: '% w/w' }, {}, /above 50 % w\/w/, 'operator-practice'],
    ['sodium permanganate 686 g/L, no density: above 50 × 1.37 × 10 = 685 g/L', 'sodium-permanganate', { value: 686, unit: 'g/L' }, {}, /above 685 g\/L \(50 % w\/w through the 1\.37 kg\/L/, 'operator-practice'],
    ['hydrogen peroxide 80.1 % w/w at 1.3 kg/L', 'hydrogen-peroxide', { value: 80.1, unit: '% w/w' }, { product: kgL(1.3) }, /above 80 % w\/w/, 'operator-practice'],
    ['hydrogen peroxide 961 g/L, no density: above 80 × 1.20 × 10 = 960 g/L', 'hydrogen-peroxide', { value: 961, unit: 'g/L' }, {}, /above 960 g\/L/, 'operator-practice'],
    // the acceptance tester's cases
    ['hypochlorite 500 g/L', 'sodium-hypochlorite', { value: 500, unit: 'g/L' }, {}, /500 g\/L available chlorine as Cl2 is above 200 g\/L.*15 trade %.*whites-handbook-5, from memory/, 'operator-practice'],
    ['hypochlorite 30 % w/v (300 g/L)', 'sodium-hypochlorite', { value: 30, unit: '% w/v' }, {}, /30 % w\/v \(300 g\/L\).*trade % is % w\/v/, 'operator-practice'],
    ['calcium hypochlorite 65 % w/w (the assay of the granules, ANSI/AWWA B300 65 to 70 %): 6500 / 35 = 186 g per 100 g water', 'calcium-hypochlorite', { value: 65, unit: '% w/w' }, {}, /185\.7 g available chlorine.*roughly 21 g per 100 mL.*from memory.*the assay of the solid itself goes in product\.purity/, 'crc-97-inorganic-constants'],
    ['permanganate 25 % w/v: 25 000 / 750 = 33.3 g per 100 g water', 'potassium-permanganate', { value: 25, unit: '% w/v' }, {}, /33\.33 g KMnO4 per 100 g water/, 'perry-8-solubility'],
  ];
  it.each(cases)('%s', (_name, oxidant, strength, extra, message, source) => {
    const e = refusal(request(oxidant, strength, extra));
    expect(e.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/product/strength/value']);
    expect(e.fields[0]!.message).toMatch(message);
    expect(e.fields[0]!.message).toContain(`source ${source}`);
    expect(e.params).toMatchObject({ strengthLimit: { oxidant, strength, source } });
  });

  it('a strength above 100 % is refused once, by the 0–100 rule, not twice', () => {
    const e = refusal(request('sodium-hypochlorite', { value: 101, unit: '% w/v' }));
    expect(e.fields).toHaveLength(1);
    expect(e.fields[0]!.message).toMatch(/at most 100/);
  });
});

describe('accepted at the limit', () => {
  it.each([
    ['hypochlorite 200 g/L', 'sodium-hypochlorite', { value: 200, unit: 'g/L' }, {}],
    ['hypochlorite 16 % w/w at 1.25 kg/L = 200 g/L', 'sodium-hypochlorite', { value: 16, unit: '% w/w' }, kgL(1.25)],
    ['permanganate 181 g/L (18 100 / 819 = 22.10 g per 100 g water ≤ 22.2)', 'potassium-permanganate', { value: 181, unit: 'g/L' }, {}],
    ['calcium hypochlorite 17.3 % w/w (1730 / 82.7 = 20.92 g per 100 g water ≤ 21)', 'calcium-hypochlorite', { value: 17.3, unit: '% w/w' }, {}],
    ['sodium permanganate 685 g/L', 'sodium-permanganate', { value: 685, unit: 'g/L' }, {}],
    ['hydrogen peroxide 80 % w/w at 1.3 kg/L', 'hydrogen-peroxide', { value: 80, unit: '% w/w' }, kgL(1.3)],
  ])('%s', (_name, oxidant, strength, product) => {
    const r = run(request(oxidant, strength, { product }));
    expect(r.feed!.solutionRate).not.toBeNull();
  });
});

describe('warnings: possible, but not the usual product', () => {
  it('permanganate 8 % w/v at 10 °C: 8000 / 920 = 8.696 g per 100 g water, above 4.4 at 10 °C but below 9.0 at 30 °C: dissolves only from 20 + 10 × (8.696 − 6.4) / (9.0 − 6.4) = 28.8 °C', () => {
    const r = run(request('potassium-permanganate', { value: 8, unit: '% w/v' }));
    const f = flag(r, 'STRENGTH_ABOVE_SOLUBILITY')!;
    expect(f).toMatchObject({ severity: 'warning', source: 'perry-8-solubility' });
    expect(f.message).toMatch(/8\.70 g per 100 g water.*10 °C, the sample temperature.*4\.40 g per 100 g water.*at 28\.8 °C or warmer/);
  });

  it('the same strength in a 30 °C sample (9.0 g per 100 g water): no warning', () => {
    expect(flag(run(request('potassium-permanganate', { value: 8, unit: '% w/v' }, {}, 30)), 'STRENGTH_ABOVE_SOLUBILITY')).toBeUndefined();
  });

  it('batch.temperatureC is the tank temperature: 8 % w/v in a 30 °C tank, no warning; without a flow the batch check does not run, so this one does', () => {
    const body = { ...request('potassium-permanganate', { value: 8, unit: '% w/v' }), batch: { volume: { value: 500, unit: 'L' }, temperatureC: 30 } };
    expect(flag(run(body), 'STRENGTH_ABOVE_SOLUBILITY')).toBeUndefined();
    const cold = { ...body, batch: { volume: { value: 500, unit: 'L' }, temperatureC: 10 } } as Record<string, unknown>;
    delete cold['flow'];
    expect(flag(run(cold), 'STRENGTH_ABOVE_SOLUBILITY')?.message).toMatch(/10 °C, batch\.temperatureC/);
  });

  it('with a batch and a flow, the batch check says it (BATCH_ABOVE_SOLUBILITY, danger), not twice', () => {
    const r = run({ ...request('potassium-permanganate', { value: 8, unit: '% w/v' }), batch: { volume: { value: 500, unit: 'L' } } });
    expect(flag(r, 'BATCH_ABOVE_SOLUBILITY')?.severity).toBe('danger');
    expect(flag(r, 'STRENGTH_ABOVE_SOLUBILITY')).toBeUndefined();
  });

  it.each([
    ['hypochlorite 16 % w/v (160 g/L) above 15 trade %', 'sodium-hypochlorite', { value: 16, unit: '% w/v' }, {}, 'whites-handbook-5'],
    ['sodium permanganate 45 % w/w above 40 % w/w', 'sodium-permanganate', { value: 45, unit: '% w/w' }, kgL(1.42), 'awwa-b603'],
    ['hydrogen peroxide 70 % w/w at 1.29 kg/L above 50 % w/w', 'hydrogen-peroxide', { value: 70, unit: '% w/w' }, kgL(1.29), 'crc-97-concentrative'],
  ])('%s: STRENGTH_ABOVE_TRADE_GRADE (warning, with the source of the grade row)', (_name, oxidant, strength, product, source) => {
    const f = flag(run(request(oxidant, strength, { product })), 'STRENGTH_ABOVE_TRADE_GRADE')!;
    expect(f).toMatchObject({ severity: 'warning', source });
    expect(f.message).toMatch(/strongest grade tables\/oxidants\.json holds/);
  });

  it.each([
    ['hypochlorite 15 trade % (the strongest grade itself)', 'sodium-hypochlorite', { value: 15, unit: '% w/v' }],
    ['hypochlorite 12.5 trade %', 'sodium-hypochlorite', { value: 12.5, unit: '% w/v' }],
    ['permanganate 2 % w/w at 10 °C (2.04 g per 100 g water < 4.4)', 'potassium-permanganate', { value: 2, unit: '% w/w' }],
    ['calcium hypochlorite 2 % w/w', 'calcium-hypochlorite', { value: 2, unit: '% w/w' }],
  ])('%s: no strength flag', (_name, oxidant, strength) => {
    const codes = run(request(oxidant, strength)).flags.map((f) => f.code);
    expect(codes).not.toContain('STRENGTH_ABOVE_TRADE_GRADE');
    expect(codes).not.toContain('STRENGTH_ABOVE_SOLUBILITY');
  });
});

describe('the limits against the tables (checked when the dosing context is built)', () => {
  it('the repository tables and the limits agree', () => {
    expect(checkStrengthLimits({ oxidants: tables.oxidants, sourceIds: new Set(tables.sources.map((s) => s.id)) })).toEqual([]);
  });

  it('every tabled strength of tables/oxidants.json passes its own limit', () => {
    for (const ox of tables.oxidants) {
      for (const n of ox.strength.nominal) {
        const density = n.densityKgPerL ? { value: Number(n.densityKgPerL), unit: 'kg/L' } : undefined;
        expect(strengthLimitProblem(ox.id, { strength: { value: Number(n.value), unit: n.unit }, density }), `${ox.id} ${n.label}`).toBeNull();
      }
    }
  });

  it('each limit names a source id of tables/sources.json, and each one from memory says so', () => {
    const ids = new Set(tables.sources.map((s) => s.id));
    for (const l of defaultStrengthLimits()) {
      if (l.kind === 'solubility') {
        expect(ids.has(l.source), l.oxidant).toBe(true);
        if (l.fromMemory) expect(l.note, l.oxidant).toMatch(/memory/);
      } else if (l.kind === 'grade') {
        expect(ids.has(l.strongest.source) && ids.has(l.refuseAbove.source), l.oxidant).toBe(true);
        if (l.refuseAbove.source === 'operator-practice') expect(l.refuseAbove.why, l.oxidant).toMatch(/common practice/);
      }
    }
  });

  const withOxidant = (id: string, change: (o: (typeof tables.oxidants)[number]) => object) => ({ ...tables, oxidants: tables.oxidants.map((o) => (o.id === id ? { ...o, ...change(o) } : o)) }) as typeof tables;

  it.each([
    [
      'a hypochlorite row stronger than the strongest grade named (18 trade %)',
      withOxidant('sodium-hypochlorite', (o) => ({ strength: { ...o.strength, nominal: [...o.strength.nominal, { label: '18 trade %', value: '18', unit: '% w/v', densityKgPerL: '1.25', source: 'whites-handbook-5' }] } })),
      /holds 18 trade %, stronger than the strongest grade/,
    ],
    [
      'the permanganate solubility table changed at 60 °C',
      withOxidant('potassium-permanganate', (o) => ({ solubility: { ...o.solubility!, points: o.solubility!.points.map((p) => (p.temperatureC === '60' ? { ...p, value: '25.0' } : p)) } })),
      /22\.2 g per 100 g water at 60 °C .* is not the warmest point/,
    ],
    [
      'the 40 % sodium permanganate row with another density',
      withOxidant('sodium-permanganate', (o) => ({ strength: { ...o.strength, nominal: o.strength.nominal.map((n) => (n.value === '40' ? { ...n, densityKgPerL: '1.39' } : n)) } })),
      /40 % w\/w NaMnO4 .* is not a strength row/,
    ],
    [
      'chlorine dioxide taken as a gas by the table',
      withOxidant('chlorine-dioxide', () => ({ form: 'gas' })),
      /row chlorine-dioxide is fed as a gas/,
    ],
  ])('%s: buildDosingContext stops with TABLE_INVALID naming both sides', (_name, changed, message) => {
    let err: unknown;
    try {
      buildDosingContext(changed, { resultMemoSize: 0 });
    } catch (e) {
      err = e;
    }
    expect(isDomainError(err) && err.code).toBe('TABLE_INVALID');
    expect((err as DomainError).detail).toMatch(message);
    expect((err as DomainError).detail).toContain('tables/strength-limits.json');
  });
});

describe('the limits come from the tables the context was built from', () => {
  it('a tables folder whose hypochlorite is refused above 170 g/L refuses 180 g/L; the project tables (200 g/L) take it with a warning', () => {
    const tighter = defaultStrengthLimits().map((l) => (l.oxidant === 'sodium-hypochlorite' && l.kind === 'grade' ? { ...l, refuseAbove: { ...l.refuseAbove, value: '170' } } : l));
    const ctx = buildDosingContext({ ...tables, strengthLimits: tighter }, { resultMemoSize: 0 });
    expect(ctx.strengthLimits).toBe(tighter);
    const body = request('sodium-hypochlorite', { value: 180, unit: 'g/L' });
    let err: unknown;
    try {
      computeDose(parseDoseRequest(body, ctx.strengthLimits), ctx);
    } catch (e) {
      err = e;
    }
    expect(isDomainError(err) && err.fields.map((f) => f.pointer)).toEqual(['/product/strength/value']);
    expect(flag(run(body), 'STRENGTH_ABOVE_TRADE_GRADE')?.severity).toBe('warning');
  });
});
