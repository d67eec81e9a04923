/**
 * Contact time: the iron(II) oxygenation rate law of Stumm & Lee (1961), first-order helpers,
 * and the check of a required time (or a typical literature range) against the contact time
 * available.
 *
 *   −d[Fe(II)]/dt = k [OH-]² pO2 [Fe(II)]     (Stumm & Lee 1961)
 *
 * k = 8.0×10¹³ L² mol⁻² atm⁻¹ min⁻¹ at 20.5 °C comes from tables/kinetics-typical.json
 * (rateLaws) and is passed in. At constant pH the rate depends on temperature through Kw(T)
 * ([OH-] = Kw/a(H+)) and through the O2 partial pressure the dissolved O2 represents; k itself
 * is held at its 20.5 °C value unless the caller passes an activation energy with its source.
 */
import { DomainError } from '../core/errors.js';
import type { KineticsRateLawRow, KineticsRow, KineticsTypicalRow } from '../reference/kinetics-schema.js';
import { checkPH, checkTemperatureC, kelvin, type PhysicalConstants } from './constants.js';

function fieldError(code: 'QUANTITY_OUT_OF_RANGE' | 'CONDITIONS_OUT_OF_RANGE', pointer: string, detail: string): DomainError {
  return new DomainError(code, { detail, fields: [{ pointer, message: detail }] });
}

function positive(x: number, pointer: string, what: string): void {
  if (!Number.isFinite(x) || x <= 0) throw fieldError('QUANTITY_OUT_OF_RANGE', pointer, `${what} must be a positive number; got ${String(x)}.`);
}

function nonNegative(x: number, pointer: string, what: string): void {
  if (!Number.isFinite(x) || x < 0) throw fieldError('QUANTITY_OUT_OF_RANGE', pointer, `${what} must be a number ≥ 0; got ${String(x)}.`);
}

// ---------------------------------------------------------------- first order

/** Time (min) for a first-order decay with rate constant kPerMin to go from c0 to ct (same units). 0 when ct ≥ c0. */
export function firstOrderTimeMin(kPerMin: number, c0: number, ct: number): number {
  positive(kPerMin, '/kPerMin', 'The rate constant (1/min)');
  nonNegative(c0, '/c0', 'The initial concentration');
  positive(ct, '/ct', 'The target concentration');
  if (ct >= c0) return 0;
  return Math.log(c0 / ct) / kPerMin;
}

/** Half-life (min) of a first-order decay: ln 2 / k. */
export function firstOrderHalfLifeMin(kPerMin: number): number {
  positive(kPerMin, '/kPerMin', 'The rate constant (1/min)');
  return Math.LN2 / kPerMin;
}

/** Concentration left after tMin: c0·e^(−k t). */
export function firstOrderRemaining(kPerMin: number, c0: number, tMin: number): number {
  nonNegative(kPerMin, '/kPerMin', 'The rate constant (1/min)');
  nonNegative(c0, '/c0', 'The initial concentration');
  nonNegative(tMin, '/tMin', 'The time (min)');
  return c0 * Math.exp(-kPerMin * tMin);
}

// ---------------------------------------------------------------- iron(II) oxygenation

export interface RateConstantSpec {
  /** k in L² mol⁻² atm⁻¹ min⁻¹. */
  readonly value: number;
  /** Temperature (°C) at which k was measured (20.5 for Stumm & Lee 1961). */
  readonly temperatureC: number;
  readonly source: string;
  /** Arrhenius activation energy of k itself (at constant [OH-]), kJ/mol, with its source; omit to hold k constant. */
  readonly activationEnergy?: { readonly kJPerMol: number; readonly source: string };
}

export type OxygenInput =
  /** O2 partial pressure in equilibrium with the water, atm (air ≈ 0.21). */
  | { readonly pO2Atm: number }
  /** Dissolved O2, converted to pO2 = C / K_H. */
  | {
      readonly dissolvedO2MgPerL: number;
      /** Henry constant K_H of O2 at the water's temperature, mol/(L·atm). */
      readonly henryMolPerLAtm: number;
      /** g/mol of O2 (31.998 from the atomic weights). */
      readonly o2MolarMassGPerMol: number;
    };

export interface IronOxygenationInput {
  readonly pH: number;
  readonly temperatureC: number;
  /** Kw at the temperature (from `kwAt`). */
  readonly kw: number;
  readonly rateConstant: RateConstantSpec;
  readonly oxygen: OxygenInput;
  /** Fe(II) now and the target, in any one unit (mg/L as Fe); omit for the rate and half-life only. */
  readonly initialFe?: number;
  readonly targetFe?: number;
  readonly constants: PhysicalConstants;
}

export interface IronOxygenationResult {
  /** k at the water's temperature, L² mol⁻² atm⁻¹ min⁻¹. */
  readonly rateConstantAtT: number;
  readonly temperatureTreatment: 'arrhenius' | 'held-at-reference';
  /** [OH-] = Kw / 10^−pH, mol/L (activity taken for concentration, as in the rate law's use of pH). */
  readonly hydroxideMolPerL: number;
  readonly pO2Atm: number;
  /** k' = k [OH-]² pO2, 1/min. */
  readonly pseudoFirstOrderPerMin: number;
  readonly halfLifeMin: number;
  /** Time to go from initialFe to targetFe, min; null when they are not given. */
  readonly timeToTargetMin: number | null;
  readonly notes: readonly string[];
  readonly source: string;
}

/** Stumm & Lee 1961 iron(II) oxygenation at the water's pH, temperature and dissolved oxygen. */
export function ironOxygenation(input: IronOxygenationInput): IronOxygenationResult {
  checkPH(input.pH);
  checkTemperatureC(input.temperatureC);
  positive(input.kw, '/kw', 'Kw');
  positive(input.rateConstant.value, '/rateConstant/value', 'The rate constant');
  checkTemperatureC(input.rateConstant.temperatureC, '/rateConstant/temperatureC');

  const notes: string[] = [];
  let rateConstantAtT = input.rateConstant.value;
  let temperatureTreatment: IronOxygenationResult['temperatureTreatment'] = 'held-at-reference';
  const ea = input.rateConstant.activationEnergy;
  if (ea !== undefined) {
    if (!Number.isFinite(ea.kJPerMol)) throw fieldError('QUANTITY_OUT_OF_RANGE', '/rateConstant/activationEnergy/kJPerMol', 'The activation energy must be a finite number of kJ/mol.');
    const T = kelvin(input.temperatureC, input.constants);
    const Tr = kelvin(input.rateConstant.temperatureC, input.constants);
    rateConstantAtT = input.rateConstant.value * Math.exp((-(ea.kJPerMol * 1000) / input.constants.gasConstant.value) * (1 / T - 1 / Tr));
    temperatureTreatment = 'arrhenius';
    notes.push(`k corrected from ${input.rateConstant.temperatureC} °C with Ea = ${ea.kJPerMol} kJ/mol (${ea.source}).`);
  } else if (input.temperatureC !== input.rateConstant.temperatureC) {
    notes.push(
      `k is held at its ${input.rateConstant.temperatureC} °C value (${input.rateConstant.source}); the temperature enters through Kw(T) in [OH-] and through the O2 partial pressure.`,
    );
  }

  let pO2Atm: number;
  if ('pO2Atm' in input.oxygen) {
    positive(input.oxygen.pO2Atm, '/oxygen/pO2Atm', 'The O2 partial pressure (atm)');
    pO2Atm = input.oxygen.pO2Atm;
  } else {
    nonNegative(input.oxygen.dissolvedO2MgPerL, '/oxygen/dissolvedO2MgPerL', 'Dissolved oxygen (mg/L)');
    positive(input.oxygen.henryMolPerLAtm, '/oxygen/henryMolPerLAtm', 'The Henry constant of O2 (mol/(L·atm))');
    positive(input.oxygen.o2MolarMassGPerMol, '/oxygen/o2MolarMassGPerMol', 'The molar mass of O2 (g/mol)');
    pO2Atm = input.oxygen.dissolvedO2MgPerL / 1000 / input.oxygen.o2MolarMassGPerMol / input.oxygen.henryMolPerLAtm;
    if (pO2Atm === 0) {
      throw fieldError('CONDITIONS_OUT_OF_RANGE', '/oxygen/dissolvedO2MgPerL', 'With no dissolved oxygen iron(II) is not oxygenated; aerate or choose another oxidant.');
    }
  }

  const hydroxideMolPerL = input.kw / Math.pow(10, -input.pH);
  const pseudoFirstOrderPerMin = rateConstantAtT * hydroxideMolPerL * hydroxideMolPerL * pO2Atm;
  const halfLifeMin = Math.LN2 / pseudoFirstOrderPerMin;
  let timeToTargetMin: number | null = null;
  if (input.initialFe !== undefined || input.targetFe !== undefined) {
    if (input.initialFe === undefined || input.targetFe === undefined) {
      throw fieldError('QUANTITY_OUT_OF_RANGE', input.initialFe === undefined ? '/initialFe' : '/targetFe', 'Give both the initial and the target iron(II) concentration, in the same unit.');
    }
    nonNegative(input.initialFe, '/initialFe', 'The initial iron(II) concentration');
    positive(input.targetFe, '/targetFe', 'The target iron(II) concentration');
    timeToTargetMin = input.targetFe >= input.initialFe ? 0 : Math.log(input.initialFe / input.targetFe) / pseudoFirstOrderPerMin;
  }
  return {
    rateConstantAtT,
    temperatureTreatment,
    hydroxideMolPerL,
    pO2Atm,
    pseudoFirstOrderPerMin,
    halfLifeMin,
    timeToTargetMin,
    notes,
    source: input.rateConstant.source,
  };
}

// ---------------------------------------------------------------- contact time check

export type ContactTimeStatus = 'ok' | 'marginal' | 'too-slow';

export interface ContactTimeCheckInput {
  /** Time needed from a rate law, min. Give this or `requiredRange`. */
  readonly requiredMinutes?: number;
  /** Typical literature range, min (maxMinutes null: no upper bound known). */
  readonly requiredRange?: { readonly minMinutes: number; readonly maxMinutes: number | null };
  readonly availableMinutes: number;
  /** What the trade does when it is too slow (from the kinetics table row). */
  readonly remedy?: string;
}

export interface ContactTimeCheckResult {
  /**
   * ok: the available time covers the requirement (the whole range);
   * marginal: it falls inside a typical range (or the range has no upper bound);
   * too-slow: it is shorter than the time needed (or than the range's lower end).
   */
  readonly status: ContactTimeStatus;
  readonly availableMinutes: number;
  readonly requiredMinutes: number | null;
  readonly requiredRange: { readonly minMinutes: number; readonly maxMinutes: number | null } | null;
  /** availableMinutes ÷ the time needed (the range's upper end, or its lower end when open-ended). */
  readonly ratio: number;
  readonly remedy: string | null;
  readonly message: string;
}

/** Compare the time a reaction needs with the contact time available. */
export function contactTimeCheck(input: ContactTimeCheckInput): ContactTimeCheckResult {
  nonNegative(input.availableMinutes, '/availableMinutes', 'The available contact time (min)');
  const remedy = input.remedy ?? null;
  const avail = input.availableMinutes;
  const fmt = (x: number): string => (x >= 10 ? x.toFixed(0) : x.toPrecision(2));
  if (input.requiredMinutes !== undefined) {
    nonNegative(input.requiredMinutes, '/requiredMinutes', 'The required time (min)');
    const ok = avail >= input.requiredMinutes;
    return {
      status: ok ? 'ok' : 'too-slow',
      availableMinutes: avail,
      requiredMinutes: input.requiredMinutes,
      requiredRange: null,
      ratio: input.requiredMinutes === 0 ? Infinity : avail / input.requiredMinutes,
      remedy: ok ? null : remedy,
      message: ok
        ? `The ${fmt(avail)} min available covers the ${fmt(input.requiredMinutes)} min the reaction needs.`
        : `The reaction needs about ${fmt(input.requiredMinutes)} min but only ${fmt(avail)} min of contact is available.` + (remedy ? ` ${remedy}` : ''),
    };
  }
  const r = input.requiredRange;
  if (r === undefined) {
    throw new DomainError('DOSE_INPUT_MISSING', {
      detail: 'Give the time the reaction needs (requiredMinutes) or its typical range (requiredRange).',
      fields: [{ pointer: '/requiredMinutes', message: 'give requiredMinutes or requiredRange' }],
    });
  }
  nonNegative(r.minMinutes, '/requiredRange/minMinutes', 'The lower end of the range (min)');
  if (r.maxMinutes !== null) {
    nonNegative(r.maxMinutes, '/requiredRange/maxMinutes', 'The upper end of the range (min)');
    if (r.maxMinutes < r.minMinutes) throw fieldError('QUANTITY_OUT_OF_RANGE', '/requiredRange/maxMinutes', 'The upper end of the range must not be below its lower end.');
  }
  const range = `${fmt(r.minMinutes)}${r.maxMinutes === null ? '+' : `–${fmt(r.maxMinutes)}`} min`;
  let status: ContactTimeStatus;
  if (avail < r.minMinutes) status = 'too-slow';
  else if (r.maxMinutes !== null && avail >= r.maxMinutes) status = 'ok';
  else status = 'marginal';
  const reference = r.maxMinutes ?? r.minMinutes;
  const message =
    status === 'ok'
      ? `The ${fmt(avail)} min available covers the typical ${range} (literature range, not a rate law).`
      : status === 'marginal'
        ? `The ${fmt(avail)} min available lies within the typical ${range}; confirm the reaction is complete (jar test or residual at the end of contact).`
        : `The typical time is ${range} but only ${fmt(avail)} min of contact is available.` + (remedy ? ` ${remedy}` : '');
  return {
    status,
    availableMinutes: avail,
    requiredMinutes: null,
    requiredRange: { minMinutes: r.minMinutes, maxMinutes: r.maxMinutes },
    ratio: reference === 0 ? Infinity : avail / reference,
    remedy: status === 'ok' ? null : remedy,
    message,
  };
}

// ---------------------------------------------------------------- table rows (tables/kinetics-typical.json)

/** The rate constant of a 'rate-law' row as `ironOxygenation` takes it. */
export function rateConstantFromRow(row: KineticsRateLawRow): RateConstantSpec {
  return {
    value: Number(row.rateConstant),
    temperatureC: Number(row.temperatureC),
    source: row.source,
    ...(row.activationEnergyKJPerMol !== null ? { activationEnergy: { kJPerMol: Number(row.activationEnergyKJPerMol), source: row.source } } : {}),
  };
}

/** The range of a 'typical' row as `contactTimeCheck` takes it. */
export function typicalRangeFromRow(row: KineticsTypicalRow): { minMinutes: number; maxMinutes: number | null } {
  return { minMinutes: Number(row.minMinutes), maxMinutes: row.maxMinutes === null ? null : Number(row.maxMinutes) };
}

/**
 * The kinetics rows for an oxidant product and a contaminant at a pH: a rate law first, then typical
 * rows whose pH range holds the pH (open ends included). Empty when the table has nothing for the pair.
 */
export function kineticsRowsFor(rows: readonly KineticsRow[], productId: string, contaminantId: string, pH: number): KineticsRow[] {
  const inRange = (r: KineticsRow): boolean => (r.pHMin === null || pH >= Number(r.pHMin)) && (r.pHMax === null || pH <= Number(r.pHMax));
  return rows
    .filter((r) => r.contaminant === contaminantId && r.products.includes(productId) && inRange(r))
    .sort((a, b) => (a.kind === b.kind ? 0 : a.kind === 'rate-law' ? -1 : 1));
}
