import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { bisect, brent, findRoots } from '../../src/water/roots.js';

describe('root finders (edge cases first)', () => {
  it('brent refuses an unbracketed interval and returns an end that is already a root', () => {
    expect(() => brent((x) => x * x + 1, -1, 1)).toThrow(/bracketed/);
    expect(brent((x) => x - 2, 2, 5)).toBe(2);
  });

  it.each([
    // Wallis's cubic, the classic test of Newton's method: x³ − 2x − 5 = 0, root 2.0945514815423265 (Numerical Recipes §9.0)
    ['x³ − 2x − 5', (x: number) => x * x * x - 2 * x - 5, 2, 3, 2.0945514815423265],
    // the Dottie number: cos x = x, root 0.7390851332151607
    ['cos x − x', (x: number) => Math.cos(x) - x, 0, 1, 0.7390851332151607],
    // a step-like function where interpolation is poor and bisection must take over
    ['tanh(50(x − 0.3))', (x: number) => Math.tanh(50 * (x - 0.3)), 0, 1, 0.3],
  ])('%s: brent and bisection both reach the root within 1e-6', (_n, f, a, b, root) => {
    expect(Math.abs(brent(f, a, b, 1e-6) - root)).toBeLessThan(1e-6);
    expect(Math.abs(bisect(f, a, b, 1e-6) - root)).toBeLessThan(1e-6);
  });

  it('brent needs far fewer evaluations than bisection on a smooth function', () => {
    let nb = 0, nf = 0;
    brent((x) => (nb++, x * x * x - 2 * x - 5), 2, 3, 1e-9);
    bisect((x) => (nf++, x * x * x - 2 * x - 5), 2, 3, 1e-9);
    expect(nb).toBeLessThan(nf / 2);
  });

  it('findRoots finds every sign change of a function with several roots, ascending', () => {
    // sin(x) on [0.5, 10]: roots π, 2π, 3π
    const roots = findRoots(Math.sin, { min: 0.5, max: 10, step: 0.5, tolerance: 1e-9 });
    expect(roots.length).toBe(3);
    roots.forEach((r, i) => expect(r).toBeCloseTo((i + 1) * Math.PI, 8));
  });

  it('finds the root of any line crossing zero in [0, 14] (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.001, max: 13.999, noNaN: true }), fc.double({ min: 0.01, max: 5, noNaN: true }), fc.boolean(), (root, slope, up) => {
        const f = (x: number) => (up ? slope : -slope) * (x - root);
        const r = findRoots(f, { min: 0, max: 14, step: 0.5, tolerance: 1e-6 });
        expect(r.length).toBe(1);
        expect(Math.abs(r[0]! - root)).toBeLessThan(1e-6);
      }),
    );
  });
});
