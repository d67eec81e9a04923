/**
 * Property tests (fast-check): every balanced result conserves every element and the charge,
 * and reordering the input species never changes the balanced reaction.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { halfReaction } from '../../../src/chemistry/balance/half-reaction.js';
import { balanceReaction } from '../../../src/chemistry/balance/reaction.js';
import { balanceRedox } from '../../../src/chemistry/balance/redox.js';
import type { Medium, Reaction } from '../../../src/chemistry/balance/types.js';
import { chargeSuffix, speciesKey } from '../../../src/chemistry/formula/format.js';
import { parseFormula } from '../../../src/chemistry/formula/parse.js';
import type { Species } from '../../../src/chemistry/formula/types.js';
import { canonical, gcdOf, isConserved, P } from './helpers.js';

const RUNS = { numRuns: 300 };

/** Species text from a composition and charge, in the unambiguous ^ form. */
function text(composition: readonly [string, number][], charge: number): string {
  return composition.map(([el, n]) => (n === 1 ? el : `${el}${n}`)).join('') + chargeSuffix(charge);
}

const TAGS = ['Na', 'K', 'Ca', 'Mg', 'Al', 'Zn', 'Cu', 'Ni'] as const;
const SHARED = ['C', 'H', 'O', 'N', 'S', 'Cl'] as const;

/**
 * Random reactions assembled from pieces so that exactly one balance exists: k reactants, each
 * with its own tag element (found nowhere else) plus shared elements and a charge; the single
 * product holds n_i of each reactant. The balance is therefore n_1 … n_k → 1 product.
 */
const assembled = fc
  .integer({ min: 1, max: 5 })
  .chain((k) =>
    fc.record({
      tags: fc.shuffledSubarray([...TAGS], { minLength: k, maxLength: k }),
      pieces: fc.array(
        fc.record({
          tagCount: fc.integer({ min: 1, max: 3 }),
          shared: fc.subarray([...SHARED], { minLength: 0, maxLength: 3 }),
          counts: fc.array(fc.integer({ min: 1, max: 4 }), { minLength: 3, maxLength: 3 }),
          charge: fc.integer({ min: -2, max: 2 }),
          n: fc.integer({ min: 1, max: 6 }),
        }),
        { minLength: k, maxLength: k },
      ),
    }),
  )
  .map(({ tags, pieces }) => {
    const reactants: { text: string; n: number }[] = [];
    const product = new Map<string, number>();
    let productCharge = 0;
    pieces.forEach((p, i) => {
      const comp: [string, number][] = [[tags[i] as string, p.tagCount], ...p.shared.map((el, j) => [el, p.counts[j] ?? 1] as [string, number])];
      reactants.push({ text: text(comp, p.charge), n: p.n });
      for (const [el, c] of comp) product.set(el, (product.get(el) ?? 0) + c * p.n);
      productCharge += p.charge * p.n;
    });
    return { reactants, product: text([...product], productCharge) };
  });

function shuffled<T>(xs: readonly T[]) {
  return fc.shuffledSubarray([...xs], { minLength: xs.length, maxLength: xs.length });
}

/** A pool of couples (oxidised form, reduced form) seen in drinking-water treatment. */
const COUPLES: readonly [string, string][] = [
  ['MnO4-', 'MnO2'], ['MnO4-', 'Mn2+'], ['MnO2', 'Mn2+'], ['HOCl', 'Cl-'], ['OCl-', 'Cl-'], ['Cl2', 'Cl-'],
  ['ClO2', 'ClO2-'], ['ClO2-', 'Cl-'], ['ClO3-', 'Cl-'], ['O3', 'O2'], ['O2', 'H2O'], ['H2O2', 'H2O'],
  ['Fe3+', 'Fe2+'], ['Fe(OH)3', 'Fe2+'], ['S', 'H2S'], ['SO4^2-', 'H2S'], ['SO4^2-', 'HS-'], ['NO3-', 'NO2-'],
  ['N2', 'NH4+'], ['NO3-', 'NH4+'], ['H3AsO4', 'H3AsO3'], ['Cr2O7^2-', 'Cr3+'], ['IO3-', 'I-'], ['BrO3-', 'Br-'],
  ['HOBr', 'Br-'], ['MnO4-', 'MnO4^2-'],
];
const coupleIndex = fc.integer({ min: 0, max: COUPLES.length - 1 });
const medium = fc.constantFrom<Medium>('acid', 'base');

function species(c: [string, string]): { from: Species; to: Species } {
  return { from: P(c[0]), to: P(c[1]) };
}

function ownVector(r: Reaction): string {
  return canonical(r);
}

describe('properties of balanceReaction', () => {
  it('an assembled reaction balances to its construction, conserving every element and the charge', () => {
    fc.assert(
      fc.property(assembled, ({ reactants, product }) => {
        const r = balanceReaction({ reactants: reactants.map((x) => parseFormula(x.text)), products: [parseFormula(product)] });
        expect(isConserved(r)).toBe(true);
        expect(r.terms.map((t) => t.coefficient)).toEqual([...reactants.map((x) => BigInt(x.n)), 1n]);
      }),
      RUNS,
    );
  });

  it('reordering the input species never changes the balanced reaction', () => {
    fc.assert(
      fc.property(
        assembled.chain((a) => fc.tuple(fc.constant(a), shuffled(a.reactants))),
        ([a, order]) => {
          const first = balanceReaction({ reactants: a.reactants.map((x) => parseFormula(x.text)), products: [parseFormula(a.product)] });
          const again = balanceReaction({ reactants: order.map((x) => parseFormula(x.text)), products: [parseFormula(a.product)] });
          expect(canonical(again)).toBe(canonical(first));
          // and the terms follow the new input order
          expect(again.terms.slice(0, -1).map((t) => t.species.text)).toEqual(order.map((x) => x.text));
        },
      ),
      RUNS,
    );
  });

  it('moving one reactant to the product side gives BALANCE_WRONG_SIDE naming it', () => {
    fc.assert(
      fc.property(
        assembled.filter((a) => a.reactants.length >= 2).chain((a) => fc.tuple(fc.constant(a), fc.integer({ min: 0, max: a.reactants.length - 1 }))),
        ([a, j]) => {
          const moved = a.reactants[j] as { text: string };
          const keys = a.reactants.map((x) => speciesKey(parseFormula(x.text)));
          fc.pre(keys.filter((k) => k === keys[j]).length === 1);
          try {
            balanceReaction({
              reactants: a.reactants.filter((_, i) => i !== j).map((x) => parseFormula(x.text)),
              products: [parseFormula(a.product), parseFormula(moved.text)],
            });
            expect.unreachable('should not balance');
          } catch (e) {
            expect(e).toBeInstanceOf(DomainError);
            expect((e as DomainError).code).toBe('BALANCE_WRONG_SIDE');
            expect((e as DomainError).params['species']).toEqual([moved.text]);
          }
        },
      ),
      RUNS,
    );
  });

  it('redox reactions from random couples re-balance from their species alone, in any order', () => {
    fc.assert(
      fc.property(coupleIndex, coupleIndex, medium, fc.infiniteStream(fc.nat()), (i, j, m, seeds) => {
        fc.pre(i !== j);
        let r: Reaction;
        try {
          r = balanceRedox({ oxidant: species(COUPLES[i] as [string, string]), reductant: (() => { const c = species(COUPLES[j] as [string, string]); return { from: c.to, to: c.from }; })(), medium: m });
        } catch (e) {
          // two couples of the same element can cancel to nothing
          if (e instanceof DomainError && e.code === 'BALANCE_IMPOSSIBLE' && e.detail.includes('Nothing is left')) return;
          throw e;
        }
        expect(isConserved(r)).toBe(true);
        expect(gcdOf(r.terms.map((t) => t.coefficient))).toBe(1n);
        // shuffle each side with the stream of seeds
        const it = seeds[Symbol.iterator]();
        const mix = <T,>(xs: T[]): T[] => xs.map((x) => [it.next().value as number, x] as const).sort((a, b) => a[0] - b[0]).map((p) => p[1]);
        const reactants = mix(r.terms.filter((t) => t.side === 'reactant').map((t) => t.species));
        const products = mix(r.terms.filter((t) => t.side === 'product').map((t) => t.species));
        try {
          const again = balanceReaction({ reactants, products });
          expect(isConserved(again)).toBe(true);
          expect(canonical(again)).toBe(ownVector(r));
        } catch (e) {
          // the species alone may allow more than one reaction (e.g. O3 → O2 beside the redox step)
          if (!(e instanceof DomainError && e.code === 'BALANCE_NOT_UNIQUE')) throw e;
        }
      }),
      RUNS,
    );
  });
});

describe('properties of halfReaction and balanceRedox', () => {
  it('half-reactions of every pooled couple conserve elements and charge, as reductions in lowest terms', () => {
    fc.assert(
      fc.property(coupleIndex, medium, (i, m) => {
        const [ox, red] = COUPLES[i] as [string, string];
        const h = halfReaction({ oxidised: P(ox), reduced: P(red), medium: m });
        expect(isConserved(h)).toBe(true);
        expect(h.electrons).toBeGreaterThan(0);
        const e = h.terms.find((t) => t.species.text === 'e-');
        expect(e?.side).toBe('reactant');
        expect(Number(e?.coefficient)).toBe(h.electrons);
        expect(gcdOf(h.terms.map((t) => t.coefficient))).toBe(1n);
        // only water and the medium's ion are added
        const allowed = new Set([ox, red, 'H2O', 'e-', m === 'acid' ? 'H+' : 'OH-']);
        expect(h.terms.every((t) => allowed.has(t.species.text))).toBe(true);
      }),
      RUNS,
    );
  });

  it('a couple written backwards is always refused with BALANCE_COUPLE_DIRECTION', () => {
    fc.assert(
      fc.property(coupleIndex, medium, (i, m) => {
        const [ox, red] = COUPLES[i] as [string, string];
        expect(() => halfReaction({ oxidised: P(red), reduced: P(ox), medium: m })).toThrow(/releases electrons/);
      }),
      RUNS,
    );
  });

  it('a redox reaction has no electrons left, and electrons = n(oxidant half) × multiplier / common factor', () => {
    fc.assert(
      fc.property(coupleIndex, coupleIndex, medium, (i, j, m) => {
        fc.pre(i !== j);
        const ox = species(COUPLES[i] as [string, string]);
        const red = species(COUPLES[j] as [string, string]);
        let r;
        try {
          r = balanceRedox({ oxidant: ox, reductant: { from: red.to, to: red.from }, medium: m });
        } catch (e) {
          if (e instanceof DomainError && e.code === 'BALANCE_IMPOSSIBLE' && e.detail.includes('Nothing is left')) return;
          throw e;
        }
        expect(r.terms.some((t) => t.species.text === 'e-')).toBe(false);
        expect(r.reduction.electrons * Number(r.multipliers.oxidant)).toBe(r.oxidation.electrons * Number(r.multipliers.reductant));
        expect((r.reduction.electrons * Number(r.multipliers.oxidant)) % r.electrons).toBe(0);
        // no species on both sides
        const keys = r.terms.map((t) => speciesKey(t.species));
        expect(new Set(keys).size).toBe(keys.length);
      }),
      RUNS,
    );
  });
});
