/**
 * Standard potential of any half-reaction that is a linear combination of tabled reactions.
 *
 * 1. A target that is a tabled reaction up to a multiple (positive or negative) uses that row:
 *    E° of the reduction is the tabled value; multiplying changes nothing, reversing gives the
 *    oxidation (ΔG° changes sign, the reduction's E° is the same number).
 * 2. Otherwise the smallest set of tabled rows (at most MAX_ROWS) whose exact rational sum is the
 *    target: ΔG° = Σ cᵢ ΔG°ᵢ with ΔG°(redox) = −nFE°, ΔG°(equilibrium) = −RT ln K, and
 *    E° = −ΔG°/(nF) at 298.15 K. Ties: the redox rows of the most preferred sources, then the
 *    fewest equilibrium rows.
 * The search: every species other than H+, OH-, H2O and e- that appears once in the target and
 * the chosen rows must be matched by another row containing it; when all are matched the exact
 * linear system is solved; rows of only matched species (such as Kw) may still be added.
 * Results are cached per ledger by the target's canonical key.
 */
import { DomainError } from '../../core/errors.js';
import { Rational } from '../../core/rational.js';
import type { Reaction } from '../balance/types.js';
import { reactionVector } from '../balance/reaction.js';
import { parseEquation, type ParsedEquation } from '../formula/equation.js';
import {
  KEY_ELECTRON,
  KEY_HYDROXIDE,
  KEY_PROTON,
  KEY_WATER,
  UBIQUITOUS_KEYS,
  classKeyOf,
  nernstSlopeV,
  vectorEquation,
  type Ledger,
  type LedgerClass,
  type LedgerRow,
  type LedgerRowKind,
  type ReactionVector,
} from './ledger.js';
import { checkTemperatureC, rowAtTemperature } from './temperature.js';

/** Most tabled rows combined for one derivation. */
export const MAX_ROWS = 4;
/** A tabled value further than this from its own derivation is flagged (V). */
export const FLAG_THRESHOLD_V = 0.005;

export type Target = string | ParsedEquation | Reaction;

export interface DerivationStep {
  readonly rowId: string;
  readonly equation: string;
  /** Multiplier of the row as tabled, as an exact rational ("-1", "3/5"); negative = reversed. */
  readonly coefficient: string;
  readonly kind: LedgerRowKind;
  /** What the source printed ("E° = 1.507 V", "pK = 3.25", …). */
  readonly valueText: string;
  readonly source: string;
}

export interface Alternative {
  readonly standardPotentialV: number;
  readonly rows: readonly { readonly rowId: string; readonly source: string }[];
  /** What differs from the combination used. */
  readonly differs: string;
}

export interface TabledCheck {
  readonly tabledV: number;
  readonly derivedV: number;
  /** tabled − derived (V). */
  readonly discrepancyV: number;
  readonly flagged: boolean;
  /** The other rows the derived value comes from. */
  readonly derivation: readonly DerivationStep[];
}

export interface PotentialResult {
  /** The target written from its vector: reactants = products. */
  readonly equation: string;
  readonly direction: 'reduction' | 'oxidation';
  /** Electrons transferred by the target as written. */
  readonly electrons: number;
  /** E° of the reduction at 25 °C: the value used (tabled, derived or override). */
  readonly standardPotentialV: number;
  /** E° with the sign of the reaction as written (+E° for a reduction, −E° for an oxidation). */
  readonly asWrittenPotentialV: number;
  /** ΔG° of the reaction as written at 25 °C, kJ/mol. */
  readonly deltaGkJPerMol: number;
  /** log10 K of the reaction as written at 25 °C. */
  readonly log10K: number;
  readonly temperatureC: number;
  /** E°(T) − E°(25 °C) of the reduction from the tables' temperature data (0 when turned off). */
  readonly temperatureCorrectionV: number;
  /**
   * For a half-reaction written with OH- whose E° is carried from its acid form: the change of
   * that carry (water's ionisation) between 25 °C and the temperature; 0 otherwise. Applied
   * whether or not the temperature correction of E° is on, so that both forms give one potential.
   */
  readonly waterIonisationShiftV: number;
  /** The notes on E° away from 25 °C (temperature data extrapolated or missing, correction off); each is also in notes. */
  readonly temperatureNotes: readonly string[];
  readonly standardPotentialAtTemperatureV: number;
  readonly derivation: readonly DerivationStep[];
  readonly usedValue: 'tabled' | 'derived' | 'override';
  /** For a tabled value: the same couple derived from other rows, and whether they disagree by more than 5 mV. */
  readonly tabledCheck?: TabledCheck;
  /** What the tables give (null when not derivable), whatever value was used. */
  readonly tablesStandardPotentialV: number | null;
  readonly override?: SiteValue & { readonly carriedV?: number };
  /** Other tabled rows that would give a different value for the same couple. */
  readonly alternatives: readonly Alternative[];
  readonly notes: readonly string[];
}

/**
 * A site value of E° (25 °C) and where it comes from. `medium` says which form of the couple the
 * value is for: 'acid' (the default: the couple written with H+, or with neither H+ nor OH-) or
 * 'base' (written with OH-). A value for the other form is carried to the form computed through
 * the ionisation of water, as the tabled values are.
 */
export interface SiteValue {
  readonly valueV: number;
  readonly source: string;
  readonly medium?: 'acid' | 'base';
}

export interface PotentialOptions {
  readonly override?: SiteValue;
  /** Water temperature, °C (default 25). */
  readonly temperatureC?: number;
  /** Apply the tables' temperature data (default true). */
  readonly temperatureCorrection?: boolean;
  /**
   * 'as-written' (default): a tabled reaction uses its own row. 'acid': a half-reaction written
   * with OH- takes its E° from the same reaction written with H+ (its acid form, tabled or
   * derived) plus water ionisation, so that its potential at a given pH is the same whichever
   * form carries the calculation; a base-medium row tabled for it is then a check (tabledCheck)
   * and an alternative, flagged when it disagrees by more than 5 mV.
   */
  readonly basis?: 'as-written' | 'acid';
}

/** One row of a combination with its multiplier (of the row as tabled). */
export interface CombinationPart {
  readonly row: LedgerRow;
  readonly coefficient: Rational;
}

export interface Combination {
  readonly parts: readonly CombinationPart[];
  /** Σ cᵢ gᵢ at 25 °C (V). */
  readonly g25: number;
  /** The same sum split into its exact part (potential rows, rational) and the rest (log K rows). */
  readonly g25Exact: Rational;
  readonly g25Float: number;
}

/** E° of the reduction for a combination summing to a target with signed electron coefficient e. */
export function reductionPotentialV(c: Pick<Combination, 'g25Exact' | 'g25Float'>, electronCoefficient: Rational): number {
  const n = electronCoefficient.neg();
  return c.g25Exact.div(n).toNumber() + c.g25Float / n.toNumber();
}

interface SearchOptions {
  readonly exclude: ReadonlySet<string>;
  /** Prefer this source's rows within a class (consistency checks use the checked row's source). */
  readonly preferSource?: string;
}

// ---------------------------------------------------------------- targets

/** The target as a reaction vector. Strings are parsed as equations. */
export function targetVector(target: Target, pointer = '/equation'): Map<string, Rational> {
  if (typeof target === 'string') {
    try {
      return reactionVector(parseEquation(target));
    } catch (e) {
      if (e instanceof DomainError) throw e.under(pointer);
      throw e;
    }
  }
  return reactionVector(target);
}

// ---------------------------------------------------------------- exact linear solve

/** Solve Σ xⱼ columnⱼ = target exactly; null unless the solution exists, is unique and has no zero xⱼ. */
export function solveCombination(columns: readonly ReactionVector[], target: ReactionVector): Rational[] | null {
  const keys = new Set<string>(target.keys());
  for (const c of columns) for (const k of c.keys()) keys.add(k);
  const m = columns.length;
  const A: Rational[][] = [...keys].map((k) => [...columns.map((c) => c.get(k) ?? Rational.ZERO), target.get(k) ?? Rational.ZERO]);
  let r = 0;
  for (let col = 0; col < m; col++) {
    let p = r;
    while (p < A.length && A[p]![col]!.isZero()) p++;
    if (p === A.length) return null; // dependent columns: not unique (a smaller set would do)
    [A[r], A[p]] = [A[p]!, A[r]!];
    const pivotRow = A[r]!;
    const pivot = pivotRow[col]!;
    for (let j = col; j <= m; j++) pivotRow[j] = pivotRow[j]!.div(pivot);
    for (let i = 0; i < A.length; i++) {
      if (i === r) continue;
      const f = A[i]![col]!;
      if (f.isZero()) continue;
      for (let j = col; j <= m; j++) A[i]![j] = A[i]![j]!.sub(f.mul(pivotRow[j]!));
    }
    r++;
  }
  for (let i = r; i < A.length; i++) if (!A[i]![m]!.isZero()) return null;
  const x = A.slice(0, m).map((row) => row[m]!);
  return x.some((v) => v.isZero()) ? null : x;
}

// ---------------------------------------------------------------- search

interface ClassSolution {
  readonly classes: readonly string[];
  readonly coefficients: readonly Rational[];
}

function specificKeysOf(v: ReactionVector): string[] {
  return [...v.keys()].filter((k) => !UBIQUITOUS_KEYS.has(k));
}

/** All combinations of the smallest size ≥ minSize (≤ MAX_ROWS classes) whose exact sum is the target. */
function searchClasses(target: ReactionVector, ledger: Ledger, exclude: ReadonlySet<string>, minSize = 1): ClassSolution[] {
  const direct = ledger.classes.get(classKeyOf(target).key);
  if (minSize <= 1 && direct && !exclude.has(direct.key)) {
    const x = solveCombination([direct.vector], target);
    if (x) return [{ classes: [direct.key], coefficients: x }];
  }
  const targetKeys = specificKeysOf(target);
  const allClasses = [...ledger.classes.values()].filter((c) => !exclude.has(c.key));

  for (let size = Math.max(1, minSize); size <= MAX_ROWS; size++) {
    const found: ClassSolution[] = [];
    const visited = new Set<string>();
    const counts = new Map<string, number>();
    for (const k of targetKeys) counts.set(k, 1);
    const chosen: LedgerClass[] = [];

    const add = (c: LedgerClass, d: 1 | -1): void => {
      for (const k of c.specificKeys) {
        const n = (counts.get(k) ?? 0) + d;
        if (n === 0) counts.delete(k);
        else counts.set(k, n);
      }
    };
    const dfs = (): void => {
      const sig = chosen
        .map((c) => c.key)
        .sort()
        .join('\n');
      if (visited.has(sig)) return;
      visited.add(sig);
      const unmatched = [...counts].filter(([, n]) => n === 1).map(([k]) => k);
      if (unmatched.length > 0) {
        if (chosen.length === size) return;
        let best: string | undefined;
        let bestCount = Infinity;
        for (const k of unmatched) {
          const n = ledger.classesBySpecies.get(k)?.length ?? 0;
          if (n < bestCount) {
            best = k;
            bestCount = n;
          }
        }
        for (const key of ledger.classesBySpecies.get(best!) ?? []) {
          const c = ledger.classes.get(key)!;
          if (exclude.has(key) || chosen.includes(c)) continue;
          chosen.push(c);
          add(c, 1);
          dfs();
          add(c, -1);
          chosen.pop();
        }
        return;
      }
      if (chosen.length === size) {
        const x = solveCombination(
          chosen.map((c) => c.vector),
          target,
        );
        if (x) found.push({ classes: chosen.map((c) => c.key), coefficients: x });
        return;
      }
      for (const c of allClasses) {
        if (chosen.includes(c) || !c.specificKeys.every((k) => counts.has(k))) continue;
        chosen.push(c);
        add(c, 1);
        dfs();
        add(c, -1);
        chosen.pop();
      }
    };
    dfs();
    if (found.length > 0) return found;
  }
  return [];
}

function pickMember(cls: LedgerClass, preferSource: string | undefined) {
  if (preferSource !== undefined) {
    const same = cls.members.find((m) => m.row.source === preferSource);
    if (same) return same;
  }
  return cls.members[0]!;
}

function toCombination(sol: ClassSolution, ledger: Ledger, choose: (cls: LedgerClass) => { row: LedgerRow; lambda: Rational }): Combination {
  const parts = sol.classes.map((key, i) => {
    const cls = ledger.classes.get(key)!;
    const m = choose(cls);
    return { row: m.row, coefficient: sol.coefficients[i]!.div(m.lambda) };
  });
  return combinationOf(parts, ledger);
}

/** Σ cᵢ gᵢ at temperature T (K), with the notes of rows held at 25 °C or used out of range. */
export function combinationG(parts: readonly CombinationPart[], ledger: Ledger, temperatureK: number): { g: number; notes: string[] } {
  let exact = Rational.ZERO;
  let float = 0;
  const notes: string[] = [];
  const atStandard = Math.abs(temperatureK - ledger.constants.T25) < 1e-9;
  for (const p of parts) {
    if (atStandard && p.row.gExact) {
      exact = exact.add(p.coefficient.mul(p.row.gExact));
      continue;
    }
    const r = rowAtTemperature(p.row, temperatureK, ledger.constants);
    float += p.coefficient.toNumber() * r.g;
    if (r.note) notes.push(r.note);
  }
  return { g: exact.toNumber() + float, notes };
}

interface Scored {
  readonly sol: ClassSolution;
  readonly combo: Combination;
  readonly score: readonly number[];
  readonly ids: string;
}

function scoreOf(combo: Combination, preferSource: string | undefined): number[] {
  const pref = (row: LedgerRow): number => (preferSource !== undefined && row.source === preferSource ? 0 : row.sourcePreference);
  const redox = combo.parts.filter((p) => p.row.kind === 'redox').map((p) => pref(p.row));
  const eq = combo.parts.filter((p) => p.row.kind === 'equilibrium');
  return [Math.max(0, ...redox), eq.length, redox.reduce((a, b) => a + b, 0) + eq.reduce((a, p) => a + pref(p.row), 0)];
}

function compareScores(a: Scored, b: Scored): number {
  for (let i = 0; i < a.score.length; i++) if (a.score[i] !== b.score[i]) return a.score[i]! - b.score[i]!;
  return a.ids < b.ids ? -1 : a.ids > b.ids ? 1 : 0;
}

export interface DerivedCombination {
  readonly combination: Combination;
  readonly alternatives: readonly { readonly combination: Combination; readonly differs: string }[];
  /** True when the target is itself a tabled reaction (up to a multiple). */
  readonly tabled: boolean;
}

/**
 * The best combination of tabled rows for the target vector, or null when none exists.
 * Cached per ledger by the target's canonical key and the search options.
 */
export function deriveCombination(target: ReactionVector, ledger: Ledger, options: SearchOptions = { exclude: new Set() }): DerivedCombination | null {
  const { key, scale } = classKeyOf(target);
  const cacheKey = `derive\n${key}\n${[...options.exclude].sort().join(',')}\n${options.preferSource ?? ''}`;
  let unit = ledger.cache.get(cacheKey) as DerivedCombination | null | undefined;
  if (unit === undefined) {
    const normalized = new Map([...target].map(([k, c]) => [k, c.div(scale)]));
    unit = computeCombination(normalized, ledger, options);
    ledger.cache.set(cacheKey, unit);
  }
  if (unit === null) return null;
  const scaleCombo = (c: Combination): Combination => ({
    parts: c.parts.map((p) => ({ row: p.row, coefficient: p.coefficient.mul(scale) })),
    g25: c.g25 * scale.toNumber(),
    g25Exact: c.g25Exact.mul(scale),
    g25Float: c.g25Float * scale.toNumber(),
  });
  return {
    combination: scaleCombo(unit.combination),
    alternatives: unit.alternatives.map((a) => ({ combination: scaleCombo(a.combination), differs: a.differs })),
    tabled: unit.tabled,
  };
}

function computeCombination(target: ReactionVector, ledger: Ledger, options: SearchOptions): DerivedCombination | null {
  const solutions = searchClasses(target, ledger, options.exclude);
  if (solutions.length === 0) return null;
  const scored: Scored[] = solutions
    .map((sol) => {
      const combo = toCombination(sol, ledger, (cls) => pickMember(cls, options.preferSource));
      return { sol, combo, score: scoreOf(combo, options.preferSource), ids: combo.parts.map((p) => p.row.id).sort().join(',') };
    })
    .sort(compareScores);
  const best = scored[0]!;
  const alternatives: { combination: Combination; differs: string }[] = [];
  // Other rows for the same reactions, one swap at a time.
  best.sol.classes.forEach((key, i) => {
    const cls = ledger.classes.get(key)!;
    const used = best.combo.parts[i]!.row;
    for (const m of cls.members) {
      if (m.row === used) continue;
      const combo = toCombination(best.sol, ledger, (c) => (c.key === key ? m : pickMember(c, options.preferSource)));
      alternatives.push({ combination: combo, differs: `${m.row.id} (${m.row.source}) instead of ${used.id} (${used.source})` });
    }
  });
  // Other combinations of the same size.
  for (const s of scored.slice(1)) alternatives.push({ combination: s.combo, differs: 'another combination of the same number of rows' });
  return {
    combination: best.combo,
    alternatives: alternatives.slice(0, 12),
    tabled: best.sol.classes.length === 1 && best.sol.classes[0] === classKeyOf(target).key,
  };
}

/**
 * Every combination of the smallest size ≥ minSize, best first (not cached; for reports).
 * Used by the consistency report to show a couple derived more than one way.
 */
export function deriveAllCombinations(
  target: ReactionVector,
  ledger: Ledger,
  options: SearchOptions & { readonly minSize: number },
): { readonly size: number; readonly combinations: readonly Combination[] } {
  const solutions = searchClasses(target, ledger, options.exclude, options.minSize);
  const scored = solutions
    .map((sol) => {
      const combo = toCombination(sol, ledger, (cls) => pickMember(cls, options.preferSource));
      return { sol, combo, score: scoreOf(combo, options.preferSource), ids: combo.parts.map((p) => p.row.id).sort().join(',') };
    })
    .sort(compareScores);
  return { size: solutions[0]?.classes.length ?? 0, combinations: scored.map((s) => s.combo) };
}

// ---------------------------------------------------------------- the public function

/** The rows of a combination as derivation steps (each with its multiplier and source). */
export function steps(c: Combination): DerivationStep[] {
  return c.parts.map((p) => ({
    rowId: p.row.id,
    equation: p.row.equation,
    coefficient: p.coefficient.toString(),
    kind: p.row.kind,
    valueText: p.row.valueText,
    source: p.row.source,
  }));
}

function notDerivable(equation: string, reason: string): DomainError {
  return new DomainError('POTENTIAL_NOT_DERIVABLE', {
    detail: `No combination of up to ${MAX_ROWS} tabled reactions gives ${equation}: ${reason}. Give a site value with its source (standardPotentialV) or add the missing reaction with its source to tables/potentials.json or tables/equilibria.json.`,
    params: { equation },
    fields: [{ pointer: '/equation', message: reason }],
  });
}

/**
 * E° (reduction, 25 °C) of a half-reaction given as equation text, a parsed equation, or a
 * balanced (half-)reaction, from the ledger; with its derivation, temperature correction,
 * a check of a tabled value against its own derivation, and the alternatives the tables hold.
 */
export function standardPotential(target: Target, ledger: Ledger, options: PotentialOptions = {}): PotentialResult {
  const temperatureC = options.temperatureC ?? 25;
  checkTemperatureC(temperatureC);
  // Results are pure functions of (reaction, temperature, options): keep the recent ones,
  // keyed by the equation text (which fixes the reaction) so a hit costs no parsing.
  const text = typeof target === 'string' ? target.trim() : 'terms' in target ? target.equation : target.text;
  const memoKey = `potential\n${text}\n${temperatureC}\n${options.temperatureCorrection !== false}\n${options.basis ?? 'as-written'}\n${
    options.override ? `${options.override.valueV}\n${options.override.source}\n${options.override.medium ?? 'acid'}` : ''
  }`;
  const memo = ledger.cache.get(memoKey) as PotentialResult | undefined;
  if (memo) return memo;
  const result = computePotential(targetVector(target), ledger, options, temperatureC);
  if (ledger.cache.size > MEMO_LIMIT) ledger.cache.clear();
  ledger.cache.set(memoKey, result);
  return result;
}

/** Water ionisation, H2O = H+ + OH-, as a reaction vector (reactants negative). */
const WATER_IONISATION: ReactionVector = new Map([
  [KEY_WATER, Rational.of(-1n)],
  [KEY_PROTON, Rational.ONE],
  [KEY_HYDROXIDE, Rational.ONE],
]);

/**
 * The target written with OH- as its acid form (OH- replaced through H2O = H+ + OH-) derived
 * from the ledger, plus the water ionisation steps: null when the target has no OH-, the
 * acid form is not derivable, or the acid form itself comes back to the target's own row.
 */
function acidFormCombination(target: ReactionVector, ledger: Ledger): { combination: Combination; carry: CombinationPart } | null {
  const oh = target.get(KEY_HYDROXIDE);
  if (!oh || oh.isZero()) return null;
  const acid = new Map<string, Rational>();
  for (const k of new Set([...target.keys(), ...WATER_IONISATION.keys()])) {
    const c = (target.get(k) ?? Rational.ZERO).sub(oh.mul(WATER_IONISATION.get(k) ?? Rational.ZERO));
    if (!c.isZero()) acid.set(k, c);
  }
  // the acid form from acid-medium rows and equilibria: base-medium rows (the target's own and
  // others', which may disagree with their acid forms) are checks, not steps; where no
  // derivation exists without them, the acid form may use the other base rows, and where only
  // the target's own row gives it, that row is used as tabled
  const targetClass = classKeyOf(target).key;
  const acidDerived =
    deriveCombination(acid, ledger, { exclude: baseMediumRedoxClasses(ledger) }) ?? deriveCombination(acid, ledger, { exclude: new Set([targetClass]) });
  if (!acidDerived) return null;
  const kw = waterIonisation(ledger);
  if (!kw) return null;
  const byRow = new Map<string, CombinationPart>();
  const carry: CombinationPart = { row: kw.row, coefficient: oh.mul(kw.perUnit) };
  for (const p of [...acidDerived.combination.parts, carry]) {
    const had = byRow.get(p.row.id);
    byRow.set(p.row.id, { row: p.row, coefficient: had ? had.coefficient.add(p.coefficient) : p.coefficient });
  }
  const parts = [...byRow.values()].filter((p) => !p.coefficient.isZero());
  if (parts.some((p) => p.row.classKey === targetClass)) return null;
  return { combination: combinationOf(parts, ledger), carry };
}

/** Keys of the classes of redox rows written with OH- (cached per ledger). */
function baseMediumRedoxClasses(ledger: Ledger): ReadonlySet<string> {
  const key = 'base-medium-redox-classes';
  let set = ledger.cache.get(key) as ReadonlySet<string> | undefined;
  if (!set) {
    set = new Set([...ledger.classes.values()].filter((c) => c.kind === 'redox' && !(c.vector.get(KEY_HYDROXIDE) ?? Rational.ZERO).isZero()).map((c) => c.key));
    ledger.cache.set(key, set);
  }
  return set;
}

/**
 * The preferred tabled row for water ionisation and the multiplier that turns it into one
 * H2O = H+ + OH- (whichever way and multiple the row is written).
 */
function waterIonisation(ledger: Ledger): { row: LedgerRow; perUnit: Rational } | null {
  const cls = ledger.classes.get(classKeyOf(WATER_IONISATION).key);
  if (!cls) return null;
  const m = pickMember(cls, undefined);
  // row.vector = perRow · WATER_IONISATION, read off the H+ coefficient
  const perRow = m.row.vector.get(KEY_PROTON)!;
  return { row: m.row, perUnit: Rational.ONE.div(perRow) };
}

/**
 * E°(target) − E°(value's form) at 25 °C for a site value given for the other form of the
 * couple: 0 when the value is for the form of the target, or the target has neither H+ nor OH-.
 * For the target v and its other form v' = v − c·(H2O = H+ + OH-) (c = v's OH- coefficient for
 * a base-written target, or its H+ coefficient for an acid-written one), g(v) = g(v') + c·g(Kw),
 * so E°(v) = E°(v') + c·g(Kw)/n with n the electrons taken up.
 */
function siteValueShiftV(target: ReactionVector, valueMedium: 'acid' | 'base', ledger: Ledger): number {
  const oh = target.get(KEY_HYDROXIDE) ?? Rational.ZERO;
  const h = target.get(KEY_PROTON) ?? Rational.ZERO;
  const targetMedium = !oh.isZero() ? 'base' : !h.isZero() ? 'acid' : null;
  if (targetMedium === null || targetMedium === valueMedium) return 0;
  const kw = waterIonisation(ledger);
  if (!kw) {
    throw new DomainError('POTENTIAL_NOT_DERIVABLE', {
      detail: `The site value is for the ${valueMedium} form of the couple; carrying it to the ${targetMedium} form needs the ionisation of water, which the tables do not hold.`,
      fields: [{ pointer: '/equation', message: 'no water ionisation row to carry the site value' }],
    });
  }
  const c = targetMedium === 'base' ? oh : h;
  const gKw = combinationOf([{ row: kw.row, coefficient: kw.perUnit }], ledger);
  const e = target.get(KEY_ELECTRON)!;
  return reductionPotentialV(gKw, e) * c.toNumber();
}

/** The note of a base-medium half-reaction whose E° comes from its acid form (an explanation, not a caveat). */
const CARRIED_FROM_ACID_NOTE =
  'E° of this base-medium half-reaction is carried from its acid form (the same reaction written with H+) through the ionisation of water, so the potential at a pH is the same in either form.';

/**
 * A site value sent without `medium` is taken as the E° of the couple written with H+. The two
 * forms' E° differ by (m/n)·s·pKw (0.83 V per H+ per electron at 25 °C), so a value printed for
 * the base form (OCl-/Cl- 0.89 V, MnO4-/MnO2 0.59 V) read as the acid form is wrong by that much.
 * When the value lies nearer the tables' E° of the base form than of the acid form, it is
 * refused (400) asking which form it is for, rather than guessed either way.
 */
function refuseUnclearSiteMedium(target: ReactionVector, ov: SiteValue, tablesV: number, ledger: Ledger, equation: string): void {
  const oh = target.get(KEY_HYDROXIDE) ?? Rational.ZERO;
  const h = target.get(KEY_PROTON) ?? Rational.ZERO;
  if (oh.isZero() && h.isZero()) return;
  const acidV = tablesV - siteValueShiftV(target, 'acid', ledger);
  const baseV = tablesV - siteValueShiftV(target, 'base', ledger);
  if (Math.abs(acidV - baseV) < SITE_MEDIUM_MIN_GAP_V) return;
  if (Math.abs(ov.valueV - baseV) >= Math.abs(ov.valueV - acidV)) return;
  const v = (x: number) => `${x.toFixed(3)} V`;
  throw new DomainError('SITE_VALUE_MEDIUM_UNCLEAR', {
    detail:
      `The site value ${ov.valueV} V (${ov.source}) for ${equation} lies nearer the tables' E° of the couple written with OH- (${v(baseV)}) than written with H+ (${v(acidV)}); ` +
      `without a medium it would be taken as the H+ form and be off by about ${v(Math.abs(acidV - baseV))}. Say which form the value is for: medium "base" (as printed in base-medium tables) or "acid".`,
    fields: [{ pointer: '/override/medium', message: `say which form ${ov.valueV} V is for: "acid" (written with H+) or "base" (written with OH-)` }],
    params: { valueV: ov.valueV, acidFormV: acidV, baseFormV: baseV },
  });
}

/** Forms of a couple nearer than this in E° are not told apart by a site value's size. */
const SITE_MEDIUM_MIN_GAP_V = 0.2;

/** parts less one part (same row, coefficient subtracted; dropped at zero). */
function withoutPart(parts: readonly CombinationPart[], less: CombinationPart): CombinationPart[] {
  return parts
    .map((p) => (p.row.id === less.row.id ? { row: p.row, coefficient: p.coefficient.sub(less.coefficient) } : p))
    .filter((p) => !p.coefficient.isZero());
}

/**
 * The water-ionisation part between a target written with OH- and its acid form, for a site
 * value on the acid basis (a site value is held at 25 °C as its acid-form equivalent, whichever
 * form it was given for): null without a site value, on another basis, or without OH-.
 */
function siteCarryPart(target: ReactionVector, options: PotentialOptions, ledger: Ledger): CombinationPart | null {
  if (!options.override || options.basis !== 'acid') return null;
  const oh = target.get(KEY_HYDROXIDE);
  if (!oh || oh.isZero()) return null;
  const kw = waterIonisation(ledger);
  return kw ? { row: kw.row, coefficient: oh.mul(kw.perUnit) } : null;
}

function combinationOf(parts: readonly CombinationPart[], ledger: Ledger): Combination {
  let exact = Rational.ZERO;
  let float = 0;
  for (const p of parts) {
    if (p.row.gExact) exact = exact.add(p.coefficient.mul(p.row.gExact));
    else float += p.coefficient.toNumber() * nernstSlopeV(ledger.constants, ledger.constants.T25) * p.row.log10K25!;
  }
  return { parts, g25: exact.toNumber() + float, g25Exact: exact, g25Float: float };
}

/** Entries kept in a ledger's cache before it is emptied (bounds memory under arbitrary requests). */
export const MEMO_LIMIT = 4096;

function computePotential(vector: Map<string, Rational>, ledger: Ledger, options: PotentialOptions, temperatureC: number): PotentialResult {
  const equation = vectorEquation(vector, ledger);
  const e = vector.get(KEY_ELECTRON) ?? Rational.ZERO;
  if (e.isZero()) throw notDerivable(equation, 'the reaction transfers no electrons, so it has an equilibrium constant but no standard potential');
  const n = e.abs().toNumber();
  const direction = e.sign() < 0 ? 'reduction' : 'oxidation';
  const toReductionV = (g: number): number => g / -e.toNumber();
  const comboV = (c: Combination): number => reductionPotentialV(c, e);

  const asWritten = deriveCombination(vector, ledger);
  const acidForm = options.basis === 'acid' ? acidFormCombination(vector, ledger) : null;
  const viaAcid = acidForm?.combination ?? null;
  const derived: DerivedCombination | null = viaAcid
    ? { combination: viaAcid, alternatives: asWritten ? [{ combination: asWritten.combination, differs: asWritten.tabled ? 'the base-medium row as tabled' : 'the base-medium reaction derived as written' }, ...asWritten.alternatives] : [], tabled: false }
    : asWritten;
  if (!derived && !options.override) throw notDerivable(equation, 'the tables hold no reactions that add up to it');

  const notes: string[] = [];
  /** The caveats on E° away from 25 °C (extrapolated, held, turned off): also in notes. */
  const temperatureNotes: string[] = [];
  let tablesV: number | null = null;
  let tabledCheck: TabledCheck | undefined;
  let derivation: DerivationStep[] = [];
  let alternatives: Alternative[] = [];
  let correction = 0;

  if (derived) {
    const combo = derived.combination;
    tablesV = comboV(combo);
    derivation = steps(combo);
    alternatives = derived.alternatives.map((a) => ({
      standardPotentialV: comboV(a.combination),
      rows: a.combination.parts.map((p) => ({ rowId: p.row.id, source: p.row.source })),
      differs: a.differs,
    }));
    if (viaAcid) {
      notes.push(CARRIED_FROM_ACID_NOTE);
      if (asWritten?.tabled) {
        const row = asWritten.combination.parts[0]!.row;
        const tabledV = comboV(asWritten.combination);
        const discrepancyV = tabledV - tablesV;
        tabledCheck = { tabledV, derivedV: tablesV, discrepancyV, flagged: Math.abs(discrepancyV) > FLAG_THRESHOLD_V, derivation: steps(combo) };
        if (tabledCheck.flagged) {
          notes.push(
            `The base-medium row ${row.valueText} (${row.id}, ${row.source}) differs by ${(discrepancyV * 1000).toFixed(1)} mV from the ${tablesV.toFixed(4)} V carried from the acid form; it is not used, so that the potential is the same whichever medium the couple is written in. A site value can be given instead.`,
          );
        }
      }
    } else if (derived.tabled) {
      const row = combo.parts[0]!.row;
      const other = deriveCombination(vector, ledger, { exclude: new Set([row.classKey]), preferSource: row.source });
      if (other) {
        const derivedV = comboV(other.combination);
        const discrepancyV = tablesV - derivedV;
        tabledCheck = { tabledV: tablesV, derivedV, discrepancyV, flagged: Math.abs(discrepancyV) > FLAG_THRESHOLD_V, derivation: steps(other.combination) };
        if (tabledCheck.flagged) {
          notes.push(
            `The tabled value ${row.valueText} (${row.id}, ${row.source}) differs by ${(discrepancyV * 1000).toFixed(1)} mV from the value ${derivedV.toFixed(4)} V that follows from other rows; a site value can be given instead.`,
          );
        }
      }
    }
    if (temperatureC !== 25 && options.temperatureCorrection !== false) {
      const T = ledger.constants.T0 + temperatureC;
      // A base-medium form is its acid form plus water ionisation: the correction is the acid
      // form's (what the tables' dE°/dT and ΔH° give); water's Kw at the temperature is carried
      // separately (kwCarryV), so that turning the correction off holds the same E° in both forms.
      const parts = acidForm ? withoutPart(combo.parts, acidForm.carry) : combo.parts;
      const atT = combinationG(parts, ledger, T);
      correction = toReductionV(atT.g - combinationG(parts, ledger, ledger.constants.T25).g);
      notes.push(...atT.notes);
      temperatureNotes.push(...atT.notes);
    }
  }
  if (temperatureC !== 25 && options.temperatureCorrection === false) {
    notes.push('Temperature correction of E° turned off by the request.');
    temperatureNotes.push('Temperature correction of E° turned off by the request.');
  }
  // The base-medium form at the temperature: its acid form's E° carried through Kw at the water's
  // temperature (the pH scale of that water), whether or not the E° itself is corrected.
  const carry = acidForm?.carry ?? siteCarryPart(vector, options, ledger);
  let kwCarryV = 0;
  if (carry && temperatureC !== 25) {
    const T = ledger.constants.T0 + temperatureC;
    const atT = combinationG([carry], ledger, T);
    kwCarryV = toReductionV(atT.g - combinationG([carry], ledger, ledger.constants.T25).g); // reported as waterIonisationShiftV
    // Kw's own temperature caveat (a range it is stated for), whether or not E° is corrected
    for (const n of atT.notes) {
      if (!notes.includes(n)) notes.push(n);
      if (!temperatureNotes.includes(n)) temperatureNotes.push(n);
    }
  }

  let usedV: number;
  let usedValue: PotentialResult['usedValue'];
  let carriedV: number | undefined;
  if (options.override) {
    const ov = options.override;
    if (ov.medium === undefined && tablesV !== null) refuseUnclearSiteMedium(vector, ov, tablesV, ledger, equation);
    const shift = siteValueShiftV(vector, ov.medium ?? 'acid', ledger);
    usedV = ov.valueV + shift;
    usedValue = 'override';
    if (shift !== 0) {
      carriedV = usedV;
      notes.push(
        `Site value ${ov.valueV} V (${ov.source}) is for the couple written ${ov.medium === 'base' ? 'with OH- (base)' : 'with H+ (acid)'}; carried to this form through the ionisation of water: ${usedV.toFixed(4)} V, used instead of the tables${tablesV !== null ? ` (${tablesV.toFixed(4)} V)` : ''}.`,
      );
    } else {
      notes.push(`Site value ${ov.valueV} V (${ov.source}) used instead of the tables${tablesV !== null ? ` (${tablesV.toFixed(4)} V)` : ''}.`);
    }
    if (temperatureC !== 25 && options.temperatureCorrection !== false) {
      notes.push(derived ? 'The temperature correction is the one the tables give for this couple.' : 'No temperature correction: the tables do not give this couple.');
    }
  } else {
    usedV = tablesV!;
    usedValue = derived!.tabled ? 'tabled' : 'derived';
  }
  const gAsWritten = usedV * -e.toNumber();
  const k25 = nernstSlopeV(ledger.constants, ledger.constants.T25);
  return {
    equation,
    direction,
    electrons: n,
    standardPotentialV: usedV,
    asWrittenPotentialV: direction === 'reduction' ? usedV : -usedV,
    deltaGkJPerMol: (-ledger.constants.F * gAsWritten) / 1000,
    log10K: gAsWritten / k25,
    temperatureC,
    temperatureCorrectionV: correction,
    waterIonisationShiftV: kwCarryV,
    standardPotentialAtTemperatureV: usedV + correction + kwCarryV,
    derivation,
    usedValue,
    ...(tabledCheck ? { tabledCheck } : {}),
    tablesStandardPotentialV: tablesV,
    ...(options.override
      ? { override: { valueV: options.override.valueV, source: options.override.source, medium: options.override.medium ?? 'acid', ...(carriedV !== undefined ? { carriedV } : {}) } }
      : {}),
    alternatives,
    notes,
    temperatureNotes,
  };
}

export interface Log10KResult {
  readonly equation: string;
  /** log10 K of the reaction as written at the temperature. */
  readonly log10K: number;
  readonly deltaGkJPerMol: number;
  readonly temperatureC: number;
  readonly derivation: readonly DerivationStep[];
  readonly notes: readonly string[];
}

/** log10 K (and ΔG°) of any reaction that is a combination of tabled rows, at a temperature. */
export function reactionLog10K(target: Target, ledger: Ledger, options: { readonly temperatureC?: number } = {}): Log10KResult {
  const temperatureC = options.temperatureC ?? 25;
  checkTemperatureC(temperatureC);
  const vector = targetVector(target);
  const equation = vectorEquation(vector, ledger);
  const derived = deriveCombination(vector, ledger);
  if (!derived) throw notDerivable(equation, 'the tables hold no reactions that add up to it');
  const T = ledger.constants.T0 + temperatureC;
  const { g, notes } = combinationG(derived.combination.parts, ledger, T);
  return {
    equation,
    log10K: g / nernstSlopeV(ledger.constants, T),
    deltaGkJPerMol: (-ledger.constants.F * g) / 1000,
    temperatureC,
    derivation: steps(derived.combination),
    notes,
  };
}
