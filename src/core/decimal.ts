import { Decimal } from 'decimal.js';

/**
 * The one configured Decimal clone for reported arithmetic. Never call Decimal.set
 * on the global constructor: other libraries share it.
 * 40 significant digits carry every reported computation without loss;
 * rounding happens once, at presentation (see `roundSig`).
 */
export const Dec = Decimal.clone({ precision: 40, rounding: Decimal.ROUND_HALF_EVEN, toExpNeg: -12, toExpPos: 21 });
export type Dec = InstanceType<typeof Dec>;

export type DecLike = Dec | number | string;

export const dec = (x: DecLike): Dec => (x instanceof Dec ? x : new Dec(x));
export const add = (a: DecLike, b: DecLike): Dec => dec(a).plus(b);
export const sub = (a: DecLike, b: DecLike): Dec => dec(a).minus(b);
export const mul = (a: DecLike, b: DecLike): Dec => dec(a).times(b);
export const div = (a: DecLike, b: DecLike): Dec => dec(a).dividedBy(b);
export const sum = (xs: readonly DecLike[]): Dec => xs.reduce<Dec>((acc, x) => acc.plus(x), new Dec(0));

/**
 * The rounding rule for reported figures: round half to even at a number of
 * significant figures (default 3, the precision of a typical lab reading).
 * Returns the decimal string as it should be printed, with the trailing zeros that are
 * significant ("20.0" for 19.97, "2.50" for 2.5): the text shows how many figures it has.
 * Whole numbers of more digits than that print in full ("12300"); very small or large
 * magnitudes in exponent form ("1.23e-13"), as the clone's toExpNeg and toExpPos.
 */
export const ROUNDING_RULE = 'significant figures, round half to even';

export function roundSig(x: DecLike, sig = 3): string {
  const d = dec(x);
  if (!d.isFinite()) return d.toString();
  if (d.isZero()) return '0';
  const r = d.toSignificantDigits(sig, Dec.ROUND_HALF_EVEN);
  // r.e: decimal exponent of the first significant digit
  if (r.e <= -12 || r.e >= 21) return r.toExponential(sig - 1);
  return r.e >= sig - 1 ? r.toFixed(0) : r.toFixed(sig - 1 - r.e);
}

/** Round to a fixed number of decimal places (for pipette volumes, pump settings). */
export function roundPlaces(x: DecLike, places: number): string {
  return dec(x).toDecimalPlaces(places, Dec.ROUND_HALF_EVEN).toFixed(places);
}
