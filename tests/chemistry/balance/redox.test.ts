import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { balanceRedox, mediumForPH } from '../../../src/chemistry/balance/redox.js';
import type { Medium } from '../../../src/chemistry/balance/types.js';
import { canonical, gcdOf, isConserved, P } from './helpers.js';

function redox(oxidant: [string, string], reductant: [string, string], medium: Medium) {
  return balanceRedox({
    oxidant: { from: P(oxidant[0]), to: P(oxidant[1]) },
    reductant: { from: P(reductant[0]), to: P(reductant[1]) },
    medium,
  });
}
function fails(oxidant: [string, string], reductant: [string, string], medium: Medium): DomainError {
  try {
    redox(oxidant, reductant, medium);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a DomainError');
}

describe('mediumForPH', () => {
  it.each([
    [0, 'acid'],
    [7, 'acid'],
    [7.0001, 'base'],
    [14, 'base'],
  ] as const)('pH %d → %s', (pH, medium) => {
    expect(mediumForPH(pH)).toBe(medium);
  });
  it('refuses a pH that is not a number', () => {
    expect(() => mediumForPH(Number.NaN)).toThrow(DomainError);
  });
});

describe('balanceRedox: edge cases', () => {
  it('refuses an oxidant couple written as an oxidation, naming the fields', () => {
    const e = fails(['Fe2+', 'Fe(OH)3'], ['H2S', 'S'], 'acid');
    expect(e.code).toBe('BALANCE_COUPLE_DIRECTION');
    expect(e.detail).toContain('from "Fe(OH)3" to "Fe2+"');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/oxidant/from', '/oxidant/to']);
  });
  it('refuses a reductant couple written as a reduction, naming the fields', () => {
    const e = fails(['MnO4-', 'MnO2'], ['Fe(OH)3', 'Fe2+'], 'acid');
    expect(e.code).toBe('BALANCE_COUPLE_DIRECTION');
    expect(e.detail).toContain('takes up electrons (Fe(OH)3 + 3H+ + e- -> Fe2+ + 3H2O)');
    expect(e.detail).toContain('from "Fe2+" to "Fe(OH)3"');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/reductant/from', '/reductant/to']);
  });
  it('re-addresses a half-reaction error to the redox input fields', () => {
    const e = fails(['HOCl', 'OCl-'], ['Fe2+', 'Fe(OH)3'], 'acid');
    expect(e.code).toBe('BALANCE_NOT_REDOX');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/oxidant/from', '/oxidant/to']);
    const r = fails(['HOCl', 'Cl-'], ['Mn2+', 'Fe(OH)3'], 'acid');
    expect(r.code).toBe('BALANCE_IMPOSSIBLE');
    expect(r.fields.map((f) => f.pointer)).toEqual(['/reductant/to', '/reductant/from']);
  });
  it('refuses a reductant that is the oxidant run backwards (nothing left)', () => {
    expect(fails(['MnO4-', 'MnO2'], ['MnO2', 'MnO4-'], 'acid').code).toBe('BALANCE_IMPOSSIBLE');
  });
});

/**
 * Textbook redox reactions. Each expected equation was checked by hand (elements and charge in
 * the comment) before being asserted; the comparison is on the net species vector, so the
 * order in which a book writes the terms does not matter.
 */
describe('balanceRedox: textbook reactions', () => {
  it.each([
    // US EPA 1999, Alternative Disinfectants and Oxidants Guidance Manual, ch. 5 (permanganate) — from memory; verify.
    // Mn 1=1, Fe 3=3, O 4+7=11=2+9, H 14=9+5, charge −1+6=5
    ['permanganate–iron(II), acid (EPA 1999 ch. 5)', ['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'acid', 'MnO4- + 3Fe2+ + 7H2O -> MnO2 + 3Fe(OH)3 + 5H+', 3],
    // the same in base by the half-reaction method for basic solution (OpenStax Chemistry 2e §17.1);
    // O 4+5+2=11=2+9, H 5+4=9, charge −1+6−5=0
    ['permanganate–iron(II), base (OpenStax Chemistry 2e §17.1 method)', ['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'base', 'MnO4- + 3Fe2+ + 5OH- + 2H2O -> MnO2 + 3Fe(OH)3', 3],
    // EPA 1999 ch. 5 — from memory; verify. Mn 5=5, O 8+2=10, H 4=4, charge −2+6=4
    ['permanganate–manganese(II) (EPA 1999 ch. 5)', ['MnO4-', 'MnO2'], ['Mn2+', 'MnO2'], 'acid', '2MnO4- + 3Mn2+ + 2H2O -> 5MnO2 + 4H+', 6],
    // Sawyer, McCarty & Parkin, Chemistry for Environmental Engineering and Science, 5th ed. — from memory; verify.
    // Cl 1=1, Fe 2=2, O 1+5=6, H 1+10=11=6+5, charge 4=−1+5
    ['hypochlorite–iron(II) (Sawyer, McCarty & Parkin 5th ed.)', ['HOCl', 'Cl-'], ['Fe2+', 'Fe(OH)3'], 'acid', 'HOCl + 2Fe2+ + 5H2O -> 2Fe(OH)3 + Cl- + 5H+', 2],
    // Sawyer, McCarty & Parkin 5th ed. — from memory; verify. S 1, Cl 2, H 2, charge 0=2−2
    ['hydrogen sulfide–chlorine to sulfur (Sawyer, McCarty & Parkin 5th ed.)', ['Cl2', 'Cl-'], ['H2S', 'S'], 'acid', 'H2S + Cl2 -> S + 2H+ + 2Cl-', 2],
    // S 1, Cl 8, H 2+8=10, O 4=4, charge 0=−2+10−8
    ['hydrogen sulfide–chlorine to sulfate (Sawyer, McCarty & Parkin 5th ed.)', ['Cl2', 'Cl-'], ['H2S', 'SO4^2-'], 'acid', 'H2S + 4Cl2 + 4H2O -> SO4^2- + 10H+ + 8Cl-', 8],
    // EPA 1999 ch. 3 (ozone) — from memory; verify. O 3+5=8=2+6, H 10=6+4, Fe 2, charge 4=4
    ['ozone–iron(II) (EPA 1999 ch. 3)', ['O3', 'O2'], ['Fe2+', 'Fe(OH)3'], 'acid', 'O3 + 2Fe2+ + 5H2O -> O2 + 2Fe(OH)3 + 4H+', 2],
    // EPA 1999 ch. 4 (chlorine dioxide) — from memory; verify. Cl 1, O 2+3=5=2+3, H 6=3+3, charge 2=−1+3
    ['chlorine dioxide–iron(II) (EPA 1999 ch. 4)', ['ClO2', 'ClO2-'], ['Fe2+', 'Fe(OH)3'], 'acid', 'ClO2 + Fe2+ + 3H2O -> ClO2- + Fe(OH)3 + 3H+', 1],
    // Benjamin, Water Chemistry, 2nd ed. (oxidation of As(III)) — from memory; verify. As 1, O 4=4, H 4=3+1, Cl 1, charge 0
    ['arsenite–hypochlorous acid (Benjamin, Water Chemistry 2nd ed.)', ['HOCl', 'Cl-'], ['H3AsO3', 'H3AsO4'], 'acid', 'H3AsO3 + HOCl -> H3AsO4 + H+ + Cl-', 2],
    // with chlorine itself: O 3+1=4, H 3+2=5=3+2, Cl 2, charge 0
    ['arsenite–chlorine (Benjamin, Water Chemistry 2nd ed.)', ['Cl2', 'Cl-'], ['H3AsO3', 'H3AsO4'], 'acid', 'H3AsO3 + Cl2 + H2O -> H3AsO4 + 2H+ + 2Cl-', 2],
    // Sawyer, McCarty & Parkin 5th ed. — from memory; verify. N 1, O 3=3, H 1=1, Cl 1, charge −1=−1+1−1
    ['nitrite–hypochlorous acid (Sawyer, McCarty & Parkin 5th ed.)', ['HOCl', 'Cl-'], ['NO2-', 'NO3-'], 'acid', 'NO2- + HOCl -> NO3- + H+ + Cl-', 2],
    // breakpoint chlorination, Benjamin 2nd ed. / Sawyer 5th ed. — from memory; verify.
    // N 2, H 8+3=11=6+5, O 3, Cl 3, charge 2=5−3
    ['ammonium breakpoint (Benjamin, Water Chemistry 2nd ed.)', ['HOCl', 'Cl-'], ['NH4+', 'N2'], 'acid', '2NH4+ + 3HOCl -> N2 + 3H2O + 5H+ + 3Cl-', 6],
    // Stumm & Morgan, Aquatic Chemistry, 3rd ed. (iron(II) oxygenation) — from memory; verify.
    // O 2+10=12, H 20=12+8, Fe 4, charge 8=8
    ['oxygen–iron(II) (Stumm & Morgan 3rd ed.)', ['O2', 'H2O'], ['Fe2+', 'Fe(OH)3'], 'acid', 'O2 + 4Fe2+ + 10H2O -> 4Fe(OH)3 + 8H+', 4],
  ] as const)('%s', (_name, oxidant, reductant, medium, textbook, electrons) => {
    const r = redox([...oxidant], [...reductant], medium);
    expect(canonical(r)).toBe(canonical(textbook));
    expect(r.electrons).toBe(electrons);
    expect(isConserved(r)).toBe(true);
    expect(gcdOf(r.terms.map((t) => t.coefficient))).toBe(1n);
    expect(r.terms.every((t) => t.coefficient > 0n)).toBe(true);
    expect(r.medium).toBe(medium);
  });

  it('writes the reaction in the documented order (oxidant, reductant, then the rest by side)', () => {
    expect(redox(['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'acid').equation).toBe('MnO4- + 3Fe2+ + 7H2O -> MnO2 + 3Fe(OH)3 + 5H+');
    expect(redox(['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'base').equation).toBe('MnO4- + 3Fe2+ + 5OH- + 2H2O -> MnO2 + 3Fe(OH)3');
    expect(redox(['O2', 'H2O'], ['Fe2+', 'Fe(OH)3'], 'acid').equation).toBe('O2 + 4Fe2+ + 10H2O -> 4Fe(OH)3 + 8H+');
  });

  it('reports the half-reactions and the multipliers that match the electrons', () => {
    const r = redox(['MnO4-', 'MnO2'], ['Mn2+', 'MnO2'], 'acid');
    expect(r.reduction.equation).toBe('MnO4- + 4H+ + 3e- -> MnO2 + 2H2O');
    expect(r.oxidation.equation).toBe('MnO2 + 4H+ + 2e- -> Mn2+ + 2H2O');
    // lcm(3, 2) = 6: twice the permanganate half, three times the manganese(II) half
    expect(r.multipliers).toEqual({ oxidant: 2n, reductant: 3n });
  });

  it('oxygen–iron(II) in base, with O2/H2O given the way operators write it', () => {
    // O2 + 2H2O + 4e- → 4OH- with 4 × (Fe(OH)3 + e- → Fe2+ + 3OH-) reversed:
    // O2 + 4Fe2+ + 8OH- + 2H2O → 4Fe(OH)3; O 2+8+2=12, H 8+4=12, charge 8−8=0
    const r = redox(['O2', 'H2O'], ['Fe2+', 'Fe(OH)3'], 'base');
    expect(canonical(r)).toBe(canonical('O2 + 4Fe2+ + 8OH- + 2H2O = 4Fe(OH)3'));
  });

  it('carries the ozone convention into the reduction half', () => {
    expect(redox(['O3', 'O2'], ['Fe2+', 'Fe(OH)3'], 'acid').reduction.convention).toContain('by convention');
  });
});
