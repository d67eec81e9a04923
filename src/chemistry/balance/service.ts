/**
 * Balancing from text input: parse every formula (errors carry the field pointer),
 * balance, and shape the answer. Used by the HTTP route and the CLI.
 */
import { DomainError, isDomainError } from '../../core/errors.js';
import { formatUnicode, isElectron, parseFormula, speciesKey } from '../formula/index.js';
import type { Species } from '../formula/types.js';
import { balanceReaction, balanceRedox, equationText, mediumForPH } from './index.js';
import { electronsTransferred } from './oxidation.js';
import type { Medium, Reaction, Term } from './types.js';

export interface BalanceTextInput {
  reactants?: readonly string[];
  products?: readonly string[];
  oxidant?: { from: string; to: string };
  reductant?: { from: string; to: string };
  medium?: Medium | undefined;
  pH?: number | undefined;
}

export function parseAt(text: string, pointer: string, elements?: ReadonlySet<string>): Species {
  try {
    return elements ? parseFormula(text, { elements }) : parseFormula(text);
  } catch (e) {
    if (isDomainError(e)) throw e.under(pointer);
    throw e;
  }
}

function termsOut(terms: readonly Term[]) {
  return terms.map((t) => ({ species: t.species.text, coefficient: Number(t.coefficient), side: t.side }));
}

export function unicodeEquation(r: Pick<Reaction, 'terms'>): string {
  const side = (s: 'reactant' | 'product') =>
    r.terms
      .filter((t) => t.side === s)
      .map((t) => (t.coefficient === 1n ? '' : t.coefficient.toString()) + formatUnicode(t.species.text))
      .join(' + ');
  return `${side('reactant')} → ${side('product')}`;
}

/** A reduction half-reaction read backwards: the oxidation it describes (same species, sides swapped). */
export function reversedEquation(r: Pick<Reaction, 'terms'>): string {
  return equationText(r.terms.map((t) => ({ ...t, side: t.side === 'reactant' ? ('product' as const) : ('reactant' as const) })));
}

function electronNote(count: ReturnType<typeof electronsTransferred>): string | null {
  if (count.undetermined.length > 0) {
    const readings = count.undetermined.filter((u) => u.readings && u.readings.length > 1);
    return (
      `The oxidation states of ${count.undetermined.map((u) => `${u.elements.join(' and ')} in ${u.species}`).join('; ')} do not follow from the formula rules` +
      (readings.length > 0 ? ` (${readings.map((u) => `${u.species} reads ${u.readings!.join(', or ')}`).join('; ')})` : '') +
      ', so the electrons transferred are not given; write the reaction as an oxidant couple and a reductant couple to have them counted.'
    );
  }
  const parts: string[] = [];
  if (count.ions.length > 0 && count.electrons !== 0) {
    parts.push(`Oxidation states read with the polyatomic ions in ${count.ions.map((c) => `${c.species}: ${c.ions.join(', ')}`).join('; ')}.`);
  }
  if (count.mixedValence.length > 0 && count.electrons !== null) {
    parts.push(
      `Mixed valence: the average oxidation state of ${count.mixedValence.map((m) => `${m.elements.join(', ')} in ${m.species}`).join('; ')} is not whole, so its atoms were given whole states, ` +
        'split the way that moves the fewest electrons (Fe3O4 as Fe(II) + 2 Fe(III)).',
    );
  }
  if (count.electrons === null) parts.push('The oxidation-state changes do not add up to a whole number of electrons.');
  return parts.length ? parts.join(' ') : null;
}

/**
 * A species written with a digit and then one sign after a formula of several elements (CrO2+,
 * MnO2+) reads the digit as a count and the charge as 1. When the species do not balance so but
 * would with the digit read as the charge (CrO^2+), the error says so, naming both readings, rather
 * than suggesting electrons: the caller may have meant either.
 */
function withChargeReading(e: DomainError, reactants: readonly Species[], products: readonly Species[], elements?: ReadonlySet<string>): DomainError {
  const all = [...reactants, ...products];
  for (let i = 0; i < all.length; i++) {
    const sp = all[i]!;
    const m = /^(.*[A-Za-z)\]])([2-9])([+-])(\s*\((?:s|l|g|aq|cr|am)\))?$/.exec(sp.text);
    if (!m || sp.text.includes('^') || Math.abs(sp.charge) !== 1) continue;
    const other = `${m[1]}^${m[2]}${m[3]}${m[4] ?? ''}`;
    let alt: Species;
    try {
      alt = elements ? parseFormula(other, { elements }) : parseFormula(other);
    } catch {
      continue;
    }
    const swap = (list: readonly Species[], offset: number) => list.map((x, j) => (j + offset === i ? alt : x));
    try {
      const balanced = balanceReaction({ reactants: swap(reactants, 0), products: swap(products, reactants.length) });
      const counted = `${m[1]}${m[2]}^${m[3]}${m[4] ?? ''}`;
      const pointer = i < reactants.length ? `/reactants/${i}` : `/products/${i - reactants.length}`;
      const hint =
        ` ${sp.text} was read as ${counted} (a single sign after a digit is a charge of 1, the digit a count); ` +
        `read as ${other} (the digit as the charge) the species balance: ${balanced.equation}. Write the charge with ^ to say which you mean.`;
      return new DomainError(e.code, {
        detail: (/[.!?]$/.test(e.detail) ? e.detail : `${e.detail}.`) + hint,
        params: { ...e.params, chargeReading: { species: sp.text, read: counted, alternative: other, balancedEquation: balanced.equation } },
        fields: [{ pointer, message: `read as ${counted}; as ${other} the species balance` }, ...e.fields.filter((f) => f.pointer !== pointer)],
      });
    } catch {
      // that reading does not balance either
    }
  }
  return e;
}

/** The note for species written with a thermodynamic table's solid label, (cr) or (am): read as the solid (s). */
export function solidLabelNote(species: readonly Species[]): string | null {
  const labelled = species.filter((sp) => sp.phase === 's' && /\((cr|am)\)\s*$/.test(sp.text)).map((sp) => sp.text);
  if (labelled.length === 0) return null;
  return `${[...new Set(labelled)].join(', ')}: (cr) crystalline and (am) amorphous are read as the solid phase (s), at unit activity; which solid forms is not told apart.`;
}

export function chooseMedium(medium: Medium | undefined, pH: number | undefined): { medium: Medium; reason: string } {
  if (medium) return { medium, reason: 'medium given by the caller' };
  if (pH !== undefined) {
    const m = mediumForPH(pH);
    return { medium: m, reason: `pH ${pH} ${m === 'base' ? '> 7: basic medium (OH-, H2O)' : '≤ 7: acidic medium (H+, H2O)'}` };
  }
  return { medium: 'acid', reason: 'no medium or pH given: acidic medium, as standard potential tables are written' };
}

export function balanceService(input: BalanceTextInput, elements?: ReadonlySet<string>) {
  if (input.reactants && input.products) {
    const reactants = input.reactants.map((t, i) => parseAt(t, `/reactants/${i}`, elements));
    const products = input.products.map((t, i) => parseAt(t, `/products/${i}`, elements));
    const keys = reactants.map((sp) => speciesKey(sp));
    const both = products.findIndex((sp) => keys.includes(speciesKey(sp)));
    if (both >= 0) {
      const text = products[both]!.text;
      throw new DomainError('BALANCE_IMPOSSIBLE', {
        detail: `${text} is among both the reactants and the products; cancel it from both sides and give the species that change.`,
        params: { cause: 'same-species', species: text },
        fields: [
          { pointer: `/reactants/${keys.indexOf(speciesKey(products[both]!))}`, message: `${text} is also a product` },
          { pointer: `/products/${both}`, message: `${text} is also a reactant` },
        ],
      });
    }
    let r;
    try {
      r = balanceReaction({ reactants, products });
    } catch (e) {
      if (isDomainError(e) && e.code === 'BALANCE_IMPOSSIBLE') throw withChargeReading(e, reactants, products, elements);
      throw e;
    }
    const notes: string[] = [];
    // pH and medium complete half-reactions of couples; a species balance uses the species given
    if (input.pH !== undefined || input.medium !== undefined) {
      notes.push(
        `${[input.pH !== undefined ? `pH ${input.pH}` : '', input.medium !== undefined ? `medium ${input.medium}` : ''].filter(Boolean).join(' and ')} not used: a balance of given species uses exactly the species listed (add H+, OH- or H2O to them to balance in a medium); pH and medium choose how couples (oxidant, reductant) are completed.`,
      );
    }
    const solidLabels = solidLabelNote([...reactants, ...products]);
    if (solidLabels) notes.push(solidLabels);
    // written with e-: a half-reaction, its electrons are its e- coefficient; otherwise they
    // follow from the oxidation states of the species (0 for a non-redox reaction)
    const explicit = r.terms.some((t) => isElectron(t.species));
    const count = explicit ? null : electronsTransferred(r.terms);
    const electronsNote = count === null ? null : electronNote(count);
    return {
      kind: 'reaction' as const,
      equation: r.equation,
      equationUnicode: unicodeEquation(r),
      terms: termsOut(r.terms),
      electrons: count === null ? r.electrons : count.electrons,
      // null (the reason in electronsNote) when the formula rules leave a species' states open:
      // an empty list would read as "no element changes state", a non-redox reaction
      ...(count
        ? { oxidationStateChanges: count.changes === null ? null : count.changes.map((c) => ({ element: c.element, electronsLost: c.oxidised, electronsGained: c.reduced })) }
        : {}),
      ...(electronsNote ? { electronsNote } : {}),
      ...(notes.length > 0 ? { notes } : {}),
      method: 'Null space of the element-and-charge matrix over exact rationals; smallest whole coefficients',
    };
  }
  if (input.oxidant && input.reductant) {
    const oxidant = { from: parseAt(input.oxidant.from, '/oxidant/from', elements), to: parseAt(input.oxidant.to, '/oxidant/to', elements) };
    const reductant = {
      from: parseAt(input.reductant.from, '/reductant/from', elements),
      to: parseAt(input.reductant.to, '/reductant/to', elements),
    };
    const { medium, reason } = chooseMedium(input.medium, input.pH);
    let r;
    try {
      r = balanceRedox({ oxidant, reductant, medium });
    } catch (e) {
      if (isDomainError(e) && e.code === 'BALANCE_COUPLE_DIRECTION') {
        // Say which couple is backwards, by trying each half alone.
        throw e.fields.length ? e : new DomainError(e.code, { detail: e.detail, params: e.params, fields: [{ pointer: '/oxidant', message: e.detail }] });
      }
      throw e;
    }
    return {
      kind: 'redox' as const,
      equation: r.equation,
      equationUnicode: unicodeEquation(r),
      terms: termsOut(r.terms),
      electrons: r.electrons,
      medium,
      mediumReason: reason,
      halfReactions: {
        reduction: { equation: r.reduction.equation, electrons: r.reduction.electrons, ...(r.reduction.convention ? { convention: r.reduction.convention } : {}) },
        oxidation: { equation: reversedEquation(r.oxidation), electrons: r.oxidation.electrons, ...(r.oxidation.convention ? { convention: r.oxidation.convention } : {}) },
      },
      multipliers: { oxidant: Number(r.multipliers.oxidant), reductant: Number(r.multipliers.reductant) },
      method: 'Half-reaction method: each couple completed with H2O and H+ (acid) or OH- (base) and electrons, electrons matched by their least common multiple, exact rationals',
    };
  }
  throw new DomainError('VALIDATION_FAILED', { detail: 'Give reactants and products, or an oxidant and a reductant couple.' });
}
