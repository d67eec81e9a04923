/**
 * src/core/rational.ts: the exact fractions under every balance and every combination of
 * tabled reactions. Checked against the definitions of the rational field (property tests,
 * fast-check) and against plain BigInt cross-multiplication, which shares no code with it.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Rational, gcdBig, lcmBig, toSmallestIntegers } from '../../src/core/rational.js';

const RUNS = { numRuns: 400 };
const big = fc.bigInt({ min: -(10n ** 30n), max: 10n ** 30n });
const nonZero = big.filter((x) => x !== 0n);
const rational = fc.tuple(big, nonZero).map(([n, d]) => Rational.of(n, d));
const nonZeroRational = fc.tuple(nonZero, nonZero).map(([n, d]) => Rational.of(n, d));

/** a/b = c/d exactly when a·d = c·b (b, d ≠ 0): the independent test of equality. */
const sameValue = (r: Rational, n: bigint, d: bigint) => r.num * d === n * r.den;

describe('Rational: normal form', () => {
  it('is in lowest terms with a positive denominator, whatever the signs given', () => {
    fc.assert(
      fc.property(big, nonZero, (n, d) => {
        const r = Rational.of(n, d);
        expect(r.den > 0n).toBe(true);
        expect(gcdBig(r.num, r.den) === 1n || r.num === 0n).toBe(true);
        expect(sameValue(r, n, d)).toBe(true);
        if (r.num === 0n) expect(r.den).toBe(1n);
      }),
      RUNS,
    );
  });

  it('refuses a zero denominator and division by zero', () => {
    expect(() => Rational.of(1, 0)).toThrow(RangeError);
    expect(() => Rational.ONE.div(Rational.ZERO)).toThrow(RangeError);
  });

  it('reads decimal literals exactly, as tables write them', () => {
    expect(Rational.fromDecimalString('1.507').toString()).toBe('1507/1000');
    expect(Rational.fromDecimalString('-0.44').toString()).toBe('-11/25');
    expect(Rational.fromDecimalString('1e-14').toString()).toBe('1/100000000000000');
    expect(Rational.fromDecimalString('2.5E3').toString()).toBe('2500');
    expect(Rational.fromDecimalString('.5').toString()).toBe('1/2');
    // 0.1 has no exact double; the decimal text is taken as written, not as the double 0.1
    expect(Rational.fromDecimalString('0.1').equals(Rational.of(1, 10))).toBe(true);
    for (const bad of ['', '.', 'e5', '1.2.3', 'abc', '1e']) expect(() => Rational.fromDecimalString(bad)).toThrow(RangeError);
  });
});

describe('Rational: field laws (property tests)', () => {
  it('adds, subtracts, multiplies and divides as cross-multiplication does', () => {
    fc.assert(
      fc.property(big, nonZero, big, nonZero, (a, b, c, d) => {
        const x = Rational.of(a, b);
        const y = Rational.of(c, d);
        expect(sameValue(x.add(y), a * d + c * b, b * d)).toBe(true);
        expect(sameValue(x.sub(y), a * d - c * b, b * d)).toBe(true);
        expect(sameValue(x.mul(y), a * c, b * d)).toBe(true);
        if (c !== 0n) expect(sameValue(x.div(y), a * d, b * c)).toBe(true);
      }),
      RUNS,
    );
  });

  it('is commutative, associative and distributive; negation and inverse undo', () => {
    fc.assert(
      fc.property(rational, rational, rational, nonZeroRational, (x, y, z, w) => {
        expect(x.add(y).equals(y.add(x))).toBe(true);
        expect(x.mul(y).equals(y.mul(x))).toBe(true);
        expect(x.add(y).add(z).equals(x.add(y.add(z)))).toBe(true);
        expect(x.mul(y.add(z)).equals(x.mul(y).add(x.mul(z)))).toBe(true);
        expect(x.add(x.neg()).isZero()).toBe(true);
        expect(x.mul(w).div(w).equals(x)).toBe(true);
        expect(x.sub(y).equals(x.add(y.neg()))).toBe(true);
      }),
      RUNS,
    );
  });

  it('orders as the cross products do, and abs and sign agree', () => {
    fc.assert(
      fc.property(rational, rational, (x, y) => {
        const cross = x.num * y.den - y.num * x.den;
        expect(x.compare(y)).toBe(cross === 0n ? 0 : cross < 0n ? -1 : 1);
        expect(x.compare(y)).toBe(-y.compare(x));
        expect(x.abs().sign()).toBe(x.isZero() ? 0 : 1);
        expect(x.abs().mul(Rational.of(x.sign())).equals(x)).toBe(true);
      }),
      RUNS,
    );
  });

  it('gives the nearest double only where one exists (small integers and halves)', () => {
    expect(Rational.of(3, 2).toNumber()).toBe(1.5);
    expect(Rational.of(-7, 4).toNumber()).toBe(-1.75);
    expect(Rational.of(6, 3).isInteger()).toBe(true);
  });
});

describe('gcd, lcm and the smallest whole coefficients', () => {
  it('gcd divides both and lcm is a multiple of both, with gcd·lcm = |a·b|', () => {
    fc.assert(
      fc.property(nonZero, nonZero, (a, b) => {
        const g = gcdBig(a, b);
        const l = lcmBig(a, b);
        expect(a % g).toBe(0n);
        expect(b % g).toBe(0n);
        expect(l % a).toBe(0n);
        expect(l % b).toBe(0n);
        expect(g * l).toBe(a * b < 0n ? -(a * b) : a * b);
      }),
      RUNS,
    );
    expect(lcmBig(0n, 5n)).toBe(0n);
  });

  it('scales a vector to whole numbers in lowest terms with the same ratios and signs', () => {
    // the permanganate–iron(II) balance in acid as fractions of MnO4-: 1, 8, 5 → 1, 8, 5
    expect(toSmallestIntegers([Rational.of(1, 5), Rational.of(8, 5), Rational.ONE])).toEqual([1n, 8n, 5n]);
    fc.assert(
      fc.property(fc.array(rational, { minLength: 1, maxLength: 8 }), (v) => {
        const ints = toSmallestIntegers(v);
        expect(ints.length).toBe(v.length);
        const nz = v.findIndex((r) => !r.isZero());
        if (nz < 0) return;
        // same ratios: ints[i]·v[nz] = ints[nz]·v[i] exactly
        for (let i = 0; i < v.length; i++) {
          expect(Rational.of(ints[i]!).mul(v[nz]!).equals(Rational.of(ints[nz]!).mul(v[i]!))).toBe(true);
          expect(ints[i]! === 0n ? 0 : ints[i]! < 0n ? -1 : 1).toBe(v[i]!.sign());
        }
        let g = 0n;
        for (const x of ints) g = gcdBig(g, x);
        expect(g).toBe(1n);
      }),
      RUNS,
    );
  });
});
