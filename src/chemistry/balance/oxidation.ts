/**
 * Oxidation states from a formula alone, and the electrons a balanced reaction transfers.
 *
 * The usual textbook rules, applied in this order to every element of a species except the
 * last one left, which takes whatever the charge requires (so H2O2 gives O −1, NaH gives H −1,
 * KMnO4 gives Mn +7); a species of one element has the charge shared over its atoms (Cl2 0,
 * Fe3+ +3, S4O6 2− ... as averages):
 *   F −1; Li, Na, K, Rb, Cs +1; Be, Mg, Ca, Sr, Ba +2; Al +3; H +1; O −2;
 *   Cl, Br, I −1 (only while no O or F is present: in HOCl or ClO2 chlorine is the one solved);
 *   in a compound of C and N without O: N −3, C +2 (cyanide, as in K4Fe(CN)6);
 *   when two elements are still open and O is present: S +6, N +5, P +5, C +4, As +5 (the
 *   common oxyanions: sulfate, nitrate, phosphate, carbonate, arsenate, as in Fe2(SO4)3, MnSO4).
 * States may be fractional averages (Fe3O4: +8/3). A species the rules cannot settle is
 * reported as undetermined, never guessed.
 *
 * Electrons transferred: for each element, the atoms of the reactants and of the products
 * (coefficient × count) are matched from state to state with the least movement; the electrons
 * are the total upward movement (oxidation), which equals the downward one in a balanced
 * reaction. This counts comproportionation (2MnO4- + 3Mn2+ → 5MnO2: 6) and disproportionation
 * (Cl2 + 2OH- → Cl- + OCl- + H2O: 1) correctly.
 */
import { Rational } from '../../core/rational.js';
import type { Species } from '../formula/types.js';
import type { Term } from './types.js';

export interface OxidationStates {
  /** Average oxidation state per element symbol; null when the rules do not settle them. */
  readonly states: ReadonlyMap<string, Rational> | null;
  /** Elements the rules left open (when states is null). */
  readonly open: readonly string[];
  /** Elements given their state by the common-oxyanion rule (a convention, named in notes). */
  readonly byOxyanionRule: readonly string[];
}

const FIXED: readonly { readonly elements: readonly string[]; readonly state: number; readonly when?: (present: ReadonlySet<string>) => boolean }[] = [
  { elements: ['F'], state: -1 },
  { elements: ['Li', 'Na', 'K', 'Rb', 'Cs'], state: 1 },
  { elements: ['Be', 'Mg', 'Ca', 'Sr', 'Ba'], state: 2 },
  { elements: ['Al'], state: 3 },
  { elements: ['H'], state: 1 },
  { elements: ['O'], state: -2 },
  { elements: ['Cl', 'Br', 'I'], state: -1, when: (p) => !p.has('O') && !p.has('F') },
  { elements: ['N'], state: -3, when: (p) => p.has('C') && !p.has('O') },
  { elements: ['C'], state: 2, when: (p) => p.has('N') && !p.has('O') },
];

const OXYANION: readonly [string, number][] = [
  ['S', 6],
  ['N', 5],
  ['P', 5],
  ['C', 4],
  ['As', 5],
];

export function oxidationStates(species: Species): OxidationStates {
  const composition = species.composition as Readonly<Record<string, number>>;
  const elements = Object.keys(composition).filter((e) => (composition[e] ?? 0) > 0);
  const states = new Map<string, Rational>();
  const present = new Set(elements);
  const open = new Set(elements);
  let assigned = Rational.ZERO; // sum of count × state over assigned elements
  const assign = (e: string, state: Rational): void => {
    states.set(e, state);
    open.delete(e);
    assigned = assigned.add(state.mul(Rational.of(composition[e] ?? 0)));
  };
  for (const rule of FIXED) {
    if (rule.when && !rule.when(present)) continue;
    for (const e of rule.elements) {
      if (open.has(e) && open.size > 1) assign(e, Rational.of(rule.state));
    }
  }
  const byOxyanionRule: string[] = [];
  if (open.size === 2 && present.has('O')) {
    for (const [e, state] of OXYANION) {
      if (open.has(e) && open.size > 1) {
        assign(e, Rational.of(state));
        byOxyanionRule.push(e);
      }
    }
  }
  if (open.size === 1) {
    const e = [...open][0]!;
    assign(e, Rational.of(species.charge).sub(assigned).div(Rational.of(composition[e] ?? 1)));
  }
  if (open.size > 0) return { states: null, open: [...open], byOxyanionRule };
  return { states, open: [], byOxyanionRule };
}

export interface ElectronCount {
  /** Electrons transferred by the reaction as written; null when a species' states are undetermined or the count is not whole. */
  readonly electrons: number | null;
  /**
   * Per element that changes state: the electrons its atoms give up (oxidation) and take up
   * (reduction); [] for a reaction in which no state changes; null when a species' states are
   * undetermined (then nothing is known of the changes, see `undetermined`).
   */
  readonly changes: readonly { readonly element: string; readonly oxidised: string; readonly reduced: string }[] | null;
  /** Species whose oxidation states the rules leave open, with the open elements. */
  readonly undetermined: readonly { readonly species: string; readonly elements: readonly string[] }[];
  /** Species where the common-oxyanion convention fixed an element. */
  readonly conventions: readonly { readonly species: string; readonly elements: readonly string[] }[];
  /** Mixed-valence species whose fractional average state was split into whole states (Fe3O4: Fe(II) + 2 Fe(III)). */
  readonly mixedValence: readonly { readonly species: string; readonly elements: readonly string[] }[];
}

/** Total movement between two distributions of atoms over oxidation states: [upward, downward]. */
function movement(from: readonly [Rational, Rational][], to: readonly [Rational, Rational][]): [Rational, Rational] {
  const points = [...from, ...to].map(([s]) => s).sort((a, b) => a.compare(b));
  const below = (atoms: readonly [Rational, Rational][], t: Rational): Rational =>
    atoms.reduce((sum, [s, n]) => (s.compare(t) <= 0 ? sum.add(n) : sum), Rational.ZERO);
  let up = Rational.ZERO;
  let down = Rational.ZERO;
  for (let i = 0; i + 1 < points.length; i++) {
    const width = points[i + 1]!.sub(points[i]!);
    if (width.isZero()) continue;
    // atoms of `from` at or below t that `to` does not have at or below t must move up past t
    const diff = below(from, points[i]!).sub(below(to, points[i]!));
    if (diff.sign() > 0) up = up.add(diff.mul(width));
    else if (diff.sign() < 0) down = down.add(diff.neg().mul(width));
  }
  return [up, down];
}

/**
 * The ways to give `count` atoms whole oxidation states averaging `average` (a mixed-valence
 * compound: Fe3O4 averages +8/3 over Fe(II) + 2 Fe(III)), states within 2 of the average; none
 * for more than 8 atoms (then the average is kept).
 */
function wholeStateSplits(average: Rational, count: number): number[][] {
  if (count < 2 || count > 8) return [];
  const lo = Math.floor(average.toNumber()) - 2;
  const hi = Math.ceil(average.toNumber()) + 2;
  const target = average.mul(Rational.of(count));
  const out: number[][] = [];
  const walk = (from: number, left: number, acc: number[]): void => {
    if (left === 0) {
      if (Rational.of(acc.reduce((a, b) => a + b, 0)).equals(target)) out.push([...acc]);
      return;
    }
    for (let v = from; v <= hi; v++) walk(v, left - 1, [...acc, v]);
  };
  walk(lo, count, []);
  return out;
}

/** Electrons transferred by a balanced reaction written without electrons, from the oxidation states of its species. */
export function electronsTransferred(terms: readonly Term[]): ElectronCount {
  const undetermined: { species: string; elements: string[] }[] = [];
  const conventions: { species: string; elements: string[] }[] = [];
  const atoms = new Map<string, { from: [Rational, Rational][]; to: [Rational, Rational][] }>();
  const fractional = new Map<string, FractionalEntry[]>();
  for (const t of terms) {
    const ox = oxidationStates(t.species);
    if (ox.byOxyanionRule.length > 0) conventions.push({ species: t.species.text, elements: [...ox.byOxyanionRule] });
    if (!ox.states) {
      undetermined.push({ species: t.species.text, elements: [...ox.open] });
      continue;
    }
    for (const [e, state] of ox.states) {
      const n = Rational.of(t.coefficient).mul(Rational.of((t.species.composition as Record<string, number>)[e] ?? 0));
      let entry = atoms.get(e);
      if (!entry) {
        entry = { from: [], to: [] };
        atoms.set(e, entry);
      }
      const list = t.side === 'reactant' ? entry.from : entry.to;
      if (!state.isInteger()) {
        const per = (t.species.composition as Record<string, number>)[e] ?? 0;
        const fl = fractional.get(e) ?? [];
        fl.push({ side: t.side === 'reactant' ? 'from' : 'to', index: list.length, species: t.species.text, perUnit: per, units: Rational.of(t.coefficient), average: state });
        fractional.set(e, fl);
      }
      list.push([state, n]);
    }
  }
  if (undetermined.length > 0) return { electrons: null, changes: null, undetermined, conventions, mixedValence: [] };
  let total = Rational.ZERO;
  const changes: { element: string; oxidised: string; reduced: string }[] = [];
  const mixedValence: { species: string; elements: string[] }[] = [];
  for (const [element, entry] of [...atoms].sort((a, b) => (a[0] < b[0] ? -1 : 1))) {
    let [up, down] = movement(entry.from, entry.to);
    if (!up.isInteger() && fractional.has(element)) {
      // An average state that is not whole belongs to a mixed-valence compound (Fe3O4, Pb3O4,
      // Mn3O4): its atoms carry whole states. Of the ways to split it, the one that moves the
      // fewest electrons is the reading of the reaction (Fe3O4 + 8H+ → Fe2+ + 2Fe3+ + 4H2O: none).
      const best = bestSplit(entry, fractional.get(element)!);
      if (best) {
        [up, down] = best.movement;
        for (const sp of best.species) mixedValence.push({ species: sp, elements: [element] });
      }
    }
    if (up.isZero() && down.isZero()) continue;
    total = total.add(up);
    changes.push({ element, oxidised: up.toString(), reduced: down.toString() });
  }
  return { electrons: total.isInteger() ? Number(total.num) : null, changes, undetermined, conventions, mixedValence };
}

type AtomList = [Rational, Rational][];
interface FractionalEntry {
  readonly side: 'from' | 'to';
  readonly index: number;
  readonly species: string;
  /** Atoms of the element per formula unit and formula units (the term's coefficient). */
  readonly perUnit: number;
  readonly units: Rational;
  readonly average: Rational;
}

function bestSplit(entry: { from: AtomList; to: AtomList }, fractionalEntries: readonly FractionalEntry[]): { movement: [Rational, Rational]; species: string[] } | null {
  const options = fractionalEntries.map((f) => wholeStateSplits(f.average, f.perUnit));
  if (options.some((o) => o.length === 0)) return null;
  let combos = 1;
  for (const o of options) combos *= o.length;
  if (combos > 5000) return null;
  let best: [Rational, Rational] | null = null;
  const pick = (i: number, chosen: number[][]): void => {
    if (i === options.length) {
      const from = entry.from.slice();
      const to = entry.to.slice();
      const removed = { from: new Set<number>(), to: new Set<number>() };
      chosen.forEach((split, j) => {
        const f = fractionalEntries[j]!;
        removed[f.side].add(f.index);
        const list = f.side === 'from' ? from : to;
        for (const st of split) list.push([Rational.of(st), f.units]);
      });
      const m = movement(from.filter((_, k) => !removed.from.has(k)), to.filter((_, k) => !removed.to.has(k)));
      if (m[0].isInteger() && (best === null || m[0].compare(best[0]) < 0)) best = m;
      return;
    }
    for (const split of options[i]!) pick(i + 1, [...chosen, split]);
  };
  pick(0, []);
  return best ? { movement: best, species: [...new Set(fractionalEntries.map((f) => f.species))] } : null;
}
