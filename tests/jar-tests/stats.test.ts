import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { inversePrediction, lnGamma, olsFit, studentTCdf, studentTQuantile } from '../../src/jar-tests/stats.js';

describe('ordinary least squares (worked by hand)', () => {
  it('edge: rejects fewer than 2 points and equal x', () => {
    expect(() => olsFit([1], [1])).toThrow(RangeError);
    expect(() => olsFit([2, 2, 2], [1, 2, 3])).toThrow(RangeError);
  });

  it('x = 1,2,3,4; y = 0,1,1,2', () => {
    // x̄ = 2.5, ȳ = 1; Sxx = 2.25+0.25+0.25+2.25 = 5; Sxy = (−1.5)(−1)+0+0+(1.5)(1) = 3
    // slope = 3/5 = 0.6; intercept = 1 − 0.6·2.5 = −0.5
    // residuals −0.1, 0.3, −0.3, 0.1 → SSR = 0.2; SST = 2 → r² = 0.9
    // s² = 0.2/2 = 0.1; se(slope) = √0.1/√5 = 0.141421; se(intercept) = √0.1·√(1/4 + 6.25/5) = 0.387298
    const f = olsFit([1, 2, 3, 4], [0, 1, 1, 2]);
    expect(f.slope).toBeCloseTo(0.6, 12);
    expect(f.intercept).toBeCloseTo(-0.5, 12);
    expect(f.r2).toBeCloseTo(0.9, 12);
    expect(f.degreesOfFreedom).toBe(2);
    expect(f.slopeStdError).toBeCloseTo(Math.sqrt(0.1 / 5), 12);
    expect(f.interceptStdError).toBeCloseTo(Math.sqrt(0.1 * 1.5), 12);
    // zero crossing x0 = 0.5/0.6 = 0.83333; se = (√0.1/0.6)·√(1/4 + (0.83333 − 2.5)²/5) = 0.527046·0.897527 = 0.473042
    const inv = inversePrediction(f);
    expect(inv.x).toBeCloseTo(5 / 6, 12);
    expect(inv.stdError).toBeCloseTo((Math.sqrt(0.1) / 0.6) * Math.sqrt(0.25 + (5 / 6 - 2.5) ** 2 / 5), 12);
  });

  it('an exact line has r² = 1 and zero standard errors', () => {
    // residual = dose − 1.8 at 2.0, 2.5, 3.0
    const f = olsFit([2, 2.5, 3], [0.2, 0.7, 1.2]);
    expect(f.slope).toBeCloseTo(1, 12);
    expect(f.intercept).toBeCloseTo(-1.8, 12);
    expect(f.r2).toBeCloseTo(1, 12);
    expect(f.slopeStdError).toBeCloseTo(0, 6);
    expect(inversePrediction(f).x).toBeCloseTo(1.8, 12);
  });
});

describe("Student's t", () => {
  it('ln Γ at integers and ½ (Γ(n) = (n−1)!, Γ(½) = √π)', () => {
    expect(lnGamma(1)).toBeCloseTo(0, 12);
    expect(lnGamma(5)).toBeCloseTo(Math.log(24), 12);
    expect(lnGamma(0.5)).toBeCloseTo(Math.log(Math.sqrt(Math.PI)), 12);
  });

  it.each([
    // closed forms: df = 1 is the Cauchy distribution, t = tan(π(p − ½));
    // df = 2: t = (2p − 1)·√(2 / (4p(1 − p)))
    [0.975, 1, Math.tan(Math.PI * 0.475)], // 12.7062
    [0.9, 1, Math.tan(Math.PI * 0.4)],
    [0.975, 2, 0.95 * Math.sqrt(2 / (4 * 0.975 * 0.025))], // 4.3027
    [0.995, 2, 0.99 * Math.sqrt(2 / (4 * 0.995 * 0.005))],
  ])('quantile p = %s, df = %s matches the closed form %s', (p, df, t) => {
    expect(studentTQuantile(p, df)).toBeCloseTo(t, 8);
  });

  it.each([
    // critical values t(0.975, df) as printed to 3 decimals in the NIST/SEMATECH e-Handbook of
    // Statistical Methods, 1.3.6.7.2 (and every statistics textbook's t table); values from memory, verify.
    [3, 3.182],
    [5, 2.571],
    [10, 2.228],
    [30, 2.042],
    [100, 1.984],
  ])('t(0.975, %s) = %s (t table)', (df, t) => {
    expect(studentTQuantile(0.975, df)).toBeCloseTo(t, 3);
  });

  it('property: the CDF is symmetric and the quantile inverts it', () => {
    fc.assert(
      fc.property(fc.double({ min: -20, max: 20, noNaN: true }), fc.integer({ min: 1, max: 60 }), (t, df) => {
        expect(studentTCdf(t, df) + studentTCdf(-t, df)).toBeCloseTo(1, 10);
        const p = studentTCdf(t, df);
        if (p > 1e-6 && p < 1 - 1e-6) expect(studentTQuantile(p, df)).toBeCloseTo(t, 5);
      }),
      { seed: 11, numRuns: 200 },
    );
  });
});
