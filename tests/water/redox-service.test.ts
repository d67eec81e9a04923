/**
 * Couples and cells from text (src/water/redox-service.ts), here: a value given for a species
 * that is in neither half-reaction but is the non-redox partner of a term that is (HOCl for a
 * couple written with OCl-, O2(g) for a couple written with dissolved O2, and the reverse).
 * The term's activity is converted from the given one (src/water/linked.ts) and follows the pH.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { loadReferenceTables } from '../../src/reference/load.js';
import { buildDosingContext } from '../../src/dosing/index.js';
import { redoxDepsOf } from '../../src/dosing/redox-deps.js';
import { couplePotential, evaluateCellUncached, type CellInputText, type ConcentrationIn } from '../../src/water/redox-service.js';

const deps = redoxDepsOf(buildDosingContext(loadReferenceTables(), { resultMemoSize: 0 }));
const cell = (input: CellInputText) => evaluateCellUncached(input, deps);
type Conc = Record<string, ConcentrationIn>;

/** Both null, or both numbers within tol. */
function expectSameLimit(a: number | null, b: number | null, tol = 1e-6): void {
  if (a === null || b === null) {
    expect(a).toBe(b);
    return;
  }
  expect(Math.abs(a - b)).toBeLessThan(tol);
}

// Hand arithmetic shared below.
// Morris 1966 (tables/equilibria.json, morris-hocl): pKa(HOCl) = 3000.00/T − 10.0686 + 0.0253·T; at 298.15 K:
const PKA_HOCL_25 = 3000 / 298.15 - 10.0686 + 0.0253 * 298.15; // 7.5367
// IUPAC standard atomic weights (abridged, H 1.008, O 15.999, Cl 35.45): M(HOCl) = 52.457 g/mol, M(O2) = 31.998 g/mol
const M_HOCL = 52.457;
const M_O2 = 31.998;
// phreeqc.dat (tables/equilibria.json, phreeqc-o2-henry): O2(g) = O2, log K_H = −2.8983 at 25 °C (mol/L per atm)
const LOG_KH_O2_25 = -2.8983;

describe('cells: the OCl- couple with HOCl given (review example 1)', () => {
  const review: Conc = { HOCl: { value: 1, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' }, 'Cl-': { value: 10, unit: 'mg/L' } };
  const at = (oxFrom: string, concentrations: Conc) =>
    cell({ oxidant: { from: oxFrom, to: 'Cl-' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5, temperatureC: 25, concentrations });

  it('gives the E of the HOCl cell with the same HOCl (1.1976 V; before the conversion, 1.3383 V with OCl- at 1 mol/L)', () => {
    const ocl = at('OCl-', review);
    const hocl = at('HOCl', review);
    expect(Math.abs(ocl.cellPotentialV - hocl.cellPotentialV)).toBeLessThan(1e-6);
    expectSameLimit(ocl.feasibilityLimitPH, hocl.feasibilityLimitPH);
    expect(ocl.cellPotentialV).toBeCloseTo(1.1976, 4); // the HOCl cell's value, the right answer per the review
    expect(ocl.halfReactions.oxidant.unitActivity).toEqual([]);
  });

  it('equals the OCl- cell given the a(OCl-) of the hand arithmetic: a(HOCl)·10^(pH − pKa)', () => {
    // [HOCl] = 1e-3 g/L / 52.457 g/mol = 1.9063e-5 mol/L (neutral: γ = 1);
    // a(OCl-) = 1.9063e-5 · 10^(7.5 − 7.5367) = 1.752e-5 (no ionic strength given: γ = 1 for OCl- too)
    const aOcl = (1e-3 / M_HOCL) * Math.pow(10, 7.5 - PKA_HOCL_25);
    expect(aOcl).toBeCloseTo(1.752e-5, 8);
    const converted = at('OCl-', review);
    const given = at('OCl-', { 'OCl-': { value: aOcl, unit: 'mol/L' }, 'Fe2+': review['Fe2+']!, 'Cl-': review['Cl-']! });
    expect(converted.cellPotentialV).toBeCloseTo(given.cellPotentialV, 5);
  });

  it('says which tabled row converted HOCl and gives the converted activity; no "not used" note for HOCl', () => {
    const notes = at('OCl-', review).notes;
    const note = notes.find((n) => n.startsWith('HOCl is not in either half-reaction; OCl- of the oxidant couple is converted'));
    expect(note).toBeDefined();
    expect(note).toContain('HOCl -> OCl- + H+');
    expect(note).toContain('morris-hocl (morris-1966)');
    expect(note).toContain('a(OCl-) = 1.752e-5 at pH 7.5');
    expect(notes.some((n) => n.includes('the concentration given for it was not used'))).toBe(false);
  });

  it('keeps the feasibility limit of the HOCl cell where there is one (Mn2+ → MnO4-, 15 °C, 300 mg/L TDS)', () => {
    const mn: Conc = { HOCl: { value: 1, unit: 'mg/L' }, 'Cl-': { value: 10, unit: 'mg/L' }, 'Mn2+': { value: 0.1, unit: 'mg/L' }, 'MnO4-': { value: 0.01, unit: 'mg/L' } };
    const run = (oxFrom: string) =>
      cell({ oxidant: { from: oxFrom, to: 'Cl-' }, reductant: { from: 'Mn2+', to: 'MnO4-' }, pH: 7.5, temperatureC: 15, tdsMgPerL: 300, concentrations: mn });
    const ocl = run('OCl-');
    const hocl = run('HOCl');
    expect(hocl.feasibilityLimitPH).not.toBeNull();
    expect(Math.abs(ocl.cellPotentialV - hocl.cellPotentialV)).toBeLessThan(1e-6);
    expectSameLimit(ocl.feasibilityLimitPH, hocl.feasibilityLimitPH);
    expect(ocl.feasibleSide).toBe(hocl.feasibleSide);
  });

  it('the HOCl and OCl- spellings give the same E and limit for any pH 5–10, HOCl level and temperature (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 5, max: 10, noNaN: true }),
        fc.double({ min: 0.05, max: 10, noNaN: true }),
        fc.integer({ min: 5, max: 35 }), // the range of Morris's pKa expression
        (pH, mgPerL, temperatureC) => {
          const concentrations: Conc = { HOCl: { value: mgPerL, unit: 'mg/L' }, 'Cl-': { value: 10, unit: 'mg/L' }, 'Mn2+': { value: 0.1, unit: 'mg/L' }, 'MnO4-': { value: 0.01, unit: 'mg/L' } };
          const run = (oxFrom: string) => cell({ oxidant: { from: oxFrom, to: 'Cl-' }, reductant: { from: 'Mn2+', to: 'MnO4-' }, pH, temperatureC, tdsMgPerL: 300, concentrations });
          const ocl = run('OCl-');
          const hocl = run('HOCl');
          expect(Math.abs(ocl.cellPotentialV - hocl.cellPotentialV)).toBeLessThan(1e-6);
          expectSameLimit(ocl.feasibilityLimitPH, hocl.feasibilityLimitPH);
        },
      ),
      { numRuns: 60 },
    );
  });
});

describe('cells: dissolved O2 and O2(g) (review example 2)', () => {
  const fe: Conc = { 'Fe2+': { value: 0.5, unit: 'mg/L' } };
  const at = (oxFrom: string, concentrations: Conc) =>
    cell({ oxidant: { from: oxFrom, to: 'H2O' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5, temperatureC: 25, concentrations: { ...fe, ...concentrations } });

  it('a dissolved-O2 half (written O2(aq); a bare O2 in a couple is the gas) with O2(g) at 0.21 atm equals the same half with a(O2) = K_H·p (2.654e-4 mol/L)', () => {
    // hand: a(O2) = 0.21 atm · 10^−2.8983 mol/(L·atm) = 2.654e-4 mol/L (neutral: γ = 1)
    const aO2 = 0.21 * Math.pow(10, LOG_KH_O2_25);
    expect(aO2).toBeCloseTo(2.654e-4, 7);
    const fromGas = at('O2(aq)', { 'O2(g)': { value: 0.21, unit: 'atm' } });
    const given = at('O2(aq)', { O2: { value: aO2, unit: 'mol/L' } });
    expect(Math.abs(fromGas.cellPotentialV - given.cellPotentialV)).toBeLessThan(1e-6);
    expectSameLimit(fromGas.feasibilityLimitPH, given.feasibilityLimitPH);
    expect(fromGas.halfReactions.oxidant.unitActivity).toEqual([]);
    const note = fromGas.notes.find((n) => n.startsWith('O2(g) is not in either half-reaction; O2(aq) of the oxidant couple is converted'));
    expect(note).toContain('phreeqc-o2-henry (phreeqc-dat)');
    expect(note).toContain('a(O2(aq)) = 2.654e-4');
    expect(fromGas.notes.some((n) => n.includes('was not used'))).toBe(false);
  });

  it('an O2(g) half with dissolved O2 at 8 mg/L equals the same half at p = [O2]/K_H (0.1978 atm)', () => {
    // hand: [O2] = 8e-3 g/L / 31.998 g/mol = 2.5002e-4 mol/L; p = 2.5002e-4 / 10^−2.8983 = 0.19783 atm
    const p = 8e-3 / M_O2 / Math.pow(10, LOG_KH_O2_25);
    expect(p).toBeCloseTo(0.19783, 4);
    const fromDissolved = at('O2(g)', { O2: { value: 8, unit: 'mg/L' } });
    const given = at('O2(g)', { 'O2(g)': { value: p, unit: 'atm' } });
    expect(Math.abs(fromDissolved.cellPotentialV - given.cellPotentialV)).toBeLessThan(1e-6);
    expectSameLimit(fromDissolved.feasibilityLimitPH, given.feasibilityLimitPH);
    const note = fromDissolved.notes.find((n) => n.startsWith('O2 is not in either half-reaction; O2(g) of the oxidant couple is converted'));
    expect(note).toContain('phreeqc-o2-henry ×(-1) (phreeqc-dat)');
    expect(note).toContain('p(O2(g)) = 0.1978 atm');
  });
});

describe('cells: given values that are not converted keep their note', () => {
  const base = { reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5, temperatureC: 25 } as const;
  const notUsed = (species: string) => `${species} is not in either half-reaction; the concentration given for it was not used.`;

  it.each([
    // no element in common with any term
    ['Br-', { from: 'HOCl', to: 'Cl-' }],
    // Cl2 → OCl- moves electrons: another oxidation state, not a partner
    ['Cl2', { from: 'OCl-', to: 'Cl-' }],
  ])('%s for the %o couple', (species, oxidant) => {
    const r = cell({ ...base, oxidant, concentrations: { [species]: { value: 0.1, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' } } });
    expect(r.notes).toContain(notUsed(species));
    expect(r.notes.some((n) => n.includes('is converted from it'))).toBe(false);
  });

  it("a term given itself keeps its own value: OCl- given beside HOCl, and HOCl's value is not used", () => {
    const both = cell({ ...base, oxidant: { from: 'OCl-', to: 'Cl-' }, concentrations: { HOCl: { value: 1, unit: 'mg/L' }, 'OCl-': { value: 0.5, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' } } });
    const own = cell({ ...base, oxidant: { from: 'OCl-', to: 'Cl-' }, concentrations: { 'OCl-': { value: 0.5, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' } } });
    expect(both.cellPotentialV).toBe(own.cellPotentialV);
    // said as what it is: two values for one species, the term's own used (not "HOCl is in neither half")
    expect(both.notes.join(' ')).toMatch(/HOCl and OCl- were both given, and HOCl would set OCl- through .*: the value given for OCl- itself was used, and HOCl was not converted/);
    expect(both.notes).not.toContain(notUsed('HOCl'));
  });
});

describe('couples: the same conversion on POST /api/v1/couples/potential', () => {
  it('OCl-/Cl- with an HOCl activity gives the potential of HOCl/Cl- with it; OCl- is reported as converted', () => {
    const activities = { HOCl: 1e-5, 'Cl-': 1e-3 };
    const ocl = couplePotential({ from: 'OCl-', to: 'Cl-', pH: 7.5, activities }, deps);
    const hocl = couplePotential({ from: 'HOCl', to: 'Cl-', pH: 7.5, activities }, deps);
    expect(Math.abs(ocl.potentialV - hocl.potentialV)).toBeLessThan(1e-6);
    // hand: a(OCl-) = 1e-5 · 10^(7.5 − 7.5367) = 9.19e-6 (Morris 1966 pKa at 25 °C)
    const a = ocl.nernst?.activities.find((x) => x.species === 'OCl-');
    expect(a?.origin).toBe('converted (from HOCl)');
    expect(a?.activity).toBeCloseTo(1e-5 * Math.pow(10, 7.5 - PKA_HOCL_25), 9);
    expect(ocl.notes.some((n) => n.includes('the activity given for it was not used'))).toBe(false);
  });

  it('two given partners of one term could disagree: neither is converted, both keep their note (H2AsO4- and HAsO4^2- for H3AsO4)', () => {
    const r = couplePotential({ from: 'H3AsO4', to: 'H3AsO3', pH: 7, activities: { 'H2AsO4-': 1e-6, 'HAsO4^2-': 1e-6, H3AsO3: 1e-7 } }, deps);
    expect(r.notes).toContain('H2AsO4- is not in the half-reaction; the activity given for it was not used.');
    expect(r.notes).toContain('HAsO4^2- is not in the half-reaction; the activity given for it was not used.');
    expect(r.notes.some((n) => n.startsWith('H2AsO4- and HAsO4^2- were each given and each would set H3AsO4'))).toBe(true);
    expect(r.nernst?.unitActivity).toEqual(['H3AsO4']);
  });

  it('a partner whose equilibrium the tables do not give is not converted, and the note says why (FeOH^2+ for Fe3+)', () => {
    const r = couplePotential({ from: 'Fe3+', to: 'Fe2+', pH: 3, activities: { 'FeOH^2+': 1e-6, 'Fe2+': 1e-5 } }, deps);
    expect(r.notes).toContain('FeOH^2+ is not in the half-reaction; the activity given for it was not used.');
    expect(r.notes.some((n) => n.includes('FeOH^2+ + H+ -> Fe3+ + H2O (no electrons move), but the tables give no log K'))).toBe(true);
    expect(r.nernst?.unitActivity).toEqual(['Fe3+']);
  });
});

describe('a bare O2, O3 or Cl2 in a couple is the gas, as the handbook tables write it', () => {
  // CRC Handbook (97th ed.), electrochemical series: O2(g) + 4H+ + 4e- = 2H2O, E° = 1.229 V;
  // Cl2(g) + 2e- = 2Cl-, 1.35827 V; O3(g) + 2H+ + 2e- = O2(g) + H2O, 2.076 V (values from memory of the table)
  it('O2/H2O at pH 7 and 25 °C: 1.229 − 0.05916 × 7 = 0.8149 V, the textbook figure, with a note; O2(aq) is the dissolved species', () => {
    const r = couplePotential({ from: 'O2', to: 'H2O', pH: 7 }, deps);
    expect(r.standardPotentialV).toBeCloseTo(1.229, 3);
    expect(r.potentialV).toBeCloseTo(1.229 - 0.0591597 * 7, 3);
    expect(r.notes.some((n) => n.startsWith('O2 is read as O2(g), the gas'))).toBe(true);
    const aq = couplePotential({ from: 'O2(aq)', to: 'H2O', pH: 7 }, deps);
    expect(aq.halfReaction).toMatch(/O2\(aq\)/);
    expect(Math.abs(aq.standardPotentialV - r.standardPotentialV)).toBeGreaterThan(0.02); // 1 mol/L dissolved O2 is another state
  });
  it('Cl2/Cl- is 1.358 V and O3/O2 2.076 V written bare, the same as with (g)', () => {
    expect(couplePotential({ from: 'Cl2', to: 'Cl-' }, deps).standardPotentialV).toBeCloseTo(couplePotential({ from: 'Cl2(g)', to: 'Cl-' }, deps).standardPotentialV, 12);
    expect(couplePotential({ from: 'Cl2', to: 'Cl-' }, deps).standardPotentialV).toBeCloseTo(1.358, 3);
    expect(couplePotential({ from: 'O3', to: 'O2', pH: 0 }, deps).standardPotentialV).toBeCloseTo(2.076, 3);
  });
  it('in a cell, a bare O2 with dissolved oxygen in mg/L: the gas half, its pressure set from the mg/L through Henry\'s law', () => {
    const r = cell({ oxidant: { from: 'O2', to: 'H2O' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5, temperatureC: 25, concentrations: { O2: { value: 8, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' } } });
    const g = cell({ oxidant: { from: 'O2(g)', to: 'H2O' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5, temperatureC: 25, concentrations: { O2: { value: 8, unit: 'mg/L' }, 'Fe2+': { value: 0.5, unit: 'mg/L' } } });
    expect(r.cellPotentialV).toBeCloseTo(g.cellPotentialV, 12);
    expect(r.halfReactions.oxidant.equation).toMatch(/O2\(g\)/);
  });
});

describe('amounts no water can hold are refused (common practice bounds: 1e-40 to 10 mol/L, up to 100 atm)', () => {
  const refusal = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      return e as { code: string; fields: { pointer: string }[] };
    }
    throw new Error('expected a refusal');
  };
  it('a cell concentration of 1e9 mg/L HOCl (about 19 000 mol/L) or 5000 atm of O2(g)', () => {
    const base = { oxidant: { from: 'HOCl', to: 'Cl-' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7, temperatureC: 15 } as const;
    const e = refusal(() => cell({ ...base, concentrations: { HOCl: { value: 1e9, unit: 'mg/L' } } }));
    expect(e.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(e.fields[0]!.pointer).toBe('/concentrations/HOCl/value');
    const g = refusal(() => cell({ ...base, oxidant: { from: 'O2(g)', to: 'H2O' }, concentrations: { 'O2(g)': { value: 5000, unit: 'atm' } } }));
    expect(g.fields[0]!.pointer).toBe('/concentrations/O2(g)/value');
    // a real water is accepted: 2 mg/L HOCl, 0.21 atm O2(g)
    expect(() => cell({ ...base, concentrations: { HOCl: { value: 2, unit: 'mg/L' } } })).not.toThrow();
  });
  it('a couple activity of 1e308 (E would be 37 V)', () => {
    const e = refusal(() => couplePotential({ from: 'Fe3+', to: 'Fe2+', activities: { 'Fe3+': 1e308, 'Fe2+': 1e-3 } }, deps));
    expect(e.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(e.fields[0]!.pointer).toBe('/activities/Fe3+');
  });
});

describe('a converted value is held to the same bounds', () => {
  it('dissolved O2 given at 0.21 mol/L for an O2 couple (the gas) would be 166 atm: refused, naming the given field and how to give the gas', () => {
    // p = a / K_H = 0.21 / 10^−2.8983 ≈ 166 atm (phreeqc-o2-henry), above the 100 atm bound
    const err = (() => {
      try {
        couplePotential({ from: 'O2', to: 'H2O', pH: 7.2, activities: { O2: 0.21 } }, deps);
      } catch (e) {
        return e as { code: string; detail: string; fields: { pointer: string }[] };
      }
      return null;
    })();
    expect(err?.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(err?.fields[0]?.pointer).toBe('/activities/O2');
    expect(err?.detail).toMatch(/partialPressuresAtm/);
    // the same oxygen as a partial pressure is accepted
    expect(couplePotential({ from: 'O2', to: 'H2O', pH: 7.2, partialPressuresAtm: { 'O2(g)': 0.21 } }, deps).potentialV).toBeCloseTo(1.229 - 0.0591597 * 7.2 + (0.0591597 / 4) * Math.log10(0.21), 3);
  });
});
