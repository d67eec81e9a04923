import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { equationRuns, formatEquationUnicode, parseEquation } from '../../../src/chemistry/formula/equation.js';
import { speciesKey } from '../../../src/chemistry/formula/format.js';

function terms(text: string): { reactants: string[]; products: string[] } {
  const eq = parseEquation(text);
  const show = (ts: typeof eq.reactants) => ts.map((t) => `${t.coefficient.toString()} ${speciesKey(t.species)}`);
  return { reactants: show(eq.reactants), products: show(eq.products) };
}

function fails(text: string): DomainError {
  try {
    parseEquation(text);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error(`expected ${JSON.stringify(text)} to fail`);
}

describe('parseEquation', () => {
  it.each([
    ['Fe3+ + e- = Fe2+', ['1 Fe^3+', '1 e-'], ['1 Fe^2+']],
    ['MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', ['1 MnO4^-', '8 H^+', '5 e-'], ['1 Mn^2+', '4 H2O']],
    ['MnO4- + 8H+ + 5e- → Mn2+ + 4H2O', ['1 MnO4^-', '8 H^+', '5 e-'], ['1 Mn^2+', '4 H2O']],
    ['O3 + 2H+ + 2e- -> O2 + H2O', ['1 O3', '2 H^+', '1 e-'].map((x, i) => (i === 2 ? '2 e-' : x)), ['1 O2', '1 H2O']],
    ['HOCl ⇌ H+ + OCl-', ['1 ClHO'], ['1 H^+', '1 ClO^-']],
    ['HOCl <=> H+ + OCl-', ['1 ClHO'], ['1 H^+', '1 ClO^-']],
    ['1/2O2 + 2H+ + 2e- = H2O', ['1/2 O2', '2 H^+', '2 e-'], ['1 H2O']],
    ['0.5 O2 + 2H+ + 2e- = H2O', ['1/2 O2', '2 H^+', '2 e-'], ['1 H2O']],
    ['3/2 O2 + 6H+ + 6e- = 3H2O', ['3/2 O2', '6 H^+', '6 e-'], ['3 H2O']],
    ['Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', ['1 FeH3O3', '3 H^+', '1 e-'], ['1 Fe^2+', '3 H2O']],
    ['OH- + H+ -> H2O', ['1 HO^-', '1 H^+'], ['1 H2O']],
    ['OH--> H2O + e- + O', ['1 HO^-'], ['1 H2O', '1 e-', '1 O']],
    ['Fe2+ +2e- = Fe', ['1 Fe^2+', '2 e-'], ['1 Fe']],
    ['CuSO4.5H2O = CuSO4 + 5H2O', ['1 CuH10O9S'], ['1 CuO4S', '5 H2O']],
  ])('%s', (text, reactants, products) => {
    expect(terms(text)).toEqual({ reactants, products });
  });

  it('keeps the coefficient as written and the position of each formula', () => {
    const eq = parseEquation('0.5 O2 + 2H+ = H2O');
    expect(eq.reactants.map((t) => [t.coefficientText, t.position])).toEqual([['0.5', 4], ['2', 10]]);
    expect(eq.arrow).toBe('=');
  });

  it.each([
    ['', 0, 'no equation'],
    ['Fe2+ + e-', 9, 'no arrow'],
    ['Fe3+ + e- = Fe2+ = Fe', 17, 'second arrow'],
    [' = Fe2+', 0, 'reactant side is empty'],
    ['Fe3+ + e- =', 11, 'product side is empty'],
    ['Fe3+ + = Fe2+', 7, 'a term is missing'],
    ['0Fe3+ = Fe2+', 0, 'is zero'],
    ['1/0Fe3+ = Fe2+', 0, 'divides by zero'],
    ['2 = Fe', 1, 'not followed by a formula'],
  ])('%j fails with EQUATION_SYNTAX at %i', (text, position, words) => {
    const e = fails(text);
    expect(e.code).toBe('EQUATION_SYNTAX');
    expect(e.position).toBe(position);
    expect(e.detail).toContain(words);
  });

  it('reports a bad formula in place, with the position in the equation', () => {
    const e = fails('MnO4- + 8H+ + 5e- = Mn2+ + 4H2Q');
    expect(e.code).toBe('FORMULA_UNKNOWN_ELEMENT');
    expect(e.text).toBe('MnO4- + 8H+ + 5e- = Mn2+ + 4H2Q');
    expect(e.position).toBe(30);
    expect(e.caret()?.split('\n')[1]).toBe(' '.repeat(30) + '^');
  });

  it.each([
    ['Fe3+ + e- = Fe+2', 'FORMULA_SYNTAX', 15, 'write "Fe2+" or "Fe^2+"'],
    ['Fe3+ + e- = Fe(2+)(aq)', 'FORMULA_SYNTAX', 14, 'write "Fe2+(aq)" or "Fe^2+(aq)"'],
    ['Hg2++ + 2e- = 2Hg', 'FORMULA_AMBIGUOUS_CHARGE', 2, '"Hg2^2+" for count 2 and charge 2+'],
    ['2H+ + 2e- = Hg2++', 'FORMULA_AMBIGUOUS_CHARGE', 14, '"Hg2^2+" for count 2 and charge 2+'],
  ] as const)('a charge written the wrong way inside an equation: %j is %s at %i, spelled with the formula typed there', (text, code, position, words) => {
    const e = fails(text);
    expect(e.code).toBe(code);
    expect(e.position).toBe(position);
    expect(e.text).toBe(text);
    expect(e.detail).toContain(words);
  });

  it('suggests " + " when terms were run together', () => {
    const e = fails('H++OH- = H2O');
    expect(e.code).toBe('FORMULA_SYNTAX');
    expect(e.detail).toContain('separate them with " + "');
  });
});

describe('equation typesetting', () => {
  it('formats a tabled half-reaction in Unicode', () => {
    expect(formatEquationUnicode('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O')).toBe('MnO₄⁻ + 8H⁺ + 5e⁻ → Mn²⁺ + 4H₂O');
    expect(formatEquationUnicode('HOCl <=> H+ + OCl-')).toBe('HOCl ⇌ H⁺ + OCl⁻');
  });
  it('gives runs with the coefficient in base text', () => {
    expect(equationRuns('2H2O = O2 + 4H+ + 4e-')).toEqual([
      { text: '2H', script: 'base' }, { text: '2', script: 'sub' }, { text: 'O → O', script: 'base' },
      { text: '2', script: 'sub' }, { text: ' + 4H', script: 'base' }, { text: '+', script: 'sup' },
      { text: ' + 4e', script: 'base' }, { text: '−', script: 'sup' },
    ]);
  });
});
