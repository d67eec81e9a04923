/**
 * A half-reaction's potential at the water's pH, temperature and activities (Nernst).
 *
 *   E = E°(T) − (RT ln10 / (nF)) · log10 Q,   Q = Π a(products)^ν / Π a(reactants)^ν  (e- excluded)
 *
 * Conventions (each reported with the activity it sets):
 *   H+      a = 10^−pH                          origin 'pH'
 *   OH-     a = Kw(T) / a(H+)                   origin 'Kw'
 *   H2O, pure liquids, solids (phase 's' or in `solids`)   a = 1   origin 'unit-by-convention'
 *   gases   a = partial pressure in atm if given, else 1 atm      origin 'given' / 'unit-by-convention'
 *   others  a from `activities` (keyed by speciesKey), else 1      origin 'given' / 'unit-by-convention'
 *   linked  a term not given itself whose activity follows from a given species through a
 *           non-redox equilibrium (HOCl given, OCl- in the half): log10 a = c0 + k·pH   origin 'converted'
 * The pH governs H+ and OH- (an entry for them in `activities` is not used).
 * The slope RT ln10/F is computed from R and F at the actual temperature.
 */
import { DomainError, pointerToken } from '../core/errors.js';
import type { Species } from '../chemistry/formula/types.js';
import type { HalfReaction } from '../chemistry/balance/types.js';
import { speciesKey } from '../chemistry/formula/index.js';
import { checkConstants, checkPH, checkTemperatureC, nernstSlopeV, type PhysicalConstants } from './constants.js';

/** speciesKey → activity (dimensionless), or partial pressure in atm for gases. */
export type ActivityMap = ReadonlyMap<string, number> | Readonly<Record<string, number>>;

export type ActivityOrigin = 'pH' | 'Kw' | 'given' | 'speciation' | 'converted' | 'unit-by-convention';
export type UnitReason = 'water' | 'solid' | 'pure-liquid' | 'gas-at-1-atm' | 'not-given';

export interface ActivityUsed {
  readonly key: string;
  readonly text: string;
  readonly side: 'reactant' | 'product';
  readonly coefficient: number;
  readonly activity: number;
  readonly log10Activity: number;
  readonly origin: ActivityOrigin;
  /** Why a unit activity was used (only when origin is 'unit-by-convention'). */
  readonly reason?: UnitReason;
}

/**
 * A group of acid–base forms whose total is known and whose split follows the pH
 * (e.g. free chlorine as HOCl / OCl-). The activity of form i at a pH is γᵢ·αᵢ·C_T, where the
 * fractions use the mixed constants pKa' (pKa corrected by the γ's) so that the activities
 * obey the thermodynamic pKa. A group's forms take their activities from it, overriding `activities`.
 */
export interface SpeciationGroup {
  /** Total of all forms, mol/L. */
  readonly totalMolPerL: number;
  /** speciesKey of each form, most protonated first (HOCl, OCl-). */
  readonly speciesKeys: readonly string[];
  /** Thermodynamic pKa values at the temperature, in order of dissociation (one fewer than forms). */
  readonly pKas: readonly number[];
  /** γ of each form (default 1). */
  readonly activityCoefficients?: readonly number[];
}

/**
 * The activity of a term that the caller did not give, converted from one given for a partner
 * species through a non-redox equilibrium of tabled log K (HOCl = H+ + OCl-, O2(g) = O2):
 *
 *   log10 a(pH) = log10ActivityAtPH0 + perPH·pH
 *
 * The given species is held fixed and the converted one follows the pH (the root finder
 * included): for HOCl given and OCl- in the half, log10 a(OCl-) = log10 a(HOCl) − pKa + pH,
 * i.e. log10ActivityAtPH0 = log10 a(HOCl) − pKa and perPH = 1. For a gas, a is its partial
 * pressure in atm. A term's own value in `activities`, `partialPressuresAtm` or a speciation
 * group takes precedence over its linked one.
 */
export interface LinkedActivity {
  readonly log10ActivityAtPH0: number;
  readonly perPH: number;
}

/** speciesKey → its linked activity. */
export type LinkedActivityMap = ReadonlyMap<string, LinkedActivity>;

export interface NernstInput {
  readonly half: HalfReaction;
  /** E° at the temperature (already temperature-corrected by the caller), V. */
  readonly standardPotentialV: number;
  readonly pH: number;
  readonly temperatureC: number;
  readonly activities?: ActivityMap;
  /** speciesKey (with "(g)") → partial pressure, atm. A gas's pressure may also be given in `activities`. */
  readonly partialPressuresAtm?: ActivityMap;
  /** speciesKeys to hold at unit activity as solids although their phase is not written. */
  readonly solids?: ReadonlySet<string>;
  /** Kw at the temperature (needed when OH- takes part). */
  readonly kw?: number;
  readonly speciation?: readonly SpeciationGroup[];
  /** Terms converted from a given partner species; they follow the pH (see LinkedActivity). */
  readonly linked?: LinkedActivityMap;
  readonly constants: PhysicalConstants;
}

export interface NernstResult {
  /** The half-reaction as written (a reduction). */
  readonly equation: string;
  readonly potentialV: number;
  readonly standardPotentialV: number;
  /** RT ln10 / F at the temperature, V per decade per electron (0.05916 V at 25 °C). */
  readonly slopeV: number;
  readonly electrons: number;
  readonly log10Q: number;
  readonly pH: number;
  readonly temperatureC: number;
  readonly activities: readonly ActivityUsed[];
  /** Texts of dissolved species left at unit activity because no activity was given. */
  readonly notGiven: readonly string[];
}

// ---------------------------------------------------------------- compiled half-reactions

type TermKind = 'H+' | 'OH-' | 'water' | 'solid' | 'pure-liquid' | 'gas' | 'dissolved';

interface CompiledTerm {
  readonly key: string;
  readonly text: string;
  readonly side: 'reactant' | 'product';
  readonly coefficient: number;
  /** products +ν, reactants −ν */
  readonly signed: number;
  readonly kind: TermKind;
}

/** A half-reaction prepared once for repeated evaluation (root finding over pH). */
export interface CompiledHalf {
  readonly half: HalfReaction;
  readonly electrons: number;
  readonly terms: readonly CompiledTerm[];
}

function isElectron(s: Species): boolean {
  return s.charge === -1 && Object.keys(s.composition).length === 0;
}

function hasComposition(s: Species, comp: Readonly<Record<string, number>>): boolean {
  const keys = Object.keys(s.composition).filter((k) => (s.composition[k] ?? 0) !== 0);
  const want = Object.keys(comp);
  return keys.length === want.length && want.every((k) => s.composition[k] === comp[k]);
}

function classify(s: Species, key: string, solids: ReadonlySet<string> | undefined): TermKind {
  if (s.phase === 'g') return 'gas';
  if (s.charge === 1 && hasComposition(s, { H: 1 })) return 'H+';
  if (s.charge === -1 && hasComposition(s, { H: 1, O: 1 })) return 'OH-';
  if (s.charge === 0 && hasComposition(s, { H: 2, O: 1 })) return 'water';
  // a species written without a phase is the solid when the tables know it only as one; an
  // explicit (aq) is the dissolved species (neutral Fe(OH)3, Fe(OH)2 complexes)
  if (s.phase === 's' || (s.phase === null && solids !== undefined && solids.has(key))) return 'solid';
  if (s.phase === 'l') return 'pure-liquid';
  return 'dissolved';
}

/** speciesKey per Species object: the dosing layer reuses cached reactions, so their species are keyed once. */
const KEY_CACHE = new WeakMap<Species, string>();
export function cachedSpeciesKey(s: Species): string {
  let k = KEY_CACHE.get(s);
  if (k === undefined) {
    k = speciesKey(s);
    KEY_CACHE.set(s, k);
  }
  return k;
}

/** Compiled halves by object identity: without a solids set (the common case), and per solids set. */
const COMPILED_CACHE = new WeakMap<HalfReaction, CompiledHalf>();
const COMPILED_BY_SOLIDS = new WeakMap<ReadonlySet<string>, WeakMap<HalfReaction, CompiledHalf>>();

/** Classify the terms of a half-reaction once. Throws BALANCE_NOT_REDOX if it transfers no electrons. */
export function compileHalf(half: HalfReaction, solids?: ReadonlySet<string>, pointer = '/half'): CompiledHalf {
  let cache = COMPILED_CACHE;
  if (solids !== undefined && solids.size > 0) {
    let bySet = COMPILED_BY_SOLIDS.get(solids);
    if (!bySet) {
      bySet = new WeakMap();
      COMPILED_BY_SOLIDS.set(solids, bySet);
    }
    cache = bySet;
  }
  const hit = cache.get(half);
  if (hit !== undefined) return hit;
  const compiled = compileHalfUncached(half, solids !== undefined && solids.size > 0 ? solids : undefined, pointer);
  cache.set(half, compiled);
  return compiled;
}

function compileHalfUncached(half: HalfReaction, solids: ReadonlySet<string> | undefined, pointer: string): CompiledHalf {
  let electronCoeff = 0;
  const terms: CompiledTerm[] = [];
  for (const t of half.terms) {
    const coefficient = Number(t.coefficient);
    if (isElectron(t.species)) {
      electronCoeff += t.side === 'reactant' ? coefficient : -coefficient;
      continue;
    }
    const key = cachedSpeciesKey(t.species);
    terms.push({ key, text: t.species.text, side: t.side, coefficient, signed: t.side === 'product' ? coefficient : -coefficient, kind: classify(t.species, key, solids) });
  }
  const electrons = electronCoeff !== 0 ? electronCoeff : half.electrons;
  if (!(electrons > 0)) {
    throw new DomainError('BALANCE_NOT_REDOX', {
      detail: `The half-reaction ${half.equation} takes up no electrons as a reduction; write it as oxidised form + n e- → reduced form.`,
      fields: [{ pointer, message: 'half-reaction must be a reduction with electrons on the reactant side' }],
    });
  }
  return { half, electrons, terms };
}

function lookup(map: ActivityMap | undefined, key: string): number | undefined {
  if (map === undefined) return undefined;
  if (map instanceof Map) return (map as ReadonlyMap<string, number>).get(key);
  const rec = map as Readonly<Record<string, number>>;
  return Object.prototype.hasOwnProperty.call(rec, key) ? rec[key] : undefined;
}

function entries(map: ActivityMap | undefined): [string, number][] {
  if (map === undefined) return [];
  if (map instanceof Map) return [...(map as ReadonlyMap<string, number>).entries()];
  return Object.entries(map as Readonly<Record<string, number>>);
}

/** The conditions shared by both halves of a cell; checked once. */
export interface Conditions {
  readonly temperatureC: number;
  readonly activities?: ActivityMap;
  readonly partialPressuresAtm?: ActivityMap;
  readonly kw?: number;
  readonly speciation?: readonly SpeciationGroup[];
  readonly linked?: LinkedActivityMap;
  readonly constants: PhysicalConstants;
}

/** Validate activities, pressures, Kw and speciation groups; errors point into the caller's input. */
export function checkConditions(c: Conditions): void {
  checkTemperatureC(c.temperatureC);
  checkConstants(c.constants);
  for (const [name, map] of [['activities', c.activities], ['partialPressuresAtm', c.partialPressuresAtm]] as const) {
    for (const [k, v] of entries(map)) {
      if (!Number.isFinite(v) || v <= 0) {
        throw new DomainError('ACTIVITY_INVALID', {
          detail: `The ${name === 'activities' ? 'activity' : 'partial pressure'} of ${k} must be a positive number; got ${String(v)}. Leave a species out to hold it at unit activity.`,
          params: { species: k, value: v },
          fields: [{ pointer: `/${name}/${pointerToken(k)}`, message: 'must be a positive number' }],
        });
      }
    }
  }
  for (const [k, l] of c.linked ?? []) {
    if (!Number.isFinite(l.log10ActivityAtPH0) || !Number.isFinite(l.perPH)) {
      throw new DomainError('ACTIVITY_INVALID', {
        detail: `The linked activity of ${k} must have a finite log10 activity at pH 0 and a finite slope per pH; got ${String(l.log10ActivityAtPH0)} and ${String(l.perPH)}.`,
        params: { species: k },
        fields: [{ pointer: `/linked/${pointerToken(k)}`, message: 'must be finite numbers' }],
      });
    }
  }
  if (c.kw !== undefined && (!Number.isFinite(c.kw) || c.kw <= 0)) {
    throw new DomainError('ACTIVITY_INVALID', { detail: `Kw must be a positive number; got ${String(c.kw)}.`, fields: [{ pointer: '/kw', message: 'Kw must be a positive number' }] });
  }
  (c.speciation ?? []).forEach((g, i) => {
    const bad = (pointer: string, message: string): never => {
      throw new DomainError('ACTIVITY_INVALID', { detail: `Speciation group ${i + 1}: ${message}.`, fields: [{ pointer: `/speciation/${i}${pointer}`, message }] });
    };
    if (!Number.isFinite(g.totalMolPerL) || g.totalMolPerL <= 0) bad('/totalMolPerL', 'the total must be a positive number of mol/L');
    if (g.speciesKeys.length < 2) bad('/speciesKeys', 'at least two forms are needed');
    if (g.pKas.length !== g.speciesKeys.length - 1) bad('/pKas', `${g.speciesKeys.length - 1} pKa values are needed for ${g.speciesKeys.length} forms`);
    g.pKas.forEach((p, j) => { if (!Number.isFinite(p)) bad(`/pKas/${j}`, 'pKa must be a finite number'); });
    if (g.activityCoefficients !== undefined) {
      if (g.activityCoefficients.length !== g.speciesKeys.length) bad('/activityCoefficients', 'one activity coefficient per form is needed');
      g.activityCoefficients.forEach((y, j) => { if (!Number.isFinite(y) || y <= 0) bad(`/activityCoefficients/${j}`, 'activity coefficient must be positive'); });
    }
  });
}

/** Mixed pKa' of each step of a group: pKa + log γ(base) − log γ(acid); the thermodynamic pKa without γ's. */
function mixedPKas(g: SpeciationGroup): number[] {
  const gam = g.activityCoefficients;
  return g.pKas.map((p, j) => (gam === undefined ? p : p + Math.log10(gam[j + 1]!) - Math.log10(gam[j]!)));
}

/** log10 of the fraction of form `form` at a pH, given the mixed pKa's (two passes, no allocation). */
function log10Fraction(mixed: readonly number[], form: number, pH: number): number {
  // log10 of [form j]/[form 0] = Σ_{i≤j} (pH − pKa'_i); normalise by the log-sum over all forms
  let acc = 0;
  let max = 0;
  let target = 0;
  for (let j = 0; j < mixed.length; j++) {
    acc += pH - mixed[j]!;
    if (acc > max) max = acc;
    if (j + 1 === form) target = acc;
  }
  let total = Math.pow(10, -max);
  acc = 0;
  for (let j = 0; j < mixed.length; j++) {
    acc += pH - mixed[j]!;
    total += Math.pow(10, acc - max);
  }
  return target - (Math.log10(total) + max);
}

/** log10 activity of form `form` of a group at a pH, given its mixed pKa's: log α + log C_T + log γ. */
function groupLog10Activity(g: SpeciationGroup, mixed: readonly number[], form: number, pH: number): number {
  const gam = g.activityCoefficients;
  return log10Fraction(mixed, form, pH) + Math.log10(g.totalMolPerL) + (gam === undefined ? 0 : Math.log10(gam[form]!));
}

/** log10 activity of each form of each speciation group at a pH. */
export function speciationLog10Activities(groups: readonly SpeciationGroup[] | undefined, pH: number): Map<string, number> {
  const out = new Map<string, number>();
  for (const g of groups ?? []) {
    const mixed = mixedPKas(g);
    g.speciesKeys.forEach((k, j) => out.set(k, groupLog10Activity(g, mixed, j, pH)));
  }
  return out;
}

/**
 * log10 Q of a compiled half as a function of pH, prepared once for the root finder:
 * log10 Q(pH) = fixed + perPH·pH + Σ ν·log10 a(speciated form at pH). Everything that does not
 * depend on the pH (given activities, pressures, log Kw, the constant part of a linked activity)
 * is summed once; a linked activity's slope adds to perPH.
 */
export function prepareLog10Q(ch: CompiledHalf, c: Conditions, pointer = '/half'): (pH: number) => number {
  let fixed = 0;
  let perPH = 0;
  const groups = c.speciation ?? [];
  const specIndex = new Map<string, { g: SpeciationGroup; mixed: number[]; form: number }>();
  for (const g of groups) {
    const mixed = mixedPKas(g);
    g.speciesKeys.forEach((k, form) => specIndex.set(k, { g, mixed, form }));
  }
  const spec: { mixed: number[]; form: number; nu: number }[] = [];
  for (const t of ch.terms) {
    switch (t.kind) {
      case 'H+': perPH -= t.signed; break;
      case 'OH-':
        if (c.kw === undefined) throw missingKw(ch, c, pointer);
        fixed += t.signed * Math.log10(c.kw);
        perPH += t.signed;
        break;
      case 'water': case 'solid': case 'pure-liquid': break;
      case 'gas': {
        const p = lookup(c.partialPressuresAtm, t.key) ?? lookup(c.activities, t.key);
        if (p !== undefined) { fixed += t.signed * Math.log10(p); break; }
        const l = c.linked?.get(t.key);
        if (l !== undefined) { fixed += t.signed * l.log10ActivityAtPH0; perPH += t.signed * l.perPH; }
        break;
      }
      case 'dissolved': {
        const s = specIndex.get(t.key);
        if (s !== undefined) {
          // the pH-independent part (log C_T + log γ) goes into `fixed`
          const gam = s.g.activityCoefficients;
          fixed += t.signed * (Math.log10(s.g.totalMolPerL) + (gam === undefined ? 0 : Math.log10(gam[s.form]!)));
          spec.push({ mixed: s.mixed, form: s.form, nu: t.signed });
          break;
        }
        const a = lookup(c.activities, t.key);
        if (a !== undefined) { fixed += t.signed * Math.log10(a); break; }
        // converted from a given partner: the partner is held, this term follows the pH
        const l = c.linked?.get(t.key);
        if (l !== undefined) { fixed += t.signed * l.log10ActivityAtPH0; perPH += t.signed * l.perPH; }
        break;
      }
    }
  }
  if (spec.length === 0) return (pH: number) => fixed + perPH * pH;
  return (pH: number) => {
    let q = fixed + perPH * pH;
    for (const s of spec) q += s.nu * log10Fraction(s.mixed, s.form, pH);
    return q;
  };
}

function missingKw(ch: CompiledHalf, c: Conditions, pointer: string): DomainError {
  return new DomainError('ACTIVITY_INVALID', {
    detail: `${ch.half.equation} involves OH-; its activity needs Kw at ${c.temperatureC} °C.`,
    fields: [{ pointer: '/kw', message: 'Kw at the temperature is needed when OH- takes part' }, { pointer, message: 'this half-reaction involves OH-' }],
  });
}

interface Evaluated {
  readonly log10Q: number;
  readonly used: ActivityUsed[];
  readonly notGiven: string[];
}

/**
 * log10 Q of a compiled half at a pH. With `report` false only the number is computed
 * (the root finder's path); with true each activity is reported with its origin.
 */
export function evaluateLog10Q(
  ch: CompiledHalf,
  pH: number,
  c: Conditions,
  spec: ReadonlyMap<string, number>,
  report: boolean,
  pointer = '/half',
): Evaluated {
  let log10Q = 0;
  const used: ActivityUsed[] = [];
  const notGiven: string[] = [];
  for (const t of ch.terms) {
    let logA: number;
    let origin: ActivityOrigin;
    let reason: UnitReason | undefined;
    switch (t.kind) {
      case 'H+':
        logA = -pH; origin = 'pH';
        break;
      case 'OH-':
        if (c.kw === undefined) throw missingKw(ch, c, pointer);
        logA = Math.log10(c.kw) + pH; origin = 'Kw';
        break;
      case 'water': logA = 0; origin = 'unit-by-convention'; reason = 'water'; break;
      case 'solid': logA = 0; origin = 'unit-by-convention'; reason = 'solid'; break;
      case 'pure-liquid': logA = 0; origin = 'unit-by-convention'; reason = 'pure-liquid'; break;
      case 'gas': {
        const p = lookup(c.partialPressuresAtm, t.key) ?? lookup(c.activities, t.key);
        const l = p === undefined ? c.linked?.get(t.key) : undefined;
        if (p !== undefined) { logA = Math.log10(p); origin = 'given'; }
        else if (l !== undefined) { logA = l.log10ActivityAtPH0 + l.perPH * pH; origin = 'converted'; }
        else { logA = 0; origin = 'unit-by-convention'; reason = 'gas-at-1-atm'; }
        break;
      }
      case 'dissolved': {
        const s = spec.get(t.key);
        if (s !== undefined) { logA = s; origin = 'speciation'; break; }
        const a = lookup(c.activities, t.key);
        const l = a === undefined ? c.linked?.get(t.key) : undefined;
        if (a !== undefined) { logA = Math.log10(a); origin = 'given'; }
        else if (l !== undefined) { logA = l.log10ActivityAtPH0 + l.perPH * pH; origin = 'converted'; }
        else { logA = 0; origin = 'unit-by-convention'; reason = 'not-given'; if (report) notGiven.push(t.text); }
        break;
      }
    }
    log10Q += t.signed * logA;
    if (report) {
      used.push({
        key: t.key, text: t.text, side: t.side, coefficient: t.coefficient,
        activity: Math.pow(10, logA), log10Activity: logA, origin,
        ...(reason !== undefined ? { reason } : {}),
      });
    }
  }
  return { log10Q, used, notGiven };
}

/** Nernst potential of one half-reaction (written as a reduction) at pH, temperature and activities. */
export function nernst(input: NernstInput): NernstResult {
  checkPH(input.pH);
  checkConditions(input);
  if (!Number.isFinite(input.standardPotentialV)) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: 'The standard potential must be a finite number of volts.', fields: [{ pointer: '/standardPotentialV', message: 'must be a finite number' }] });
  }
  const ch = compileHalf(input.half, input.solids);
  const spec = speciationLog10Activities(input.speciation, input.pH);
  const ev = evaluateLog10Q(ch, input.pH, input, spec, true);
  const slopeV = nernstSlopeV(input.temperatureC, input.constants);
  return {
    equation: input.half.equation,
    potentialV: input.standardPotentialV - (slopeV / ch.electrons) * ev.log10Q,
    standardPotentialV: input.standardPotentialV,
    slopeV,
    electrons: ch.electrons,
    log10Q: ev.log10Q,
    pH: input.pH,
    temperatureC: input.temperatureC,
    activities: ev.used,
    notGiven: ev.notGiven,
  };
}
