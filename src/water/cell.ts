/**
 * A redox cell at the water's conditions: the oxidant couple and the reductant couple, both
 * written as reductions. E = E(oxidant) − E(reductant); feasible when E > 0.
 *
 *   ΔG = −nFE (n = lcm of the two halves' electrons, the reaction as balanced)
 *   log10 K = nFE°cell / (RT ln10)
 *   feasibilityLimitPH: the pH in [0, 14] where E(pH) = 0, by scanning every 0.5 pH for a sign change and
 *   narrowing each bracket by Brent's method to 1e-6 pH units.
 */
import { DomainError } from '../core/errors.js';
import type { HalfReaction } from '../chemistry/balance/types.js';
import { findRoots } from './roots.js';
import { checkPH, nernstSlopeV, type PhysicalConstants } from './constants.js';
import {
  cachedSpeciesKey,
  checkConditions,
  compileHalf,
  evaluateLog10Q,
  prepareLog10Q,
  speciationLog10Activities,
  type ActivityMap,
  type CompiledHalf,
  type LinkedActivityMap,
  type Conditions,
  type NernstResult,
  type SpeciationGroup,
} from './conditions.js';

export interface CellInput {
  /** The oxidant couple as a reduction (e.g. HOCl + H+ + 2e- → Cl- + H2O). */
  readonly oxidantHalf: HalfReaction;
  /** The reductant couple, also as a reduction (e.g. Fe(OH)3 + 3H+ + e- → Fe2+ + 3H2O). */
  readonly reductantHalf: HalfReaction;
  /** E° of each half at the temperature (already temperature-corrected by the caller), V. */
  readonly oxidantE0V: number;
  readonly reductantE0V: number;
  readonly pH: number;
  readonly temperatureC: number;
  /** speciesKey → activity (dimensionless); gases may carry their partial pressure (atm) here. */
  readonly activities?: ActivityMap;
  readonly partialPressuresAtm?: ActivityMap;
  readonly solids?: ReadonlySet<string>;
  /** Kw at the temperature (needed when OH- takes part). */
  readonly kw?: number;
  /** pH-dependent forms with a known total (their activities follow the pH in the root finder). */
  readonly speciation?: readonly SpeciationGroup[];
  /** Terms converted from a given partner species (log10 a = c0 + k·pH); the partner is held, they follow the pH. */
  readonly linked?: LinkedActivityMap;
  readonly constants: PhysicalConstants;
  /** For the equilibrium residual in mol/L and mg/L. */
  readonly reductantResidual?: {
    /** γ of the reductant's reduced form (default 1). */
    readonly activityCoefficient?: number;
    /** g/mol of the reduced form as written (Fe2+ → 55.845). */
    readonly molarMassGPerMol?: number;
  };
}

export interface EquilibriumResidual {
  /** The reductant's reduced form (Fe2+ in Fe(OH)3/Fe2+). */
  readonly species: string;
  readonly key: string;
  /** Activity at which E would reach 0, everything else held. */
  readonly activity: number;
  readonly log10Activity: number;
  readonly activityCoefficient: number;
  readonly molPerL: number;
  /** null without a molar mass. */
  readonly mgPerL: number | null;
  readonly note: string;
}

export interface FeasibleRange {
  readonly fromPH: number;
  readonly toPH: number;
}

export interface CellResult {
  readonly standardCellPotentialV: number;
  readonly cellPotentialV: number;
  readonly electrons: number;
  readonly multipliers: { readonly oxidant: number; readonly reductant: number };
  /** −nFE at the conditions, kJ per mol of reaction as balanced with `electrons`. */
  readonly deltaGkJPerMol: number;
  /** −nFE°cell, kJ/mol. */
  readonly standardDeltaGkJPerMol: number;
  readonly log10K: number;
  readonly feasible: boolean;
  /** E − 0: how far the cell is above (positive) or below (negative) the feasibility threshold, V. */
  readonly marginV: number;
  readonly slopeV: number;
  readonly pH: number;
  readonly temperatureC: number;
  readonly oxidant: NernstResult;
  readonly reductant: NernstResult;
  /** The root of E(pH) = 0 in [0, 14] nearest the sample pH; null when E keeps one sign. */
  readonly feasibilityLimitPH: number | null;
  /** All roots found in [0, 14], ascending. */
  readonly feasibilityLimitsPH: readonly number[];
  /** Which side of feasibilityLimitPH the cell is feasible on; 'everywhere' / 'nowhere' when there is no root. */
  readonly feasibleSide: 'above' | 'below' | 'everywhere' | 'nowhere';
  /** The pH intervals within [0, 14] where E > 0. */
  readonly feasibleRangesPH: readonly FeasibleRange[];
  readonly reductantResidual: EquilibriumResidual | null;
  /** Why there is no residual, when it is null. */
  readonly reductantResidualReason?: string;
}

function gcd(a: number, b: number): number {
  while (b !== 0) [a, b] = [b, a % b];
  return Math.abs(a);
}

/** Root-finder settings: scan step and bisection tolerance (pH units). */
export const FEASIBILITY_SCAN = { min: 0, max: 14, step: 0.5, tolerance: 1e-6 } as const;

function halfResult(ch: CompiledHalf, e0: number, pH: number, c: Conditions, slopeV: number, spec: ReadonlyMap<string, number>, pointer: string): NernstResult {
  const ev = evaluateLog10Q(ch, pH, c, spec, true, pointer);
  return {
    equation: ch.half.equation,
    potentialV: e0 - (slopeV / ch.electrons) * ev.log10Q,
    standardPotentialV: e0,
    slopeV,
    electrons: ch.electrons,
    log10Q: ev.log10Q,
    pH,
    temperatureC: c.temperatureC,
    activities: ev.used,
    notGiven: ev.notGiven,
  };
}

/** Evaluate a redox cell at the given conditions, with its feasibility limit over pH 0–14. */
export function evaluateCell(input: CellInput): CellResult {
  checkPH(input.pH);
  checkConditions(input);
  for (const [name, v] of [['oxidantE0V', input.oxidantE0V], ['reductantE0V', input.reductantE0V]] as const) {
    if (!Number.isFinite(v)) {
      throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: `${name} must be a finite number of volts.`, fields: [{ pointer: `/${name}`, message: 'must be a finite number' }] });
    }
  }
  const ox = compileHalf(input.oxidantHalf, input.solids, '/oxidantHalf');
  const red = compileHalf(input.reductantHalf, input.solids, '/reductantHalf');
  const slopeV = nernstSlopeV(input.temperatureC, input.constants);
  const electrons = (ox.electrons * red.electrons) / gcd(ox.electrons, red.electrons);
  const F = input.constants.faraday.value;

  const qOx = prepareLog10Q(ox, input, '/oxidantHalf');
  const qRed = prepareLog10Q(red, input, '/reductantHalf');
  const so = slopeV / ox.electrons;
  const sr = slopeV / red.electrons;
  const e0Diff = input.oxidantE0V - input.reductantE0V;
  const cellAt = (pH: number): number => e0Diff - so * qOx(pH) + sr * qRed(pH);

  const spec = speciationLog10Activities(input.speciation, input.pH);
  const oxidant = halfResult(ox, input.oxidantE0V, input.pH, input, slopeV, spec, '/oxidantHalf');
  const reductant = halfResult(red, input.reductantE0V, input.pH, input, slopeV, spec, '/reductantHalf');
  const standardCellPotentialV = input.oxidantE0V - input.reductantE0V;
  const cellPotentialV = oxidant.potentialV - reductant.potentialV;

  const roots = findRoots(cellAt, FEASIBILITY_SCAN);
  const limit = roots.length === 0 ? null : roots.reduce((best, r) => (Math.abs(r - input.pH) < Math.abs(best - input.pH) ? r : best));
  const ranges = feasibleRanges(cellAt, roots);
  let feasibleSide: CellResult['feasibleSide'];
  if (limit === null) feasibleSide = cellAt(FEASIBILITY_SCAN.min) > 0 ? 'everywhere' : 'nowhere';
  else if (limit + 1e-3 <= FEASIBILITY_SCAN.max) feasibleSide = cellAt(limit + 1e-3) > 0 ? 'above' : 'below';
  else feasibleSide = cellAt(limit - 1e-3) > 0 ? 'below' : 'above';

  const residual = equilibriumResidual(input, ox, red, oxidant, reductant, cellPotentialV, slopeV);

  return {
    standardCellPotentialV,
    cellPotentialV,
    electrons,
    multipliers: { oxidant: electrons / ox.electrons, reductant: electrons / red.electrons },
    deltaGkJPerMol: (-electrons * F * cellPotentialV) / 1000,
    standardDeltaGkJPerMol: (-electrons * F * standardCellPotentialV) / 1000,
    log10K: (electrons * standardCellPotentialV) / slopeV,
    feasible: cellPotentialV > 0,
    marginV: cellPotentialV,
    slopeV,
    pH: input.pH,
    temperatureC: input.temperatureC,
    oxidant,
    reductant,
    feasibilityLimitPH: limit,
    feasibilityLimitsPH: roots,
    feasibleSide,
    feasibleRangesPH: ranges,
    reductantResidual: residual.value,
    ...(residual.reason !== undefined ? { reductantResidualReason: residual.reason } : {}),
  };
}

function feasibleRanges(f: (pH: number) => number, roots: readonly number[]): FeasibleRange[] {
  const edges = [FEASIBILITY_SCAN.min, ...roots.filter((r) => r > FEASIBILITY_SCAN.min && r < FEASIBILITY_SCAN.max), FEASIBILITY_SCAN.max];
  const out: FeasibleRange[] = [];
  for (let i = 0; i + 1 < edges.length; i++) {
    const a = edges[i]!, b = edges[i + 1]!;
    if (b <= a) continue;
    if (f((a + b) / 2) > 0) {
      const last = out[out.length - 1];
      if (last !== undefined && last.toPH === a) out[out.length - 1] = { fromPH: last.fromPH, toPH: b };
      else out.push({ fromPH: a, toPH: b });
    }
  }
  return out;
}

/**
 * The activity of the reductant's reduced form at which E would reach 0, everything else held
 * (none when E ≤ 0: the reaction does not run, so the reductant stays as given):
 * dE/d log10 a(X) = −(s/nₒ)·νₒ(X) + (s/nᵣ)·νᵣ(X) (ν signed, products +), so
 * log10 a* = log10 a − E / (dE/d log10 a).
 */
function equilibriumResidual(
  input: CellInput,
  ox: CompiledHalf,
  red: CompiledHalf,
  oxidant: NernstResult,
  reductant: NernstResult,
  cellPotentialV: number,
  slopeV: number,
): { value: EquilibriumResidual | null; reason?: string } {
  const reduced = input.reductantHalf.reduced;
  const key = cachedSpeciesKey(reduced);
  const term = red.terms.find((t) => t.key === key);
  if (term === undefined) return { value: null, reason: `${reduced.text} does not appear in ${input.reductantHalf.equation}.` };
  if (term.kind !== 'dissolved') return { value: null, reason: `${reduced.text} is held at fixed activity (${term.kind}); no residual concentration applies.` };
  const nuOx = ox.terms.filter((t) => t.key === key).reduce((s, t) => s + t.signed, 0);
  const nuRed = red.terms.filter((t) => t.key === key).reduce((s, t) => s + t.signed, 0);
  const dE = -(slopeV / ox.electrons) * nuOx + (slopeV / red.electrons) * nuRed;
  if (dE === 0) return { value: null, reason: `The cell potential does not depend on ${reduced.text}.` };
  const current = reductant.activities.find((a) => a.key === key) ?? oxidant.activities.find((a) => a.key === key);
  const heldAtUnit = current?.origin === 'unit-by-convention';
  if (!(cellPotentialV > 0)) {
    // E <= 0: the reaction as written does not run, so no reductant is used up; the level at
    // which E would reach 0 lies above the given one and is no floor of anything
    return {
      value: null,
      reason:
        `No equilibrium residual: the reaction does not proceed at these conditions (E = ${cellPotentialV.toFixed(4)} V, not above 0), ` +
        `so ${reduced.text} stays ${heldAtUnit ? 'where it is (taken at unit activity here, as no concentration was given)' : 'at the level given'}.`,
    };
  }
  const logA0 = current?.log10Activity ?? 0;
  const log10Activity = logA0 - cellPotentialV / dE;
  const gamma = input.reductantResidual?.activityCoefficient ?? 1;
  if (!Number.isFinite(gamma) || gamma <= 0) {
    throw new DomainError('ACTIVITY_INVALID', { detail: 'The activity coefficient of the reductant must be positive.', fields: [{ pointer: '/reductantResidual/activityCoefficient', message: 'must be positive' }] });
  }
  const activity = Math.pow(10, log10Activity);
  const molPerL = activity / gamma;
  const M = input.reductantResidual?.molarMassGPerMol;
  if (M !== undefined && (!Number.isFinite(M) || M <= 0)) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: 'The molar mass of the reductant must be a positive number of g/mol.', fields: [{ pointer: '/reductantResidual/molarMassGPerMol', message: 'must be positive' }] });
  }
  return {
    value: {
      species: reduced.text,
      key,
      activity,
      log10Activity,
      activityCoefficient: gamma,
      molPerL,
      mgPerL: M === undefined ? null : molPerL * M * 1000,
      note:
        `Equilibrium residual of ${reduced.text}: where E reaches 0 V with every other activity held (no mass balance); kinetics usually stop the reaction well before it.` +
        (heldAtUnit ? ` ${reduced.text} was at unit activity (not given) in the cell evaluation.` : ''),
    },
  };
}
