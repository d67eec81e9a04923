import { elements } from 'chemical-elements';
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { atomicWeightValue, molarMass } from '../../../src/chemistry/formula/molar-mass.js';
import { parseFormula } from '../../../src/chemistry/formula/parse.js';

/**
 * A small explicit table for these unit tests: IUPAC (CIAAW) abridged standard atomic weights,
 * 2021 (values from memory of the IUPAC table; verify — the project table in tables/ is the
 * reference). Each is cross-checked below against the chemical-elements package.
 */
const WEIGHTS = new Map<string, string>([
  ['H', '1.008'],
  ['C', '12.011'],
  ['N', '14.007'],
  ['O', '15.999'],
  ['Na', '22.990'],
  ['S', '32.06'],
  ['Cl', '35.45'],
  ['K', '39.098'],
  ['Ca', '40.078'],
  ['Mn', '54.938'],
  ['Fe', '55.845'],
  ['Cu', '63.546'],
]);

describe('the test table agrees with an independent reference (chemical-elements npm package)', () => {
  it.each([...WEIGHTS])('%s %s', (symbol, text) => {
    const ref = elements.find((e) => e.symbol === symbol);
    expect(ref).toBeDefined();
    // chemical-elements derives its mass from isotopic abundances; the abridged IUPAC value is rounded
    expect(Math.abs(Number(text) - (ref?.mass ?? NaN))).toBeLessThan(0.005);
  });
});

describe('molarMass', () => {
  it('is 0 for the electron (its mass is negligible on this scale)', () => {
    expect(molarMass(parseFormula('e-'), WEIGHTS).toNumber()).toBe(0);
  });

  it('is the exact sum of the published texts (no binary rounding)', () => {
    // 39.098 + 54.938 + 4 × 15.999
    expect(molarMass(parseFormula('KMnO4'), WEIGHTS).toString()).toBe('158.032');
    // 0.1 + 0.2 style sums stay exact: 2 × 1.008 + 15.999
    expect(molarMass(parseFormula('H2O'), WEIGHTS).toString()).toBe('18.015');
  });

  // Handbook molar masses: CRC Handbook of Chemistry and Physics, "Physical Constants of
  // Inorganic Compounds" (values from memory of the handbook, to 0.01 g/mol; verify).
  it.each([
    ['KMnO4', '158.03'],
    ['NaOCl', '74.44'],
    ['Cl2', '70.90'],
    ['ClO2', '67.45'],
    ['Fe(OH)3', '106.87'],
    ['MnO2', '86.94'],
  ])('%s is %s g/mol (CRC Handbook)', (formula, handbook) => {
    const m = molarMass(parseFormula(formula), WEIGHTS);
    expect(m.toDecimalPlaces(2).toFixed(2)).toBe(handbook);
  });

  it('counts hydrate water: CuSO4·5H2O = CuSO4 + 5 H2O', () => {
    const hydrate = molarMass(parseFormula('CuSO4·5H2O'), WEIGHTS);
    const parts = molarMass(parseFormula('CuSO4'), WEIGHTS).plus(molarMass(parseFormula('H2O'), WEIGHTS).times(5));
    expect(hydrate.equals(parts)).toBe(true);
  });

  it('ignores charge and phase', () => {
    expect(molarMass(parseFormula('MnO4-(aq)'), WEIGHTS).equals(molarMass(parseFormula('MnO4'), WEIGHTS))).toBe(true);
  });

  it('throws FORMULA_UNKNOWN_ELEMENT naming the element without a weight and its position', () => {
    try {
      molarMass(parseFormula('NaAsO2'), WEIGHTS);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DomainError);
      const d = e as DomainError;
      expect(d.code).toBe('FORMULA_UNKNOWN_ELEMENT');
      expect(d.position).toBe(2);
      expect(d.text).toBe('NaAsO2');
      expect(d.detail).toContain('"As"');
    }
  });
});

describe('atomicWeightValue', () => {
  it.each([
    ['1.008', '1.008'],
    ['55.845(2)', '55.845'],
    ['[209]', '209'],
  ])('%s → %s', (text, value) => {
    expect(atomicWeightValue('X', text).toString()).toBe(value);
  });
  it('refuses an interval or junk with TABLE_INVALID', () => {
    expect(() => atomicWeightValue('H', '[1.00784, 1.00811]')).toThrow(DomainError);
    expect(() => atomicWeightValue('H', 'abc')).toThrow(/expected a published decimal value/);
  });
});
