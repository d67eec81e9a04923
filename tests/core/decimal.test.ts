/**
 * src/core/decimal.ts: the rounding rule of every reported figure. Round half to even
 * ("banker's rounding", IEEE 754-2019 roundTiesToEven; ASTM E29 §6.4 gives the same rule for
 * a 5 followed by zeros) at a number of significant figures, with the significant trailing zeros kept.
 */
import { describe, expect, it } from 'vitest';
import { Dec, dec, roundPlaces, roundSig, sum } from '../../src/core/decimal.js';

describe('roundSig', () => {
  it('rounds ties to the even digit on exact decimals (no binary noise)', () => {
    expect(roundSig('2.345')).toBe('2.34');
    expect(roundSig('2.355')).toBe('2.36');
    expect(roundSig('0.125', 2)).toBe('0.12');
    expect(roundSig('0.135', 2)).toBe('0.14');
    // a figure above the tie rounds up whatever the parity
    expect(roundSig('2.3450001')).toBe('2.35');
  });

  it('keeps the significant trailing zeros and prints large whole numbers in full', () => {
    expect(roundSig(19.97)).toBe('20.0');
    expect(roundSig(2.5)).toBe('2.50');
    expect(roundSig(12345)).toBe('12300');
    expect(roundSig(0)).toBe('0');
    expect(roundSig(-0.0012345)).toBe('-0.00123');
  });

  it('uses exponent form only for very small or large magnitudes', () => {
    expect(roundSig('1.2345e-13')).toBe('1.23e-13');
    expect(roundSig('6.02214076e23', 4)).toBe('6.022e+23');
  });

  it('works on the exact sum, not on a sum of doubles', () => {
    // 0.1 + 0.2 as doubles is 0.30000000000000004; the Decimal sum of the texts is 0.3
    expect(sum(['0.1', '0.2']).equals(dec('0.3'))).toBe(true);
    expect(Dec.precision).toBe(40);
  });
});

describe('roundPlaces', () => {
  it('rounds to fixed places, ties to even, with the zeros printed', () => {
    expect(roundPlaces('1.25', 1)).toBe('1.2');
    expect(roundPlaces('1.35', 1)).toBe('1.4');
    expect(roundPlaces(3, 2)).toBe('3.00');
  });
});
