/** roundSigNumber (src/dosing/round.ts) is the same rule as roundSig of src/core/decimal.ts (decimal.js ROUND_HALF_EVEN). */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Dec, roundSig } from '../../src/core/decimal.js';
import { roundSigNumber } from '../../src/dosing/round.js';

describe('roundSigNumber', () => {
  it.each([
    // ties go to the even digit
    [31.25, 3, '31.2'],
    [31.35, 3, '31.4'],
    [2.5, 1, '2'],
    [3.5, 1, '4'],
    [0.125, 2, '0.12'],
    // carries, and the zeros that are significant (the text shows its figures: "20.0", not "20")
    [9.995, 3, '10.0'],
    [19.97, 3, '20.0'],
    [2, 3, '2.00'],
    [0.05, 3, '0.0500'],
    [0.9996, 3, '1.00'],
    [99950, 3, '100000'],
    [4000, 3, '4000'],
    [0, 3, '0'],
    [-1.2345, 3, '-1.23'],
    [-4.1, 3, '-4.10'],
    // exponent notation at the clone's limits (toExpNeg −12, toExpPos 21)
    [1.2345e-13, 3, '1.23e-13'],
    [1.5e-13, 3, '1.50e-13'],
    [1.5e22, 2, '1.5e+22'],
    [3e21, 3, '3.00e+21'],
    // not a number to round: said as it is (a message never fails on it)
    [Infinity, 3, 'Infinity'],
    [-Infinity, 3, '-Infinity'],
    [NaN, 3, 'NaN'],
  ])('%s to %s figures → %s', (x, sig, out) => {
    expect(roundSigNumber(x, sig)).toBe(out);
    expect(roundSig(new Dec(x), sig)).toBe(out);
  });

  it('agrees with roundSig(new Dec(x)) for any finite double and 1 to 6 figures', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), fc.integer({ min: 1, max: 6 }), (x, sig) => roundSigNumber(x, sig) === roundSig(new Dec(x), sig)),
      { numRuns: 20000 },
    );
  });
});
