/**
 * Acid–base speciation: fractions α of a mono-, di- or polyprotic acid at a pH, and
 * equilibrium constants evaluated at temperature from the forms the tables store.
 * pH is −log10 a(H+); with thermodynamic pKa values the fractions are fractions of
 * activities (use `mixedPKa` to get fractions of concentrations at an ionic strength).
 */
import { DomainError } from '../core/errors.js';
import type { EquilibriumRow } from '../reference/schemas.js';
import { checkTemperatureC, kelvin, type PhysicalConstants } from './constants.js';

// ---------------------------------------------------------------- log K(T)

/**
 * log10 K(T) = a + b·T + c/T + d·log10 T + e/T² + f·T²   (T in K)
 * — the form of Plummer & Busenberg 1982 (carbonate), Harned & Owen / Morris 1966
 * (pKa = A/T − B + C·T written as log K = B − C·T − A/T) and Emerson et al. 1975.
 * Missing coefficients are 0.
 */
export interface LogKExpression {
  readonly kind: 'expression';
  readonly coefficients: { readonly a?: number; readonly b?: number; readonly c?: number; readonly d?: number; readonly e?: number; readonly f?: number };
}

/** van 't Hoff with constant ΔH°: log K(T) = log K(Tr) − ΔH°/(R ln10)·(1/T − 1/Tr). */
export interface LogKVantHoff {
  readonly kind: 'van-t-hoff';
  readonly log10KRef: number;
  readonly referenceTemperatureC: number;
  /** Standard reaction enthalpy, kJ/mol. */
  readonly deltaHkJPerMol: number;
}

/** No temperature dependence known: the value at its reference temperature is used everywhere (reported). */
export interface LogKConstant {
  readonly kind: 'constant';
  readonly log10K: number;
  readonly referenceTemperatureC: number;
}

export type LogKForm = LogKExpression | LogKVantHoff | LogKConstant;

export interface EquilibriumSpec {
  readonly form: LogKForm;
  /** Source id (tables/sources.json) or citation. */
  readonly source: string;
  /** Temperature range (°C) the source fitted; outside it the value is flagged as extrapolated. */
  readonly validRangeC?: { readonly min: number; readonly max: number };
  readonly label?: string;
}

export interface LogKResult {
  readonly log10K: number;
  /** −log10 K */
  readonly pK: number;
  readonly K: number;
  readonly temperatureC: number;
  readonly form: LogKForm['kind'];
  readonly source: string;
  /** True when temperatureC lies outside the source's fitted range. */
  readonly extrapolated: boolean;
  /** True when the form has no temperature dependence and temperatureC differs from its reference temperature. */
  readonly temperatureIgnored: boolean;
}

/** Evaluate log10 K at temperatureC (°C). R and 273.15 come from `constants`. */
export function log10KAt(temperatureC: number, spec: EquilibriumSpec, constants: PhysicalConstants): LogKResult {
  checkTemperatureC(temperatureC);
  const T = kelvin(temperatureC, constants);
  const f = spec.form;
  let log10K: number;
  let temperatureIgnored = false;
  switch (f.kind) {
    case 'expression': {
      const { a = 0, b = 0, c = 0, d = 0, e = 0, f: ff = 0 } = f.coefficients;
      log10K = a + b * T + c / T + d * Math.log10(T) + e / (T * T) + ff * T * T;
      break;
    }
    case 'van-t-hoff': {
      const Tr = kelvin(f.referenceTemperatureC, constants);
      const dH = f.deltaHkJPerMol * 1000;
      log10K = f.log10KRef - (dH / (constants.gasConstant.value * Math.LN10)) * (1 / T - 1 / Tr);
      break;
    }
    case 'constant':
      log10K = f.log10K;
      temperatureIgnored = temperatureC !== f.referenceTemperatureC;
      break;
  }
  if (!Number.isFinite(log10K)) {
    throw new DomainError('CONDITIONS_OUT_OF_RANGE', {
      detail: `The equilibrium constant${spec.label ? ` ${spec.label}` : ''} cannot be evaluated at ${temperatureC} °C.`,
      fields: [{ pointer: '/temperatureC', message: 'equilibrium constant not finite at this temperature' }],
    });
  }
  const r = spec.validRangeC;
  const extrapolated = r !== undefined && (temperatureC < r.min || temperatureC > r.max);
  return { log10K, pK: -log10K, K: Math.pow(10, log10K), temperatureC, form: f.kind, source: spec.source, extrapolated, temperatureIgnored };
}

/** pK = −log10 K at temperatureC. */
export function pKAt(temperatureC: number, spec: EquilibriumSpec, constants: PhysicalConstants): number {
  return log10KAt(temperatureC, spec, constants).pK;
}

export interface KwResult extends LogKResult {
  readonly Kw: number;
  readonly pKw: number;
}

/** Ion product of water Kw = a(H+)·a(OH-) at temperatureC, from the tabled form (e.g. Harned & Owen). */
export function kwAt(temperatureC: number, kwSpec: EquilibriumSpec, constants: PhysicalConstants): KwResult {
  const r = log10KAt(temperatureC, kwSpec, constants);
  return { ...r, Kw: r.K, pKw: r.pK };
}

/** Thermochemical calorie, J (exact by definition): for ΔH° rows printed in kcal/mol. */
const JOULES_PER_THERMOCHEMICAL_CALORIE = 4.184;

/**
 * An equilibria-table row (tables/equilibria.json) as an EquilibriumSpec:
 *   temperature expression (log10K or pK form, coefficients A1…A6) → 'expression';
 *   logK/pK at 25 °C with ΔH° → 'van-t-hoff'; logK/pK alone → 'constant' (flagged when used at another temperature).
 * `referenceTemperatureC` is the tables' reference temperature (25 °C, tables/constants.json T25).
 */
export function equilibriumSpecFromRow(row: EquilibriumRow, referenceTemperatureC = 25): EquilibriumSpec {
  const base = { source: row.source, label: row.reaction };
  const t = row.temperature;
  if (t !== undefined) {
    const sign = t.quantity === 'pK' ? -1 : 1;
    const c = (x: string | undefined): number => (x === undefined ? 0 : sign * Number(x));
    const k = t.coefficients;
    const validRangeC = t.validFromC !== undefined && t.validToC !== undefined ? { validRangeC: { min: t.validFromC, max: t.validToC } } : {};
    return {
      ...base,
      ...validRangeC,
      form: { kind: 'expression', coefficients: { a: c(k.A1), b: c(k.A2), c: c(k.A3), d: c(k.A4), e: c(k.A5), f: c(k.A6) } },
    };
  }
  const log10K = row.logK !== undefined ? Number(row.logK) : -Number(row.pK);
  if (row.deltaH !== undefined) {
    const dH = Number(row.deltaH.value) * (row.deltaH.unit === 'kcal/mol' ? JOULES_PER_THERMOCHEMICAL_CALORIE : 1);
    return { ...base, form: { kind: 'van-t-hoff', log10KRef: log10K, referenceTemperatureC, deltaHkJPerMol: dH } };
  }
  return { ...base, form: { kind: 'constant', log10K, referenceTemperatureC } };
}

// ---------------------------------------------------------------- fractions

function checkPKas(pKas: readonly number[]): void {
  if (pKas.length === 0) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: 'At least one pKa is needed.', fields: [{ pointer: '/pKas', message: 'at least one pKa is needed' }] });
  }
  pKas.forEach((p, i) => {
    if (!Number.isFinite(p)) {
      throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: `pKa ${i + 1} is not a finite number.`, fields: [{ pointer: `/pKas/${i}`, message: 'pKa must be a finite number' }] });
    }
  });
}

/**
 * Fractions α₀…αₙ of an n-protic acid HₙA at pH: α₀ is the fully protonated form,
 * αₙ the fully deprotonated one. pKas in order of dissociation (pKa1, pKa2, …). Σα = 1.
 * Computed in log space, so no fraction underflows to a spurious 0 before normalising.
 */
export function acidFractions(pH: number, pKas: readonly number[]): number[] {
  if (!Number.isFinite(pH)) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: 'pH must be a finite number.', fields: [{ pointer: '/pH', message: 'pH must be a finite number' }] });
  }
  checkPKas(pKas);
  // log10 of [Hₙ₋ⱼA]/[HₙA] = Σ_{i≤j} (pH − pKa_i)
  const logs: number[] = [0];
  let acc = 0;
  for (const pKa of pKas) {
    acc += pH - pKa;
    logs.push(acc);
  }
  const max = Math.max(...logs);
  const terms = logs.map((l) => Math.pow(10, l - max));
  const total = terms.reduce((s, x) => s + x, 0);
  return terms.map((x) => x / total);
}

/** HA ⇌ H+ + A-: alpha0 = fraction as HA, alpha1 = fraction as A-. */
export function monoproticFractions(pH: number, pKa: number): { alpha0: number; alpha1: number } {
  const [alpha0, alpha1] = acidFractions(pH, [pKa]) as [number, number];
  return { alpha0, alpha1 };
}

/** H2A ⇌ HA- ⇌ A2-: alpha0 = H2A, alpha1 = HA-, alpha2 = A2-. */
export function diproticFractions(pH: number, pKa1: number, pKa2: number): { alpha0: number; alpha1: number; alpha2: number } {
  const [alpha0, alpha1, alpha2] = acidFractions(pH, [pKa1, pKa2]) as [number, number, number];
  return { alpha0, alpha1, alpha2 };
}

/**
 * The mixed acidity constant for fractions of concentrations with a(H+) from the pH meter:
 * [A]/[HA] = Ka·γ(HA) / (a(H+)·γ(A)), so pKa' = pKa + log10 γ(A) − log10 γ(HA).
 */
export function mixedPKa(pKa: number, gammaAcid: number, gammaBase: number): number {
  return pKa + Math.log10(gammaBase) - Math.log10(gammaAcid);
}
