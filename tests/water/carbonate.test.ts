import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  acidAddition,
  acidReleasedMeqPerL,
  alkalinityEqPerL,
  caco3EquivalentWeightMgPerMeq,
  carbonateSpecies,
  hPlusReleasedPerMol,
  solveCarbonatePH,
  totalCarbonateFromAlkalinity,
  type CarbonateConstants,
} from '../../src/water/carbonate.js';
import { kwAt, log10KAt } from '../../src/water/speciation.js';
import { DomainError } from '../../src/core/errors.js';
import { parseFormula } from '../../src/chemistry/formula/index.js';
import { balanceRedox } from '../../src/chemistry/balance/index.js';
import { CODATA_2018, K1_PLUMMER_BUSENBERG, K2_PLUMMER_BUSENBERG, KW_HARNED_OWEN } from './helpers.js';

/** CIAAW 2021 abridged standard atomic weights (as printed in the IUPAC periodic table, 2022). */
const ATOMIC_WEIGHTS = new Map([
  ['Ca', '40.078'],
  ['C', '12.011'],
  ['O', '15.999'],
  ['Fe', '55.845'],
]);
const EQ = caco3EquivalentWeightMgPerMeq(ATOMIC_WEIGHTS).value;

function constantsAt(t: number): CarbonateConstants {
  return {
    K1: log10KAt(t, K1_PLUMMER_BUSENBERG, CODATA_2018).K,
    K2: log10KAt(t, K2_PLUMMER_BUSENBERG, CODATA_2018).K,
    Kw: kwAt(t, KW_HARNED_OWEN, CODATA_2018).Kw,
  };
}
const K25 = constantsAt(25);

describe('carbonate: refused inputs (edge cases first)', () => {
  it.each([
    [{ alkalinityMgPerLAsCaCO3: -1 }, '/alkalinityMgPerLAsCaCO3'],
    [{ pH: 15 }, '/pH'],
    [{ equivalentWeightMgPerMeq: 0 }, '/equivalentWeightMgPerMeq'],
    [{ constants: { ...K25, K1: 0 } }, '/constants/K1'],
  ])('%j is refused naming the field', (patch, pointer) => {
    try {
      totalCarbonateFromAlkalinity({ alkalinityMgPerLAsCaCO3: 100, pH: 7.5, constants: K25, equivalentWeightMgPerMeq: EQ, ...patch });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DomainError);
      expect((e as DomainError).fields[0]?.pointer).toBe(pointer);
    }
  });

  it('an alkalinity below what the hydroxide alone carries at that pH is refused (bad readings)', () => {
    expect(() => totalCarbonateFromAlkalinity({ alkalinityMgPerLAsCaCO3: 1, pH: 11.5, constants: K25, equivalentWeightMgPerMeq: EQ })).toThrow(/hydroxide/);
  });

  it('an acid larger than any pH 0–14 can absorb is refused', () => {
    expect(() => solveCarbonatePH({ totalCarbonateMolPerL: 1e-3, alkalinityEqPerL: -2, constants: K25 })).toThrow(/too large/);
  });
});

describe('CaCO3 equivalent weight', () => {
  it('is M(CaCO3)/2 = 50.04 mg/meq from the atomic weights (Standard Methods 2320 B uses 50 044 mg CaCO3/eq)', () => {
    // hand: (40.078 + 12.011 + 3 × 15.999) / 2 = 100.086 / 2 = 50.043
    expect(caco3EquivalentWeightMgPerMeq(ATOMIC_WEIGHTS).text).toBe('50.043');
    expect(EQ).toBeCloseTo(50.04, 2);
  });
});

describe('equivalence points of a closed carbonate system, C_T = 1e-3 M, 25 °C', () => {
  // Stumm & Morgan, Aquatic Chemistry, 3rd ed. (1996), ch. 4 (alkalimetric titration of carbonate): for C_T = 10⁻³ M
  // pH_CO2 ≈ 4.7, pH_HCO3- ≈ 8.3, pH_CO3 2- ≈ 10.6 (values from memory; verify).
  it.each([
    ['CO2 solution (Alk = 0)', 0, 4.7],
    ['NaHCO3 solution (Alk = C_T)', 1e-3, 8.3],
    ['Na2CO3 solution (Alk = 2 C_T)', 2e-3, 10.6],
  ])('%s: pH ≈ %s', (_label, alk, expected) => {
    const pH = solveCarbonatePH({ totalCarbonateMolPerL: 1e-3, alkalinityEqPerL: alk, constants: K25 });
    expect(Math.abs(pH - expected)).toBeLessThan(0.1);
    expect(carbonateSpecies(pH, 1e-3, K25).alkalinityEqPerL).toBeCloseTo(alk, 8);
  });
});

describe('acid added at constant C_T', () => {
  it('worked example: 100 mg/L alkalinity as CaCO3, pH 7.5, 25 °C, + 0.5 meq/L strong acid → pH 6.72', () => {
    // Hand computation (the Henderson–Hasselbalch route of Stumm & Morgan ch. 4 / Benjamin, Water Chemistry, ch. 9):
    //   Alk = 100 / 50.043 = 1.99828 meq/L. At pH 7.5: [H2CO3*]/[HCO3-] = 10^(6.352 − 7.5) = 0.07112,
    //   [CO3 2-]/[HCO3-] = 10^(7.5 − 10.329) = 1.4825e-3, [OH-] = 3.20e-7, [H+] = 3.2e-8
    //   [HCO3-] = (1.99828e-3 − 3.20e-7 + 3.2e-8) / 1.002965 = 1.99208e-3;  C_T = 1.99208e-3 × 1.072603 = 2.13671e-3 M
    //   After 0.5 meq/L: [HCO3-] ≈ 1.49828e-3, [H2CO3*] ≈ 2.13671e-3 − 1.49828e-3 = 6.3843e-4
    //   pH ≈ 6.352 + log10(1.49828 / 0.63843) = 6.352 + 0.3705 = 6.7225
    const r = acidAddition({ alkalinityMgPerLAsCaCO3: 100, pH: 7.5, constants: K25, equivalentWeightMgPerMeq: EQ, acidMeqPerL: 0.5 });
    expect(r.totalCarbonateMolPerL).toBeCloseTo(2.13671e-3, 7);
    expect(Math.abs(r.finalPH - 6.7225)).toBeLessThan(0.005);
    expect(r.alkalinityConsumedMgPerLAsCaCO3).toBeCloseTo(0.5 * 50.043, 9);
    expect(r.finalAlkalinityMgPerLAsCaCO3).toBeCloseTo(100 - 25.0215, 9);
    expect(r.pHDrop).toBeCloseTo(7.5 - r.finalPH, 12);
    expect(r.alkalinityExhausted).toBe(false);
  });

  it('1 mg/L Fe(II) oxidised by O2 consumes 1.8 mg/L alkalinity as CaCO3 (textbook rule; common practice)', () => {
    // The H+ released comes out of the balanced reaction (acid medium: O2 + 4Fe2+ + 10H2O → 4Fe(OH)3 + 8H+;
    // base medium: O2 + 4Fe2+ + 8OH- + 2H2O → 4Fe(OH)3): 2 H+ per Fe either way.
    const fe = parseFormula('Fe2+');
    const couples = { oxidant: { from: parseFormula('O2'), to: parseFormula('H2O') }, reductant: { from: fe, to: parseFormula('Fe(OH)3(s)') } };
    const perFeAcid = hPlusReleasedPerMol(balanceRedox({ ...couples, medium: 'acid' }), fe);
    const perFeBase = hPlusReleasedPerMol(balanceRedox({ ...couples, medium: 'base' }), fe);
    expect(perFeAcid).toBe(2);
    expect(perFeBase).toBe(2);
    const meq = acidReleasedMeqPerL({ reactedMgPerL: 1, molarMassGPerMol: 55.845, hPlusPerMol: perFeAcid });
    // hand: 1 / 55.845 × 2 = 0.035813 meq/L × 50.043 = 1.792 mg/L as CaCO3
    const r = acidAddition({ alkalinityMgPerLAsCaCO3: 100, pH: 7.5, constants: K25, equivalentWeightMgPerMeq: EQ, acidMeqPerL: meq });
    expect(r.alkalinityConsumedMgPerLAsCaCO3).toBeCloseTo(1.792, 3);
    expect(Math.abs(r.alkalinityConsumedMgPerLAsCaCO3 - 1.8)).toBeLessThan(0.05);
    // pH drop, hand (Henderson–Hasselbalch, C_T = 2.13671e-3 M from the worked example below):
    //   [HCO3-] ≈ 1.99828e-3 − 0.035813e-3 = 1.96247e-3, [H2CO3*] ≈ 2.13671e-3 − 1.96247e-3 = 1.7424e-4
    //   pH ≈ 6.352 + log10(1.96247 / 0.17424) = 7.4036, a drop of about 0.1
    expect(Math.abs(r.finalPH - 7.4036)).toBeLessThan(0.01);
  });

  it('acid beyond the alkalinity drives the water below its CO2 equivalence point', () => {
    const r = acidAddition({ alkalinityMgPerLAsCaCO3: 20, pH: 7, constants: K25, equivalentWeightMgPerMeq: EQ, acidMeqPerL: 0.5 });
    expect(r.alkalinityExhausted).toBe(true);
    expect(r.finalPH).toBeLessThan(4.5);
  });

  it('a base raises the pH and adds alkalinity', () => {
    const r = acidAddition({ alkalinityMgPerLAsCaCO3: 50, pH: 6.5, constants: K25, equivalentWeightMgPerMeq: EQ, acidMeqPerL: -0.2 });
    expect(r.finalPH).toBeGreaterThan(6.5);
    expect(r.finalAlkalinityMgPerLAsCaCO3).toBeCloseTo(50 + 0.2 * 50.043, 9);
  });

  it('the final state is self-consistent: recomputing C_T from the final alkalinity and pH gives the same C_T (property, 0–40 °C)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 10, max: 400, noNaN: true }),
        fc.double({ min: 6, max: 9, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 40, noNaN: true }),
        (alk, pH, frac, t) => {
          const k = constantsAt(t);
          const acidMeqPerL = frac * 0.9 * (alk / EQ);
          const r = acidAddition({ alkalinityMgPerLAsCaCO3: alk, pH, constants: k, equivalentWeightMgPerMeq: EQ, acidMeqPerL });
          const again = totalCarbonateFromAlkalinity({ alkalinityMgPerLAsCaCO3: r.finalAlkalinityMgPerLAsCaCO3, pH: r.finalPH, constants: k, equivalentWeightMgPerMeq: EQ });
          expect(again.totalCarbonateMolPerL / r.totalCarbonateMolPerL).toBeCloseTo(1, 4);
          expect(r.finalPH).toBeLessThanOrEqual(pH + 1e-6);
        },
      ),
    );
  });

  it('activity coefficients shift the result the expected way (Davies γ at I = 0.01: fewer free ions per activity)', () => {
    const ideal = totalCarbonateFromAlkalinity({ alkalinityMgPerLAsCaCO3: 100, pH: 8, constants: K25, equivalentWeightMgPerMeq: EQ });
    const real = totalCarbonateFromAlkalinity({ alkalinityMgPerLAsCaCO3: 100, pH: 8, constants: K25, equivalentWeightMgPerMeq: EQ, activityCoefficients: { monovalent: 0.9, divalent: 0.66 } });
    // the mixed K1 (K1/γ1) is larger, so more of C_T is HCO3- at the same pH and less C_T carries the same alkalinity
    expect(real.totalCarbonateMolPerL).toBeLessThan(ideal.totalCarbonateMolPerL);
    expect(alkalinityEqPerL(100, EQ)).toBeCloseTo(real.alkalinityEqPerL, 15);
  });
});
