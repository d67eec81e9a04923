/**
 * Activities converted from a given partner species ("linked" activities).
 *
 * A caller may give the concentration of a species S that is in neither half-reaction but is
 * the acid–base or phase partner of a term T that is: HOCl given for a couple written with
 * OCl-, dissolved O2 given for a couple written with O2(g), or O2(g) in atm for a couple written
 * with dissolved O2. The link S → T is the couple S/T completed with H2O and H+ by the
 * half-reaction method of the balancer; when that completion moves no electrons (an acid–base
 * step, a Henry's-law equilibrium) and its log K at the water's temperature follows from the
 * tabled rows (reactionLog10K), T's activity follows from S's:
 *
 *   ν_T·log10 a(T) + ν_S·log10 a(S) + ν_H·log10 a(H+) = log10 K      (ν signed, products +; H2O at 1)
 *   log10 a(T) = c0 + k·pH,   c0 = (log10 K − ν_S·log10 a(S)) / ν_T,   k = ν_H / ν_T
 *
 * (a of a gas is its partial pressure in atm.) S is held at its given value and T follows the pH,
 * in Nernst and in the feasibility search alike (conditions.ts, LinkedActivity), so the couple
 * written with T gives the same E and the same limit as the couple written with S.
 *
 * Never guessed: T is linked only when T itself was not given, when exactly one given species
 * links to it, and when the log K is derivable; otherwise the value given for S is not used and
 * a note says so.
 */
import { isDomainError } from '../core/errors.js';
import type { Rational } from '../core/rational.js';
import { halfReaction, reactionVector, type HalfReaction } from '../chemistry/balance/index.js';
import { parseEquation } from '../chemistry/formula/index.js';
import type { Species } from '../chemistry/formula/types.js';
import { reactionLog10K, type DerivationStep } from '../chemistry/thermo/derive.js';
import { KEY_HYDROXIDE, KEY_PROTON, KEY_WATER, type Ledger } from '../chemistry/thermo/ledger.js';
import { cachedSpeciesKey, compileHalf, type LinkedActivity } from './conditions.js';

/** A species the caller gave a value for. */
export interface GivenSpecies {
  readonly key: string;
  /** As the caller wrote it. */
  readonly text: string;
  readonly species: Species;
  /** log10 of its activity (dissolved: concentration × γ) or of its partial pressure in atm (gas). */
  readonly log10Activity: number;
}

/** One half-reaction and what the notes call it ("oxidant couple"). */
export interface NamedHalf {
  readonly half: HalfReaction;
  readonly name: string;
}

/** A term of a half whose activity is converted from a given partner. */
export interface Link {
  readonly termKey: string;
  readonly termText: string;
  readonly termIsGas: boolean;
  /** Names of the halves the term is in. */
  readonly halves: readonly string[];
  readonly from: GivenSpecies;
  /** The partner's completion S → T as balanced (no electrons). */
  readonly equation: string;
  /** log10 K of `equation` at the temperature. */
  readonly log10K: number;
  readonly temperatureC: number;
  readonly derivation: readonly DerivationStep[];
  /** The derivation's caveats (a row used outside its temperature range, …). */
  readonly derivationNotes: readonly string[];
  /** ν of the given species, the term and H+ in `equation` (signed, products +). */
  readonly nu: { readonly given: number; readonly term: number; readonly proton: number };
  /** d log10 a(T) / d log10 a(S) = −ν_S/ν_T (how an activity coefficient of S carries into T). */
  readonly perLog10Given: number;
  readonly linked: LinkedActivity;
}

export interface LinkResult {
  /** By the term's species key. */
  readonly links: ReadonlyMap<string, Link>;
  /** What the Nernst and cell code take (Conditions.linked). */
  readonly linked: ReadonlyMap<string, LinkedActivity>;
  /** Keys of the given species whose value set a converted term, or that a term given itself overrode (said in notes). */
  readonly usedGiven: ReadonlySet<string>;
  /** Why a non-redox partner was not linked (several candidates, log K not derivable). */
  readonly notes: readonly string[];
}

interface Completion {
  readonly equation: string;
  readonly vector: ReadonlyMap<string, Rational>;
}

/**
 * S → T completed with H2O and H+ by the half-reaction method, when it moves no electrons: the
 * balancer then stops with BALANCE_NOT_REDOX and names the completed equation (params.equation).
 * null when the completion moves electrons (a redox couple: no link) or does not exist.
 */
const completionMemo = new Map<string, Completion | null>();
function nonRedoxCompletion(from: Species, fromKey: string, to: Species, toKey: string): Completion | null {
  const memoKey = `${fromKey}|${toKey}`;
  const hit = completionMemo.get(memoKey);
  if (hit !== undefined) return hit;
  let out: Completion | null = null;
  try {
    halfReaction({ oxidised: from, reduced: to, medium: 'acid' });
    out = null; // electrons move: S and T are two oxidation states, not partners
  } catch (e) {
    if (!isDomainError(e)) throw e;
    const equation = e.params['equation'];
    if (e.code === 'BALANCE_NOT_REDOX' && typeof equation === 'string') {
      try {
        const vector = reactionVector(parseEquation(equation));
        const onlyAux = [...vector.keys()].every((k) => k === fromKey || k === toKey || k === KEY_PROTON || k === KEY_WATER);
        if (onlyAux && (vector.get(fromKey)?.sign() ?? 0) < 0 && (vector.get(toKey)?.sign() ?? 0) > 0) out = { equation, vector };
      } catch (pe) {
        if (!isDomainError(pe)) throw pe;
        out = null;
      }
    }
  }
  if (completionMemo.size > 2048) completionMemo.clear();
  completionMemo.set(memoKey, out);
  return out;
}

const PH_OR_WATER = new Set([KEY_PROTON, KEY_HYDROXIDE, KEY_WATER]);

function isSolid(s: Species, key: string, solids: ReadonlySet<string>): boolean {
  return s.phase === 's' || s.phase === 'l' || (s.phase === null && solids.has(key));
}

interface Candidate {
  readonly key: string;
  readonly species: Species;
  readonly gas: boolean;
  readonly halves: string[];
}

/**
 * Link each given species that is in no half-reaction term to the half's term it is the
 * non-redox partner of (see the file comment). `given` lists every species given, including
 * those in the halves (a term given itself is never linked).
 */
export function linkGivenSpecies(
  halves: readonly NamedHalf[],
  given: readonly GivenSpecies[],
  options: { readonly temperatureC: number; readonly ledger: Ledger; readonly solids: ReadonlySet<string> },
): LinkResult {
  const givenKeys = new Set(given.map((g) => g.key));
  const termKeys = new Set<string>();
  const candidates = new Map<string, Candidate>();
  /** Dissolved or gas terms given themselves: a partner given too is not converted, and the note says so. */
  const givenTerms = new Map<string, Species>();
  for (const { half, name } of halves) {
    const kinds = new Map(compileHalf(half, options.solids).terms.map((t) => [t.key, t.kind]));
    for (const t of half.terms) {
      const key = cachedSpeciesKey(t.species);
      termKeys.add(key);
      const kind = kinds.get(key);
      if (kind !== 'dissolved' && kind !== 'gas') continue;
      if (givenKeys.has(key)) {
        givenTerms.set(key, t.species);
        continue;
      }
      const c = candidates.get(key);
      if (c) {
        if (!c.halves.includes(name)) c.halves.push(name);
      } else candidates.set(key, { key, species: t.species, gas: kind === 'gas', halves: [name] });
    }
  }

  const found = new Map<string, Omit<Link, 'linked' | 'perLog10Given'>[]>();
  const notes: string[] = [];
  const overridden = new Set<string>();
  for (const g of given) {
    if (termKeys.has(g.key) || PH_OR_WATER.has(g.key) || isSolid(g.species, g.key, options.solids) || !Number.isFinite(g.log10Activity)) continue;
    // the partner of a term that was given itself: two values for one species; the term's own value stands
    for (const [key, term] of givenTerms) {
      const completion = nonRedoxCompletion(g.species, g.key, term, key);
      if (completion === null) continue;
      overridden.add(g.key);
      notes.push(
        `${g.text} and ${term.text} were both given, and ${g.text} would set ${term.text} through ${completion.equation}: the value given for ${term.text} itself was used, and ${g.text} was not converted. Give one of them.`,
      );
    }
    for (const t of candidates.values()) {
      const completion = nonRedoxCompletion(g.species, g.key, t.species, t.key);
      if (completion === null) continue;
      let k;
      try {
        k = reactionLog10K(parseEquation(completion.equation), options.ledger, { temperatureC: options.temperatureC });
      } catch (e) {
        if (!isDomainError(e)) throw e;
        notes.push(
          `${g.text} and ${t.species.text} of the ${t.halves.join(' and the ')} are linked by ${completion.equation} (no electrons move), ` +
            `but the tables give no log K for it (${e.fields[0]?.message ?? e.detail}); ${t.species.text} was not converted from ${g.text}.`,
        );
        continue;
      }
      const nu = {
        given: completion.vector.get(g.key)!.toNumber(),
        term: completion.vector.get(t.key)!.toNumber(),
        proton: completion.vector.get(KEY_PROTON)?.toNumber() ?? 0,
      };
      const list = found.get(t.key) ?? [];
      list.push({
        termKey: t.key,
        termText: t.species.text,
        termIsGas: t.gas,
        halves: t.halves,
        from: g,
        equation: completion.equation,
        log10K: k.log10K,
        temperatureC: options.temperatureC,
        derivation: k.derivation,
        derivationNotes: k.notes,
        nu,
      });
      found.set(t.key, list);
    }
  }

  const links = new Map<string, Link>();
  const linked = new Map<string, LinkedActivity>();
  const usedGiven = new Set<string>();
  for (const [termKey, list] of found) {
    if (list.length > 1) {
      const names = list.map((l) => l.from.text);
      notes.push(
        `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]} were each given and each would set ${list[0]!.termText} of the ${list[0]!.halves.join(' and the ')} ` +
          `(${list.map((l) => l.equation).join('; ')}): they could disagree, so none of them is converted; give ${list[0]!.termText} itself.`,
      );
      continue;
    }
    const l = list[0]!;
    const la: LinkedActivity = {
      log10ActivityAtPH0: (l.log10K - l.nu.given * l.from.log10Activity) / l.nu.term,
      perPH: l.nu.proton / l.nu.term,
    };
    links.set(termKey, { ...l, perLog10Given: -l.nu.given / l.nu.term, linked: la });
    linked.set(termKey, la);
    usedGiven.add(l.from.key);
  }
  for (const k of overridden) usedGiven.add(k);
  return { links, linked, usedGiven, notes };
}

/** 4 significant figures; powers of ten for the small and large numbers activities are. */
function num(x: number): string {
  const m = Math.abs(x);
  return m === 0 || (m >= 1e-3 && m < 1e4) ? Number(x.toPrecision(4)).toString() : x.toExponential(3);
}

/** " + 0.5·pH", " − 7.537" (what: the symbol after the number, '' for a constant). */
function signed(x: number, what: string): string {
  if (x === 0) return '';
  const m = Math.abs(x);
  const factor = what === '' ? num(m) : m === 1 ? what : `${num(m)}·${what}`;
  return ` ${x < 0 ? '−' : '+'} ${factor}`;
}

/**
 * The note of a converted activity: the link, the tabled rows (ids and sources) its log K comes
 * from, the relation, and the converted activity at the water's pH.
 */
export function linkNote(l: Link, pH: number, inWhat: string): string {
  const sym = (gas: boolean, text: string) => `${gas ? 'p' : 'a'}(${text})`;
  const fromSym = sym(l.from.species.phase === 'g', l.from.text);
  const toSym = sym(l.termIsGas, l.termText);
  const rows = l.derivation.map((d) => `${d.rowId}${d.coefficient === '1' ? '' : ` ×(${d.coefficient})`} (${d.source})`).join(', ');
  const c = l.log10K / l.nu.term;
  const relation = `log10 ${toSym} = ${l.perLog10Given === 1 ? '' : `${num(l.perLog10Given)}·`}log10 ${fromSym}${signed(c, '')}${signed(l.linked.perPH, 'pH')}`;
  const value = Math.pow(10, l.linked.log10ActivityAtPH0 + l.linked.perPH * pH);
  const units = (gas: boolean) => (gas ? ' atm' : '');
  const follows =
    l.linked.perPH !== 0
      ? ` ${l.from.text} is held at the value given and ${l.termText} follows the pH, also in the search for the feasibility limit.`
      : '';
  return (
    `${l.from.text} is not in ${inWhat}; ${l.termText} of the ${l.halves.join(' and the ')} is converted from it through ${l.equation} ` +
    `(log10 K = ${num(l.log10K)} at ${l.temperatureC} °C from the tabled ${l.derivation.length > 1 ? 'rows' : 'row'} ${rows}): ${relation}, ` +
    `with ${fromSym} = ${num(Math.pow(10, l.from.log10Activity))}${units(l.from.species.phase === 'g')}, gives ${toSym} = ${num(value)}${units(l.termIsGas)} at pH ${num(pH)}.` +
    follows +
    (l.derivationNotes.length > 0 ? ` ${l.derivationNotes.join(' ')}` : '')
  );
}
