/**
 * Molar mass from published atomic weights. The weights come in as the published text
 * ("55.845", "1.008"); the sum is exact in the configured Decimal clone, so the only
 * rounding is the publisher's.
 */
import { Dec } from '../../core/decimal.js';
import { DomainError } from '../../core/errors.js';
import { quote } from './tokens.js';
import type { Species } from './types.js';

/**
 * The value of an atomic weight as published. Accepts a decimal ("1.008"), a decimal with its
 * uncertainty in parentheses ("55.845(2)", the uncertainty is dropped) and a bracketed single
 * value ("[209]", the mass number of the longest-lived isotope for an element with no standard weight).
 */
export function atomicWeightValue(symbol: string, published: string): Dec {
  const m = /^\s*\[?\s*(\d+(?:\.\d+)?)(?:\(\d+\))?\s*\]?\s*$/.exec(published);
  if (!m || !m[1]) {
    throw new DomainError('TABLE_INVALID', {
      detail: `The atomic weight of ${symbol} is given as ${quote(published)}; expected a published decimal value such as "55.845", "55.845(2)" or "[209]" (for an interval, the table must give the conventional value)`,
      params: { symbol, value: published },
    });
  }
  return new Dec(m[1]);
}

/** Molar mass in g/mol: Σ count × atomic weight. The electron counts as 0. Throws FORMULA_UNKNOWN_ELEMENT for an element without a weight. */
export function molarMass(s: Species, atomicWeights: ReadonlyMap<string, string>): Dec {
  let total = new Dec(0);
  for (const [symbol, count] of Object.entries(s.composition)) {
    const published = atomicWeights.get(symbol);
    if (published === undefined) {
      const at = new RegExp(`${symbol}(?![a-z])`).exec(s.text);
      const position = at ? at.index : 0;
      throw new DomainError('FORMULA_UNKNOWN_ELEMENT', {
        detail: `In ${quote(s.text)} the element ${quote(symbol)} at position ${position} has no atomic weight in the table in use, so the molar mass cannot be computed; use a formula whose elements the atomic-weights table lists`,
        text: s.text,
        position,
        params: { formula: s.text, symbol },
      });
    }
    total = total.plus(atomicWeightValue(symbol, published).times(count));
  }
  return total;
}
