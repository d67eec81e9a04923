/**
 * Couples and cells from text input, at the water's pH and temperature.
 * Used by POST /api/v1/couples/potential and /api/v1/cells/evaluate, and the CLI.
 *
 * Chain for each couple: parse the formulas → complete the half-reaction (H2O, H+ or OH-,
 * e-) in the medium → E° at 25 °C from the ledger (tabled, derived from tabled rows through
 * ΔG°, or the caller's site value) → E°(T) from the tables' temperature data → Nernst at the
 * pH, temperature and activities (slope 2.303RT/F from CODATA R and F at T).
 */
import { UNIT_FACTORS } from '../core/quantity.js';
import { DomainError, isDomainError, pointerToken } from '../core/errors.js';
import type { Dec } from '../core/decimal.js';
import { parseFormula, speciesKey, formatEquationUnicode } from '../chemistry/formula/index.js';
import type { Species } from '../chemistry/formula/types.js';
import { balanceRedox, halfReaction, mediumForPH, type HalfReaction, type Medium } from '../chemistry/balance/index.js';
import { standardPotential, type PotentialResult, type DerivationStep, type SiteValue } from '../chemistry/thermo/derive.js';
import type { Ledger } from '../chemistry/thermo/ledger.js';
import { nernst, type ActivityUsed, type NernstResult } from './conditions.js';
import { linkGivenSpecies, linkNote, type GivenSpecies, type Link, type LinkResult } from './linked.js';
import { evaluateCell } from './cell.js';
import { DAVIES_EQUATION, daviesGamma, ionicStrength } from './activity.js';
import type { PhysicalConstants } from './constants.js';

/** What the service needs; the dosing context provides all of it. */
export interface RedoxDeps {
  readonly ledger: Ledger;
  readonly constants: PhysicalConstants;
  readonly kwAt: (temperatureC: number) => number;
  readonly daviesAAt: (temperatureC: number) => number;
  readonly molarMassOf: (formula: string) => Dec;
  /** Source id → full citation. */
  readonly citations: ReadonlyMap<string, string>;
  readonly elements?: ReadonlySet<string>;
}

export interface StepOut {
  rowId: string;
  table: string;
  equation: string;
  coefficient: string;
  kind: 'redox' | 'equilibrium';
  value: string;
  source: string;
  citation?: string;
}

/**
 * Species the tables write as solids, e.g. MnO2(s), Fe(OH)3(s), S(s): a caller who writes
 * "MnO2" means the same solid, held at unit activity, not a dissolved species left out.
 */
const SOLIDS_BY_LEDGER = new WeakMap<Ledger, ReadonlySet<string>>();
export function tabledSolids(ledger: Ledger): ReadonlySet<string> {
  let set = SOLIDS_BY_LEDGER.get(ledger);
  if (!set) {
    set = new Set([...ledger.species].filter(([, s]) => s.phase === 's').map(([key]) => key));
    SOLIDS_BY_LEDGER.set(ledger, set);
  }
  return set;
}

/**
 * Notes for values given for species that the half-reactions hold at unit activity as solids
 * (a concentration for "MnO2" where the tables know MnO2 only as MnO2(s)): never used silently.
 */
function givenForSolids(halves: readonly NernstResult[], given: ReadonlyMap<string, string>): string[] {
  const notes: string[] = [];
  const seen = new Set<string>();
  for (const h of halves) {
    for (const a of h.activities) {
      const text = given.get(a.key);
      if (a.reason !== 'solid' || text === undefined || seen.has(a.key)) continue;
      seen.add(a.key);
      const formula = a.text.replace(/\s*\((s|aq|l|g)\)$/, '');
      notes.push(`${a.text} is a solid in this half-reaction and is held at unit activity; the value given for ${text} was not used. Write ${formula}(aq) in the couple for a dissolved species of that formula.`);
    }
  }
  return notes;
}

/** H+ and OH-, whose activities the pH sets. */
const PH_KEYS = [speciesKey(parseFormula('H+')), speciesKey(parseFormula('OH-'))] as const;

/** Notes for values given for species that appear in none of the half-reactions: never dropped silently. */
function notInEitherHalf(halves: readonly NernstResult[], given: ReadonlyMap<string, string>, what: string): string[] {
  const notes: string[] = [];
  const terms = halves.flatMap((h) => h.activities);
  for (const [key, text] of given) {
    const mine = terms.filter((a) => a.key === key);
    if (key === PH_KEYS[0] || key === PH_KEYS[1]) {
      notes.push(`${text} is set by the pH; the ${what} given for it agrees with the pH (within ${PH_AGREEMENT_UNITS} pH units) and was not used.`);
    } else if (mine.length === 0) {
      notes.push(`${text} is not in ${halves.length > 1 ? 'either half-reaction' : 'the half-reaction'}; the ${what} given for it was not used.`);
    } else if (mine.every((a) => a.reason === 'water')) {
      notes.push(`${text} is the solvent, at unit activity; the ${what} given for it was not used.`);
    }
  }
  return notes;
}

/** A note when dissolved species were left at unit activity (1 mol/L), which moves E a long way. */
function unitActivityNote(notGiven: readonly string[], where: string): string | null {
  if (notGiven.length === 0) return null;
  return (
    `${where}: no concentration given for ${notGiven.join(', ')}, taken at unit activity (1 mol/L, the standard state); ` +
    'give the water\'s concentrations for a potential at its levels.'
  );
}

function parseAt(text: string, pointer: string, deps: RedoxDeps): Species {
  try {
    return deps.elements ? parseFormula(text, { elements: deps.elements }) : parseFormula(text);
  } catch (e) {
    if (isDomainError(e)) throw e.under(pointer);
    throw e;
  }
}

/**
 * Gases the potential tables write as gases (O2(g), O3(g), Cl2(g), H2(g), N2(g)): a couple written
 * with the bare formula ("O2" to "H2O") means the gas, as in the handbook tables (O2/H2O 1.229 V),
 * not the dissolved species at 1 mol/L, a state no water reaches. "(aq)" names the dissolved
 * species; concentrations keep their own reading (a bare "O2" in mg/L is dissolved oxygen, and
 * sets the gas through Henry's law, see linked.ts).
 */
const HANDBOOK_GASES = new WeakMap<Ledger, ReadonlySet<string>>();
function handbookGasKeys(ledger: Ledger): ReadonlySet<string> {
  let set = HANDBOOK_GASES.get(ledger);
  if (!set) {
    set = new Set(ledger.rows.filter((r) => r.table === 'potentials').flatMap((r) => [...r.vector.keys()].filter((k) => ledger.species.get(k)?.phase === 'g')));
    HANDBOOK_GASES.set(ledger, set);
  }
  return set;
}

/** A couple's species read as the handbook tables write it: a bare O2, O3, Cl2, H2 or N2 as the gas, a (cr) or (am) solid as the tabled solid; the note says so. */
function asTabledSpecies(s: Species, text: string, deps: RedoxDeps, notes: string[]): Species {
  if (s.phase === 's' && /\((cr|am)\)\s*$/.test(s.text)) {
    // the tables hold one constant per solid formula; which solid forms is not told apart
    const note = `${text} is read as the solid ${s.text.replace(/\((cr|am)\)\s*$/, '(s)')}, at unit activity: the tables hold one solid of that formula (its row is in the derivation), whether crystalline (cr) or amorphous (am) was written. Crystalline solids are less soluble than amorphous ones, so give standardPotentialV with a site value and its source for another solid.`;
    if (!notes.includes(note)) notes.push(note);
    return s;
  }
  if (s.phase !== null || s.charge !== 0) return s;
  let gas: Species;
  try {
    gas = parseFormula(`${s.text}(g)`);
  } catch {
    return s;
  }
  if (!handbookGasKeys(deps.ledger).has(speciesKey(gas))) return s;
  const note = `${text} is read as ${gas.text}, the gas, as the handbook tables write it (activity = partial pressure in atm; 1 atm unless given); write ${s.text}(aq) for the dissolved species.`;
  if (!notes.includes(note)) notes.push(note);
  return gas;
}

function withPointer<T>(pointer: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (isDomainError(e) && e.fields.length === 0) throw e.under(pointer);
    throw e;
  }
}

export function stepsOut(steps: readonly DerivationStep[], deps: RedoxDeps, options: { citations?: boolean } = {}): StepOut[] {
  return steps.map((s) => {
    const row = deps.ledger.byId.get(s.rowId);
    const citation = options.citations === false ? undefined : deps.citations.get(s.source);
    return {
      rowId: s.rowId,
      table: row ? `tables/${row.file}` : 'tables/',
      equation: s.equation,
      coefficient: s.coefficient,
      kind: s.kind,
      value: s.valueText,
      source: s.source,
      ...(citation ? { citation } : {}),
    };
  });
}

/** Balanced reactions do not change between requests: keyed by the four formulas and the medium. */
const redoxMemo = new Map<string, ReturnType<typeof balanceRedox>>();
function redoxFor(ox: { from: Species; to: Species }, red: { from: Species; to: Species }, medium: Medium) {
  const k = `${ox.from.text}|${ox.to.text}|${red.from.text}|${red.to.text}|${medium}`;
  let r = redoxMemo.get(k);
  if (!r) {
    r = balanceRedox({ oxidant: ox, reductant: red, medium });
    if (redoxMemo.size > 2048) redoxMemo.clear();
    redoxMemo.set(k, r);
  }
  return r;
}

const halfMemo = new Map<string, HalfReaction>();
function halfFor(ox: Species, red: Species, medium: Medium, pointer: string): HalfReaction {
  const k = `${ox.text}|${red.text}|${medium}`;
  let h = halfMemo.get(k);
  if (!h) {
    h = withPointer(pointer, () => {
      try {
        return halfReaction({ oxidised: ox, reduced: red, medium });
      } catch (e) {
        // the half-reaction names its inputs oxidised/reduced; this request calls them from/to
        if (!isDomainError(e)) throw e;
        throw e.withFields((fields) => fields.map((f) => ({ pointer: f.pointer.replace(/^\/oxidised/, '/from').replace(/^\/reduced/, '/to'), message: f.message })));
      }
    });
    if (halfMemo.size > 2048) halfMemo.clear();
    halfMemo.set(k, h);
  }
  return h;
}

function potentialFor(
  half: HalfReaction,
  deps: RedoxDeps,
  opts: { temperatureC: number; temperatureCorrection: boolean; override?: SiteValue },
  pointer: string,
): PotentialResult {
  return withPointer(pointer, () => {
    try {
      return standardPotential(half, deps.ledger, {
        // one thermodynamic basis for both media: the potential is continuous in pH
        basis: 'acid',
        temperatureC: opts.temperatureC,
        temperatureCorrection: opts.temperatureCorrection,
        ...(opts.override ? { override: opts.override } : {}),
      });
    } catch (e) {
      // on the cell route a site value goes in standardPotentials.oxidant / .reductant
      const siteField = pointer === '/oxidant' || pointer === '/reductant' ? `standardPotentials.${pointer.slice(1)}` : 'standardPotentialV';
      if (isDomainError(e) && e.fields.some((f) => f.pointer === '/override/medium')) {
        const at = `/${siteField.replace('.', '/')}/medium`;
        throw e.withFields((fields) => fields.map((f) => (f.pointer === '/override/medium' ? { pointer: at, message: f.message } : f)), e.detail);
      }
      // the ledger speaks of the half-reaction's equation; in this request that is the couple itself
      // (its from and to on the couple route, the oxidant or reductant on a cell), and the
      // equation is shown with the formulas as the request wrote them (Cr3+, not the key Cr^3+)
      if (!isDomainError(e) || !e.fields.some((f) => f.pointer === '/equation')) throw e;
      const ledgerEquation = typeof e.params['equation'] === 'string' ? e.params['equation'] : null;
      const detail = (ledgerEquation ? e.detail.replace(ledgerEquation, half.equation) : e.detail).replace('(standardPotentialV)', `(${siteField})`);
      const at = pointer === '' ? ['/from', '/to'] : [pointer];
      throw e.withFields((fields) => fields.flatMap((f) => (f.pointer === '/equation' ? at.map((q) => ({ pointer: q, message: f.message })) : [f])), detail);
    }
  });
}

/** A request's site value of E°: for the acid form of the couple unless it says base. */
function siteValue(v: { value: number; source: string; medium?: Medium | undefined }): SiteValue {
  return { valueV: v.value, source: v.source, ...(v.medium ? { medium: v.medium } : {}) };
}

function chooseMedium(medium: Medium | undefined, pH: number | undefined): Medium {
  return medium ?? (pH !== undefined ? mediumForPH(pH) : 'acid');
}

/** Where a species was given in the request: the text the caller wrote and its JSON pointer. */
interface GivenAt {
  readonly text: string;
  readonly pointer: string;
}

/**
 * Two keys of the request that name the same species ("Fe2+" and "Fe^2+", "Fe2+" and
 * "Fe2+(aq)"): one value would replace the other by key order, so the request is refused.
 */
function sameSpecies(key: string, first: GivenAt, second: GivenAt): DomainError {
  return new DomainError('ACTIVITY_INVALID', {
    detail:
      `"${first.text}" (${first.pointer}) and "${second.text}" (${second.pointer}) are the same species (${key}): species are matched by ` +
      'composition, charge and gas phase, so one value would replace the other. Give the species once.',
    params: { species: key, pointers: [first.pointer, second.pointer] },
    fields: [
      { pointer: first.pointer, message: `the same species as ${second.pointer} (${key}); give it once` },
      { pointer: second.pointer, message: `the same species as ${first.pointer} (${key}); give it once` },
    ],
  });
}

/** Record where a species was given; refuses a second spelling of one already given. */
function noteGiven(seen: Map<string, GivenAt>, key: string, at: GivenAt): void {
  const first = seen.get(key);
  if (first !== undefined) throw sameSpecies(key, first, at);
  seen.set(key, at);
}

/**
 * Values by species key; `seen` collects key → the text the caller wrote and its pointer, shared
 * between the maps of one request so that a species given twice is refused (sameSpecies).
 */
/**
 * What a water can hold (common practice): activities and concentrations from 1e-40 to 10 mol/L
 * (pure water is 55 mol/L, the strongest brines about 6; below 1e-40 no species is present in any
 * sample volume), partial pressures from 1e-40 to 100 atm (beyond any contactor or pressure vessel
 * of water treatment). Outside these a value is a unit slip and is refused, never computed on.
 */
export const AMOUNT_BOUNDS = { molPerL: { min: 1e-40, max: 10 }, atm: { min: 1e-40, max: 100 } } as const;

function checkAmount(value: number, kind: 'molPerL' | 'atm', text: string, pointer: string, given?: string): void {
  if (!(value > 0) || !Number.isFinite(value)) return; // zero, negative and non-finite values are refused where they are read, with their own message
  const b = AMOUNT_BOUNDS[kind];
  if (value >= b.min && value <= b.max) return;
  const unit = kind === 'atm' ? 'atm' : 'mol/L';
  const why =
    kind === 'atm'
      ? `a partial pressure from ${b.min} to ${b.max} atm (100 atm is beyond any contactor or pressure vessel of water treatment; air holds O2(g) at about 0.21 atm)`
      : `an activity or concentration from ${b.min} to ${b.max} mol/L (pure water is 55 mol/L and the strongest brines about 6)`;
  throw new DomainError('QUANTITY_OUT_OF_RANGE', {
    detail: `${text}: ${given ?? `${value} ${unit}`} is outside what a water can hold; give ${why} (common practice). Check the value and its unit.`,
    fields: [{ pointer, message: `${given ?? `${value} ${unit}`} is outside ${b.min} to ${b.max} ${unit}` }],
  });
}

/**
 * A converted activity or pressure within what a water can hold, at the sample's pH: dissolved O2
 * given at 0.21 mol/L is 166 atm of O2(g), which no water holds. The given value's field is named.
 */
function checkLinked(link: LinkResult, pH: number, seen: ReadonlyMap<string, GivenAt>): void {
  for (const l of link.links.values()) {
    const value = Math.pow(10, l.linked.log10ActivityAtPH0 + l.linked.perPH * pH);
    const at = seen.get(l.from.key);
    const kind = l.termIsGas ? 'atm' : 'molPerL';
    const b = AMOUNT_BOUNDS[kind];
    if (Number.isFinite(value) && value >= b.min && value <= b.max) continue;
    const unit = kind === 'atm' ? 'atm' : 'mol/L';
    const shown = Number.isFinite(value) ? value.toPrecision(3) : 'beyond any number of';
    const hint = l.termIsGas
      ? ` In a couple a bare ${l.termText.replace(/\(g\)$/, '')} is the gas: give its partial pressure (atm) as ${l.termText}${at?.pointer.startsWith('/activities') ? ' in partialPressuresAtm' : ''}.`
      : '';
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `${l.from.text} as given sets ${l.termText} of the couple through ${l.equation} to ${shown} ${unit}, outside the ${b.min} to ${b.max} ${unit} a water can hold (common practice): check the value and its unit.${hint}`,
      fields: [{ pointer: at ? (at.pointer.startsWith('/concentrations/') ? `${at.pointer}/value` : at.pointer) : '/', message: `sets ${l.termText} to ${shown} ${unit}, outside ${b.min} to ${b.max} ${unit}` }],
    });
  }
}

function keyedActivities(
  map: Readonly<Record<string, number>> | undefined,
  pointer: string,
  deps: RedoxDeps,
  seen: Map<string, GivenAt>,
  check?: (s: Species, at: GivenAt) => void,
): Map<string, number> {
  const out = new Map<string, number>();
  for (const [text, a] of Object.entries(map ?? {})) {
    const at = { text, pointer: `${pointer}/${pointerToken(text)}` };
    const s = parseAt(text, at.pointer, deps);
    check?.(s, at);
    checkAmount(a, pointer === '/partialPressuresAtm' || s.phase === 'g' ? 'atm' : 'molPerL', text, at.pointer);
    const key = speciesKey(s);
    noteGiven(seen, key, at);
    out.set(key, a);
  }
  return out;
}

/** key → the text the caller wrote, for the notes. */
function textsOf(seen: ReadonlyMap<string, GivenAt>): Map<string, string> {
  return new Map([...seen].map(([k, g]) => [k, g.text]));
}

/** The example water of the activity-coefficient notes: a fresh water of 300 mg/L TDS (an illustration, not the sample). */
const EXAMPLE_TDS_MG_PER_L = 300;

/**
 * What activity coefficients of 1 mean, with figures computed at the temperature: γ of a 1+ and
 * a 2+ ion by Davies at the example water's ionic strength (Langelier 1936 from its TDS), the
 * E shift s·|log10 γ(2+)| of a one-electron couple, and `shiftOf(log10 γ by charge)`: how far
 * this answer's E would move with those coefficients.
 */
function gammaOneNote(
  lead: string,
  temperatureC: number,
  slopeV: number,
  deps: RedoxDeps,
  shiftOf: (log10Gamma: (charge: number) => number) => number,
  what: string,
  advice: string,
): string {
  const est = ionicStrength({ method: 'tds', tdsMgPerL: EXAMPLE_TDS_MG_PER_L });
  const I = est.ionicStrengthMolPerL;
  const A = deps.daviesAAt(temperatureC);
  const lg = (z: number) => (z === 0 ? 0 : Math.log10(daviesGamma(z, I, A)));
  const shiftMV = shiftOf(lg) * 1000;
  const perIonMV = slopeV * Math.abs(lg(2)) * 1000;
  return (
    `${lead} In a real water ions have γ below 1: ` +
    `for example at ${EXAMPLE_TDS_MG_PER_L} mg/L TDS (I = ${I.toPrecision(2)} mol/L by ${est.relation?.id ?? 'the TDS relation'}), ` +
    `Davies at ${temperatureC} °C gives γ = ${Math.pow(10, lg(1)).toFixed(2)} for a 1+ ion and ${Math.pow(10, lg(2)).toFixed(2)} for a 2+ ion; ` +
    `one 2+ ion in Q moves E by s·|log10 γ|/n = ${perIonMV.toFixed(1)} mV/n for a couple of n electrons, ` +
    `and ${what} would move by ${shiftMV >= 0 ? '+' : ''}${shiftMV.toFixed(1)} mV with these coefficients. ${advice}`
  );
}

/**
 * The charge of the given species behind a term's activity and how that activity moves per
 * decade of the given one's: the term itself (1) when given, the partner it was converted from
 * (−ν_S/ν_T) when converted; null otherwise.
 */
function givenBehind(a: ActivityUsed, charges: ReadonlyMap<string, number>, links: ReadonlyMap<string, Link>): { z: number; factor: number } | null {
  if (a.origin === 'given') {
    const z = charges.get(a.key);
    return z === undefined ? null : { z, factor: 1 };
  }
  const l = a.origin === 'converted' ? links.get(a.key) : undefined;
  const z = l ? charges.get(l.from.key) : undefined;
  return l && z !== undefined ? { z, factor: l.perLog10Given } : null;
}

/**
 * ΔE of a half (as a reduction, E = E° − (s/n) log10 Q) if the activity of each term given
 * for a charged species (`charges`: key → charge) were multiplied by its γ: −(s/n) Σ ν log10 γ;
 * a term converted from a charged given species moves with that species' γ.
 */
function gammaShiftV(half: NernstResult, charges: ReadonlyMap<string, number>, log10Gamma: (charge: number) => number, links: ReadonlyMap<string, Link> = new Map()): number {
  let sum = 0;
  for (const a of half.activities) {
    const g = givenBehind(a, charges, links);
    if (g === null || g.z === 0) continue;
    sum += (a.side === 'product' ? a.coefficient : -a.coefficient) * g.factor * log10Gamma(g.z);
  }
  return -(half.slopeV / half.electrons) * sum;
}

/** Whether a given value entered a half as the activity of a charged dissolved species (itself or converted). */
function givenCharged(halves: readonly NernstResult[], charges: ReadonlyMap<string, number>, links: ReadonlyMap<string, Link> = new Map()): boolean {
  return halves.some((h) => h.activities.some((a: ActivityUsed) => (givenBehind(a, charges, links)?.z ?? 0) !== 0));
}

/**
 * The notes of the given species converted into a term of a half (linked.ts), and of those
 * that could not be; `given` without the species that were converted, for notInEitherHalf.
 */
function linkNotes(link: LinkResult, given: ReadonlyMap<string, string>, pH: number, inWhat: string): { notes: string[]; unlinked: Map<string, string> } {
  return {
    notes: [...[...link.links.values()].map((l) => linkNote(l, pH, inWhat)), ...link.notes],
    unlinked: new Map([...given].filter(([k]) => !link.usedGiven.has(k))),
  };
}

/**
 * The notes given, per half (here each half's caveats on E° away from 25 °C: temperature data
 * extrapolated or missing, the correction turned off), each saying which half it is from; a note
 * both halves give is given once.
 */
function halfNotes(halves: readonly [string, readonly string[]][]): string[] {
  const from = new Map<string, string[]>();
  for (const [where, notes] of halves) {
    for (const n of notes) {
      const list = from.get(n) ?? [];
      if (!list.includes(where)) list.push(where);
      from.set(n, list);
    }
  }
  return [...from].map(([n, where]) => `${where.length > 1 ? 'Both couples' : where[0]}: ${n}`);
}

function constantsOut(deps: RedoxDeps) {
  const c = deps.constants;
  return [
    { name: 'R (J/(mol·K))', value: String(c.gasConstant.value), source: c.gasConstant.source },
    { name: 'F (C/mol)', value: String(c.faraday.value), source: c.faraday.source },
    { name: '0 °C (K)', value: String(c.zeroCelsiusK.value), source: c.zeroCelsiusK.source },
  ];
}

function temperatureNote(p: PotentialResult, correction: boolean): string {
  if (!correction) return 'Temperature correction of E° turned off by the request: E° held at its 25 °C value.';
  if (p.temperatureC === 25) return 'At 25 °C: no temperature correction.';
  const notes = p.notes.filter((n) => /temperature|25 °C|dE/i.test(n));
  return notes.length ? notes.join(' ') : `E° moved from 25 °C to ${p.temperatureC} °C with the tables' temperature data.`;
}

/** The pH a couple request is evaluated at, and where it comes from. */
interface RequestPH {
  /** undefined: neither a pH nor an H+ or OH- activity was given. */
  readonly pH: number | undefined;
  readonly pHNote: string;
  /** The species key of an H+ or OH- activity that set the pH. */
  readonly key?: string;
  readonly note?: string;
}

/**
 * The pH of a couple request: the pH given; else the one an H+ activity sets (pH = −log10 a(H+))
 * or an OH- activity sets through Kw at the temperature (pH = pKw + log10 a(OH-)); else none
 * (H+ at unit activity, pH 0). With a pH given, an H+ or OH- activity is not used (a note says
 * so); H+ and OH- both given without a pH are refused, as two settings of one quantity.
 */
function pHOfRequest(pH: number | undefined, activities: ReadonlyMap<string, number>, seen: ReadonlyMap<string, GivenAt>, temperatureC: number, deps: RedoxDeps): RequestPH {
  const [hKey, ohKey] = PH_KEYS;
  if (pH !== undefined) {
    // an H+ or OH- activity beside the pH: the same pH (a note says it is not used) or a contradiction (400)
    for (const key of [hKey, ohKey]) {
      const a = activities.get(key);
      const at = seen.get(key);
      if (a !== undefined && a > 0 && at) checkPHAgreement(pH, { key, text: at.text, pointer: at.pointer, log10Values: [Math.log10(a)] }, temperatureC, deps, 'activity', true);
    }
    return { pH, pHNote: `pH ${pH}: a(H+) = 10^-${pH}` };
  }
  const h = activities.has(hKey) ? seen.get(hKey) : undefined;
  const oh = activities.has(ohKey) ? seen.get(ohKey) : undefined;
  if (h === undefined && oh === undefined) return { pH: undefined, pHNote: 'No pH given: H+ at unit activity (pH 0), its standard state.' };
  if (h !== undefined && oh !== undefined) {
    throw new DomainError('ACTIVITY_INVALID', {
      detail: `Activities are given for both ${h.text} and ${oh.text} and no pH: each sets the pH (through Kw), so they are one quantity given twice. Give pH, or one of them.`,
      fields: [
        { pointer: h.pointer, message: `sets the pH, as ${oh.pointer} does; give one of them, or pH` },
        { pointer: oh.pointer, message: `sets the pH, as ${h.pointer} does; give one of them, or pH` },
      ],
    });
  }
  const g = (h ?? oh)!;
  const key = h !== undefined ? hKey : ohKey;
  const a = activities.get(key)!;
  const pKw = -Math.log10(deps.kwAt(temperatureC));
  const value = h !== undefined ? -Math.log10(a) : pKw + Math.log10(a);
  const how = h !== undefined ? 'pH = -log10 a(H+)' : 'pH = pKw + log10 a(OH-)';
  const kwText = h !== undefined ? '' : ` (pKw = ${pKw.toFixed(3)} at ${temperatureC} °C)`;
  if (!(value >= 0 && value <= 14)) {
    const range = h !== undefined ? 'between 1e-14 and 1' : `between ${Math.pow(10, -pKw).toPrecision(3)} and ${Math.pow(10, 14 - pKw).toPrecision(3)}`;
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `The activity given for ${g.text} (${a}) sets pH ${value.toFixed(2)} (${how}${kwText}), outside the accepted range 0 to 14.`,
      params: { pH: value, min: 0, max: 14 },
      fields: [{ pointer: g.pointer, message: `must be ${range} (pH 0 to 14)` }],
    });
  }
  const text = `No pH given: the activity given for ${g.text} (${a}) sets it, ${how} = ${Number(value.toFixed(4))}${kwText}.`;
  return { pH: value, pHNote: text, key, note: text };
}

/** How far (pH units) an H+ or OH- value may lie from the pH given beside it and still be read as the same pH. */
export const PH_AGREEMENT_UNITS = 0.02;

/**
 * An H+ or OH- value given beside a pH: the pH it implies (pH = −log10 a(H+), or pKw + log10
 * a(OH-) at the temperature) must agree with the pH within PH_AGREEMENT_UNITS, else the request
 * says two different things and is refused naming both fields. `log10Values` are the readings
 * accepted as the species' activity (a concentration is checked as given and with its activity
 * coefficient, since a caller may mean either).
 */
function checkPHAgreement(
  pH: number,
  entry: { readonly key: string; readonly text: string; readonly pointer: string; readonly log10Values: readonly number[] },
  temperatureC: number,
  deps: RedoxDeps,
  what: 'activity' | 'concentration',
  pHOptional: boolean,
): void {
  const isH = entry.key === PH_KEYS[0];
  const pKw = -Math.log10(deps.kwAt(temperatureC));
  const implied = entry.log10Values.map((l) => (isH ? -l : pKw + l));
  if (implied.some((v) => Math.abs(v - pH) <= PH_AGREEMENT_UNITS)) return;
  const shown = implied[implied.length - 1]!;
  const how = isH ? 'pH = −log10 a(H+)' : `pH = pKw + log10 a(OH-), pKw ${pKw.toFixed(3)} at ${temperatureC} °C`;
  throw new DomainError('ACTIVITY_INVALID', {
    detail:
      `The ${what} given for ${entry.text} sets pH ${shown.toFixed(2)} (${how}), but pH ${pH} is given too: they differ by ${Math.abs(shown - pH).toFixed(3)} pH units ` +
      `(more than ${PH_AGREEMENT_UNITS}). The pH sets ${isH ? 'H+' : 'OH-'}; ${pHOptional ? `give the pH alone, or leave out the pH and give ${entry.text} alone` : `give the pH alone (leave out ${entry.text})`}.`,
    params: { pH, impliedPH: shown },
    fields: [
      { pointer: '/pH', message: `pH ${pH}, while ${entry.pointer} sets pH ${shown.toFixed(2)}` },
      { pointer: entry.pointer, message: `sets pH ${shown.toFixed(2)}, while /pH is ${pH}` },
    ],
  });
}

export interface CoupleInput {
  from: string;
  to: string;
  pH?: number | undefined;
  temperatureC?: number | undefined;
  medium?: Medium | undefined;
  activities?: Readonly<Record<string, number>> | undefined;
  partialPressuresAtm?: Readonly<Record<string, number>> | undefined;
  standardPotentialV?: { value: number; source: string; medium?: Medium | undefined } | undefined;
  temperatureCorrection?: boolean | undefined;
}

export function couplePotential(input: CoupleInput, deps: RedoxDeps) {
  const gasNotes: string[] = [];
  const ox = asTabledSpecies(parseAt(input.from, '/from', deps), input.from, deps, gasNotes);
  const red = asTabledSpecies(parseAt(input.to, '/to', deps), input.to, deps, gasNotes);
  const temperatureC = input.temperatureC ?? 25;
  // every species given once, under one spelling, across activities and partialPressuresAtm
  const seen = new Map<string, GivenAt>();
  const charges = new Map<string, number>();
  const speciesOf = new Map<string, Species>(); // of every species given, for the links to partners
  const activities = keyedActivities(input.activities, '/activities', deps, seen, (s) => {
    charges.set(speciesKey(s), s.charge);
    speciesOf.set(speciesKey(s), s);
  });
  const pressures = keyedActivities(input.partialPressuresAtm, '/partialPressuresAtm', deps, seen, (s, at) => {
    speciesOf.set(speciesKey(s), s);
    if (s.phase !== 'g') {
      throw new DomainError('ACTIVITY_INVALID', {
        detail: `${at.text} is given as a partial pressure, which is for a gas: write the gas with (g), e.g. "O2(g)", or give the dissolved species in activities.`,
        fields: [{ pointer: at.pointer, message: 'a partial pressure only for a gas written with (g)' }],
      });
    }
  });
  const ph = pHOfRequest(input.pH, activities, seen, temperatureC, deps);
  for (const k of PH_KEYS) charges.delete(k);
  const medium = chooseMedium(input.medium, ph.pH);
  // A couple written from the reduced form to the oxidised one is an oxidation: computed as its
  // reduction and reported with the signs of the reaction as written (E°, E and the temperature
  // term change sign on reversal; multiplying a half-reaction leaves them unchanged).
  let half: HalfReaction;
  let reversed = false;
  try {
    half = halfFor(ox, red, medium, '');
  } catch (e) {
    if (!isDomainError(e) || e.code !== 'BALANCE_COUPLE_DIRECTION') throw e;
    half = halfFor(red, ox, medium, '');
    reversed = true;
  }
  const sign = reversed ? -1 : 1;
  const asWritten = (eq: string) => (reversed ? eq.split(' -> ').reverse().join(' -> ') : eq);
  const correction = input.temperatureCorrection ?? true;
  const override = input.standardPotentialV ? siteValue(input.standardPotentialV) : undefined;
  const p = potentialFor(half, deps, { temperatureC, temperatureCorrection: correction, ...(override ? { override } : {}) }, '');
  const e0T = p.standardPotentialAtTemperatureV;
  const atConditions = input.pH !== undefined || input.activities !== undefined || input.partialPressuresAtm !== undefined;
  let n: NernstResult | null = null;
  // the notes speak of what was given; an H+ or OH- activity that set the pH is spoken of by ph.note
  const givenActivities = textsOf(seen);
  if (ph.key !== undefined) givenActivities.delete(ph.key);
  let link: LinkResult | null = null;
  if (atConditions) {
    // a value given for the non-redox partner of a term (HOCl for OCl-, O2(g) for O2): the term follows from it
    const givenSpecies: GivenSpecies[] = [];
    for (const [key, text] of givenActivities) {
      const v = activities.get(key) ?? pressures.get(key);
      const sp = speciesOf.get(key);
      if (v !== undefined && v > 0 && sp !== undefined) givenSpecies.push({ key, text, species: sp, log10Activity: Math.log10(v) });
    }
    link = linkGivenSpecies([{ half, name: 'couple' }], givenSpecies, { temperatureC, ledger: deps.ledger, solids: tabledSolids(deps.ledger) });
    checkLinked(link, ph.pH ?? 0, seen);
    n = nernst({
      half,
      standardPotentialV: e0T,
      pH: ph.pH ?? 0,
      temperatureC,
      activities,
      partialPressuresAtm: pressures,
      kw: deps.kwAt(temperatureC),
      constants: deps.constants,
      solids: tabledSolids(deps.ledger),
      linked: link.linked,
    });
  }
  const tc = p.tabledCheck;
  const unitNote = n ? unitActivityNote(n.notGiven, 'Nernst') : null;
  const links = link?.links ?? new Map<string, Link>();
  const linked = link && n ? linkNotes(link, givenActivities, ph.pH ?? 0, 'the half-reaction') : null;
  const unusedNotes = n && linked ? [...givenForSolids([n], givenActivities), ...notInEitherHalf([n], linked.unlinked, 'activity'), ...linked.notes] : [];
  const nh = n;
  const gammaNote =
    nh && givenCharged([nh], charges, links)
      ? gammaOneNote(
          'The values in activities are used as activities: if they are concentrations in mol/L, the activity coefficients are taken as 1 (this route takes no ionic strength).',
          temperatureC,
          nh.slopeV,
          deps,
          (lg) => sign * gammaShiftV(nh, charges, lg, links),
          'E of this couple',
          "POST /api/v1/cells/evaluate converts concentrations to activities at the water's ionic strength (ionicStrength, tdsMgPerL or conductanceUSPerCm).",
        )
      : null;
  const pHFree = n !== null && !n.activities.some((a) => a.key === PH_KEYS[0] || a.key === PH_KEYS[1]);
  const phNote = ph.note && pHFree ? `${ph.note} The half-reaction has neither H+ nor OH-, so the pH does not change E.` : ph.note;
  return {
    couple: { from: input.from, to: input.to },
    halfReaction: asWritten(half.equation),
    halfReactionUnicode: formatEquationUnicode(asWritten(half.equation)),
    direction: reversed ? ('oxidation' as const) : ('reduction' as const),
    medium,
    electrons: half.electrons,
    standardPotentialV: sign * p.standardPotentialV,
    reductionStandardPotentialV: p.standardPotentialV,
    valueUsed: p.usedValue,
    override: p.override ? { value: p.override.valueV, source: p.override.source, medium: p.override.medium ?? 'acid', carriedV: p.override.carriedV ?? null } : null,
    tablesStandardPotentialV: p.tablesStandardPotentialV,
    temperatureC,
    temperatureCorrectionV: sign * p.temperatureCorrectionV,
    waterIonisationShiftV: sign * p.waterIonisationShiftV,
    temperatureNote: temperatureNote(p, correction),
    potentialV: sign * (n ? n.potentialV : e0T),
    nernst: n
      ? {
          slopeV: n.slopeV,
          log10Q: n.log10Q,
          pH: ph.pH ?? 0,
          pHNote: ph.pHNote,
          activities: n.activities.map((a) => ({
            species: a.text,
            activity: a.activity,
            origin:
              a.key === ph.key
                ? 'given (sets the pH)'
                : a.origin === 'converted'
                  ? `converted (from ${links.get(a.key)?.from.text ?? 'a given partner'})`
                  : a.origin + (a.reason ? ` (${a.reason})` : ''),
          })),
          unitActivity: [...n.notGiven],
        }
      : null,
    derivation: stepsOut(p.derivation, deps),
    tabledCheck: tc
      ? {
          tabledV: tc.tabledV,
          derivedV: tc.derivedV,
          discrepancyV: tc.discrepancyV,
          flagged: tc.flagged,
          note:
            p.usedValue === 'tabled'
              ? tc.flagged
                ? `The tabled value differs from its own derivation from other tabled rows by ${(tc.discrepancyV * 1000).toFixed(1)} mV (more than 5 mV): the tables disagree.`
                : `The tabled value agrees with its derivation from other rows within ${(Math.abs(tc.discrepancyV) * 1000).toFixed(1)} mV.`
              : tc.flagged
                ? `The tables' own row for this half-reaction (${tc.tabledV} V) differs by ${(tc.discrepancyV * 1000).toFixed(1)} mV (more than 5 mV) from the value derived from other rows (${tc.derivedV.toFixed(4)} V): the tables disagree; the row is not the value used.`
                : `The tables' own row for this half-reaction agrees with the value derived from other rows within ${(Math.abs(tc.discrepancyV) * 1000).toFixed(1)} mV.`,
          derivation: stepsOut(tc.derivation, deps),
        }
      : null,
    alternatives: p.alternatives.map((a) => ({ standardPotentialV: a.standardPotentialV, rows: a.rows.map((r) => r.rowId), differs: a.differs })),
    notes: [
      ...gasNotes,
      ...(reversed
        ? [
            `Written from ${input.from} to ${input.to}, the couple is an oxidation: E° and E are those of the reaction as written, the negatives of the reduction's (${half.equation}, E° = ${p.standardPotentialV.toFixed(4)} V). A site value (standardPotentialV) is the E° of the reduction.`,
          ]
        : []),
      ...p.notes,
      ...(unitNote ? [unitNote] : []),
      ...(phNote && n ? [phNote] : []),
      ...unusedNotes,
      ...(gammaNote ? [gammaNote] : []),
    ],
    constants: constantsOut(deps),
  };
}

export interface ConcentrationIn {
  value: number;
  unit: 'mg/L' | 'ug/L' | 'µg/L' | 'g/m3' | 'g/L' | 'ppm' | 'ppb' | 'mol/L' | 'mmol/L' | 'umol/L' | 'µmol/L' | 'atm';
}

const MN2 = speciesKey(parseFormula('Mn2+'));

/**
 * The note every feasible cell carries: E > 0 says the reaction can run, not how fast. Where a
 * well-known slow case applies it is named: dissolved oxygen oxidises Mn(II) very slowly below
 * about pH 9 (common practice; from memory of water-treatment texts, e.g. Stumm & Morgan).
 */
function rateNote(oxidant: Species, reductant: Species, pH: number): string {
  const general = 'Feasible is thermodynamic only (E > 0): it says nothing about the rate.';
  const oxygen = Object.keys(oxidant.composition).length === 1 && oxidant.composition['O'] === 2;
  if (oxygen && speciesKey(reductant) === MN2 && pH < 9) {
    return `${general} Dissolved oxygen oxidises Mn(II) very slowly below about pH 9 (common practice): check with a jar test or a stronger oxidant.`;
  }
  return general;
}

export interface CellInputText {
  oxidant: { from: string; to: string };
  reductant: { from: string; to: string };
  pH: number;
  temperatureC: number;
  concentrations?: Readonly<Record<string, ConcentrationIn>> | undefined;
  ionicStrength?: number | undefined;
  tdsMgPerL?: number | undefined;
  conductanceUSPerCm?: number | undefined;
  medium?: Medium | undefined;
  standardPotentials?: { oxidant?: { value: number; source: string; medium?: Medium | undefined } | undefined; reductant?: { value: number; source: string; medium?: Medium | undefined } | undefined } | undefined;
}


/**
 * The answer depends only on the input and the tables, which do not change while the service
 * runs: identical requests (a dashboard polling the same sample) are answered from a small
 * least-recently-used memo. The memo is per deps object (one per loaded set of tables).
 */
const CELL_MEMO_SIZE = 512;
const cellMemos = new WeakMap<RedoxDeps, Map<string, ReturnType<typeof evaluateCellUncached>>>();

export function evaluateCellText(input: CellInputText, deps: RedoxDeps, requestText?: string): ReturnType<typeof evaluateCellUncached> {
  let memo = cellMemos.get(deps);
  if (!memo) {
    memo = new Map();
    cellMemos.set(deps, memo);
  }
  // the request as received is a key as good as the parsed one re-serialised (the same text parses
  // to the same input), and saves writing it again; texts that differ only in spacing miss
  const key = requestText !== undefined ? `t${requestText}` : `j${JSON.stringify(input)}`;
  const hit = memo.get(key);
  if (hit) {
    memo.delete(key);
    memo.set(key, hit);
    return hit;
  }
  const out = evaluateCellUncached(input, deps);
  if (memo.size >= CELL_MEMO_SIZE) memo.delete(memo.keys().next().value as string);
  memo.set(key, out);
  return out;
}

export function evaluateCellUncached(input: CellInputText, deps: RedoxDeps) {
  const gasNotes: string[] = [];
  const gasOf = (text: string, pointer: string) => asTabledSpecies(parseAt(text, pointer, deps), text, deps, gasNotes);
  const ox = { from: gasOf(input.oxidant.from, '/oxidant/from'), to: gasOf(input.oxidant.to, '/oxidant/to') };
  const red = { from: gasOf(input.reductant.from, '/reductant/from'), to: gasOf(input.reductant.to, '/reductant/to') };
  const medium = chooseMedium(input.medium, input.pH);
  const overall = redoxFor(ox, red, medium);
  const oxHalf = overall.reduction;
  const redHalf = overall.oxidation;
  const T = input.temperatureC;
  const ov = input.standardPotentials?.oxidant;
  const rv = input.standardPotentials?.reductant;
  const pOx = potentialFor(oxHalf, deps, { temperatureC: T, temperatureCorrection: true, ...(ov ? { override: siteValue(ov) } : {}) }, '/oxidant');
  const pRed = potentialFor(redHalf, deps, { temperatureC: T, temperatureCorrection: true, ...(rv ? { override: siteValue(rv) } : {}) }, '/reductant');

  let I = 0;
  let iBasis: 'given' | 'tds' | 'conductance' | 'none' = 'none';
  let iRelation: string | null = null;
  const notes: string[] = [];
  if (input.ionicStrength !== undefined) {
    I = input.ionicStrength;
    iBasis = 'given';
  } else if (input.tdsMgPerL !== undefined) {
    const est = ionicStrength({ method: 'tds', tdsMgPerL: input.tdsMgPerL });
    I = est.ionicStrengthMolPerL;
    iBasis = 'tds';
    iRelation = est.relation?.id ?? null;
  } else if (input.conductanceUSPerCm !== undefined) {
    const est = ionicStrength({ method: 'conductance', conductanceUSPerCm: input.conductanceUSPerCm });
    I = est.ionicStrengthMolPerL;
    iBasis = 'conductance';
    iRelation = est.relation?.id ?? null;
  }
  const givenBases = (['ionicStrength', 'tdsMgPerL', 'conductanceUSPerCm'] as const).filter((k) => input[k] !== undefined);
  if (givenBases.length > 1) {
    notes.push(`Ionic strength from ${givenBases[0]}; ${givenBases.slice(1).join(' and ')} not used (one basis is used, in the order ionicStrength, tdsMgPerL, conductanceUSPerCm).`);
  }
  const A = deps.daviesAAt(T);
  const activities = new Map<string, number>();
  const pressures = new Map<string, number>();
  const seen = new Map<string, GivenAt>(); // species key → the text the caller wrote and where, once per species
  const charges = new Map<string, number>(); // of the dissolved species given, for the activity-coefficient note
  const givenSpecies: GivenSpecies[] = []; // each with its log10 activity (or pressure), for the links to partners
  for (const [text, q] of Object.entries(input.concentrations ?? {})) {
    const pointer = `/concentrations/${pointerToken(text)}`;
    const s = parseAt(text, pointer, deps);
    const key = speciesKey(s);
    noteGiven(seen, key, { text, pointer });
    if ((q.unit === 'atm') !== (s.phase === 'g')) {
      throw new DomainError('ACTIVITY_INVALID', {
        detail:
          q.unit === 'atm'
            ? `${text} is given in atm, which is for a gas: write the gas with (g), e.g. "O2(g)", or give the dissolved species in mg/L or mol/L.`
            : `${text} is a gas: give its partial pressure in atm (air holds O2(g) at about 0.21 atm), or write the dissolved species without (g).`,
        fields: [{ pointer: `${pointer}/unit`, message: q.unit === 'atm' ? 'atm only for a gas written with (g)' : 'a gas needs atm' }],
      });
    }
    if (q.unit === 'atm') {
      checkAmount(q.value, 'atm', text, `${pointer}/value`);
      pressures.set(key, q.value);
      if (q.value > 0) givenSpecies.push({ key, text, species: s, log10Activity: Math.log10(q.value) });
      continue;
    }
    if (q.value <= 0) {
      throw new DomainError('ACTIVITY_INVALID', {
        detail: `The concentration of ${text} must be more than 0 for a potential (its logarithm enters Nernst); leave it out for unit activity.`,
        fields: [{ pointer: `${pointer}/value`, message: 'must be more than 0 in a cell evaluation' }],
      });
    }
    let molPerL: number;
    if (q.unit === 'mol/L') molPerL = q.value;
    else if (q.unit === 'mmol/L') molPerL = q.value / 1000;
    else if (q.unit === 'umol/L' || q.unit === 'µmol/L') molPerL = q.value / 1e6;
    else {
      // mass per volume of the species itself (ppm and ppb as mg/L and µg/L in dilute water)
      const mg = Number(UNIT_FACTORS.concentration[q.unit]) * q.value;
      molPerL = mg / 1000 / withPointer(pointer, () => deps.molarMassOf(text)).toNumber();
    }
    checkAmount(molPerL, 'molPerL', text, `${pointer}/value`, q.unit === 'mol/L' ? undefined : `${q.value} ${q.unit} (${molPerL.toPrecision(3)} mol/L)`);
    const gamma = s.charge === 0 ? 1 : daviesGamma(s.charge, I, A);
    if ((key === PH_KEYS[0] || key === PH_KEYS[1]) && input.pH !== undefined) {
      checkPHAgreement(input.pH, { key, text, pointer, log10Values: [Math.log10(molPerL), Math.log10(molPerL * gamma)] }, T, deps, 'concentration', false);
    }
    activities.set(key, molPerL * gamma);
    givenSpecies.push({ key, text, species: s, log10Activity: Math.log10(molPerL * gamma) });
    if (key !== PH_KEYS[0] && key !== PH_KEYS[1]) charges.set(key, s.charge);
  }
  const given = textsOf(seen);
  // a value given for the non-redox partner of a term (HOCl for OCl-, O2(g) for O2, O2 for O2(g)):
  // the term's activity follows from it, at the pH and along the feasibility search
  const link = linkGivenSpecies(
    [
      { half: oxHalf, name: 'oxidant couple' },
      { half: redHalf, name: 'reductant couple' },
    ],
    givenSpecies,
    { temperatureC: T, ledger: deps.ledger, solids: tabledSolids(deps.ledger) },
  );
  checkLinked(link, input.pH, seen);

  const molarMassRed = (() => {
    try {
      return deps.molarMassOf(input.reductant.from).toNumber();
    } catch {
      return undefined;
    }
  })();
  const gammaRed = red.from.charge === 0 ? 1 : daviesGamma(red.from.charge, I, A);
  const cell = evaluateCell({
    oxidantHalf: oxHalf,
    reductantHalf: redHalf,
    oxidantE0V: pOx.standardPotentialAtTemperatureV,
    reductantE0V: pRed.standardPotentialAtTemperatureV,
    pH: input.pH,
    temperatureC: T,
    activities,
    partialPressuresAtm: pressures,
    kw: deps.kwAt(T),
    constants: deps.constants,
    solids: tabledSolids(deps.ledger),
    linked: link.linked,
    reductantResidual: { activityCoefficient: gammaRed, ...(molarMassRed !== undefined ? { molarMassGPerMol: molarMassRed } : {}) },
  });
  const halfOut = (h: HalfReaction, p: PotentialResult, n: NernstResult) => ({
    equation: h.equation,
    electrons: h.electrons,
    standardPotentialV: p.standardPotentialV,
    temperatureCorrectionV: p.temperatureCorrectionV,
    waterIonisationShiftV: p.waterIonisationShiftV,
    standardPotentialAtTemperatureV: p.standardPotentialAtTemperatureV,
    potentialV: n.potentialV,
    valueUsed: p.usedValue,
    // Compact here: row ids, multipliers and source ids (the rows: GET /api/v1/tables/potentials,
    // the citations: GET /api/v1/tables/sources, the full derivation: POST /api/v1/couples/potential),
    // which keeps the answer small on the route that is called most.
    derivation: p.derivation.map((d) => ({ rowId: d.rowId, coefficient: d.coefficient, source: d.source })),
    unitActivity: [...n.notGiven],
  });
  const res = cell.reductantResidual;
  notes.push(...givenForSolids([cell.oxidant, cell.reductant], given));
  const linked = linkNotes(link, given, input.pH, 'either half-reaction');
  notes.push(...notInEitherHalf([cell.oxidant, cell.reductant], linked.unlinked, 'concentration'));
  notes.push(...linked.notes);
  for (const [half, where] of [[cell.oxidant, 'Oxidant couple'], [cell.reductant, 'Reductant couple']] as const) {
    const note = unitActivityNote(half.notGiven, where);
    if (note) notes.push(note);
  }
  // the halves' caveats on E° at the water's temperature; the rest (how a base-medium E° is carried,
  // tabled rows that disagree) is on couples/potential, to keep this most-called answer lean
  notes.push(...halfNotes([['Oxidant couple', pOx.temperatureNotes], ['Reductant couple', pRed.temperatureNotes]]));
  if (iBasis === 'none' && givenCharged([cell.oxidant, cell.reductant], charges, link.links)) {
    notes.push(
      gammaOneNote(
        'No ionicStrength, tdsMgPerL or conductanceUSPerCm given: activity coefficients taken as 1 (activities equal to the concentrations).',
        T,
        cell.slopeV,
        deps,
        (lg) => gammaShiftV(cell.oxidant, charges, lg, link.links) - gammaShiftV(cell.reductant, charges, lg, link.links),
        "this cell's E",
        "Give one of those fields for activities at the water's ionic strength.",
      ),
    );
  }
  // (what the residual means is stated once, in the response schema; a note only where it is shaky)
  if (res && (cell.oxidant.notGiven.length > 0 || cell.reductant.notGiven.length > 0)) {
    notes.push(
      'The equilibrium residual holds every other activity where it is, including those taken at unit activity (1 mol/L): ' +
        'it can be wrong by many orders of magnitude; give the concentrations of the species named above for a meaningful floor.',
    );
  }
  if (cell.feasible) notes.push(rateNote(ox.from, red.from, input.pH));
  const davies = I > 0;
  return {
    reaction: overall.equation,
    medium,
    electrons: cell.electrons,
    // E°(oxidant) − E°(reductant) at 25 °C, as the half-reactions' standardPotentialV; the pair at
    // the water's temperature (what Nernst and log K start from) beside it
    standardCellPotentialV: pOx.standardPotentialV - pRed.standardPotentialV,
    standardCellPotentialAtTemperatureV: cell.standardCellPotentialV,
    cellPotentialV: cell.cellPotentialV,
    deltaGkJPerMol: cell.deltaGkJPerMol,
    log10K: cell.log10K,
    feasible: cell.feasible,
    feasibilityLimitPH: cell.feasibilityLimitPH,
    feasibilityLimitsPH: [...cell.feasibilityLimitsPH],
    feasibleSide: cell.feasibleSide,
    equilibriumResidual: res ? { species: res.species, molPerL: res.molPerL, mgPerL: res.mgPerL } : null,
    activity: { ionicStrength: I, ionicStrengthBasis: iBasis, ionicStrengthRelation: iRelation, daviesA: davies ? A : null, relation: davies ? DAVIES_EQUATION.id : null },
    slopeV: cell.slopeV,
    halfReactions: {
      oxidant: halfOut(oxHalf, pOx, cell.oxidant),
      reductant: halfOut(redHalf, pRed, cell.reductant),
    },
    notes: [...gasNotes, ...notes, ...(cell.reductantResidualReason ? [cell.reductantResidualReason] : [])],
  };
}
