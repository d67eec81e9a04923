import { describe, expect, it } from 'vitest';
import { formatFormula, formatUnicode, formulaRuns, hillFormula, speciesKey } from '../../../src/chemistry/formula/format.js';
import { parseFormula } from '../../../src/chemistry/formula/parse.js';

describe('speciesKey', () => {
  it.each([
    // edge cases first
    ['e-', 'e-'],
    ['H+', 'H^+'],
    ['Fe2+', 'Fe^2+'],
    // Hill order: C first, H second, then alphabetical; without C all alphabetical
    ['CH4', 'CH4'],
    ['HCO3-', 'CHO3^-'],
    ['K4Fe(CN)6', 'C6FeK4N6'],
    ['MnO4-', 'MnO4^-'],
    ['H2O', 'H2O'],
    ['OH-', 'HO^-'],
    ['SO4^2-', 'O4S^2-'],
    ['CuSO4·5H2O', 'CuH10O9S'],
  ])('%s → %s', (text, key) => {
    expect(speciesKey(parseFormula(text))).toBe(key);
  });

  it.each([
    ['Fe(OH)3(s)', 'Fe(OH)3', true],
    ['Fe2+(aq)', 'Fe2+', true],
    ['Fe2+', 'Fe^2+', true],
    ['SO4--', 'SO4^2-', true],
    ['MnO4-', 'MnO4^-', true],
    ['H2O(l)', 'H2O', true],
    ['O2(g)', 'O2', false],
    ['O2(g)', 'O2(aq)', false],
    ['Fe2+', 'Fe3+', false],
    ['MnO4-', 'MnO4^2-', false],
  ])('%s and %s match: %s', (a, b, same) => {
    expect(speciesKey(parseFormula(a)) === speciesKey(parseFormula(b))).toBe(same);
  });
});

describe('formatFormula', () => {
  it('keeps the text as written, phase included', () => {
    expect(formatFormula(parseFormula(' Fe(OH)3(s) '))).toBe('Fe(OH)3(s)');
    expect(formatFormula(parseFormula('SO4^2-'))).toBe('SO4^2-');
  });
  it('gives a species built without text its Hill formula, ^ charge and phase', () => {
    expect(formatFormula({ text: '', composition: { S: 1, O: 4 }, charge: -2, phase: 'aq' })).toBe('O4S^2-(aq)');
    expect(formatFormula({ text: '', composition: {}, charge: -1, phase: null })).toBe('e-');
  });
  it('hillFormula leaves zero counts out', () => {
    expect(hillFormula({ C: 1, O: 2, H: 0 })).toBe('CO2');
  });
});

describe('formatUnicode', () => {
  it.each([
    ['e-', 'e⁻'],
    ['H+', 'H⁺'],
    ['MnO4-', 'MnO₄⁻'],
    ['Fe2+', 'Fe²⁺'],
    ['SO4^2-', 'SO₄²⁻'],
    ['SO4--', 'SO₄²⁻'],
    ['Fe(OH)3(s)', 'Fe(OH)₃(s)'],
    ['CuSO4.5H2O', 'CuSO₄·5H₂O'],
    ['Ca(OCl)2*4H2O', 'Ca(OCl)₂·4H₂O'],
    ['K4[Fe(CN)6]', 'K₄[Fe(CN)₆]'],
    ['Fe2+(aq)', 'Fe²⁺(aq)'],
    ['NH4+', 'NH₄⁺'],
    ['Fe2(SO4)3', 'Fe₂(SO₄)₃'],
  ])('%s → %s', (text, unicode) => {
    expect(formatUnicode(text)).toBe(unicode);
  });

  it('reads its own output back to the same species', () => {
    for (const text of ['MnO4-', 'Fe2+', 'SO4^2-', 'Fe(OH)3(s)', 'CuSO4.5H2O', 'Fe2(SO4)3', 'NH4+']) {
      const back = parseFormula(formatUnicode(text));
      expect(speciesKey(back)).toBe(speciesKey(parseFormula(text)));
    }
  });

  it('throws the parser error for a malformed formula', () => {
    expect(() => formatUnicode('Fe(OH3')).toThrow(/closing parenthesis/);
  });
});

describe('formulaRuns', () => {
  it.each([
    ['e-', [{ text: 'e', script: 'base' }, { text: '−', script: 'sup' }]],
    ['H2O', [{ text: 'H', script: 'base' }, { text: '2', script: 'sub' }, { text: 'O', script: 'base' }]],
    ['SO4^2-', [{ text: 'SO', script: 'base' }, { text: '4', script: 'sub' }, { text: '2−', script: 'sup' }]],
    ['Fe(OH)3(s)', [{ text: 'Fe(OH)', script: 'base' }, { text: '3', script: 'sub' }, { text: '(s)', script: 'base' }]],
    ['Fe3+', [{ text: 'Fe', script: 'base' }, { text: '3+', script: 'sup' }]],
    ['CuSO4·5H2O', [
      { text: 'CuSO', script: 'base' }, { text: '4', script: 'sub' }, { text: '·5H', script: 'base' },
      { text: '2', script: 'sub' }, { text: 'O', script: 'base' },
    ]],
  ] as const)('%s', (text, runs) => {
    expect(formulaRuns(text)).toEqual(runs);
  });
});
