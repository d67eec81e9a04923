/**
 * Oxidation states from a formula, and the electrons a balanced reaction transfers.
 *
 * A formula is first read for the polyatomic ions whose states are fixed by convention (IONS
 * below: NH4+ N −3, NO3- N +5, NO2- N +3, SO4^2- S +6, SO3^2- S +4, ClO4- Cl +7, CN- …): a
 * bracketed group that is exactly such an ion (Fe(NO3)2, (NH4)2Cr2O7, Ca(OCl)2), or a run of the
 * formula that is (NH4NO3 = NH4 + NO3, FeSO3 = Fe + SO3, NaHCO3 = Na + HCO3). One element can
 * then hold two states in one formula (NH4NO3: N −3 and N +5), each a site of its own. What the
 * ions leave (the counter-ions, or a metal oxyanion such as Cr2O7 in (NH4)2Cr2O7) is solved with
 * the charge left over by the usual textbook rules, applied in this order to every element except
 * the last one left, which takes whatever the charge requires (so H2O2 gives O −1, NaH gives
 * H −1, KMnO4 gives Mn +7); a species of one element has the charge shared over its atoms (Cl2 0,
 * Fe3+ +3, S4O6 2− ... as averages):
 *   F −1; Li, Na, K, Rb, Cs +1; Be, Mg, Ca, Sr, Ba +2; Al +3; H +1; O −2;
 *   Cl, Br, I −1 (only while no O or F is left with them: in HOCl or ClO2 chlorine is the one solved);
 *   in what is left of C and N without O: N −3, C +2.
 * A reading is kept only when it settles every element and leaves the fixed-state metals (F,
 * the alkali and alkaline-earth metals, Al) at their states. Of the readings kept, the one that
 * puts the most atoms in known ions is used; when two such readings give different states, the
 * species is reported open (with both readings), never guessed. The metal oxyanions (MnO4-,
 * MnO4^2-, CrO4^2-, Cr2O7^2-, FeO4^2-) are not in the list on purpose: their metal is solved from
 * the counter-ions (KMnO4 +7, K2MnO4 +6), which a fixed ion charge would get wrong for one of them.
 * States may be fractional averages (Fe3O4: +8/3, S2O3^2-: +2 over both S). A species the rules
 * cannot settle (FeS2) is reported as undetermined, never guessed.
 *
 * Electrons transferred: for each element, the atoms of the reactants and of the products
 * (coefficient × count, per site) are matched from state to state with the least movement; the
 * electrons are the total upward movement (oxidation), which equals the downward one in a
 * balanced reaction (each species' sites add up to its charge). This counts comproportionation
 * (2MnO4- + 3Mn2+ → 5MnO2: 6; NH4NO2 → N2 + 2H2O: 3) and disproportionation
 * (Cl2 + 2OH- → Cl- + OCl- + H2O: 1) correctly.
 */
import { Rational } from '../../core/rational.js';
import { parseFormulaAst, type FormulaAst, type Item } from '../formula/parse.js';
import type { Species } from '../formula/types.js';
import type { Term } from './types.js';

/** Atoms of one element at one oxidation state, per formula unit. */
export interface Site {
  readonly element: string;
  readonly state: Rational;
  readonly atoms: number;
}

export interface OxidationStates {
  /** Every element's atoms by oxidation state (one site per element and state); null when the rules do not settle them. */
  readonly sites: readonly Site[] | null;
  /** Elements the rules left open (when sites is null). */
  readonly open: readonly string[];
  /** Polyatomic ions recognised inside the formula (not the species itself when it is one): "NH4+ (N −3)", with the elements the label names. */
  readonly ions: readonly { readonly text: string; readonly elements: readonly string[] }[];
  /** When the formula reads two ways with different states: the readings (then sites is null). */
  readonly readings?: readonly string[];
}

interface IonDef {
  readonly name: string;
  /** The element items in the order written, e.g. [["N",1],["O",3]]. */
  readonly items: readonly (readonly [string, number])[];
  readonly charge: number;
  readonly sites: readonly Site[];
  /** A short statement of the state it fixes, e.g. "N −3", and the elements it names. */
  readonly label: string;
  readonly labelled: readonly string[];
}

/**
 * Polyatomic ions with their conventional oxidation states (textbook values, e.g. Atkins,
 * Inorganic Chemistry; Greenwood & Earnshaw, Chemistry of the Elements; from memory). Each entry:
 * the formula as written, and the state of each element; an element given as a list of
 * [state, atoms] holds two states (the peroxide O of S2O8^2- and HSO5-).
 */
const ION_TEXT: readonly [string, Readonly<Record<string, number | readonly (readonly [number, number])[]>>][] = [
  ['NH4+', { N: -3, H: 1 }],
  ['NO3-', { N: 5, O: -2 }],
  ['NO2-', { N: 3, O: -2 }],
  ['SO4^2-', { S: 6, O: -2 }],
  ['HSO4-', { H: 1, S: 6, O: -2 }],
  ['SO3^2-', { S: 4, O: -2 }],
  ['HSO3-', { H: 1, S: 4, O: -2 }],
  ['S2O3^2-', { S: 2, O: -2 }], // thiosulfate: the average over both S
  ['S2O4^2-', { S: 3, O: -2 }], // dithionite
  ['S2O5^2-', { S: 4, O: -2 }], // metabisulfite (disulfite)
  ['S2O8^2-', { S: 6, O: [[-2, 6], [-1, 2]] }], // peroxodisulfate: one O–O bridge
  ['HSO5-', { H: 1, S: 6, O: [[-2, 3], [-1, 2]] }], // peroxomonosulfate
  ['ClO4-', { Cl: 7, O: -2 }],
  ['ClO3-', { Cl: 5, O: -2 }],
  ['ClO2-', { Cl: 3, O: -2 }],
  ['ClO-', { Cl: 1, O: -2 }],
  ['OCl-', { Cl: 1, O: -2 }],
  ['BrO3-', { Br: 5, O: -2 }],
  ['BrO-', { Br: 1, O: -2 }],
  ['OBr-', { Br: 1, O: -2 }],
  ['IO3-', { I: 5, O: -2 }],
  ['IO4-', { I: 7, O: -2 }],
  ['PO4^3-', { P: 5, O: -2 }],
  ['HPO4^2-', { H: 1, P: 5, O: -2 }],
  ['H2PO4-', { H: 1, P: 5, O: -2 }],
  ['AsO4^3-', { As: 5, O: -2 }],
  ['AsO3^3-', { As: 3, O: -2 }],
  ['CO3^2-', { C: 4, O: -2 }],
  ['HCO3-', { H: 1, C: 4, O: -2 }],
  ['C2O4^2-', { C: 3, O: -2 }], // oxalate
  ['CN-', { C: 2, N: -3 }],
  ['SCN-', { S: -2, C: 4, N: -3 }], // thiocyanate: by electronegativity (N > S > C)
  ['OCN-', { O: -2, C: 4, N: -3 }], // cyanate
  ['OH-', { O: -2, H: 1 }],
];

function flatElements(items: readonly Item[]): [string, number][] | null {
  const out: [string, number][] = [];
  for (const it of items) {
    if (it.kind !== 'element') return null;
    out.push([it.symbol, it.count]);
  }
  return out;
}

const IONS: readonly IonDef[] = ION_TEXT.map(([text, states]) => {
  const { species, ast } = parseFormulaAst(text);
  const items = flatElements(ast.parts[0]!.items)!;
  const sites: Site[] = [];
  let sum = Rational.ZERO;
  const label: string[] = [];
  const labelled: string[] = [];
  for (const [element, atoms] of Object.entries(species.composition)) {
    const spec = states[element];
    if (spec === undefined) throw new Error(`oxidation.ts: ion ${text} has no state for ${element}`);
    const list = typeof spec === 'number' ? [[spec, atoms] as const] : spec;
    let n = 0;
    for (const [state, k] of list) {
      sites.push({ element, state: Rational.of(state), atoms: k });
      sum = sum.add(Rational.of(state * k));
      n += k;
      if (element !== 'O' && element !== 'H') {
        label.push(`${element} ${signed(Rational.of(state))}`);
        if (!labelled.includes(element)) labelled.push(element);
      }
    }
    if (n !== atoms) throw new Error(`oxidation.ts: ion ${text} gives ${n} atoms of ${element}, its formula ${atoms}`);
  }
  if (!sum.equals(Rational.of(species.charge))) throw new Error(`oxidation.ts: the states of ${text} do not add up to its charge`);
  return {
    name: text,
    items,
    charge: species.charge,
    sites,
    label: label.join(', ') || sites.map((s) => `${s.element} ${signed(s.state)}`).join(', '),
    labelled: labelled.length ? labelled : [...new Set(sites.map((s) => s.element))],
  };
});

/** "+5", "−3", "0", "+8/3" (with the minus sign of print). */
export function signed(r: Rational): string {
  const s = r.toString();
  return r.sign() > 0 ? `+${s}` : r.sign() < 0 ? `−${s.slice(1)}` : '0';
}

function itemsKey(items: readonly (readonly [string, number])[]): string {
  return items.map(([e, n]) => `${e}${n}`).join(' ');
}

const ION_BY_ITEMS = new Map<string, IonDef[]>();
for (const ion of IONS) {
  const k = itemsKey(ion.items);
  ION_BY_ITEMS.set(k, [...(ION_BY_ITEMS.get(k) ?? []), ion]);
}
const LONGEST_ION = Math.max(...IONS.map((i) => i.items.length));

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

/**
 * Elements whose state is fixed whenever ions have been taken out of a formula: a reading that
 * would solve one of them to another state is wrong (K2MnO4 read with MnO4- would leave K +1/2;
 * NO2Cl read with NO2- would leave Cl +1, where a halogen left beside ions is a halide).
 */
const STRICT = new Map<string, number>([
  ['F', -1],
  ['Cl', -1],
  ['Br', -1],
  ['I', -1],
  ...['Li', 'Na', 'K', 'Rb', 'Cs'].map((e) => [e, 1] as [string, number]),
  ...['Be', 'Mg', 'Ca', 'Sr', 'Ba'].map((e) => [e, 2] as [string, number]),
  ['Al', 3],
]);

/** One reading of a formula: the ions taken out of it (with how many), and the atoms left. */
interface Reading {
  readonly ions: readonly { readonly ion: IonDef; readonly count: number }[];
  readonly rest: Readonly<Record<string, number>>;
}

const MAX_READINGS = 64;

function combine(a: readonly Reading[], b: readonly Reading[]): Reading[] {
  const out: Reading[] = [];
  for (const x of a) {
    for (const y of b) {
      const rest: Record<string, number> = { ...x.rest };
      for (const [e, n] of Object.entries(y.rest)) rest[e] = (rest[e] ?? 0) + n;
      out.push({ ions: [...x.ions, ...y.ions], rest });
      if (out.length >= MAX_READINGS) return out;
    }
  }
  return out;
}

function scale(r: Reading, k: number): Reading {
  if (k === 1) return r;
  const rest: Record<string, number> = {};
  for (const [e, n] of Object.entries(r.rest)) rest[e] = n * k;
  return { ions: r.ions.map((i) => ({ ion: i.ion, count: i.count * k })), rest };
}

const EMPTY: Reading = { ions: [], rest: {} };

/** The readings of a sequence of items: every way to take known ions out of it (the plain reading among them). */
function readingsOf(items: readonly Item[]): Reading[] {
  // alternatives for items[i..]: memoised by i
  const memo = new Map<number, Reading[]>();
  const from = (i: number): Reading[] => {
    if (i === items.length) return [EMPTY];
    const hit = memo.get(i);
    if (hit) return hit;
    const item = items[i]!;
    let out: Reading[];
    if (item.kind === 'group') {
      const inner = readingsOf(item.items);
      const flat = flatElements(item.items);
      const whole = flat ? (ION_BY_ITEMS.get(itemsKey(flat)) ?? []).map((ion) => ({ ions: [{ ion, count: 1 }], rest: {} })) : [];
      out = combine([...whole, ...inner].map((r) => scale(r, item.count)), from(i + 1));
    } else {
      out = combine([{ ions: [], rest: { [item.symbol]: item.count } }], from(i + 1));
      for (let len = 2; len <= LONGEST_ION && i + len <= items.length; len++) {
        const flat = flatElements(items.slice(i, i + len));
        if (!flat) break;
        for (const ion of ION_BY_ITEMS.get(itemsKey(flat)) ?? []) {
          out = [...combine([{ ions: [{ ion, count: 1 }], rest: {} }], from(i + len)), ...out];
        }
      }
    }
    out = out.slice(0, MAX_READINGS);
    memo.set(i, out);
    return out;
  };
  return from(0);
}

/** Water of hydration (CuSO4·5H2O, FeCl3·6H2O): H +1, O −2, apart from the salt it hydrates. */
const WATER: IonDef = {
  name: 'H2O',
  items: [['H', 2], ['O', 1]],
  charge: 0,
  sites: [
    { element: 'H', state: Rational.ONE, atoms: 2 },
    { element: 'O', state: Rational.of(-2), atoms: 1 },
  ],
  label: 'H +1, O −2',
  labelled: ['H', 'O'],
};

function readingsOfAst(ast: FormulaAst): Reading[] {
  let all: Reading[] = [EMPTY];
  ast.parts.forEach((part, i) => {
    const flat = flatElements(part.items);
    const water = i > 0 && flat !== null && itemsKey(flat) === itemsKey(WATER.items);
    const readings = water ? [{ ions: [{ ion: WATER, count: 1 }], rest: {} }] : readingsOf(part.items);
    all = combine(all, readings.map((r) => scale(r, part.multiplier ?? 1)));
  });
  return all;
}

/** The textbook rules on what a reading leaves, with the charge left to it. */
function solveRest(rest: Readonly<Record<string, number>>, charge: Rational): { states: Map<string, Rational>; open: string[]; solved: string | null } {
  const elements = Object.keys(rest).filter((e) => (rest[e] ?? 0) > 0);
  const states = new Map<string, Rational>();
  const present = new Set(elements);
  const open = new Set(elements);
  let assigned = Rational.ZERO;
  const assign = (e: string, state: Rational): void => {
    states.set(e, state);
    open.delete(e);
    assigned = assigned.add(state.mul(Rational.of(rest[e] ?? 0)));
  };
  for (const rule of FIXED) {
    if (rule.when && !rule.when(present)) continue;
    for (const e of rule.elements) {
      if (open.has(e) && open.size > 1) assign(e, Rational.of(rule.state));
    }
  }
  let solved: string | null = null;
  if (open.size === 1) {
    solved = [...open][0]!;
    assign(solved, charge.sub(assigned).div(Rational.of(rest[solved] ?? 1)));
  }
  return { states, open: [...open], solved };
}

interface Evaluated {
  readonly sites: Site[] | null;
  readonly open: string[];
  readonly ionAtoms: number;
  readonly ions: readonly { readonly ion: IonDef; readonly count: number }[];
  readonly valid: boolean;
}

function evaluate(r: Reading, charge: number): Evaluated {
  let left = Rational.of(charge);
  let ionAtoms = 0;
  const bySite = new Map<string, Site>();
  const add = (element: string, state: Rational, atoms: number): void => {
    const k = `${element} ${state.toString()}`;
    const had = bySite.get(k);
    bySite.set(k, { element, state, atoms: (had?.atoms ?? 0) + atoms });
  };
  for (const { ion, count } of r.ions) {
    left = left.sub(Rational.of(ion.charge * count));
    for (const s of ion.sites) {
      add(s.element, s.state, s.atoms * count);
      ionAtoms += s.atoms * count;
    }
  }
  const restElements = Object.keys(r.rest).filter((e) => (r.rest[e] ?? 0) > 0);
  if (restElements.length === 0) {
    return { sites: [...bySite.values()], open: [], ionAtoms, ions: r.ions, valid: left.isZero() };
  }
  const { states, open, solved } = solveRest(r.rest, left);
  if (open.length > 0) return { sites: null, open, ionAtoms, ions: r.ions, valid: false };
  // with ions taken out, a fixed-state metal solved to another state means the reading is wrong
  const strict = solved === null ? undefined : STRICT.get(solved);
  const valid = r.ions.every((i) => i.ion === WATER) || strict === undefined || states.get(solved!)!.equals(Rational.of(strict));
  for (const [e, state] of states) add(e, state, r.rest[e]!);
  return { sites: [...bySite.values()], open: [], ionAtoms, ions: r.ions, valid };
}

function sitesKey(sites: readonly Site[]): string {
  return sites
    .map((s) => `${s.element}:${s.state.toString()}x${s.atoms}`)
    .sort()
    .join(' ');
}

function describeReading(e: Evaluated): string {
  const byElement = new Map<string, string[]>();
  for (const s of e.sites ?? []) byElement.set(s.element, [...(byElement.get(s.element) ?? []), signed(s.state)]);
  const states = [...byElement].map(([el, st]) => `${el} ${st.join(' and ')}`).join(', ');
  const ions = [...new Set(e.ions.map((i) => i.ion.name))];
  return ions.length ? `with ${ions.join(' and ')}: ${states}` : `by the formula rules alone: ${states}`;
}

const cache = new Map<string, OxidationStates>();

export function oxidationStates(species: Species): OxidationStates {
  const key = `${species.text}\u0000${species.charge}`;
  const hit = cache.get(key);
  if (hit) return hit;
  const out = computeStates(species);
  if (cache.size > 2000) cache.clear();
  cache.set(key, out);
  return out;
}

function sameComposition(a: Readonly<Record<string, number>>, b: Readonly<Record<string, number>>): boolean {
  const ka = Object.keys(a).filter((k) => (a[k] ?? 0) > 0);
  return ka.length === Object.keys(b).filter((k) => (b[k] ?? 0) > 0).length && ka.every((k) => a[k] === b[k]);
}

function computeStates(species: Species): OxidationStates {
  // the electron: no atoms, nothing to assign
  if (Object.keys(species.composition).length === 0) return { sites: [], open: [], ions: [] };
  let readings: Reading[] = [{ ions: [], rest: species.composition }];
  try {
    const { species: again, ast } = parseFormulaAst(species.text);
    // a species built in code may carry a text that is not its formula: then the plain reading only
    if (!ast.electron && again.charge === species.charge && sameComposition(again.composition, species.composition)) readings = readingsOfAst(ast);
  } catch {
    // not a parseable formula: the composition alone
  }
  const evaluated = readings.map((r) => evaluate(r, species.charge));
  const kept = evaluated.filter((e) => e.valid && e.sites !== null);
  if (kept.length === 0) {
    const plain = evaluated.find((e) => e.ions.length === 0) ?? evaluated[0]!;
    const open = plain.open.length > 0 ? plain.open : Object.keys(species.composition);
    return { sites: null, open, ions: [] };
  }
  const most = Math.max(...kept.map((e) => e.ionAtoms));
  const best = kept.filter((e) => e.ionAtoms === most);
  const distinct = new Map<string, Evaluated>();
  for (const e of best) if (!distinct.has(sitesKey(e.sites!))) distinct.set(sitesKey(e.sites!), e);
  if (distinct.size > 1) {
    const differing = new Set<string>();
    const all = [...distinct.values()];
    for (const e of all) for (const s of e.sites!) if (!all.every((o) => o.sites!.some((t) => t.element === s.element && t.state.equals(s.state) && t.atoms === s.atoms))) differing.add(s.element);
    return { sites: null, open: [...differing].sort(), ions: [], readings: all.map(describeReading) };
  }
  const chosen = best[0]!;
  // the species itself being one ion (NH4+, NO2-) is no reading of a formula worth naming
  const atoms = Object.values(species.composition).reduce((a, b) => a + b, 0);
  const whole = chosen.ions.length === 1 && chosen.ions[0]!.count === 1 && chosen.ionAtoms === atoms;
  const named = chosen.ions.filter((i) => i.ion !== WATER);
  const ions = whole ? [] : [...new Map(named.map((i) => [i.ion.name, { text: `${i.ion.name} (${i.ion.label})`, elements: i.ion.labelled }])).values()];
  return { sites: chosen.sites!, open: [], ions };
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
  readonly undetermined: readonly { readonly species: string; readonly elements: readonly string[]; readonly readings?: readonly string[] }[];
  /** Species whose states were read with polyatomic ions inside them, with those of the ions whose elements change state (NH4NO3: "NH4+ (N −3)", "NO3- (N +5)"). */
  readonly ions: readonly { readonly species: string; readonly ions: readonly string[] }[];
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
  const undetermined: { species: string; elements: string[]; readings?: readonly string[] }[] = [];
  const ionsIn: { species: string; ions: OxidationStates['ions'] }[] = [];
  const atoms = new Map<string, { from: [Rational, Rational][]; to: [Rational, Rational][] }>();
  const fractional = new Map<string, FractionalEntry[]>();
  for (const t of terms) {
    const ox = oxidationStates(t.species);
    if (ox.ions.length > 0 && !ionsIn.some((i) => i.species === t.species.text)) ionsIn.push({ species: t.species.text, ions: ox.ions });
    if (!ox.sites) {
      undetermined.push({ species: t.species.text, elements: [...ox.open], ...(ox.readings ? { readings: ox.readings } : {}) });
      continue;
    }
    for (const site of ox.sites) {
      const e = site.element;
      const n = Rational.of(t.coefficient).mul(Rational.of(site.atoms));
      let entry = atoms.get(e);
      if (!entry) {
        entry = { from: [], to: [] };
        atoms.set(e, entry);
      }
      const list = t.side === 'reactant' ? entry.from : entry.to;
      if (!site.state.isInteger()) {
        const fl = fractional.get(e) ?? [];
        fl.push({ side: t.side === 'reactant' ? 'from' : 'to', index: list.length, species: t.species.text, perUnit: site.atoms, units: Rational.of(t.coefficient), average: site.state });
        fractional.set(e, fl);
      }
      list.push([site.state, n]);
    }
  }
  if (undetermined.length > 0) return { electrons: null, changes: null, undetermined, ions: [], mixedValence: [] };
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
  const changed = new Set(changes.map((c) => c.element));
  const ions = ionsIn
    .map((i) => ({ species: i.species, ions: i.ions.filter((ion) => ion.elements.some((e) => changed.has(e))).map((ion) => ion.text) }))
    .filter((i) => i.ions.length > 0);
  return { electrons: total.isInteger() ? Number(total.num) : null, changes, undetermined, ions, mixedValence };
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
