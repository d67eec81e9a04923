/** Test helpers: independent checks of a balanced reaction (not using the balancer's own matrix code). */
import type { Reaction } from '../../../src/chemistry/balance/types.js';
import { parseEquation } from '../../../src/chemistry/formula/equation.js';
import { speciesKey } from '../../../src/chemistry/formula/format.js';
import { parseFormula } from '../../../src/chemistry/formula/parse.js';
import { reactionVector } from '../../../src/chemistry/balance/reaction.js';

export const P = (text: string) => parseFormula(text);

/** Net amount of every element and of the charge (products minus reactants): all zero when balanced. */
export function imbalance(r: Reaction): Record<string, bigint> {
  const net: Record<string, bigint> = { charge: 0n };
  for (const t of r.terms) {
    const s = t.side === 'product' ? 1n : -1n;
    for (const [el, n] of Object.entries(t.species.composition)) net[el] = (net[el] ?? 0n) + s * t.coefficient * BigInt(n);
    net['charge'] = (net['charge'] ?? 0n) + s * t.coefficient * BigInt(t.species.charge);
  }
  return net;
}

export function isConserved(r: Reaction): boolean {
  return Object.values(imbalance(r)).every((x) => x === 0n);
}

export function gcdOf(xs: readonly bigint[]): bigint {
  let g = 0n;
  for (let x of xs) {
    if (x < 0n) x = -x;
    let a = g;
    let b = x;
    while (b !== 0n) [a, b] = [b, a % b];
    g = a;
  }
  return g;
}

/** Canonical text of a reaction: "key:coef" sorted, products +, reactants −. */
export function canonical(r: Reaction | string): string {
  const v = typeof r === 'string' ? reactionVector(parseEquation(r)) : reactionVector(r);
  return [...v].map(([k, c]) => `${k}:${c.toString()}`).sort().join(' ');
}

export function keyOf(text: string): string {
  return speciesKey(parseFormula(text));
}
