import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  aliquotForDose,
  defaultDetectionLimit,
  doseFromAliquot,
  evenlySpaced,
  fmt,
  isMultipleOf,
  isNegligible,
  nominalDoseFromAliquot,
  roundToResolution,
} from '../../src/jar-tests/common.js';
import { defaultResidualMethod } from '../../src/jar-tests/product.js';
import { gaussian, mulberry32 } from './prng.js';

describe('aliquot and dose arithmetic (worked by hand)', () => {
  // a mL of C g/L (= C mg/mL) carries a·C mg; in V L the nominal dose is a·C/V mg/L,
  // and with the aliquot's own volume a·C/(V + a/1000).
  it.each([
    // a,  C,    V,  nominal, diluted
    [0, 1, 2, 0, 0], // edge: nothing added
    [2, 1, 2, 1, 2 / 2.002], // 2 mL of 1.0 g/L in 2 L: 2 mg / 2 L = 1 mg/L nominal; 2 mg / 2.002 L = 0.999001 mg/L
    [20, 1, 2, 10, 20 / 2.02], // 1 % of the jar: 20 mg / 2.02 L = 9.90099 mg/L (1 % low)
    [100, 0.02, 1, 2, 2 / 1.1], // 100 mL of a 20 mg/L stock in 1 L: 2 mg / 1.1 L = 1.81818 mg/L
  ])('a = %s mL, C = %s g/L, V = %s L → %s mg/L nominal, %s mg/L diluted', (a, C, V, nominal, diluted) => {
    expect(nominalDoseFromAliquot(a, C, V)).toBeCloseTo(nominal, 12);
    expect(doseFromAliquot(a, C, V)).toBeCloseTo(diluted, 12);
  });

  it.each([
    // D, C, V, nominal a, corrected a
    [1, 1, 2, 2, 2 / 0.999], // 1 mg/L from 1.0 g/L in 2 L: 2 mL; corrected 2/(1 − 0.001) = 2.002002 mL
    [2, 0.02, 1, 100, 2 / 0.018], // 2 mg/L from 20 mg/L: 100 mL nominal; corrected 2/(0.02 − 0.002) = 111.111 mL
  ])('dose %s mg/L from %s g/L in %s L needs %s mL (corrected %s mL)', (D, C, V, nominal, corrected) => {
    expect(aliquotForDose(D, C, V, false)).toBeCloseTo(nominal, 12);
    expect(aliquotForDose(D, C, V, true)).toBeCloseTo(corrected, 12);
    // the corrected aliquot gives the dose exactly after dilution
    expect(doseFromAliquot(aliquotForDose(D, C, V, true), C, V)).toBeCloseTo(D, 12);
  });

  it.each([
    [0.04, 0.1, 0], // edge: below half a step rounds to 0
    [0.05, 0.1, 0], // half a step, half to even: 0 steps
    [0.15, 0.1, 0.2], // 1.5 steps → 2 (even)
    [2.25, 0.1, 2.2], // 22.5 steps → 22 (even)
    [2.35, 0.1, 2.4], // 23.5 steps → 24 (even)
    [2.38, 0.1, 2.4],
    [7.3, 0.5, 7.5], // 14.6 steps of 0.5 → 15
    [3.06, 0.1, 3.1],
  ])('%s mL at %s mL resolution rounds to %s mL (decimal, half to even)', (v, r, out) => {
    expect(roundToResolution(v, r)).toBe(out);
  });

  it.each([
    [2.3, 0.1, true], // 2.3 is 23 × 0.1 exactly in decimal, though not in binary
    [0.3, 0.1, true],
    [2.25, 0.1, false],
    [7.5, 0.5, true],
    [7.3, 0.5, false],
  ])('%s mL is a multiple of %s mL: %s', (v, r, out) => {
    expect(isMultipleOf(v, r)).toBe(out);
  });

  it('evenly spaced values are exact decimals (0.5 × 2.0 to 1.5 × 2.0 in 6 steps)', () => {
    // step = (3.0 − 1.0)/5 = 0.4
    expect(evenlySpaced(1, 3, 6)).toEqual([1, 1.4, 1.8, 2.2, 2.6, 3]);
    expect(evenlySpaced(0.5, 1.5, 2)).toEqual([0.5, 1.5]);
  });

  it('property: rounding moves a volume by at most half a step and lands on a multiple', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 500, noNaN: true }), fc.constantFrom(0.01, 0.05, 0.1, 0.5, 1), (v, r) => {
        const out = roundToResolution(v, r);
        expect(Math.abs(out - v)).toBeLessThanOrEqual(r / 2 + 1e-9);
        expect(isMultipleOf(out, r)).toBe(true);
      }),
      { seed: 7, numRuns: 300 },
    );
  });
});

describe('the test PRNG', () => {
  it('is reproducible and its normal deviates have mean ≈ 0 and sd ≈ 1', () => {
    const a = mulberry32(42);
    const b = mulberry32(42);
    expect([a(), a(), a()]).toEqual([b(), b(), b()]);
    const z = gaussian(mulberry32(1));
    const xs = Array.from({ length: 20000 }, () => z());
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (xs.length - 1));
    // sampling error of the mean is 1/√20000 ≈ 0.007
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(sd - 1)).toBeLessThan(0.03);
  });
});

describe('fmt and isNegligible: no floating-point noise in messages', () => {
  // Rule shared with the PDF sheets (src/sheets/wording.ts): at or below 1e-9 of the figures' scale is rounding noise.
  it.each([
    [9e-17, undefined, '0.00000000000000009'], // without a scale: never e-notation
    [9e-17, 1.1, '0'], // an exact fit's standard error against a 1.1 mg/L demand
    [1.1e-9, 1.1, '0'], // at the 1e-9 relative bound
    [1.2e-9, 1.1, '0.0000000012'], // just above it: a real, if tiny, figure
    [0.05, 1.1, '0.05'],
    [-2.7755575615628914e-17, 2, '0'],
    [1.23456, undefined, '1.235'],
    [1e21, undefined, '1000000000000000000000'],
  ])('fmt(%s, 4, %s) = %s', (x, scale, text) => {
    expect(fmt(x, 4, scale)).toBe(text);
    expect(fmt(x, 4, scale)).not.toMatch(/e[+-]?\d/);
  });

  it.each([
    [0, 0, true],
    [1e-17, 0, false],
    [1e-10, 1, true],
    [Number.NaN, 1, false],
    [1e-10, Number.POSITIVE_INFINITY, false],
  ])('isNegligible(%s, %s) = %s', (x, scale, expected) => {
    expect(isNegligible(x, scale)).toBe(expected);
  });
});

describe('defaultDetectionLimit: stated on the residual method of the oxidant', () => {
  it.each([
    ['KMnO4', '525 nm', 'DPD'],
    ['NaMnO4', 'pink', 'DPD'],
    ['Cl2', 'DPD', '525 nm'],
    ['O3', 'indigo', 'DPD'],
  ])('%s: the basis names %s, not %s', (basis, named, notNamed) => {
    const d = defaultDetectionLimit(basis, defaultResidualMethod(basis));
    expect(d.value).toBe(0.05);
    expect(d.basis).toContain(named);
    expect(d.basis).not.toContain(notNamed);
    expect(d.basis).toContain('common practice');
  });
});
