import { describe, expect, it } from 'vitest';
import { equationRuns, formulaRuns, runsToUnicode } from '../../src/sheets/formula-runs.js';

// Expected typesetting follows IUPAC notation for formulas and charges
// (IUPAC Nomenclature of Inorganic Chemistry, 2005, IR-3/IR-4: subscript counts, superscript charge "2+").
describe('formulaRuns', () => {
  it.each([
    // edge cases first
    ['', ''],
    ['e-', 'e⁻'],
    ['H+', 'H⁺'],
    ['Cl-', 'Cl⁻'],
    ['Fe2+', 'Fe²⁺'],
    ['Fe3+', 'Fe³⁺'],
    ['Fe+3', 'Fe³⁺'],
    ['Fe^3+', 'Fe³⁺'],
    ['SO4^2-', 'SO₄²⁻'],
    ['SO42-', 'SO₄²⁻'],
    ['MnO4-', 'MnO₄⁻'],
    ['NH4+', 'NH₄⁺'],
    ['HCO3-', 'HCO₃⁻'],
    ['H2O', 'H₂O'],
    ['O3', 'O₃'],
    ['Fe(OH)3(s)', 'Fe(OH)₃(s)'],
    ['MnO2(s)', 'MnO₂(s)'],
    ['O2(g)', 'O₂(g)'],
    ['CuSO4·5H2O', 'CuSO₄·5H₂O'],
    ['Ca(OCl)2', 'Ca(OCl)₂'],
    // the formula layer drops a count of 1; in free text "K1" is a constant and keeps it
    ['K1', 'K₁'],
  ])('%s → %s', (text, expected) => {
    expect(runsToUnicode(formulaRuns(text))).toBe(expected);
  });

  it('prints the minus of a charge as U+2212 on the raised run', () => {
    expect(formulaRuns('MnO4-')).toEqual([
      { text: 'MnO', script: 'base' },
      { text: '4', script: 'sub' },
      { text: '\u2212', script: 'sup' },
    ]);
  });
});

describe('equationRuns', () => {
  it.each([
    ['MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', 'MnO₄⁻ + 8H⁺ + 5e⁻ → Mn²⁺ + 4H₂O'],
    ['3Fe2+ + MnO4- + 7H2O -> 3Fe(OH)3(s) + MnO2(s) + 5H+', '3Fe²⁺ + MnO₄⁻ + 7H₂O → 3Fe(OH)₃(s) + MnO₂(s) + 5H⁺'],
    ['HOCl <=> H+ + OCl-', 'HOCl ⇌ H⁺ + OCl⁻'],
    ['3/2O2 + 2e- = O3', '3/2O₂ + 2e⁻ → O₃'],
  ])('%s', (text, expected) => {
    expect(runsToUnicode(equationRuns(text))).toBe(expected);
  });

  it('keeps stoichiometric coefficients on the base line', () => {
    const runs = equationRuns('2H2O');
    expect(runs[0]).toEqual({ text: '2H', script: 'base' });
  });
});
