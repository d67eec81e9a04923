/**
 * R and F against CODATA 2018 / the 2019 SI: both are exact products of defining constants
 * (N_A = 6.02214076e23 /mol, k = 1.380649e-23 J/K, e = 1.602176634e-19 C), so the table text
 * must be those exact products truncated to the printed digits.
 */
import { describe, expect, it } from 'vitest';
import { Rational } from '../../src/core/rational.js';
import { loadTables } from '../../src/reference/load.js';

const t = loadTables(['constants']);
const text = (id: string): string => t.constants.find((r) => r.id === id)!.value;

const NA = Rational.fromDecimalString('6.02214076e23'); // SI 2019 defining constant
const K = Rational.fromDecimalString('1.380649e-23'); // SI 2019 defining constant
const E = Rational.fromDecimalString('1.602176634e-19'); // SI 2019 defining constant

function truncatedTo(x: Rational, printed: string): boolean {
  const decimals = printed.split('.')[1]?.length ?? 0;
  const p = Rational.fromDecimalString(printed);
  const ulp = Rational.of(1n, 10n ** BigInt(decimals));
  return x.sub(p).sign() >= 0 && x.sub(p).compare(ulp) < 0;
}

describe('constants vs CODATA 2018 (Tiesinga et al. 2021, exact in the 2019 SI)', () => {
  it.each([
    ['R', NA.mul(K), '8.314462618'],
    ['F', NA.mul(E), '96485.33212'],
  ] as const)('%s is N_A times a defining constant, truncated to the printed digits', (id, exact, expected) => {
    expect(text(id)).toBe(expected);
    expect(truncatedTo(exact, text(id))).toBe(true);
  });

  it.each([
    ['T0', '273.15'],
    ['T25', '298.15'],
  ])('%s is %s K (definition of the degree Celsius)', (id, value) => {
    expect(text(id)).toBe(value);
  });

  it('every constant is marked exact and has a source', () => {
    for (const r of t.constants) {
      expect(r.exact).toBe(true);
      expect(r.source).not.toBe('');
    }
  });
});
