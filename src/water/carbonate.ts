/**
 * The closed carbonate system (no CO2 exchange with the air during the reaction).
 *
 *   Alkalinity (eq/L) = [HCO3-] + 2[CO3 2-] + [OH-] − [H+]
 *   C_T = [H2CO3*] + [HCO3-] + [CO3 2-]
 *
 * From alkalinity, pH and the constants at temperature: C_T. A strong acid added (the H+ a
 * dosing reaction releases) lowers the alkalinity by exactly its equivalents; at constant C_T
 * the new pH solves the charge balance (bisection over pH 0–14).
 *
 * K1, K2, Kw are thermodynamic constants at the water's temperature (Plummer & Busenberg 1982
 * forms for K1, K2 from the equilibria table through `log10KAt`). pH is −log10 a(H+). With
 * activity coefficients given (Davies at the water's ionic strength), concentrations follow
 * from the mixed constants; without them activities and concentrations are taken as equal.
 */
import { DomainError } from '../core/errors.js';
import { Dec } from '../core/decimal.js';
import { checkPH } from './constants.js';
import { bisect } from './roots.js';
import type { Reaction } from '../chemistry/balance/types.js';
import type { Species } from '../chemistry/formula/types.js';

export interface CarbonateConstants {
  /** H2CO3* ⇌ H+ + HCO3- at the temperature. */
  readonly K1: number;
  /** HCO3- ⇌ H+ + CO3 2- at the temperature. */
  readonly K2: number;
  /** a(H+)·a(OH-) at the temperature. */
  readonly Kw: number;
}

export interface CarbonateActivityCoefficients {
  /** γ of a singly charged ion (H+, OH-, HCO3-). */
  readonly monovalent: number;
  /** γ of a doubly charged ion (CO3 2-). */
  readonly divalent: number;
}

export interface CarbonateSpecies {
  readonly pH: number;
  /** mol/L */
  readonly h2co3MolPerL: number;
  readonly hco3MolPerL: number;
  readonly co3MolPerL: number;
  readonly ohMolPerL: number;
  readonly hMolPerL: number;
  readonly totalCarbonateMolPerL: number;
  readonly alkalinityEqPerL: number;
}

const UNIT: CarbonateActivityCoefficients = { monovalent: 1, divalent: 1 };

function fieldError(code: 'QUANTITY_OUT_OF_RANGE' | 'CONDITIONS_OUT_OF_RANGE', pointer: string, detail: string, params: Record<string, unknown> = {}): DomainError {
  return new DomainError(code, { detail, params, fields: [{ pointer, message: detail }] });
}

function checkConstants(k: CarbonateConstants): void {
  for (const name of ['K1', 'K2', 'Kw'] as const) {
    const v = k[name];
    if (!Number.isFinite(v) || v <= 0) throw fieldError('QUANTITY_OUT_OF_RANGE', `/constants/${name}`, `${name} must be a positive number; got ${String(v)}.`);
  }
}

function checkGammas(g: CarbonateActivityCoefficients): void {
  for (const name of ['monovalent', 'divalent'] as const) {
    const v = g[name];
    if (!Number.isFinite(v) || v <= 0 || v > 1.5) throw fieldError('QUANTITY_OUT_OF_RANGE', `/activityCoefficients/${name}`, `The ${name} activity coefficient must be a positive number (about 0.3–1); got ${String(v)}.`);
  }
}

/**
 * Equivalent weight of CaCO3, mg per meq = M(CaCO3)/2, from atomic weights given as published
 * text (Ca, C, O). 50.04 mg/meq with the IUPAC values.
 */
export function caco3EquivalentWeightMgPerMeq(atomicWeights: ReadonlyMap<string, string>): { value: number; text: string } {
  const w = (el: string): InstanceType<typeof Dec> => {
    const t = atomicWeights.get(el);
    if (t === undefined) throw fieldError('QUANTITY_OUT_OF_RANGE', `/atomicWeights/${el}`, `The atomic weight of ${el} is needed for the CaCO3 equivalent weight.`);
    return new Dec(t);
  };
  const eq = w('Ca').plus(w('C')).plus(w('O').times(3)).dividedBy(2);
  return { value: eq.toNumber(), text: eq.toString() };
}

/** Alkalinity mg/L as CaCO3 → eq/L. */
export function alkalinityEqPerL(alkalinityMgPerLAsCaCO3: number, equivalentWeightMgPerMeq: number): number {
  return alkalinityMgPerLAsCaCO3 / equivalentWeightMgPerMeq / 1000;
}

/** Species of a closed carbonate system of total C_T at a pH. */
export function carbonateSpecies(pH: number, totalCarbonateMolPerL: number, k: CarbonateConstants, gammas: CarbonateActivityCoefficients = UNIT): CarbonateSpecies {
  const aH = Math.pow(10, -pH);
  const g1 = gammas.monovalent, g2 = gammas.divalent;
  // ratios of concentrations, with a(H+) from the pH
  const r1 = k.K1 / (aH * g1); // [HCO3-]/[H2CO3*]
  const r2 = (k.K2 * g1) / (aH * g2); // [CO3 2-]/[HCO3-]
  // normalise in a way that stays finite at both ends of the pH scale
  const d = 1 + r1 + r1 * r2;
  const a0 = 1 / d, a1 = r1 / d, a2 = (r1 * r2) / d;
  const h = aH / g1;
  const oh = k.Kw / (aH * g1);
  const hco3 = a1 * totalCarbonateMolPerL;
  const co3 = a2 * totalCarbonateMolPerL;
  return {
    pH,
    h2co3MolPerL: a0 * totalCarbonateMolPerL,
    hco3MolPerL: hco3,
    co3MolPerL: co3,
    ohMolPerL: oh,
    hMolPerL: h,
    totalCarbonateMolPerL,
    alkalinityEqPerL: hco3 + 2 * co3 + oh - h,
  };
}

export interface TotalCarbonateInput {
  readonly alkalinityMgPerLAsCaCO3: number;
  readonly pH: number;
  readonly constants: CarbonateConstants;
  /** mg CaCO3 per meq (50.04); see `caco3EquivalentWeightMgPerMeq`. */
  readonly equivalentWeightMgPerMeq: number;
  readonly activityCoefficients?: CarbonateActivityCoefficients;
}

export interface TotalCarbonateResult {
  readonly totalCarbonateMolPerL: number;
  readonly alkalinityEqPerL: number;
  readonly species: CarbonateSpecies;
}

/** C_T = (Alk − [OH-] + [H+]) / (α1 + 2α2). */
export function totalCarbonateFromAlkalinity(input: TotalCarbonateInput): TotalCarbonateResult {
  checkPH(input.pH);
  checkConstants(input.constants);
  const gammas = input.activityCoefficients ?? UNIT;
  checkGammas(gammas);
  if (!Number.isFinite(input.alkalinityMgPerLAsCaCO3) || input.alkalinityMgPerLAsCaCO3 < 0) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/alkalinityMgPerLAsCaCO3', `Alkalinity must be a number ≥ 0 mg/L as CaCO3; got ${String(input.alkalinityMgPerLAsCaCO3)}.`);
  }
  if (!Number.isFinite(input.equivalentWeightMgPerMeq) || input.equivalentWeightMgPerMeq <= 0) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/equivalentWeightMgPerMeq', 'The CaCO3 equivalent weight must be a positive number of mg/meq.');
  }
  const alk = alkalinityEqPerL(input.alkalinityMgPerLAsCaCO3, input.equivalentWeightMgPerMeq);
  const unitCT = carbonateSpecies(input.pH, 1, input.constants, gammas);
  const carbonatePart = unitCT.hco3MolPerL + 2 * unitCT.co3MolPerL; // α1 + 2α2
  const ct = (alk - unitCT.ohMolPerL + unitCT.hMolPerL) / carbonatePart;
  if (!(ct >= 0)) {
    throw fieldError(
      'CONDITIONS_OUT_OF_RANGE',
      '/alkalinityMgPerLAsCaCO3',
      `An alkalinity of ${input.alkalinityMgPerLAsCaCO3} mg/L as CaCO3 is less than the hydroxide alone carries at pH ${input.pH}; check the alkalinity and pH readings.`,
      { totalCarbonateMolPerL: ct },
    );
  }
  return { totalCarbonateMolPerL: ct, alkalinityEqPerL: alk, species: carbonateSpecies(input.pH, ct, input.constants, gammas) };
}

/**
 * The pH at which a closed system of total C_T has the given alkalinity (eq/L): the root of
 * C_T(α1 + 2α2) + [OH-] − [H+] − Alk, which rises monotonically with pH. Bisection to 1e-6.
 */
export function solveCarbonatePH(input: {
  readonly totalCarbonateMolPerL: number;
  readonly alkalinityEqPerL: number;
  readonly constants: CarbonateConstants;
  readonly activityCoefficients?: CarbonateActivityCoefficients;
}): number {
  checkConstants(input.constants);
  const gammas = input.activityCoefficients ?? UNIT;
  checkGammas(gammas);
  if (!Number.isFinite(input.totalCarbonateMolPerL) || input.totalCarbonateMolPerL < 0) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/totalCarbonateMolPerL', 'Total carbonate must be a number ≥ 0 mol/L.');
  }
  const f = (pH: number): number => carbonateSpecies(pH, input.totalCarbonateMolPerL, input.constants, gammas).alkalinityEqPerL - input.alkalinityEqPerL;
  const lo = 0, hi = 14;
  const flo = f(lo), fhi = f(hi);
  if (flo > 0 || fhi < 0) {
    throw fieldError(
      'CONDITIONS_OUT_OF_RANGE',
      '/alkalinityEqPerL',
      `No pH between 0 and 14 gives an alkalinity of ${input.alkalinityEqPerL} eq/L with ${input.totalCarbonateMolPerL} mol/L carbonate; the acid or base added is too large for this water.`,
      { alkalinityEqPerL: input.alkalinityEqPerL, totalCarbonateMolPerL: input.totalCarbonateMolPerL },
    );
  }
  if (flo === 0) return lo;
  if (fhi === 0) return hi;
  return bisect(f, lo, hi, 1e-6, flo);
}

export interface AcidAdditionInput extends TotalCarbonateInput {
  /** Strong acid added, meq/L (negative for a base). */
  readonly acidMeqPerL: number;
}

export interface AcidAdditionResult {
  readonly initialPH: number;
  readonly finalPH: number;
  /** initialPH − finalPH (positive when the pH falls). */
  readonly pHDrop: number;
  readonly totalCarbonateMolPerL: number;
  readonly initialAlkalinityMgPerLAsCaCO3: number;
  readonly alkalinityConsumedMgPerLAsCaCO3: number;
  readonly finalAlkalinityMgPerLAsCaCO3: number;
  readonly finalSpecies: CarbonateSpecies;
  /** True when the acid exceeds the alkalinity (final alkalinity < 0: the water is below its CO2 equivalence point). */
  readonly alkalinityExhausted: boolean;
}

/** pH after adding a strong acid (or base) at constant C_T, and the alkalinity consumed. */
export function acidAddition(input: AcidAdditionInput): AcidAdditionResult {
  if (!Number.isFinite(input.acidMeqPerL)) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/acidMeqPerL', 'The acid added must be a finite number of meq/L (negative for a base).');
  }
  const start = totalCarbonateFromAlkalinity(input);
  const gammas = input.activityCoefficients ?? UNIT;
  const finalAlkEq = start.alkalinityEqPerL - input.acidMeqPerL / 1000;
  const finalPH = solveCarbonatePH({ totalCarbonateMolPerL: start.totalCarbonateMolPerL, alkalinityEqPerL: finalAlkEq, constants: input.constants, activityCoefficients: gammas });
  const consumed = input.acidMeqPerL * input.equivalentWeightMgPerMeq;
  return {
    initialPH: input.pH,
    finalPH,
    pHDrop: input.pH - finalPH,
    totalCarbonateMolPerL: start.totalCarbonateMolPerL,
    initialAlkalinityMgPerLAsCaCO3: input.alkalinityMgPerLAsCaCO3,
    alkalinityConsumedMgPerLAsCaCO3: consumed,
    finalAlkalinityMgPerLAsCaCO3: input.alkalinityMgPerLAsCaCO3 - consumed,
    finalSpecies: carbonateSpecies(finalPH, start.totalCarbonateMolPerL, input.constants, gammas),
    alkalinityExhausted: finalAlkEq < 0,
  };
}

/**
 * Strong acid released by a dosing reaction, meq/L: (mg/L of the species ÷ its molar mass)
 * × H+ released per mole of it (from the balanced reaction; negative when H+ is consumed).
 */
export function acidReleasedMeqPerL(input: { readonly reactedMgPerL: number; readonly molarMassGPerMol: number; readonly hPlusPerMol: number }): number {
  if (!Number.isFinite(input.reactedMgPerL) || input.reactedMgPerL < 0) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/reactedMgPerL', 'The amount reacted must be a number ≥ 0 mg/L.');
  }
  if (!Number.isFinite(input.molarMassGPerMol) || input.molarMassGPerMol <= 0) {
    throw fieldError('QUANTITY_OUT_OF_RANGE', '/molarMassGPerMol', 'The molar mass must be a positive number of g/mol.');
  }
  return (input.reactedMgPerL / input.molarMassGPerMol) * input.hPlusPerMol;
}

/**
 * H+ released per mole of `species` consumed in a balanced reaction: (ν(H+) − ν(OH-)) / ν(species),
 * ν counted positive on the product side for H+/OH- and on the reactant side for the species
 * (OH- consumed counts as acid released: a base-medium equation gives the same number as the acid one).
 */
export function hPlusReleasedPerMol(reaction: Reaction, species: Species): number {
  const same = (a: Species, b: Species): boolean =>
    a.charge === b.charge &&
    Object.keys(a.composition).length === Object.keys(b.composition).length &&
    Object.entries(a.composition).every(([el, n]) => b.composition[el] === n);
  const isH = (s: Species): boolean => s.charge === 1 && Object.keys(s.composition).length === 1 && s.composition['H'] === 1;
  const isOH = (s: Species): boolean => s.charge === -1 && Object.keys(s.composition).length === 2 && s.composition['H'] === 1 && s.composition['O'] === 1;
  let acid = 0;
  let consumed = 0;
  for (const t of reaction.terms) {
    const nu = Number(t.coefficient) * (t.side === 'product' ? 1 : -1);
    if (isH(t.species)) acid += nu;
    else if (isOH(t.species)) acid -= nu;
    else if (same(t.species, species)) consumed -= nu;
  }
  if (consumed <= 0) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `${species.text} is not consumed in ${reaction.equation}.`,
      fields: [{ pointer: '/species', message: 'species must be a reactant of the reaction' }],
    });
  }
  return acid / consumed;
}
