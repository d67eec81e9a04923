/** src/core/negligible.ts: what counts as rounding noise in jar-test messages, plots and sheets. */
import { describe, expect, it } from 'vitest';
import { NEGLIGIBLE_RELATIVE, isNegligible } from '../../src/core/negligible.js';

describe('isNegligible', () => {
  it('is true for zero and for noise far below the figures it goes with', () => {
    expect(isNegligible(0, 0)).toBe(true);
    expect(isNegligible(1e-16, 2.5)).toBe(true);
    expect(isNegligible(-2e-10, 1)).toBe(true);
  });
  it('is false for a real difference, for anything against a zero scale, and for non-finite values', () => {
    expect(isNegligible(0.001, 2.5)).toBe(false);
    expect(isNegligible(NEGLIGIBLE_RELATIVE * 3, 1)).toBe(false);
    expect(isNegligible(1e-20, 0)).toBe(false);
    expect(isNegligible(Number.NaN, 1)).toBe(false);
    expect(isNegligible(Number.POSITIVE_INFINITY, 1)).toBe(false);
    expect(isNegligible(1e-20, Number.NaN)).toBe(false);
  });
});
