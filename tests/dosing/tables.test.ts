/**
 * The dosing tables (tables/oxidants.json, contaminants.json, limits.json, cautions.json,
 * oxygen-saturation.json, demo/demo-plant.json): they load through the one loader, every
 * source resolves, and their values agree with outside references named beside each check.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkDosingTables } from '../../src/reference/dosing-schemas.js';
import { OXIDANT_IDS } from '../../src/dosing/request.js';
import { parsePlantProfile } from '../../src/dosing/plant.js';
import { molarMass, parseFormula } from '../../src/chemistry/formula/index.js';
import { atomicWeights, tables } from './fixture.js';

describe('dosing tables load and cross-check', () => {
  it('cross-table checks find nothing: cautions, oxidant ids, limits, nested sources and equilibria rows resolve', () => {
    expect(
      checkDosingTables({
        ...tables,
        sourceIds: new Set(tables.sources.map((s) => s.id)),
        equilibriumIds: new Set(tables.equilibria.map((e) => e.id)),
      }),
    ).toEqual([]);
  });

  it('checkDosingTables reports a caution id that does not exist and a source that does not resolve', () => {
    const bad = { ...tables.oxidants[0]!, cautions: ['no-such-caution'], source: 'no-such-source' };
    const problems = checkDosingTables({ ...tables, oxidants: [bad], sourceIds: new Set(tables.sources.map((s) => s.id)) });
    expect(problems.some((p) => p.includes('no-such-caution'))).toBe(true);
    expect(problems.some((p) => p.includes('no-such-source'))).toBe(true);
  });

  it('the oxidant ids are exactly those of the HTTP contract (issue 3)', () => {
    expect(tables.oxidants.map((o) => o.id).sort()).toEqual([...OXIDANT_IDS].sort());
  });

  it('every contaminant row maps to a request field of the contract', () => {
    expect(tables.contaminants.map((c) => c.requestField).sort()).toEqual(['ammoniaN', 'arsenite', 'iron', 'manganese', 'nitrite', 'sulfide']);
  });
});

describe('oxygen saturation (Standard Methods 4500-O, Table 4500-O:I, after Benson & Krause 1984)', () => {
  const points = tables.oxygenSaturation.filter((r) => r.kind === 'point');
  const eq = tables.oxygenSaturation.find((r) => r.kind === 'equation');
  it('covers 0 to 40 °C every 1 °C', () => {
    expect(points.map((p) => Number(p.temperatureC))).toEqual(Array.from({ length: 41 }, (_, i) => i));
  });
  it.each(points.map((p) => [p.temperatureC, p.valueText]))('%s °C: %s mg/L agrees with the Benson & Krause equation within 0.0015 mg/L', (t, v) => {
    if (!eq || eq.kind !== 'equation') throw new Error('no equation row');
    const c = eq.coefficients.map(Number);
    const T = Number(t) + 273.15;
    const lnC = c[0]! + c[1]! / T + c[2]! / T ** 2 + c[3]! / T ** 3 + c[4]! / T ** 4;
    expect(Math.abs(Math.exp(lnC) - Number(v))).toBeLessThan(0.0015);
  });
  it('known anchors: 14.621 mg/L at 0 °C, 9.092 at 20 °C, 8.263 at 25 °C (Standard Methods 4500-O, memory)', () => {
    const at = (t: number) => points.find((p) => Number(p.temperatureC) === t)!.valueText;
    expect([at(0), at(20), at(25)]).toEqual(['14.621', '9.092', '8.263']);
  });
});

describe('product properties against outside references', () => {
  const kmno4 = tables.oxidants.find((o) => o.id === 'potassium-permanganate')!;
  it('KMnO4 solubility rises with temperature; 6.4 g per 100 g water at 20 °C (US EPA 1999 section 5.2 prints 6.4 at 20 °C; read)', () => {
    const pts = kmno4.solubility!.points.map((p) => [Number(p.temperatureC), Number(p.value)] as const);
    for (let i = 1; i < pts.length; i++) expect(pts[i]![1]).toBeGreaterThan(pts[i - 1]![1]);
    expect(pts.find((p) => p[0] === 20)![1]).toBe(6.4);
  });
  it.each([
    // molar masses as printed in the CRC Handbook (issue 2 lists them)
    ['KMnO4', '158.03'],
    ['NaOCl', '74.44'],
    ['Cl2', '70.90'],
    ['ClO2', '67.45'],
    ['Fe(OH)3', '106.87'],
    ['MnO2', '86.94'],
  ])('M(%s) = %s g/mol (CRC Handbook)', (f, printed) => {
    expect(molarMass(parseFormula(f), atomicWeights).toDecimalPlaces(2).toFixed(2)).toBe(printed);
  });
  it('12.5 trade % hypochlorite at 1.17 kg/L is 10.7 % w/w available chlorine (125 g/L ÷ 1170 g/L; White 5th ed., memory)', () => {
    const hypo = tables.oxidants.find((o) => o.id === 'sodium-hypochlorite')!;
    const n = hypo.strength.nominal.find((x) => x.default)!;
    expect(((Number(n.value) * 10) / (Number(n.densityKgPerL) * 1000)) * 100).toBeCloseTo(10.68, 2);
  });
  it('every strength and density row whose source was recalled from memory says so in its note (DEVELOPERS.md, reference data)', () => {
    const memory = new Set(tables.sources.filter((x) => x.access === 'memory').map((x) => x.id));
    for (const o of tables.oxidants) for (const n of o.strength.nominal) if (memory.has(n.source)) expect(n.note ?? '', `${o.id}: ${n.label}`).toMatch(/memory/i);
  });
  it('the hypochlorite density rows (White 5th ed., memory) follow about 1 + 0.0014 × g/L available chlorine, within 0.006 kg/L, the relation that gives the 1.168 at 120 g/L Powell Fabrication prints (read)', () => {
    const hypo = tables.oxidants.find((o) => o.id === 'sodium-hypochlorite')!;
    const rows = hypo.strength.nominal.filter((x) => x.densityKgPerL !== undefined);
    expect(rows.map((x) => x.value)).toEqual(['5', '10', '12.5', '15']);
    for (const r of rows) expect(Math.abs(Number(r.densityKgPerL) - (1 + 0.0014 * Number(r.value) * 10))).toBeLessThanOrEqual(0.006);
    expect(1 + 0.0014 * 120).toBeCloseTo(1.168, 12);
  });
  it('chlorite fraction of chlorine dioxide: 50 to 70 % (US EPA 1999 ch. 4; read: "approximately 50 to 70 percent")', () => {
    const clo2 = tables.oxidants.find((o) => o.id === 'chlorine-dioxide')!;
    expect([clo2.chloriteFraction!.low, clo2.chloriteFraction!.high]).toEqual(['0.5', '0.7']);
  });
});

describe('limits as the regulations print them', () => {
  it.each([
    ['us-smcl-iron', '0.3', '40 CFR 143.3'],
    ['us-smcl-manganese', '0.05', '40 CFR 143.3'],
    ['us-mrdl-chlorine', '4.0', '40 CFR 141.65'],
    ['us-mrdl-chloramines', '4.0', '40 CFR 141.65'],
    ['us-mrdl-chlorine-dioxide', '0.8', '40 CFR 141.65'],
    ['us-mcl-chlorite', '1.0', '40 CFR 141.64'],
    ['us-mcl-bromate', '0.010', '40 CFR 141.64'],
    ['us-mcl-arsenic', '0.010', '40 CFR 141.62'],
    ['who-manganese', '0.08', 'WHO GDWQ 4th ed. + addenda 1 and 2 (2022)'],
    ['who-arsenic', '0.01', 'WHO GDWQ 4th ed. + addenda 1 and 2 (2022)'],
    ['who-chlorite', '0.7', 'WHO GDWQ 4th ed. + addenda 1 and 2 (2022)'],
    ['who-bromate', '0.01', 'WHO GDWQ 4th ed. + addenda 1 and 2 (2022)'],
    ['who-chlorine', '5', 'WHO GDWQ 4th ed. + addenda 1 and 2 (2022)'],
  ])('%s = %s mg/L (%s, values from memory)', (id, value, _cite) => {
    const l = tables.limits.find((x) => x.id === id)!;
    expect(l.valueText).toBe(value);
    if (l.authority === 'WHO') expect(l.edition).toContain('4th edition');
  });
  it('every limit says which regulation or guideline it is', () => {
    for (const l of tables.limits) expect(l.citation.length).toBeGreaterThan(5);
  });
});

describe('the demo plant', () => {
  const raw = JSON.parse(readFileSync(new URL('../../tables/demo/demo-plant.json', import.meta.url), 'utf8')) as unknown;
  it('is a valid plant profile, marked invented in its flag, its name and its note', () => {
    const p = parsePlantProfile(raw);
    expect(p.invented).toBe(true);
    expect(p.name.toLowerCase()).toContain('invented');
    expect(p.note).toMatch(/INVENTED/);
  });
  it('names only products and pumps of oxidants in the tables', () => {
    const p = parsePlantProfile(raw);
    const ids = new Set(tables.oxidants.map((o) => o.id));
    for (const x of [...p.products, ...p.pumps]) expect(ids.has(x.oxidant)).toBe(true);
  });
});
