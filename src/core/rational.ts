/**
 * Exact rational numbers on BigInt. Used for every balance and every combination
 * of tabled reactions: no floating point enters a coefficient.
 */
function gcd(a: bigint, b: bigint): bigint {
  a = a < 0n ? -a : a;
  b = b < 0n ? -b : b;
  while (b !== 0n) {
    const t = a % b;
    a = b;
    b = t;
  }
  return a;
}

export function gcdBig(a: bigint, b: bigint): bigint {
  return gcd(a, b);
}

export function lcmBig(a: bigint, b: bigint): bigint {
  if (a === 0n || b === 0n) return 0n;
  const g = gcd(a, b);
  const r = (a / g) * b;
  return r < 0n ? -r : r;
}

export class Rational {
  /** Always in lowest terms with a positive denominator. */
  readonly num: bigint;
  readonly den: bigint;

  private constructor(num: bigint, den: bigint) {
    this.num = num;
    this.den = den;
  }

  static readonly ZERO = new Rational(0n, 1n);
  static readonly ONE = new Rational(1n, 1n);

  static of(num: bigint | number, den: bigint | number = 1n): Rational {
    let n = typeof num === 'bigint' ? num : BigInt(num);
    let d = typeof den === 'bigint' ? den : BigInt(den);
    if (d === 0n) throw new RangeError('Rational with zero denominator');
    if (d < 0n) {
      n = -n;
      d = -d;
    }
    const g = gcd(n, d);
    return g > 1n ? new Rational(n / g, d / g) : new Rational(n, d);
  }

  /** Exact value of a decimal literal such as "1.507", "-0.44", "1e-14". */
  static fromDecimalString(text: string): Rational {
    const m = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/.exec(text.trim());
    if (!m || (m[2] === '' && (m[3] === undefined || m[3] === ''))) {
      throw new RangeError(`not a decimal literal: ${text}`);
    }
    const sign = m[1] === '-' ? -1n : 1n;
    const intPart = m[2] ?? '';
    const frac = m[3] ?? '';
    const exp = m[4] ? Number(m[4]) : 0;
    let num = BigInt((intPart || '0') + frac) * sign;
    let den = 10n ** BigInt(frac.length);
    if (exp > 0) num *= 10n ** BigInt(exp);
    else if (exp < 0) den *= 10n ** BigInt(-exp);
    return Rational.of(num, den);
  }

  add(o: Rational): Rational {
    return Rational.of(this.num * o.den + o.num * this.den, this.den * o.den);
  }
  sub(o: Rational): Rational {
    return Rational.of(this.num * o.den - o.num * this.den, this.den * o.den);
  }
  mul(o: Rational): Rational {
    return Rational.of(this.num * o.num, this.den * o.den);
  }
  div(o: Rational): Rational {
    if (o.num === 0n) throw new RangeError('Rational division by zero');
    return Rational.of(this.num * o.den, this.den * o.num);
  }
  neg(): Rational {
    return new Rational(-this.num, this.den);
  }
  abs(): Rational {
    return this.num < 0n ? this.neg() : this;
  }
  isZero(): boolean {
    return this.num === 0n;
  }
  isInteger(): boolean {
    return this.den === 1n;
  }
  sign(): -1 | 0 | 1 {
    return this.num === 0n ? 0 : this.num < 0n ? -1 : 1;
  }
  equals(o: Rational): boolean {
    return this.num === o.num && this.den === o.den;
  }
  compare(o: Rational): -1 | 0 | 1 {
    const d = this.num * o.den - o.num * this.den;
    return d === 0n ? 0 : d < 0n ? -1 : 1;
  }
  /** Nearest double; only for presentation or for quantities that are measured anyway. */
  toNumber(): number {
    return Number(this.num) / Number(this.den);
  }
  toString(): string {
    return this.den === 1n ? this.num.toString() : `${this.num}/${this.den}`;
  }
}

/** Scale a vector of rationals to the smallest whole numbers with the same ratios (sign kept). */
export function toSmallestIntegers(v: readonly Rational[]): bigint[] {
  let l = 1n;
  for (const r of v) l = lcmBig(l, r.den);
  const ints = v.map((r) => (r.num * l) / r.den);
  let g = 0n;
  for (const x of ints) g = gcd(g, x);
  if (g === 0n) return ints;
  return ints.map((x) => x / g);
}
