/**
 * A couple written with OH- (base) and the same couple written with H+ (acid) must give one
 * potential at a pH and temperature, with the temperature correction of E° on or off.
 *
 * For a half-reaction that takes up m OH- per n electrons, its acid form takes m H+ and
 * E_base = E°_base(T) − (m/n)·s(T)·(pH − pKw(T)),  E_acid = E°_acid(T) − (m/n)·s(T)·pH,
 * so the two agree at every pH exactly when E°_base(T) = E°_acid(T) − (m/n)·s(T)·pKw(T)
 * (s = RT ln10/F, CODATA 2018 R and F). Kw at T is the water's own (Harned & Owen 1958 row of
 * the tables, read back through reactionLog10K); the "temperature correction" switch holds the
 * tables' dE°/dT and ΔH° terms of E° at 25 °C, not the ionisation of the water.
 */
import { describe, expect, it } from 'vitest';
import { reactionLog10K, standardPotential } from '../../../src/chemistry/thermo/derive.js';
import { buildLedger, nernstSlopeV } from '../../../src/chemistry/thermo/ledger.js';
import { loadTables } from '../../../src/reference/load.js';

const real = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));
const R = 8.314462618;
const F = 96485.33212;

// [acid form, base form, m (H+ or OH-) per n electrons]
const COUPLES: [string, string, number][] = [
  ['Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', 'Fe(OH)3(s) + e- = Fe2+ + 3OH-', 3],
  ['MnO4- + 4H+ + 3e- = MnO2(s) + 2H2O', 'MnO4- + 2H2O + 3e- = MnO2(s) + 4OH-', 4 / 3],
  ['OCl- + 2H+ + 2e- = Cl- + H2O', 'OCl- + H2O + 2e- = Cl- + 2OH-', 1],
  ['O2(g) + 4H+ + 4e- = 2H2O', 'O2(g) + 2H2O + 4e- = 4OH-', 1],
];

describe('base and acid forms give one potential at any temperature, correction on or off', () => {
  for (const [acid, base, mPerN] of COUPLES) {
    for (const temperatureC of [5, 12, 40]) {
      for (const temperatureCorrection of [true, false]) {
        it(`${base} at ${temperatureC} °C, correction ${temperatureCorrection ? 'on' : 'off'}`, () => {
          const a = standardPotential(acid, real, { temperatureC, temperatureCorrection, basis: 'acid' });
          const b = standardPotential(base, real, { temperatureC, temperatureCorrection, basis: 'acid' });
          const T = 273.15 + temperatureC;
          const s = (R * T * Math.LN10) / F;
          expect(s).toBeCloseTo(nernstSlopeV(real.constants, T), 12);
          const pKw = -reactionLog10K('H2O = H+ + OH-', real, { temperatureC }).log10K;
          expect(pKw).toBeGreaterThan(13);
          expect(b.standardPotentialAtTemperatureV).toBeCloseTo(a.standardPotentialAtTemperatureV - mPerN * s * pKw, 9);
          // the correction reported is the acid form's; the water's ionisation is carried apart
          expect(b.temperatureCorrectionV).toBeCloseTo(a.temperatureCorrectionV, 12);
          expect(b.standardPotentialAtTemperatureV).toBeCloseTo(b.standardPotentialV + b.temperatureCorrectionV + b.waterIonisationShiftV, 12);
          expect(a.waterIonisationShiftV).toBe(0);
          if (!temperatureCorrection) expect(a.temperatureCorrectionV).toBe(0);
        });
      }
    }
  }

  it.each([true, false])('the Kw row stated for 0–60 °C says so when a base form is carried at 80 °C (correction %s)', (temperatureCorrection) => {
    // Harned & Owen 1958: the Kw temperature expression of the tables is for 0–60 °C
    const b = standardPotential('O2(g) + 2H2O + 4e- = 4OH-', real, { temperatureC: 80, temperatureCorrection, basis: 'acid' });
    expect(b.temperatureNotes.some((n) => /harned-owen-kw.*0–60 °C.*80/.test(n))).toBe(true);
    expect(b.notes.filter((n) => /harned-owen-kw/.test(n))).toHaveLength(1);
  });

  it('OCl-/Cl- in base at 5 °C: the correction is only that of HOCl\'s pKa (HOCl/Cl- has no dE°/dT); Kw is carried apart', () => {
    // acid form OCl- + 2H+ + 2e- = Cl- + H2O is HOCl + H+ + 2e- = Cl- + H2O plus OCl- + H+ = HOCl (log K = pKa),
    // so E°(T) − E°(25) = [s(T)·pKa(T) − s(25)·pKa(25)] / 2 with HOCl/Cl- itself held at 25 °C
    const b = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', real, { temperatureC: 5, basis: 'acid' });
    const pKa = (t: number) => -reactionLog10K('HOCl = H+ + OCl-', real, { temperatureC: t }).log10K;
    const s = (t: number) => (R * (273.15 + t) * Math.LN10) / F;
    expect(b.temperatureCorrectionV).toBeCloseTo((s(5) * pKa(5) - s(25) * pKa(25)) / 2, 9);
    const pKw = (t: number) => -reactionLog10K('H2O = H+ + OH-', real, { temperatureC: t }).log10K;
    expect(b.waterIonisationShiftV).toBeCloseTo(-(s(5) * pKw(5) - s(25) * pKw(25)), 9);
  });
});
