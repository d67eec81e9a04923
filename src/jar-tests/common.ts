/**
 * Shared pieces of the jar-test module: defaults (each with its basis), the
 * aliquot/dose arithmetic with and without the dilution by the aliquot, and
 * input validation that reports every bad field at once.
 *
 * Units used throughout:
 *   dose and residual     mg/L (on the oxidant's trade basis, e.g. "as KMnO4", "as Cl2")
 *   stock strength        g/L (= mg/mL) on the same basis
 *   jar volume            L
 *   aliquot               mL
 * so an aliquot a (mL) of a stock C (g/L = mg/mL) in a jar V (L) carries a·C mg.
 */
import { DomainError, type FieldProblem } from '../core/errors.js';
import { Dec } from '../core/decimal.js';
import { RESIDUAL_MAX_MG_PER_L } from '../dosing/bounds.js';

/**
 * The largest jar dose or residual reading taken, mg/L: the bound src/dosing/bounds.ts puts on a
 * target residual and a background demand (1000 mg/L, ten times the strongest chlorination of new
 * mains; common practice). Above it the figure is a unit slip or a miscopied reading, not a bench dose.
 */
export const JAR_DOSE_MAX_MG_PER_L = RESIDUAL_MAX_MG_PER_L.toNumber();

/** Severity of a problem or warning: error = the plan is wrong; warning = usable with care; info = not checked or advice. */
export type Severity = 'error' | 'warning' | 'info';

/** One finding in a plan, a check or an evaluation. `code` is stable (acceptance checks may rely on it). */
export interface JarProblem {
  readonly code: string;
  readonly severity: Severity;
  readonly message: string;
  /** 1-based jar number when the finding concerns one jar. */
  readonly jar?: number;
}

/** A default with the reason it is what it is. */
export interface StatedDefault<T> {
  readonly value: T;
  readonly basis: string;
}

/**
 * Defaults of the jar-test module. None of these is a published constant; each
 * is a rule of thumb of laboratory practice and is marked as such, and each is a
 * parameter of the function that uses it.
 */
export const JAR_TEST_DEFAULTS = {
  jars: { value: 6, basis: 'common practice: a six-place gang stirrer' },
  ladderFromFraction: { value: 0.5, basis: 'common practice: ladder from 50 % of the expected demand' },
  ladderToFraction: { value: 1.5, basis: 'common practice: ladder to 150 % of the expected demand' },
  pipetteResolutionMl: { value: 0.1, basis: 'common practice: 1 mL and 5 mL graduated pipettes read to 0.1 mL' },
  minAliquotMl: {
    value: 1.0,
    basis: 'common practice: at least 1.0 mL and at least 10 pipette steps, so rounding to the pipette changes a dose by 5 % at most',
  },
  minAliquotResolutionSteps: { value: 10, basis: 'common practice: see minAliquotMl' },
  maxAliquotFraction: {
    value: 0.01,
    basis: 'common practice: an aliquot of at most 1 % of the jar volume dilutes the jar by at most 1 %, which is negligible beside the other errors',
  },
  stockStrengthsGPerL: {
    value: [0.1, 0.25, 0.5, 1, 2, 5, 10] as readonly number[],
    basis: 'common practice: round stock strengths that are easy to make up and to check',
  },
  flaskVolumesMl: { value: [100, 250, 500, 1000] as readonly number[], basis: 'standard volumetric flask sizes (class A)' },
  stockVolumeFactor: {
    value: 2,
    basis: 'common practice: make at least twice the stock the ladder uses, enough to rinse the pipette and repeat a jar',
  },
  minWeighMassG: {
    value: 0.1,
    basis: 'common practice: weigh at least 0.1 g so a 0.1 mg analytical balance reads the mass to 0.1 %',
  },
  minTradeVolumeMl: {
    value: 1.0,
    basis: 'common practice: measure at least 1.0 mL of a trade solution with a volumetric or graduated pipette',
  },
  contactTimesMin: { value: [5, 15, 30] as readonly number[], basis: 'common practice: sample at 5, 15 and 30 min of contact' },
  detectionLimitMgPerL: {
    value: 0.05,
    basis: 'common practice: the lower working limit of a DPD field colorimeter reading for residual oxidant',
  },
  minJarVolumeL: {
    value: 0.25,
    basis:
      'common practice: bench jars hold 0.5 to 2 L (ASTM D2035 uses 1 L beakers, from memory of ASTM D2035; verify); in a vessel under 0.25 L the aliquots and the samples drawn for analysis are too large a share of the jar',
  },
  permanganateVisibleMgPerL: {
    value: 0.05,
    basis:
      'common practice (operator-practice): permanganate colours water pink from about 0.05 mg/L as KMnO4 (a commonly quoted visibility threshold, from memory; verify); the US EPA 1999 Alternative Disinfectants and Oxidants Guidance Manual §5.1.2 (usepa-1999-adogm) says a permanganate residual is not desirable because it gives water a pink colour',
  },
  margin: {
    value: { kind: 'relative', fraction: 0.1 } as DoseMargin,
    basis: 'common practice: +10 % over the bench dose covers day-to-day change in raw-water demand and bench-to-plant scale-up',
  },
  permanganateMargin: {
    value: { kind: 'relative', fraction: 0 } as DoseMargin,
    basis:
      'common practice for permanganate: no margin over the bench dose, since any permanganate left over shows as pink water (US EPA 1999 Alternative Disinfectants and Oxidants Guidance Manual §5.1.2, usepa-1999-adogm, says a residual is not desirable); the dose is trimmed at the plant by watching for colour ahead of the filters',
  },
} as const;

/** The margin added to the bench result to give the plant dose. */
export type DoseMargin =
  | { readonly kind: 'relative'; readonly fraction: number }
  | { readonly kind: 'absolute'; readonly mgPerL: number };

// ---------------------------------------------------------------------------
// arithmetic

/**
 * Dose in the jar from an aliquot, with the dilution by the aliquot accounted for:
 *   dose = a·C / (V + a/1000)   [mg/L]  (a mL, C mg/mL, V L)
 */
export function doseFromAliquot(aliquotMl: number, stockGPerL: number, jarVolumeL: number): number {
  return (aliquotMl * stockGPerL) / (jarVolumeL + aliquotMl / 1000);
}

/** Nominal dose, ignoring the dilution by the aliquot: dose = a·C / V. */
export function nominalDoseFromAliquot(aliquotMl: number, stockGPerL: number, jarVolumeL: number): number {
  return (aliquotMl * stockGPerL) / jarVolumeL;
}

/**
 * Aliquot (mL, not rounded) for a dose.
 *   nominal:             a = D·V / C
 *   dilution corrected:  a = D·V / (C − D/1000)   (solves D = a·C / (V + a/1000))
 * The corrected form needs the stock (in mg/L, 1000·C) to be stronger than the dose.
 */
export function aliquotForDose(doseMgPerL: number, stockGPerL: number, jarVolumeL: number, correctDilution: boolean): number {
  if (!correctDilution) return (doseMgPerL * jarVolumeL) / stockGPerL;
  return (doseMgPerL * jarVolumeL) / (stockGPerL - doseMgPerL / 1000);
}

/** Round a volume to a multiple of the pipette resolution (decimal arithmetic, half to even). */
export function roundToResolution(volumeMl: number, resolutionMl: number): number {
  const steps = new Dec(volumeMl).dividedBy(resolutionMl).toDecimalPlaces(0, Dec.ROUND_HALF_EVEN);
  return steps.times(resolutionMl).toNumber();
}

/** True when a volume is an exact multiple of the resolution (decimal arithmetic, so 2.3 is a multiple of 0.1). */
export function isMultipleOf(volumeMl: number, resolutionMl: number): boolean {
  return new Dec(volumeMl).mod(resolutionMl).isZero();
}

/** Evenly spaced values from a to b inclusive (n ≥ 2), through Dec so 0.5..1.5 gives 0.7 not 0.7000000000000001. */
export function evenlySpaced(a: number, b: number, n: number): number[] {
  if (n === 1) return [a];
  const step = new Dec(b).minus(a).dividedBy(n - 1);
  return Array.from({ length: n }, (_, i) => new Dec(a).plus(step.times(i)).toNumber());
}

// ---------------------------------------------------------------------------
// validation

/** Collects bad fields, then throws one JAR_TEST_INVALID naming all of them. */
export class FieldCheck {
  readonly problems: FieldProblem[] = [];

  add(pointer: string, message: string): void {
    this.problems.push({ pointer, message });
  }

  finite(value: unknown, pointer: string, what: string): value is number {
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      this.add(pointer, `${what} must be a finite number`);
      return false;
    }
    return true;
  }

  positive(value: unknown, pointer: string, what: string): boolean {
    if (!this.finite(value, pointer, what)) return false;
    if (value <= 0) {
      this.add(pointer, `${what} must be greater than 0 (got ${value})`);
      return false;
    }
    return true;
  }

  nonNegative(value: unknown, pointer: string, what: string): boolean {
    if (!this.finite(value, pointer, what)) return false;
    if (value < 0) {
      this.add(pointer, `${what} must not be negative (got ${value})`);
      return false;
    }
    return true;
  }

  /** A jar dose or residual reading (mg/L): not negative and at most JAR_DOSE_MAX_MG_PER_L. */
  doseMgPerL(value: unknown, pointer: string, what: string): boolean {
    if (!this.nonNegative(value, pointer, what)) return false;
    if ((value as number) > JAR_DOSE_MAX_MG_PER_L) {
      this.add(
        pointer,
        `${what} must be at most ${JAR_DOSE_MAX_MG_PER_L} mg/L (got ${fmt(value as number)} mg/L): that is ten times the strongest chlorination of new mains, not a jar-test figure (common practice, the bound src/dosing/bounds.ts puts on a target residual); check the value and its unit`,
      );
      return false;
    }
    return true;
  }

  fraction(value: unknown, pointer: string, what: string): boolean {
    if (!this.finite(value, pointer, what)) return false;
    if (value <= 0 || value > 1) {
      this.add(pointer, `${what} must be a fraction in (0, 1] (got ${value}); give 97 % as 0.97`);
      return false;
    }
    return true;
  }

  integerInRange(value: unknown, pointer: string, what: string, min: number, max: number): boolean {
    if (typeof value !== 'number' || !Number.isInteger(value) || value < min || value > max) {
      this.add(pointer, `${what} must be a whole number from ${min} to ${max} (got ${String(value)})`);
      return false;
    }
    return true;
  }

  throwIfAny(subject: string): void {
    if (this.problems.length === 0) return;
    const first = this.problems[0]!;
    const more = this.problems.length > 1 ? ` (and ${this.problems.length - 1} more)` : '';
    throw new DomainError('JAR_TEST_INVALID', {
      detail: `${subject}: ${first.pointer || '/'} ${first.message}${more}.`,
      fields: this.problems,
    });
  }
}

/** True when the dose basis is permanganate (as KMnO4, NaMnO4 or MnO4-). */
export function isPermanganateBasis(basis: string | undefined, activeSpecies?: string): boolean {
  return (basis !== undefined && /MnO4/.test(basis)) || activeSpecies === 'MnO4-';
}

/**
 * The pink-water threshold for a permanganate dose basis, or null when the basis is not permanganate
 * or the threshold is not stated on it. The threshold is stated as KMnO4 only (JAR_TEST_DEFAULTS.permanganateVisibleMgPerL).
 */
export function pinkWaterThreshold(basis: string | undefined): { readonly mgPerL: number; readonly basis: string } | null {
  if (basis !== 'KMnO4') return null;
  return { mgPerL: JAR_TEST_DEFAULTS.permanganateVisibleMgPerL.value, basis: JAR_TEST_DEFAULTS.permanganateVisibleMgPerL.basis };
}

/**
 * The default detection limit of the residual reading, stated on the oxidant's own residual method
 * (the method the plan's schedule names): permanganate is read by its colour or its absorbance at
 * 525 nm, not by DPD. The value is a rule of thumb in every case; the caller gives the limit of the
 * method and cell really used.
 */
export function defaultDetectionLimit(basis: string | undefined, residualMethod: string): StatedDefault<number> {
  const value = JAR_TEST_DEFAULTS.detectionLimitMgPerL.value;
  if (isPermanganateBasis(basis)) {
    return {
      value,
      basis:
        `common practice: the lower working limit of the permanganate residual reading (${residualMethod}), taken as about the ${JAR_TEST_DEFAULTS.permanganateVisibleMgPerL.value} mg/L as KMnO4 ` +
        'from which permanganate colours water pink (a commonly quoted visibility threshold, from memory; verify); give the limit of the reading used (an absorbance in a short cell reads less well than the eye against white in a tall jar)',
    };
  }
  if (/\bDPD\b/.test(residualMethod)) {
    return { value, basis: `common practice: the lower working limit of a field colorimeter reading of the residual by ${residualMethod}` };
  }
  return { value, basis: `common practice: a usual lower working limit for a residual-oxidant reading by ${residualMethod}; give the limit of the method used` };
}

/** A stock strength (g/L) that gives at least `aliquotMl` for `doseMgPerL` in `jarVolumeL`: D·V/a, rounded down to 2 significant figures. */
export function strengthForAliquot(doseMgPerL: number, jarVolumeL: number, aliquotMl: number): number {
  return new Dec(doseMgPerL).times(jarVolumeL).dividedBy(aliquotMl).toSignificantDigits(2, Dec.ROUND_DOWN).toNumber();
}

/** The jar volume: above 0, at least the bench minimum, at most the maximum; a message that points at a unit slip. */
export function checkJarVolume(c: FieldCheck, V: number, maxL?: number): void {
  if (!c.positive(V, '/jarVolumeL', 'the jar volume (L)')) return;
  if (maxL !== undefined && V > maxL) c.add('/jarVolumeL', `the jar volume must be at most ${maxL} L (got ${fmt(V)} L); bench jars hold 0.5 to 2 L`);
  else if (V < JAR_TEST_DEFAULTS.minJarVolumeL.value) {
    c.add(
      '/jarVolumeL',
      `the jar volume must be at least ${JAR_TEST_DEFAULTS.minJarVolumeL.value} L (got ${fmt(V)} L = ${fmt(V * 1000)} mL); bench jars hold 0.5 to 2 L ` +
        '(common practice; ASTM D2035 uses 1 L beakers, from memory). Check the unit: a 1 L jar is {"value": 1, "unit": "L"} or {"value": 1000, "unit": "mL"}',
    );
  }
}

export { NEGLIGIBLE_RELATIVE, isNegligible } from '../core/negligible.js';
import { isNegligible } from '../core/negligible.js';

/**
 * Format a number for a message: up to 4 significant figures, no trailing zeros, never in
 * e-notation. With `scale` (the size of the figures it goes with, e.g. the test's mg/L), a value
 * that is rounding noise against it (isNegligible) prints as 0.
 */
export function fmt(x: number, sig = 4, scale?: number): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  if (scale !== undefined && isNegligible(x, scale)) return '0';
  return new Dec(x).toSignificantDigits(sig, Dec.ROUND_HALF_EVEN).toFixed();
}

/** The size of a jar test's mg/L figures (estimate, doses, residuals): what a standard error or an intercept is judged against. */
export function mgPerLScale(estimateMgPerL: number, jars: readonly { readonly doseMgPerL: number; readonly results: readonly { readonly residualOxidantMgPerL?: number | null }[] }[]): number {
  return Math.max(
    Math.abs(estimateMgPerL),
    ...jars.map((j) => Math.abs(j.doseMgPerL)),
    ...jars.flatMap((j) => j.results.map((r) => Math.abs(r.residualOxidantMgPerL ?? 0))),
  );
}
