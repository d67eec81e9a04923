import { readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import {
  contactTimeCheck,
  firstOrderHalfLifeMin,
  firstOrderRemaining,
  firstOrderTimeMin,
  ironOxygenation,
  kineticsRowsFor,
  rateConstantFromRow,
  typicalRangeFromRow,
  type IronOxygenationInput,
} from '../../src/water/kinetics.js';
import { kwAt } from '../../src/water/speciation.js';
import { DomainError } from '../../src/core/errors.js';
import { KineticsRowSchema, type KineticsRateLawRow, type KineticsRow, type KineticsTypicalRow } from '../../src/reference/kinetics-schema.js';
import { CODATA_2018, KW_HARNED_OWEN } from './helpers.js';

const tablesDir = resolve(dirname(fileURLToPath(import.meta.url)), '../../tables');
const readTable = (name: string) => JSON.parse(readFileSync(resolve(tablesDir, name), 'utf8')) as { table: string; rows: unknown[] };
const kinetics = readTable('kinetics-typical.json');
const stummLee = kinetics.rows.find((r) => (r as { kind: string }).kind === 'rate-law') as KineticsRateLawRow;

/** The Stumm & Lee rate constant from the table row, as the dosing code will pass it. */
const K_STUMM_LEE = rateConstantFromRow(stummLee);

function at(pH: number, temperatureC: number, extra: Partial<IronOxygenationInput> = {}): IronOxygenationInput {
  return { pH, temperatureC, kw: kwAt(temperatureC, KW_HARNED_OWEN, CODATA_2018).Kw, rateConstant: K_STUMM_LEE, oxygen: { pO2Atm: 0.21 }, constants: CODATA_2018, ...extra };
}

describe('first-order helpers (edge cases first)', () => {
  it.each([
    [() => firstOrderTimeMin(0, 1, 0.5), '/kPerMin'],
    [() => firstOrderTimeMin(1, 1, 0), '/ct'],
    [() => firstOrderHalfLifeMin(-1), '/kPerMin'],
    [() => firstOrderRemaining(1, -1, 1), '/c0'],
  ])('a bad argument is refused naming it (%#)', (f, pointer) => {
    try {
      f();
      expect.unreachable();
    } catch (e) {
      expect((e as DomainError).fields[0]?.pointer).toBe(pointer);
    }
  });
  it('no time is needed when the target is already met', () => {
    expect(firstOrderTimeMin(0.1, 0.2, 0.3)).toBe(0);
  });
  it('ln 2 / k, and ten half-lives leave 1/1024', () => {
    const k = 0.05;
    expect(firstOrderHalfLifeMin(k)).toBeCloseTo(Math.LN2 / k, 12);
    expect(firstOrderRemaining(k, 1, 10 * firstOrderHalfLifeMin(k))).toBeCloseTo(1 / 1024, 12);
    expect(firstOrderTimeMin(k, 1, 1 / 1024)).toBeCloseTo(10 * firstOrderHalfLifeMin(k), 9);
  });
});

describe('iron(II) oxygenation, Stumm & Lee (1961)', () => {
  it('the table carries k = 8.0e13 L² mol⁻² atm⁻¹ min⁻¹ at 20.5 °C (Stumm & Lee 1961; Stumm & Morgan 1996)', () => {
    expect(stummLee.rateConstant).toBe('8.0e13');
    expect(stummLee.temperatureC).toBe('20.5');
    expect(stummLee.activationEnergyKJPerMol).toBeNull();
  });

  it('half-life at pH 7, 20.5 °C in air-saturated water (pO2 = 0.21 atm) is about 8 min — "minutes at pH 7" (Stumm & Lee 1961)', () => {
    // hand: pKw(20.5 °C) = 4470.99/293.65 − 6.0875 + 0.01706 × 293.65 = 14.1476 (Harned & Owen)
    //   [OH-] = 10^(7 − 14.1476) = 7.118e-8 M; k' = 8.0e13 × (7.118e-8)² × 0.21 = 0.0851 /min; t½ = 0.6931 / 0.0851 = 8.1 min
    const r = ironOxygenation(at(7, 20.5));
    expect(r.hydroxideMolPerL).toBeCloseTo(7.118e-8, 10);
    expect(r.pseudoFirstOrderPerMin).toBeCloseTo(0.0851, 4);
    expect(r.halfLifeMin).toBeCloseTo(8.15, 1);
    expect(r.halfLifeMin).toBeGreaterThan(1);
    expect(r.halfLifeMin).toBeLessThan(30);
    expect(r.temperatureTreatment).toBe('held-at-reference');
    expect(r.notes).toEqual([]);
  });

  it('the rate rises 100-fold per pH unit ([OH-]², the rate law)', () => {
    expect(ironOxygenation(at(8, 20.5)).pseudoFirstOrderPerMin / ironOxygenation(at(7, 20.5)).pseudoFirstOrderPerMin).toBeCloseTo(100, 9);
  });

  it('cold water is slower through Kw alone: at 5 °C and pH 7 the half-life is about 2 h, and the result says k was held', () => {
    // hand: pKw(5 °C) = 4470.99/278.15 − 6.0875 + 0.01706 × 278.15 = 14.7318; [OH-]² ratio to 20.5 °C = 10^(−2 × 0.5841) = 0.0679
    //   t½ ≈ 8.15 / 0.0679 ≈ 120 min. Stumm & Lee observed roughly a tenfold change per 15 °C at constant pH (from memory).
    const r = ironOxygenation(at(7, 5));
    expect(r.halfLifeMin).toBeCloseTo(120, -1);
    expect(r.notes[0]).toMatch(/held at its 20.5 °C value/);
  });

  it('an activation energy, when one is passed with its source, corrects k by Arrhenius', () => {
    const withEa = ironOxygenation(at(7, 10, { rateConstant: { ...K_STUMM_LEE, activationEnergy: { kJPerMol: 50, source: 'test value' } } }));
    const held = ironOxygenation(at(7, 10));
    const T = 283.15, Tr = 293.65;
    expect(withEa.rateConstantAtT / held.rateConstantAtT).toBeCloseTo(Math.exp((-50000 / 8.314462618) * (1 / T - 1 / Tr)), 9);
    expect(withEa.temperatureTreatment).toBe('arrhenius');
  });

  it('dissolved O2 in mg/L converts through the Henry constant to the same rate as the equivalent pO2', () => {
    // K_H(O2, 20.5 °C) ≈ 1.37e-3 mol/(L·atm) (Sander 2015 compilation, from memory) — any consistent pair works here
    const henry = 1.37e-3, M = 31.998;
    const mgPerL = 0.21 * henry * M * 1000; // 9.2 mg/L, close to air saturation at 20 °C (Standard Methods 4500-O: 9.09 mg/L)
    const a = ironOxygenation(at(7, 20.5, { oxygen: { dissolvedO2MgPerL: mgPerL, henryMolPerLAtm: henry, o2MolarMassGPerMol: M } }));
    expect(a.pO2Atm).toBeCloseTo(0.21, 12);
    expect(a.halfLifeMin).toBeCloseTo(ironOxygenation(at(7, 20.5)).halfLifeMin, 9);
    expect(() => ironOxygenation(at(7, 20.5, { oxygen: { dissolvedO2MgPerL: 0, henryMolPerLAtm: henry, o2MolarMassGPerMol: M } }))).toThrow(/no dissolved oxygen/i);
  });

  it('time from 2 mg/L to 0.3 mg/L (the US secondary level) is ln(2/0.3)/k\'', () => {
    const r = ironOxygenation(at(7.2, 15, { initialFe: 2, targetFe: 0.3 }));
    expect(r.timeToTargetMin).toBeCloseTo(Math.log(2 / 0.3) / r.pseudoFirstOrderPerMin, 9);
    expect(() => ironOxygenation(at(7, 20, { initialFe: 2 }))).toThrow(/both/);
  });
});

describe('contact time check', () => {
  it('needs a required time or a range', () => {
    expect(() => contactTimeCheck({ availableMinutes: 10 })).toThrow(DomainError);
    expect(() => contactTimeCheck({ availableMinutes: 10, requiredRange: { minMinutes: 5, maxMinutes: 1 } })).toThrow(/upper end/);
  });

  it.each([
    // required (rate law)
    [{ requiredMinutes: 20, availableMinutes: 30 }, 'ok'],
    [{ requiredMinutes: 20, availableMinutes: 20 }, 'ok'],
    [{ requiredMinutes: 20, availableMinutes: 19.9 }, 'too-slow'],
    // typical range
    [{ requiredRange: { minMinutes: 0.1, maxMinutes: 5 }, availableMinutes: 10 }, 'ok'],
    [{ requiredRange: { minMinutes: 0.1, maxMinutes: 5 }, availableMinutes: 2 }, 'marginal'],
    [{ requiredRange: { minMinutes: 60, maxMinutes: null }, availableMinutes: 30 }, 'too-slow'],
    [{ requiredRange: { minMinutes: 60, maxMinutes: null }, availableMinutes: 600 }, 'marginal'],
  ] as const)('%j → %s', (input, status) => {
    expect(contactTimeCheck({ ...input, remedy: 'Raise the pH.' }).status).toBe(status);
  });

  it('gives the remedy only when the time is short', () => {
    const slow = contactTimeCheck({ requiredMinutes: 120, availableMinutes: 30, remedy: 'Raise the pH above 8.5 or change to permanganate.' });
    expect(slow.remedy).toMatch(/permanganate/);
    expect(slow.message).toMatch(/120 min/);
    expect(slow.ratio).toBeCloseTo(0.25, 12);
    expect(contactTimeCheck({ requiredMinutes: 1, availableMinutes: 30, remedy: 'x' }).remedy).toBeNull();
  });

  it('free chlorine and manganese at pH 7.5 with 30 min of contact is too slow, with the table\'s remedy (US EPA 1999)', () => {
    const rows = kineticsRowsFor(kinetics.rows as KineticsRow[], 'sodium-hypochlorite', 'manganese', 7.5);
    expect(rows.map((r) => r.id)).toEqual(['free-chlorine-manganese']);
    const row = rows[0] as KineticsTypicalRow;
    const r = contactTimeCheck({ requiredRange: typicalRangeFromRow(row), availableMinutes: 30, remedy: row.remedy });
    expect(r.status).toBe('too-slow');
    expect(r.remedy).toMatch(/raise the pH/i);
  });
});

describe('tables/kinetics-typical.json', () => {
  const oxidantIds = new Set(readTable('oxidants.json').rows.map((r) => (r as { id: string }).id));
  const contaminantIds = new Set(readTable('contaminants.json').rows.map((r) => (r as { id: string }).id));

  it('is the kinetics-typical table and every row validates', () => {
    expect(kinetics.table).toBe('kinetics-typical');
    kinetics.rows.forEach((row, i) => {
      const r = KineticsRowSchema.safeParse(row);
      expect(r.success, `row ${i}: ${r.success ? '' : r.error.message}`).toBe(true);
    });
  });

  it('names only known oxidant products and contaminants, and ids are unique', () => {
    const ids = new Set<string>();
    for (const row of kinetics.rows as { id: string; products: string[]; contaminant: string }[]) {
      expect(ids.has(row.id), row.id).toBe(false);
      ids.add(row.id);
      for (const p of row.products) expect(oxidantIds.has(p), `${row.id}: ${p}`).toBe(true);
      expect(contaminantIds.has(row.contaminant), `${row.id}: ${row.contaminant}`).toBe(true);
    }
  });

  it('marks every value taken from memory or common practice in its note', () => {
    for (const row of kinetics.rows as { id: string; note: string }[]) {
      expect(row.note, row.id).toMatch(/memory|common practice/);
    }
  });

  it('row lookup: the rate law comes first, pH limits are applied, an unknown pair gives nothing', () => {
    const rows = kinetics.rows as KineticsRow[];
    expect(kineticsRowsFor(rows, 'oxygen', 'iron', 7)[0]?.kind).toBe('rate-law');
    expect(kineticsRowsFor(rows, 'potassium-permanganate', 'manganese', 6.5)).toEqual([]); // row starts at pH 7
    expect(kineticsRowsFor(rows, 'potassium-permanganate', 'manganese', 7).map((r) => r.id)).toEqual(['permanganate-manganese']);
    expect(kineticsRowsFor(rows, 'sodium-hypochlorite', 'manganese', 9)).toEqual([]); // above the row's pH 8.5
    expect(kineticsRowsFor(rows, 'chlorine-dioxide', 'ammonia', 7)).toEqual([]);
  });

  it('the schema refuses a range whose upper end is below its lower end', () => {
    const bad = { ...(kinetics.rows[1] as object), minMinutes: '5', maxMinutes: '1' };
    expect(KineticsRowSchema.safeParse(bad).success).toBe(false);
  });
});
