/**
 * Check a jar-test plan someone wrote: recompute each jar's dose from its aliquot
 * (or the aliquot a stated dose needs), and report every problem with a stable code
 * and a message an engineer can act on. Bad input (not a plan with problems, but a
 * request that cannot be read) throws DomainError JAR_TEST_INVALID with field pointers.
 */
import {
  FieldCheck,
  JAR_TEST_DEFAULTS as D,
  aliquotForDose,
  checkJarVolume,
  doseFromAliquot,
  fmt,
  isMultipleOf,
  nominalDoseFromAliquot,
  roundToResolution,
  strengthForAliquot,
  type JarProblem,
} from './common.js';
import type { Solubility } from './product.js';

/** Stable problem codes of the plan check. */
export const CHECK_CODES = {
  MISSING_DOSE_AND_ALIQUOT: 'MISSING_DOSE_AND_ALIQUOT',
  DOSE_MISMATCH: 'DOSE_MISMATCH',
  DOSE_OFF_PIPETTE_STEP: 'DOSE_OFF_PIPETTE_STEP',
  DOSE_UNREACHABLE: 'DOSE_UNREACHABLE',
  ALIQUOT_TOO_LARGE: 'ALIQUOT_TOO_LARGE',
  BELOW_PIPETTE_RESOLUTION: 'BELOW_PIPETTE_RESOLUTION',
  NOT_PIPETTE_MULTIPLE: 'NOT_PIPETTE_MULTIPLE',
  ALIQUOT_BELOW_MINIMUM: 'ALIQUOT_BELOW_MINIMUM',
  DUPLICATE_DOSE: 'DUPLICATE_DOSE',
  NON_MONOTONIC_LADDER: 'NON_MONOTONIC_LADDER',
  NOT_BRACKETING: 'NOT_BRACKETING',
  NO_ESTIMATE: 'NO_ESTIMATE',
  CONTROL_JAR: 'CONTROL_JAR',
  STOCK_ABOVE_SOLUBILITY: 'STOCK_ABOVE_SOLUBILITY',
  STOCK_ABOVE_PRODUCT_LIMIT: 'STOCK_ABOVE_PRODUCT_LIMIT',
  STOCK_ABOVE_TRADE_GRADE: 'STOCK_ABOVE_TRADE_GRADE',
  NO_CONTACT_TIMES: 'NO_CONTACT_TIMES',
  DUPLICATE_CONTACT_TIME: 'DUPLICATE_CONTACT_TIME',
  TOO_FEW_JARS: 'TOO_FEW_JARS',
} as const;
export type CheckCode = keyof typeof CHECK_CODES;

export interface CheckJarPlanInput {
  readonly oxidant: string;
  /** Stoichiometric estimate, mg/L; without it the bracketing is not checked. */
  readonly estimateMgPerL?: number;
  readonly backgroundMgPerL?: number;
  readonly jarVolumeL: number;
  readonly stockStrengthGPerL: number;
  readonly jars: readonly { readonly doseMgPerL?: number; readonly aliquotMl?: number }[];
  readonly contactTimesMin?: readonly number[];
  /** Default 0.1 mL (common practice). */
  readonly pipetteResolutionMl?: number;
  readonly solubility?: Solubility;
  /**
   * A liquid concentrate's limit on the stock (tables/strength-limits.json, judged by the caller): "error" when
   * no solution of the product is that strong (STOCK_ABOVE_PRODUCT_LIMIT), "warning" when it is above the
   * strongest trade grade tabled (STOCK_ABOVE_TRADE_GRADE).
   */
  readonly strengthLimit?: { readonly severity: 'error' | 'warning'; readonly message: string };
  readonly minAliquotMl?: number;
  readonly maxAliquotFraction?: number;
}

export interface CheckedJar {
  readonly jar: number;
  /** As stated in the plan (null when not stated). */
  readonly doseMgPerL: number | null;
  readonly aliquotMl: number | null;
  /** Dose the (stated or recomputed) aliquot gives, dilution accounted for: a·C/(V + a/1000). */
  readonly recomputedDoseMgPerL: number | null;
  /** The stated aliquot, or the aliquot a stated dose needs rounded to the pipette. */
  readonly recomputedAliquotMl: number | null;
  /** a·C/V, the dose ignoring dilution by the aliquot. */
  readonly nominalDoseMgPerL: number | null;
  readonly problems: readonly JarProblem[];
}

export interface JarPlanCheck {
  readonly oxidant: string;
  readonly jarVolumeL: number;
  readonly stockStrengthGPerL: number;
  readonly pipetteResolutionMl: number;
  readonly expectedDemandMgPerL: number | null;
  readonly jars: readonly CheckedJar[];
  /** Problems of the plan as a whole (bracketing, order, stock, contact times). */
  readonly problems: readonly JarProblem[];
  /** True when no jar or plan problem has severity "error". */
  readonly ok: boolean;
  /** How the dose tolerance is made up (for the message reader). */
  readonly toleranceRule: string;
}

const DUPLICATE_RELATIVE = 0.005;
const FIGURE_ROUNDING_RELATIVE = 0.005;
const FIGURE_ROUNDING_ABSOLUTE_MG_PER_L = 0.005;
/** Half a pipette step of at most 5 % of the dose is rounding (a minimum aliquot of 10 steps; common practice). */
const PIPETTE_ROUNDING_RELATIVE = 0.05;

function validate(input: CheckJarPlanInput): void {
  const c = new FieldCheck();
  if (typeof input.oxidant !== 'string' || input.oxidant.length === 0) c.add('/oxidant', 'give the oxidant product id');
  if (input.estimateMgPerL !== undefined) c.nonNegative(input.estimateMgPerL, '/estimateMgPerL', 'the stoichiometric estimate (mg/L)');
  if (input.backgroundMgPerL !== undefined) c.nonNegative(input.backgroundMgPerL, '/backgroundMgPerL', 'the background demand (mg/L)');
  checkJarVolume(c, input.jarVolumeL);
  c.positive(input.stockStrengthGPerL, '/stockStrengthGPerL', 'the stock strength (g/L)');
  if (input.pipetteResolutionMl !== undefined) c.positive(input.pipetteResolutionMl, '/pipetteResolutionMl', 'the pipette resolution (mL)');
  if (input.minAliquotMl !== undefined) c.positive(input.minAliquotMl, '/minAliquotMl', 'the minimum aliquot (mL)');
  if (input.maxAliquotFraction !== undefined) c.fraction(input.maxAliquotFraction, '/maxAliquotFraction', 'the largest aliquot as a fraction of the jar volume');
  if (input.solubility !== undefined) c.positive(input.solubility.gPerL, '/solubility/gPerL', 'the solubility (g/L)');
  if (!Array.isArray(input.jars) || input.jars.length === 0 || input.jars.length > 50) {
    c.add('/jars', 'give from 1 to 50 jars, each with doseMgPerL, aliquotMl or both');
  } else {
    input.jars.forEach((j, i) => {
      if (j === null || typeof j !== 'object') {
        c.add(`/jars/${i}`, 'each jar must be an object with doseMgPerL and/or aliquotMl');
        return;
      }
      if (j.doseMgPerL !== undefined) c.doseMgPerL(j.doseMgPerL, `/jars/${i}/doseMgPerL`, `the dose of jar ${i + 1} (mg/L)`);
      if (j.aliquotMl !== undefined && c.nonNegative(j.aliquotMl, `/jars/${i}/aliquotMl`, `the aliquot of jar ${i + 1} (mL)`) && Number.isFinite(input.jarVolumeL) && j.aliquotMl > input.jarVolumeL * 1000) {
        c.add(`/jars/${i}/aliquotMl`, `the aliquot of jar ${i + 1} (${fmt(j.aliquotMl)} mL) is more than the ${fmt(input.jarVolumeL * 1000)} mL jar itself; check the value and its unit (mL)`);
      }
    });
  }
  if (input.contactTimesMin !== undefined) {
    if (!Array.isArray(input.contactTimesMin)) c.add('/contactTimesMin', 'give the contact times as a list of minutes');
    else input.contactTimesMin.forEach((t, i) => c.positive(t, `/contactTimesMin/${i}`, 'a contact time (min)'));
  }
  c.throwIfAny('The jar-test plan to check is not valid');
}

/**
 * Check a written jar-test plan. Each problem has a stable code (CHECK_CODES), a severity and a message.
 *
 * A stated dose is accepted when it is within the sum of
 *   - the dilution by the aliquot (|a·C/V − a·C/(V + a/1000)|: either form is accepted when the aliquot is small),
 *   - half a pipette step (0.5·r·C/V: a target dose whose aliquot was rounded to the pipette), but at most
 *     5 % of the dose: with a coarser step the written aliquot gives another dose than the one written,
 *   - the rounding of the printed figure (0.5 % of the dose, at least 0.005 mg/L)
 * of the dose recomputed from the aliquot.
 */
export function checkJarPlan(input: CheckJarPlanInput): JarPlanCheck {
  validate(input);
  const V = input.jarVolumeL;
  const C = input.stockStrengthGPerL;
  const res = input.pipetteResolutionMl ?? D.pipetteResolutionMl.value;
  const minAliquot = input.minAliquotMl ?? Math.max(D.minAliquotMl.value, D.minAliquotResolutionSteps.value * res);
  const maxFraction = input.maxAliquotFraction ?? D.maxAliquotFraction.value;
  const maxAliquot = maxFraction * V * 1000;
  const halfStepDose = (0.5 * res * C) / V;
  // A target dose written beside its pipette-rounded aliquot is off by up to half a pipette step, but only
  // where that step is small beside the dose: at most 5 %, what the ten-step minimum aliquot allows
  // (common practice, JAR_TEST_DEFAULTS.minAliquotMl). Beyond it the written aliquot gives another dose
  // than the one written, and the jar gets the aliquot's.
  const roundingAllowance = (recomputed: number) => Math.min(halfStepDose, PIPETTE_ROUNDING_RELATIVE * recomputed);
  const planProblems: JarProblem[] = [];

  const jars: CheckedJar[] = input.jars.map((j, i): CheckedJar => {
    const n = i + 1;
    const problems: JarProblem[] = [];
    const stated = j.doseMgPerL ?? null;
    const statedAliquot = j.aliquotMl ?? null;
    if (stated === null && statedAliquot === null) {
      problems.push({ code: CHECK_CODES.MISSING_DOSE_AND_ALIQUOT, severity: 'error', jar: n, message: `Jar ${n} has neither a dose nor an aliquot; give one of them.` });
      return { jar: n, doseMgPerL: null, aliquotMl: null, recomputedDoseMgPerL: null, recomputedAliquotMl: null, nominalDoseMgPerL: null, problems };
    }
    if (stated !== null && stated >= 1000 * C) {
      problems.push({
        code: CHECK_CODES.DOSE_UNREACHABLE,
        severity: 'error',
        jar: n,
        message: `Jar ${n}: ${fmt(stated)} mg/L cannot be reached with a ${fmt(C)} g/L (${fmt(1000 * C)} mg/L) stock however much is added; use a stronger stock.`,
      });
      if (statedAliquot === null) {
        return { jar: n, doseMgPerL: stated, aliquotMl: null, recomputedDoseMgPerL: null, recomputedAliquotMl: null, nominalDoseMgPerL: null, problems };
      }
    }

    let aliquot: number;
    const fromDose = statedAliquot === null;
    if (statedAliquot !== null) {
      aliquot = statedAliquot;
    } else {
      const d = stated!;
      const nominalAliquot = aliquotForDose(d, C, V, false);
      const exact = nominalAliquot > maxAliquot ? aliquotForDose(d, C, V, true) : nominalAliquot;
      aliquot = roundToResolution(exact, res);
    }
    const recomputed = doseFromAliquot(aliquot, C, V);
    const nominal = nominalDoseFromAliquot(aliquot, C, V);
    const what = fromDose ? `the ${fmt(aliquot)} mL aliquot that ${fmt(stated!)} mg/L needs` : `${fmt(aliquot)} mL`;

    if (aliquot > 0 && aliquot < res) {
      problems.push({
        code: CHECK_CODES.BELOW_PIPETTE_RESOLUTION,
        severity: 'error',
        jar: n,
        message: `Jar ${n}: ${what} is below the pipette resolution ${fmt(res)} mL and cannot be measured: the ${fmt(C)} g/L stock is too strong for this dose; dilute it (about ${fmt((C * aliquot) / minAliquot, 2)} g/L gives ${fmt(minAliquot)} mL).`,
      });
    } else if (fromDose && stated! > 0 && aliquot === 0) {
      problems.push({
        code: CHECK_CODES.BELOW_PIPETTE_RESOLUTION,
        severity: 'error',
        jar: n,
        message: `Jar ${n}: ${fmt(stated!)} mg/L needs ${fmt(aliquotForDose(stated!, C, V, false))} mL, which rounds to 0 at the ${fmt(res)} mL pipette resolution: the ${fmt(C)} g/L stock is too strong for this dose; dilute it (${fmt(strengthForAliquot(stated!, V, minAliquot))} g/L or weaker gives at least ${fmt(minAliquot)} mL).`,
      });
    } else if (!fromDose && !isMultipleOf(aliquot, res)) {
      const rounded = roundToResolution(aliquot, res);
      problems.push({
        code: CHECK_CODES.NOT_PIPETTE_MULTIPLE,
        severity: 'warning',
        jar: n,
        message: `Jar ${n}: ${fmt(aliquot)} mL is not a multiple of the ${fmt(res)} mL pipette resolution; it will be measured as ${fmt(rounded)} mL, giving ${fmt(doseFromAliquot(rounded, C, V), 3)} mg/L.`,
      });
    }
    if (aliquot >= res && aliquot < minAliquot) {
      problems.push({
        code: CHECK_CODES.ALIQUOT_BELOW_MINIMUM,
        severity: 'warning',
        jar: n,
        message: `Jar ${n}: ${what} is below ${fmt(minAliquot)} mL; half a pipette step is ${fmt((res / 2 / aliquot) * 100, 2)} % of it. Diluting the stock gives larger, more precise aliquots.`,
      });
    }

    const dilution = Math.abs(nominal - recomputed);
    const tolerance = dilution + roundingAllowance(recomputed) + Math.max(FIGURE_ROUNDING_RELATIVE * recomputed, FIGURE_ROUNDING_ABSOLUTE_MG_PER_L);
    // a stock with which the dose takes at least the minimum aliquot (10 pipette steps), so rounding moves it by 5 % at most
    const weaker = (d: number) => `${fmt(strengthForAliquot(d, V, minAliquot))} g/L gives ${fmt(d)} mg/L in at least ${fmt(minAliquot)} mL`;
    if (stated !== null && statedAliquot !== null && stated < 1000 * C) {
      const diff = stated - recomputed;
      if (Math.abs(diff) > tolerance) {
        const exactNeeded = aliquotForDose(stated, C, V, aliquotForDose(stated, C, V, false) > maxAliquot);
        const needed = roundToResolution(exactNeeded, res);
        const fix =
          needed === aliquot || needed === 0
            ? `${fmt(stated)} mg/L cannot be made at the ${fmt(res)} mL pipette step with the ${fmt(C)} g/L stock: it needs ${fmt(exactNeeded, 3)} mL, and the nearest step, ${fmt(needed)} mL, gives ${fmt(doseFromAliquot(needed, C, V), 3)} mg/L. Use a weaker stock: ${weaker(stated)}.`
            : `For ${fmt(stated)} mg/L add ${fmt(needed)} mL.`;
        problems.push({
          code: CHECK_CODES.DOSE_MISMATCH,
          severity: 'error',
          jar: n,
          message:
            `Jar ${n}: ${fmt(aliquot)} mL of ${fmt(C)} g/L in ${fmt(V)} L gives ${fmt(recomputed, 3)} mg/L (a·C/(V + a/1000)), not the stated ${fmt(stated)} mg/L ` +
            `(off by ${fmt(Math.abs(diff), 2)} mg/L, more than the ${fmt(tolerance, 2)} mg/L rounding explains). ${fix}`,
        });
      }
    }
    // A dose written without its aliquot gets the aliquot rounded to the pipette: that rounded volume is what
    // is pipetted, so it is held to the same rule as a written one (5 % at most, common practice).
    if (fromDose && stated !== null && stated > 0 && aliquot > 0 && stated < 1000 * C && Math.abs(stated - recomputed) > tolerance) {
      const exact = aliquotForDose(stated, C, V, aliquotForDose(stated, C, V, false) > maxAliquot);
      problems.push({
        code: CHECK_CODES.DOSE_OFF_PIPETTE_STEP,
        severity: 'error',
        jar: n,
        message:
          `Jar ${n}: ${fmt(stated)} mg/L needs ${fmt(exact, 3)} mL of the ${fmt(C)} g/L stock, which the ${fmt(res)} mL pipette step makes ${fmt(aliquot)} mL: the jar gets ${fmt(recomputed, 3)} mg/L ` +
          `(${recomputed > stated ? '+' : '−'}${fmt((Math.abs(recomputed - stated) / stated) * 100, 2)} %), more than the 5 % rounding may change a dose (common practice). Use a weaker stock: ${weaker(stated)}.`,
      });
    }

    if (aliquot > maxAliquot) {
      const pct = (aliquot / (V * 1000)) * 100;
      const accounted = stated !== null && Math.abs(stated - recomputed) <= roundingAllowance(recomputed) + Math.max(FIGURE_ROUNDING_RELATIVE * recomputed, FIGURE_ROUNDING_ABSOLUTE_MG_PER_L) && Math.abs(stated - nominal) > Math.abs(stated - recomputed);
      problems.push({
        code: CHECK_CODES.ALIQUOT_TOO_LARGE,
        severity: accounted ? 'info' : 'warning',
        jar: n,
        message: accounted
          ? `Jar ${n}: ${fmt(aliquot)} mL is ${fmt(pct, 3)} % of the jar; the stated dose already accounts for the dilution.`
          : `Jar ${n}: ${what} is ${fmt(pct, 3)} % of the ${fmt(V)} L jar (over ${fmt(maxFraction * 100)} %), so it dilutes the jar: the dose is ${fmt(recomputed, 3)} mg/L, not the nominal ${fmt(nominal, 3)} mg/L. Use a stronger stock or state the diluted dose.`,
      });
    }

    return {
      jar: n,
      doseMgPerL: stated,
      aliquotMl: statedAliquot,
      recomputedDoseMgPerL: recomputed,
      recomputedAliquotMl: aliquot,
      nominalDoseMgPerL: nominal,
      problems,
    };
  });

  // Plan-level and cross-jar problems, on the dose each jar really gets: the one its stated
  // aliquot gives (a mismatch with the stated dose is reported per jar above), or the one its dose's aliquot
  // gives once rounded to the pipette (that volume is what is pipetted), else the stated dose.
  const effective = jars.map((j) => j.recomputedDoseMgPerL ?? j.doseMgPerL);
  const mismatched = jars.some((j) => j.problems.some((p) => p.code === CHECK_CODES.DOSE_MISMATCH || p.code === CHECK_CODES.DOSE_OFF_PIPETTE_STEP));
  const dosesLabel = mismatched ? 'doses the aliquots give' : 'doses';
  effective.forEach((d, i) => {
    if (d === null) return;
    const prev = effective.findIndex((e, k) => k < i && e !== null && (e === d || Math.abs(e - d) <= DUPLICATE_RELATIVE * Math.max(e, d)));
    if (prev >= 0) {
      (jars[i]!.problems as JarProblem[]).push({
        code: CHECK_CODES.DUPLICATE_DOSE,
        severity: 'warning',
        jar: i + 1,
        message: `Jar ${i + 1} repeats the dose of jar ${prev + 1} (${fmt(d, 3)} mg/L${jars[i]!.aliquotMl === null && jars[i]!.recomputedAliquotMl !== null && jars[i]!.recomputedAliquotMl === jars[prev]!.recomputedAliquotMl ? `: both pipette ${fmt(jars[i]!.recomputedAliquotMl!)} mL at the ${fmt(res)} mL step` : ''}); a repeat adds no point to the demand curve unless it is meant as a replicate.`,
      });
    }
  });
  const known = effective.filter((d): d is number => d !== null);
  const rising = known.every((d, i) => i === 0 || d >= known[i - 1]!);
  const falling = known.every((d, i) => i === 0 || d <= known[i - 1]!);
  if (!rising && !falling) {
    planProblems.push({
      code: CHECK_CODES.NON_MONOTONIC_LADDER,
      severity: 'warning',
      message: `The ${dosesLabel} in jar order (${known.map((d) => fmt(d, 3)).join(', ')} mg/L) neither rise nor fall; order the jars by dose so an aliquot put in the wrong jar shows.`,
    });
  }

  const controls = effective.flatMap((d, i) => (d === 0 ? [i + 1] : []));
  if (controls.length > 0) {
    planProblems.push({
      code: CHECK_CODES.CONTROL_JAR,
      severity: 'info',
      message: `Jar ${controls.join(', ')} ${controls.length === 1 ? 'gets' : 'get'} no oxidant: a control (blank) that shows what the raw water does without oxidant. It is not a dose below the demand; the bracketing is judged on the dosed jars.`,
    });
  }
  let expected: number | null = null;
  if (input.estimateMgPerL === undefined) {
    planProblems.push({ code: CHECK_CODES.NO_ESTIMATE, severity: 'info', message: 'No stoichiometric estimate was given, so bracketing was not checked; give the sample readings or estimateMgPerL.' });
  } else {
    expected = input.estimateMgPerL + (input.backgroundMgPerL ?? 0);
    // a control jar (dose 0) is a blank, not a bracket below the demand: judge on the dosed jars
    const dosed = known.filter((d) => d > 0);
    const below = dosed.some((d) => d < expected!);
    const above = dosed.some((d) => d > expected!);
    if (!below || !above) {
      const side = !below && !above ? 'below or above' : !below ? 'below' : 'above';
      const controlText = controls.length === 0 ? '' : `; jar ${controls.join(', ')} at 0 mg/L ${controls.length === 1 ? 'is a control' : 'are controls'}, not ${controls.length === 1 ? 'a dose' : 'doses'} below it`;
      planProblems.push({
        code: CHECK_CODES.NOT_BRACKETING,
        severity: 'error',
        message: `No ${controls.length > 0 ? 'dosed ' : ''}jar is ${side} the expected demand ${fmt(expected)} mg/L (${dosesLabel} ${dosed.map((d) => fmt(d, 3)).join(', ') || 'none'} mg/L${controlText}); add a dosed jar ${side} it so the ladder brackets the demand.`,
      });
    }
  }

  if (input.solubility !== undefined && C > input.solubility.gPerL) {
    const at = input.solubility.temperatureC !== undefined ? ` at ${input.solubility.temperatureC} °C` : '';
    planProblems.push({
      code: CHECK_CODES.STOCK_ABOVE_SOLUBILITY,
      severity: 'error',
      message: `A ${fmt(C)} g/L stock is above the solubility ${fmt(input.solubility.gPerL)} g/L${at}; it will not dissolve fully and the doses will be low. Use ${fmt(input.solubility.gPerL / 2, 2)} g/L or less.`,
    });
  }

  if (input.strengthLimit !== undefined) {
    planProblems.push({
      code: input.strengthLimit.severity === 'error' ? CHECK_CODES.STOCK_ABOVE_PRODUCT_LIMIT : CHECK_CODES.STOCK_ABOVE_TRADE_GRADE,
      severity: input.strengthLimit.severity,
      message: input.strengthLimit.message,
    });
  }

  const times = input.contactTimesMin ?? [];
  if (times.length === 0) {
    planProblems.push({
      code: CHECK_CODES.NO_CONTACT_TIMES,
      severity: 'error',
      message: `The plan gives no contact times; state when each jar is sampled (e.g. ${D.contactTimesMin.value.join(', ')} min, common practice) and include the plant's available contact time.`,
    });
  } else {
    const dup = times.filter((t, i) => times.indexOf(t) !== i);
    if (dup.length > 0) planProblems.push({ code: CHECK_CODES.DUPLICATE_CONTACT_TIME, severity: 'warning', message: `Contact time ${dup.map((t) => fmt(t)).join(', ')} min is listed twice.` });
  }

  if (input.jars.length < 3) {
    planProblems.push({
      code: CHECK_CODES.TOO_FEW_JARS,
      severity: 'warning',
      message: `${input.jars.length} jar(s) cannot give a demand line; use at least 3 jars that keep a residual (6 is usual).`,
    });
  }

  const all = [...planProblems, ...jars.flatMap((j) => j.problems)];
  return {
    oxidant: input.oxidant,
    jarVolumeL: V,
    stockStrengthGPerL: C,
    pipetteResolutionMl: res,
    expectedDemandMgPerL: expected,
    jars,
    problems: planProblems,
    ok: !all.some((p) => p.severity === 'error'),
    toleranceRule:
      'stated dose accepted within dilution by the aliquot + half a pipette step (0.5·r·C/V, but at most 5 % of the dose: a target dose beside its rounded aliquot) + 0.5 % of the dose (at least 0.005 mg/L) of the recomputed dose a·C/(V + a/1000)',
  };
}
