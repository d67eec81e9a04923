/**
 * Evaluate jar-test results: oxidant consumed per jar, the demand curve, a least-squares
 * line of residual oxidant against applied dose, the apparent total demand where that
 * line crosses zero residual, the background demand it implies, the lowest dose that met
 * every target at each contact time, and a recommended plant dose with its margin.
 */
import { DomainError } from '../core/errors.js';
import { roundSig } from '../core/decimal.js';
import {
  FieldCheck,
  JAR_TEST_DEFAULTS as D,
  checkJarVolume,
  defaultDetectionLimit,
  fmt,
  isNegligible,
  isPermanganateBasis,
  mgPerLScale,
  pinkWaterThreshold,
  type DoseMargin,
  type JarProblem,
} from './common.js';
import { defaultResidualMethod } from './product.js';
import { readingBound } from '../dosing/bounds.js';
import { inversePrediction, olsFit, studentTQuantile, type LinearFit } from './stats.js';

export interface JarResultInput {
  readonly contactTimeMin: number;
  readonly residualOxidantMgPerL?: number;
  /** Dissolved iron after 0.45 µm filtration, mg/L as Fe. */
  readonly ironMgPerL?: number;
  /** Dissolved manganese after 0.45 µm filtration, mg/L as Mn. */
  readonly manganeseMgPerL?: number;
  readonly turbidityNTU?: number;
  readonly note?: string;
}

export interface JarInput {
  /** Applied dose, mg/L on the oxidant's basis. */
  readonly doseMgPerL: number;
  readonly results: readonly JarResultInput[];
}

/** A limit from the limits table (tables/limits.json), used when the caller gives no target. */
export interface LimitTarget {
  readonly valueMgPerL: number;
  /** Source id, e.g. the one that resolves to 40 CFR 143.3 (US secondary drinking water regulations). */
  readonly source: string;
  readonly name?: string;
}

export interface JarTargets {
  readonly ironMgPerL?: number;
  readonly manganeseMgPerL?: number;
  /** The residual oxidant the plant must carry (at least). */
  readonly residualOxidantMgPerL?: number;
  /** The most residual oxidant allowed (e.g. no visible permanganate). */
  readonly residualOxidantMaxMgPerL?: number;
}

export interface EvaluateJarTestInput {
  readonly oxidant: string;
  /** Dose basis without "as" ("KMnO4", "Cl2"); default "oxidant". */
  readonly basis?: string;
  /** Stoichiometric estimate of the sample's demand, mg/L on the basis. */
  readonly estimateMgPerL: number;
  readonly jarVolumeL: number;
  readonly jars: readonly JarInput[];
  readonly targets?: JarTargets;
  /** Default Fe and Mn targets when the caller gives none: the US secondary levels from the limits table. */
  readonly limits?: { readonly iron?: LimitTarget; readonly manganese?: LimitTarget };
  /** Default 0.05 mg/L (common practice), stated on the residual method (see defaultDetectionLimit). */
  readonly detectionLimitMgPerL?: number;
  /** How the residual was read; default the usual method for the basis (defaultResidualMethod), which the plan's schedule names. */
  readonly residualMethod?: string;
  /** Contact time whose residuals are fitted; default the longest with residual readings. */
  readonly fitContactTimeMin?: number;
  /** Contact time the plant provides; the recommendation uses the longest bench time not beyond it. */
  readonly plantContactTimeMin?: number;
  /** Default +10 % (common practice). */
  readonly margin?: DoseMargin;
}

export type TargetAnalyte = 'iron' | 'manganese' | 'residualOxidant' | 'residualOxidantMax';

export interface ResolvedTarget {
  readonly analyte: TargetAnalyte;
  readonly limitMgPerL: number;
  readonly comparison: 'at most' | 'at least';
  readonly origin: 'caller' | 'default limit';
  readonly source?: string;
  readonly name?: string;
}

export interface EvaluatedResult {
  readonly contactTimeMin: number;
  readonly residualOxidantMgPerL: number | null;
  readonly residualBelowDetection: boolean | null;
  /** applied − residual, mg/L (null without a residual reading). */
  readonly consumedMgPerL: number | null;
  readonly ironMgPerL: number | null;
  readonly manganeseMgPerL: number | null;
  readonly turbidityNTU: number | null;
  readonly note: string | null;
  /** Whether every target was met; null when no target applies. */
  readonly meetsTargets: boolean | null;
  /** Why not: e.g. "iron 0.42 > 0.3 mg/L", "manganese not measured". */
  readonly failures: readonly string[];
}

export interface EvaluatedJar {
  readonly jar: number;
  readonly doseMgPerL: number;
  readonly results: readonly EvaluatedResult[];
}

export interface DemandCurve {
  readonly contactTimeMin: number;
  readonly points: readonly { readonly jar: number; readonly doseMgPerL: number; readonly consumedMgPerL: number; readonly residualMgPerL: number; readonly belowDetection: boolean }[];
}

export interface ResidualFit {
  readonly contactTimeMin: number;
  /** caller: fitContactTimeMin; plant-contact: the longest bench time not beyond the plant's contact; longest: the longest with residual readings. */
  readonly contactTimeChoice: 'caller' | 'plant-contact' | 'longest';
  readonly jarsUsed: readonly number[];
  readonly jarsExcluded: readonly { readonly jar: number; readonly reason: string }[];
  readonly n: number;
  readonly slope: number;
  readonly intercept: number;
  readonly r2: number;
  readonly slopeStdError: number;
  readonly interceptStdError: number;
  readonly residualStdError: number;
  readonly degreesOfFreedom: number;
  /** Least-squares line of consumed oxidant against applied dose, over the same jars. */
  readonly demandLine: { readonly slope: number; readonly intercept: number; readonly r2: number };
}

export interface LowestDose {
  readonly contactTimeMin: number;
  readonly doseMgPerL: number | null;
  readonly jar: number | null;
  readonly jarsMeeting: readonly number[];
  /** Jars at higher doses that did not meet every target (e.g. permanganate overdose raising Mn). */
  readonly higherDosesFailing: readonly number[];
  readonly note: string;
}

export interface RecommendedDose {
  readonly doseMgPerL: number;
  readonly baseDoseMgPerL: number;
  readonly basis: 'lowest-dose-meeting-targets' | 'apparent-demand-plus-residual';
  readonly contactTimeMin: number;
  readonly margin: DoseMargin & { readonly mgPerL: number; readonly basis: string };
  /** Residual the fitted line predicts at the recommended dose (null without a usable fit). */
  readonly expectedResidualMgPerL: number | null;
  readonly reason: string;
}

export interface JarTestEvaluation {
  readonly oxidant: string;
  readonly basis: string;
  readonly jarVolumeL: number;
  readonly estimateMgPerL: number;
  readonly detectionLimitMgPerL: number;
  readonly contactTimesMin: readonly number[];
  readonly jars: readonly EvaluatedJar[];
  readonly demandCurves: readonly DemandCurve[];
  /**
   * The residual line, or null when too few jars kept a measurable residual to fit one (a
   * permanganate test dosed to leave none, say): the recommendation then rests on the jars that
   * met the iron and manganese targets, and a problem says why there is no line.
   */
  readonly fit: ResidualFit | null;
  /** Dose at which the fitted residual is zero, −intercept/slope, with its standard error and 95 % interval. */
  readonly apparentDemand: { readonly doseMgPerL: number; readonly stdError: number; readonly ci95: readonly [number, number]; readonly method: string } | null;
  /** apparent − stoichiometric estimate. */
  readonly backgroundDemand: { readonly doseMgPerL: number; readonly stdError: number } | null;
  readonly targets: readonly ResolvedTarget[];
  readonly lowestDoseMeetingTargets: readonly LowestDose[];
  readonly recommendedDose: RecommendedDose | null;
  readonly problems: readonly JarProblem[];
  readonly notes: readonly string[];
}

/**
 * Turbidity above this (NTU) is not a water sample: raw waters in flood read hundreds to a few
 * thousand NTU, and ratio turbidimeters read to about 10 000 NTU (common practice).
 */
export const TURBIDITY_MAX_NTU = 10000;

/**
 * The problems an evaluation raises when it recommends no plant dose, one of them for each way the
 * recommendation is withheld (readings in doubt, no jar meeting the targets, a control jar that
 * contradicts the dosed jars, a residual not kept through the plant's contact, no line and no jar).
 */
export const NO_RECOMMENDATION_CODES: readonly string[] = ['CONTROL_JAR_CONTRADICTS_DOSED_JARS', 'RESIDUAL_NOT_KEPT', 'NO_JAR_MET_TARGETS', 'NO_RECOMMENDATION'];

/** The problem that withheld the recommendation, or null when there is a recommendation (or none of them was raised). */
export function whyNoRecommendation(ev: Pick<JarTestEvaluation, 'recommendedDose' | 'problems'>): JarProblem | null {
  if (ev.recommendedDose !== null) return null;
  for (const code of NO_RECOMMENDATION_CODES) {
    const p = ev.problems.find((x) => x.code === code);
    if (p !== undefined) return p;
  }
  return null;
}

/**
 * A dissolved iron or manganese figure (a jar's reading or a target): not negative and at most the
 * bound POST /api/v1/doses refuses a raw-water reading above (src/dosing/bounds.ts): a jar holds the
 * raw water, so it cannot carry more than the raw water can.
 */
function metalReading(c: FieldCheck, value: unknown, pointer: string, field: 'iron' | 'manganese', what: string): void {
  if (!c.nonNegative(value, pointer, `${what} (mg/L)`)) return;
  const b = readingBound(field);
  if ((value as number) > b.refuseAbove) {
    c.add(
      pointer,
      `${what} must be at most ${b.refuseAbove} mg/L ${b.basis} (got ${fmt(value as number)} mg/L), the most POST /api/v1/doses takes as a raw-water ${b.name} reading: ${b.refuseWhy}. Check the value and its unit (µg/L entered as mg/L?)`,
    );
  }
}

function validate(input: EvaluateJarTestInput): void {
  const c = new FieldCheck();
  if (typeof input.oxidant !== 'string' || input.oxidant.length === 0) c.add('/oxidant', 'give the oxidant product id');
  c.nonNegative(input.estimateMgPerL, '/estimateMgPerL', 'the stoichiometric estimate (mg/L)');
  checkJarVolume(c, input.jarVolumeL);
  if (!Array.isArray(input.jars) || input.jars.length === 0 || input.jars.length > 50) {
    c.add('/jars', 'give from 1 to 50 jars, each with doseMgPerL and results');
  } else {
    input.jars.forEach((j, i) => {
      const p = `/jars/${i}`;
      if (j === null || typeof j !== 'object') return c.add(p, 'each jar must be an object with doseMgPerL and results');
      c.doseMgPerL(j.doseMgPerL, `${p}/doseMgPerL`, `the dose of jar ${i + 1} (mg/L)`);
      const results: readonly JarResultInput[] = j.results;
      if (!Array.isArray(results)) return c.add(`${p}/results`, 'give the results as a list (one entry per contact time)');
      const seen = new Set<number>();
      results.forEach((r: JarResultInput, k: number) => {
        const q = `${p}/results/${k}`;
        if (r === null || typeof r !== 'object') return c.add(q, 'each result must be an object with contactTimeMin');
        if (c.positive(r.contactTimeMin, `${q}/contactTimeMin`, 'the contact time (min)')) {
          if (seen.has(r.contactTimeMin)) c.add(`${q}/contactTimeMin`, `jar ${i + 1} has two results at ${r.contactTimeMin} min; give one per contact time`);
          seen.add(r.contactTimeMin);
        }
        for (const key of ['residualOxidantMgPerL', 'ironMgPerL', 'manganeseMgPerL', 'turbidityNTU'] as const) {
          if (r[key] === undefined) continue;
          const when = `of jar ${i + 1} at ${r.contactTimeMin} min`;
          if (key === 'residualOxidantMgPerL') c.doseMgPerL(r[key], `${q}/${key}`, `the residual ${when} (mg/L)`);
          else if (key === 'ironMgPerL') metalReading(c, r[key], `${q}/${key}`, 'iron', `the dissolved iron ${when}`);
          else if (key === 'manganeseMgPerL') metalReading(c, r[key], `${q}/${key}`, 'manganese', `the dissolved manganese ${when}`);
          else if (c.nonNegative(r[key], `${q}/${key}`, key) && r[key] > TURBIDITY_MAX_NTU) {
            c.add(
              `${q}/${key}`,
              `the turbidity ${when} must be at most ${TURBIDITY_MAX_NTU} NTU (got ${fmt(r[key])} NTU): raw waters in flood read hundreds to a few thousand NTU, and above ${TURBIDITY_MAX_NTU} NTU the sample is a slurry, not a jar-test water (common practice); check the value and the meter's range`,
            );
          }
        }
      });
    });
  }
  const t = input.targets;
  if (t !== undefined) {
    if (t.ironMgPerL !== undefined) metalReading(c, t.ironMgPerL, '/targets/ironMgPerL', 'iron', 'the iron target');
    if (t.manganeseMgPerL !== undefined) metalReading(c, t.manganeseMgPerL, '/targets/manganeseMgPerL', 'manganese', 'the manganese target');
    if (t.residualOxidantMgPerL !== undefined) c.doseMgPerL(t.residualOxidantMgPerL, '/targets/residualOxidantMgPerL', 'the target residual (mg/L)');
    if (t.residualOxidantMaxMgPerL !== undefined) c.doseMgPerL(t.residualOxidantMaxMgPerL, '/targets/residualOxidantMaxMgPerL', 'the largest residual allowed (mg/L)');
    if (t.residualOxidantMgPerL !== undefined && t.residualOxidantMaxMgPerL !== undefined && t.residualOxidantMaxMgPerL < t.residualOxidantMgPerL) {
      c.add('/targets/residualOxidantMaxMgPerL', 'the largest residual allowed must not be below the residual required');
    }
  }
  for (const key of ['iron', 'manganese'] as const) {
    const l = input.limits?.[key];
    if (l !== undefined) c.nonNegative(l.valueMgPerL, `/limits/${key}/valueMgPerL`, `the ${key} limit (mg/L)`);
  }
  if (input.detectionLimitMgPerL !== undefined) c.nonNegative(input.detectionLimitMgPerL, '/detectionLimitMgPerL', 'the detection limit (mg/L)');
  if (input.fitContactTimeMin !== undefined) c.positive(input.fitContactTimeMin, '/fitContactTimeMin', 'the contact time to fit (min)');
  if (input.plantContactTimeMin !== undefined) c.positive(input.plantContactTimeMin, '/plantContactTimeMin', "the plant's contact time (min)");
  const m = input.margin;
  if (m !== undefined) {
    if (m.kind === 'relative') {
      if (c.nonNegative(m.fraction, '/margin/fraction', 'the relative margin') && m.fraction > 1) c.add('/margin/fraction', 'the relative margin must be a fraction from 0 to 1 (0.1 = +10 %)');
    } else if (m.kind === 'absolute') c.nonNegative(m.mgPerL, '/margin/mgPerL', 'the absolute margin (mg/L)');
    else c.add('/margin/kind', 'the margin kind must be "relative" or "absolute"');
  }
  c.throwIfAny('The jar-test results are not valid');
}

function resolveTargets(input: EvaluateJarTestInput, notes: string[]): ResolvedTarget[] {
  const t = input.targets ?? {};
  const measured = (key: 'ironMgPerL' | 'manganeseMgPerL') => input.jars.some((j) => j.results.some((r) => r[key] !== undefined));
  const out: ResolvedTarget[] = [];
  for (const [analyte, key, label] of [
    ['iron', 'ironMgPerL', 'iron'],
    ['manganese', 'manganeseMgPerL', 'manganese'],
  ] as const) {
    const given = t[key];
    if (given !== undefined) {
      out.push({ analyte, limitMgPerL: given, comparison: 'at most', origin: 'caller' });
      continue;
    }
    const limit = input.limits?.[analyte];
    if (limit === undefined) {
      notes.push(`No ${label} target given and no default limit passed in; ${label} is not a target.`);
    } else if (!measured(key)) {
      notes.push(`No ${label} target given and ${label} was not measured, so the default limit (${fmt(limit.valueMgPerL)} mg/L) is not applied.`);
    } else {
      out.push({ analyte, limitMgPerL: limit.valueMgPerL, comparison: 'at most', origin: 'default limit', source: limit.source, ...(limit.name !== undefined ? { name: limit.name } : {}) });
      notes.push(
        `No ${label} target given: using ${fmt(limit.valueMgPerL)} mg/L${limit.name !== undefined ? ` (${limit.name})` : ''} from source "${limit.source}" as the default target; local regulations govern.`,
      );
    }
  }
  if (t.residualOxidantMgPerL !== undefined) out.push({ analyte: 'residualOxidant', limitMgPerL: t.residualOxidantMgPerL, comparison: 'at least', origin: 'caller' });
  if (t.residualOxidantMaxMgPerL !== undefined) out.push({ analyte: 'residualOxidantMax', limitMgPerL: t.residualOxidantMaxMgPerL, comparison: 'at most', origin: 'caller' });
  return out;
}

function judge(r: JarResultInput, targets: readonly ResolvedTarget[]): { meets: boolean | null; failures: string[] } {
  if (targets.length === 0) return { meets: null, failures: [] };
  const failures: string[] = [];
  for (const t of targets) {
    const value =
      t.analyte === 'iron' ? r.ironMgPerL : t.analyte === 'manganese' ? r.manganeseMgPerL : r.residualOxidantMgPerL;
    const name = t.analyte === 'iron' ? 'iron' : t.analyte === 'manganese' ? 'manganese' : 'residual oxidant';
    if (value === undefined) failures.push(`${name} not measured`);
    else if (t.comparison === 'at most' && value > t.limitMgPerL) failures.push(`${name} ${fmt(value)} > ${fmt(t.limitMgPerL)} mg/L`);
    else if (t.comparison === 'at least' && value < t.limitMgPerL) failures.push(`${name} ${fmt(value)} < ${fmt(t.limitMgPerL)} mg/L`);
  }
  return { meets: failures.length === 0, failures };
}

const T95 = 0.975;
/** A residual-line slope up to 5 % above 1 is within bench error (stock strength, method); common practice. */
const SLOPE_TOLERANCE = 0.05;
/** Above 10 % the stock or the method is off enough that the jar doses cannot be relied on; common practice. */
const SLOPE_BLOCK = 0.1;

/** The residual line at one contact time over the jars with a measurable residual, or null (< 3 jars or one dose). */
function residualLineAt(jars: readonly EvaluatedJar[], time: number, dl: number): LinearFit | null {
  const pts = jars.flatMap((j) => {
    const r = j.results.find((x) => x.contactTimeMin === time);
    return r !== undefined && r.residualOxidantMgPerL !== null && r.residualOxidantMgPerL > dl ? [{ x: j.doseMgPerL, y: r.residualOxidantMgPerL }] : [];
  });
  if (pts.length < 3 || new Set(pts.map((p) => p.x)).size < 2) return null;
  return olsFit(pts.map((p) => p.x), pts.map((p) => p.y));
}

/**
 * How the demand changed between the last two contact times with residual readings: the apparent
 * demand of the residual line at each (−intercept/slope) when both give a rising line, else the mean
 * oxidant consumed at each over the jars that kept a measurable residual at both (in such a jar the
 * consumption is the demand). Null when neither can be had.
 */
function demandGrowth(jars: readonly EvaluatedJar[], residualTimes: readonly number[], dl: number): { fromMin: number; toMin: number; from: number; to: number; how: string } | null {
  if (residualTimes.length < 2) return null;
  const fromMin = residualTimes[residualTimes.length - 2]!;
  const toMin = residualTimes[residualTimes.length - 1]!;
  const a = residualLineAt(jars, fromMin, dl);
  const b = residualLineAt(jars, toMin, dl);
  if (a !== null && b !== null && a.slope > 0 && b.slope > 0) {
    return { fromMin, toMin, from: -a.intercept / a.slope, to: -b.intercept / b.slope, how: 'where the residual line at each time crosses zero' };
  }
  const both = jars.flatMap((j) => {
    const r1 = j.results.find((x) => x.contactTimeMin === fromMin);
    const r2 = j.results.find((x) => x.contactTimeMin === toMin);
    return r1?.residualOxidantMgPerL != null && r2?.residualOxidantMgPerL != null && r1.residualOxidantMgPerL > dl && r2.residualOxidantMgPerL > dl ? [{ jar: j.jar, c1: r1.consumedMgPerL!, c2: r2.consumedMgPerL! }] : [];
  });
  if (both.length === 0) return null;
  const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
  return { fromMin, toMin, from: mean(both.map((x) => x.c1)), to: mean(both.map((x) => x.c2)), how: `the mean consumed in jar${both.length === 1 ? '' : 's'} ${both.map((x) => x.jar).join(', ')}, which kept a residual at both times` };
}

/**
 * Evaluate a jar test.
 * Throws DomainError JAR_TEST_INVALID (field pointers) for bad input, and JAR_TEST_TOO_FEW_POINTS when fewer
 * than 3 jars (at 2 or more doses) kept a residual above the detection limit at the fitted contact time.
 * A fitted slope ≤ 0 is reported as the problem FIT_SLOPE_NOT_POSITIVE (no apparent demand).
 */
export function evaluateJarTest(input: EvaluateJarTestInput): JarTestEvaluation {
  validate(input);
  const basis = input.basis ?? 'oxidant';
  const problems: JarProblem[] = [];
  const notes: string[] = [];
  const dlDefault = defaultDetectionLimit(basis, input.residualMethod ?? defaultResidualMethod(basis));
  const dl = input.detectionLimitMgPerL ?? dlDefault.value;
  if (input.detectionLimitMgPerL === undefined) notes.push(`Detection limit ${dl} mg/L (${dlDefault.basis}).`);
  // the size of the test's mg/L figures: a standard error or an intercept far below it is rounding noise and prints as 0
  const scale = mgPerLScale(input.estimateMgPerL, input.jars);
  const slopeScale = (slope: number) => Math.max(Math.abs(slope), 1);
  const targets = resolveTargets(input, notes);

  const times = [...new Set(input.jars.flatMap((j) => j.results.map((r) => r.contactTimeMin)))].sort((a, b) => a - b);
  if (times.length === 0) {
    throw new DomainError('JAR_TEST_INVALID', {
      detail: 'No jar has any result; give each jar its readings at one or more contact times.',
      fields: input.jars.map((_, i) => ({ pointer: `/jars/${i}/results`, message: 'no results' })),
    });
  }

  const jars: EvaluatedJar[] = input.jars.map((j, i) => ({
    jar: i + 1,
    doseMgPerL: j.doseMgPerL,
    results: [...j.results]
      .sort((a, b) => a.contactTimeMin - b.contactTimeMin)
      .map((r): EvaluatedResult => {
        const residual = r.residualOxidantMgPerL ?? null;
        const { meets, failures } = judge(r, targets);
        return {
          contactTimeMin: r.contactTimeMin,
          residualOxidantMgPerL: residual,
          residualBelowDetection: residual === null ? null : residual <= dl,
          consumedMgPerL: residual === null ? null : j.doseMgPerL - residual,
          ironMgPerL: r.ironMgPerL ?? null,
          manganeseMgPerL: r.manganeseMgPerL ?? null,
          turbidityNTU: r.turbidityNTU ?? null,
          note: r.note ?? null,
          meetsTargets: meets,
          failures,
        };
      }),
  }));
  for (const j of jars) {
    for (const r of j.results) {
      if (r.consumedMgPerL !== null && r.consumedMgPerL < -dl) {
        problems.push({
          code: 'RESIDUAL_ABOVE_DOSE',
          severity: 'warning',
          jar: j.jar,
          message: `Jar ${j.jar} at ${fmt(r.contactTimeMin)} min: the residual ${fmt(r.residualOxidantMgPerL!)} mg/L is above the ${fmt(j.doseMgPerL)} mg/L applied; check the stock strength, the aliquot and the residual method's blank.`,
        });
      }
    }
  }

  const demandCurves: DemandCurve[] = times.map((t) => ({
    contactTimeMin: t,
    points: jars.flatMap((j) => {
      const r = j.results.find((x) => x.contactTimeMin === t);
      if (r === undefined || r.residualOxidantMgPerL === null) return [];
      return [{ jar: j.jar, doseMgPerL: j.doseMgPerL, consumedMgPerL: r.consumedMgPerL!, residualMgPerL: r.residualOxidantMgPerL, belowDetection: r.residualBelowDetection! }];
    }),
  }));

  // ---- the fit
  const residualTimes = times.filter((t) => jars.some((j) => j.results.some((r) => r.contactTimeMin === t && r.residualOxidantMgPerL !== null)));
  if (input.fitContactTimeMin !== undefined && !residualTimes.includes(input.fitContactTimeMin)) {
    throw new DomainError('JAR_TEST_INVALID', {
      detail: `No residual readings at ${fmt(input.fitContactTimeMin)} min; residuals were read at ${residualTimes.join(', ') || 'no'} min.`,
      fields: [{ pointer: '/fitContactTimeMin', message: `must be one of the contact times with residual readings: ${residualTimes.join(', ') || 'none'}` }],
    });
  }
  // Without a line the jars can still answer the question that matters (which dose met the iron
  // and manganese targets); with no such target there is nothing to evaluate and the request is
  // refused as before.
  const contaminantTargetsGiven = targets.some((t) => t.analyte === 'iron' || t.analyte === 'manganese');
  const tooFew = (error: DomainError): null => {
    if (!contaminantTargetsGiven) throw error;
    const permanganate = isPermanganateBasis(basis);
    problems.push({
      code: 'RESIDUAL_LINE_NOT_FITTED',
      severity: permanganate ? 'info' : 'warning',
      message:
        `${error.detail.replace(/ Repeat the test with more jars above the expected demand, or fit another contact time\.$/, '').replace(/; measure the residual in each jar at each contact time\.$/, '.')} ` +
        'No demand line, apparent demand or background demand is reported; the recommendation rests on the jars that met the iron and manganese targets' +
        (permanganate
          ? ', as it should for permanganate, which is dosed to leave no residual (pink water).'
          : '. For a demand line, repeat with some jars above the demand and read the residual in each.'),
    });
    return null;
  };
  let fit: ResidualFit | null = null;
  let f: LinearFit | null = null;
  let fitTime: number | null = null;
  if (residualTimes.length === 0) {
    tooFew(
      new DomainError('JAR_TEST_TOO_FEW_POINTS', {
        detail: 'No residual oxidant was read in any jar, so there is no demand line; measure the residual in each jar at each contact time.',
        params: { n: 0, detectionLimitMgPerL: dl },
        fields: input.jars.map((_, i) => ({ pointer: `/jars/${i}/results`, message: 'no residualOxidantMgPerL' })),
      }),
    );
  } else {
    // The line is fitted at the contact time the recommendation is for: the caller's, else the longest bench
    // time not beyond the plant's contact that gives a line (the first bench time when the plant has less
    // contact than that), else the longest time with residual readings.
    const longest = residualTimes[residualTimes.length - 1]!;
    let choice: ResidualFit['contactTimeChoice'] = 'longest';
    let time = longest;
    if (input.fitContactTimeMin !== undefined) {
      choice = 'caller';
      time = input.fitContactTimeMin;
    } else if (input.plantContactTimeMin !== undefined) {
      const within = residualTimes.filter((t) => t <= input.plantContactTimeMin!);
      const candidates = (within.length > 0 ? within : [residualTimes[0]!]).slice().reverse();
      const usable = candidates.find((t) => residualLineAt(jars, t, dl) !== null);
      if (usable !== undefined) {
        choice = 'plant-contact';
        time = usable;
      }
    }
    const used: { jar: number; x: number; y: number; consumed: number }[] = [];
    const excluded: { jar: number; reason: string }[] = [];
    for (const j of jars) {
      const r = j.results.find((x) => x.contactTimeMin === time);
      if (r === undefined) excluded.push({ jar: j.jar, reason: `no result at ${fmt(time)} min` });
      else if (r.residualOxidantMgPerL === null) excluded.push({ jar: j.jar, reason: 'no residual reading' });
      else if (r.residualOxidantMgPerL <= dl) excluded.push({ jar: j.jar, reason: `residual ${fmt(r.residualOxidantMgPerL)} mg/L at or below the detection limit ${fmt(dl)} mg/L` });
      else used.push({ jar: j.jar, x: j.doseMgPerL, y: r.residualOxidantMgPerL, consumed: r.consumedMgPerL! });
    }
    const distinctDoses = new Set(used.map((u) => u.x)).size;
    if (used.length < 3 || distinctDoses < 2) {
      const which = used.length > 0 ? ` (jar ${used.map((u) => u.jar).join(', ')})` : '';
      tooFew(
        new DomainError('JAR_TEST_TOO_FEW_POINTS', {
          detail:
            `${used.length === 0 ? 'No jar' : `Only ${used.length} jar${used.length === 1 ? '' : 's'}${which}`} kept a residual above the detection limit ${fmt(dl)} mg/L at ${fmt(time)} min` +
            `${used.length >= 3 ? ', all at one dose' : ''}; the demand line needs at least 3 jars at 2 or more doses. Repeat the test with more jars above the expected demand, or fit another contact time.`,
          params: { n: used.length, distinctDoses, detectionLimitMgPerL: dl, contactTimeMin: time, jarsUsed: used.map((u) => u.jar) },
          fields: [
            {
              pointer: '/jars',
              message:
                used.length >= 3
                  ? `${used.length} jars with a measurable residual at ${fmt(time)} min, but all at one dose (${fmt(used[0]!.x, 3)} mg/L); a line needs jars at 2 or more doses`
                  : `${used.length} jar(s) with a measurable residual at ${fmt(time)} min; at least 3 needed, at 2 or more doses`,
            },
          ],
        }),
      );
    } else {
      fitTime = time;
      notes.push(
        `Residual line fitted at ${fmt(time)} min (${
          choice === 'caller'
            ? 'chosen by the caller'
            : choice === 'plant-contact'
              ? input.plantContactTimeMin! > times[times.length - 1]!
                ? `the longest bench time with a residual line, shorter than the plant's ${fmt(input.plantContactTimeMin!)} min of contact: the demand may grow beyond it`
                : `the longest bench time with a residual line not beyond the plant's ${fmt(input.plantContactTimeMin!)} min of contact`
              : input.plantContactTimeMin !== undefined
                ? `the longest contact time with residual readings: no bench time within the plant's ${fmt(input.plantContactTimeMin)} min of contact gives a line`
                : 'the longest contact time with residual readings'
        }).`,
      );
      f = olsFit(used.map((u) => u.x), used.map((u) => u.y));
      const dline = olsFit(used.map((u) => u.x), used.map((u) => u.consumed));
      fit = {
        contactTimeMin: time,
        contactTimeChoice: choice,
        jarsUsed: used.map((u) => u.jar),
        jarsExcluded: excluded,
        n: f.n,
        slope: f.slope,
        intercept: f.intercept,
        r2: f.r2,
        slopeStdError: f.slopeStdError,
        interceptStdError: f.interceptStdError,
        residualStdError: f.residualStdError,
        degreesOfFreedom: f.degreesOfFreedom,
        demandLine: { slope: dline.slope, intercept: dline.intercept, r2: dline.r2 },
      };
    }
  }

  let apparentDemand: JarTestEvaluation['apparentDemand'] = null;
  let backgroundDemand: JarTestEvaluation['backgroundDemand'] = null;
  if (f === null || fitTime === null) {
    // no line: nothing to judge it by
  } else if (!(f.slope > 0)) {
    problems.push({
      code: 'FIT_SLOPE_NOT_POSITIVE',
      severity: 'error',
      message:
        `The residual at ${fmt(fitTime)} min does not rise with dose (slope ${fmt(f.slope, 3, 1)}), so the line gives no demand: ` +
        (f.slope < 0 && f.intercept > 0
          ? `it crosses zero residual at ${fmt(-f.intercept / f.slope, 3)} mg/L only because it falls, and a residual that falls as more oxidant is added has no demand meaning. `
          : 'a line that falls or stays flat as more oxidant is added has no demand meaning. ') +
        'Check the stock strength and the residual readings, or widen the ladder.',
    });
  } else {
    const inv = inversePrediction(f, 0);
    const t = studentTQuantile(T95, f.degreesOfFreedom);
    const half = t * inv.stdError;
    apparentDemand = {
      doseMgPerL: inv.x,
      stdError: inv.stdError,
      ci95: [inv.x - half, inv.x + half],
      method: `−intercept/slope of the residual line; standard error (s/|slope|)·√(1/n + (x0 − x̄)²/Sxx); 95 % interval ± t(0.975, ${f.degreesOfFreedom}) = ±${fmt(t, 4)} × se`,
    };
    backgroundDemand = { doseMgPerL: inv.x - input.estimateMgPerL, stdError: inv.stdError };
    if (inv.x < 0 && !isNegligible(inv.x, scale)) {
      problems.push({
        code: 'APPARENT_DEMAND_NEGATIVE',
        severity: 'error',
        message: `The fitted line crosses zero residual at ${fmt(inv.x, 3, scale)} mg/L, below zero: the residuals exceed the doses. Check the stock strength and the residual method.`,
      });
    } else if (inv.x < input.estimateMgPerL) {
      problems.push({
        code: 'APPARENT_BELOW_ESTIMATE',
        severity: 'warning',
        message: `The apparent demand ${fmt(inv.x, 3, scale)} mg/L is below the stoichiometric estimate ${fmt(input.estimateMgPerL, 3)} mg/L: oxidation may be incomplete at ${fmt(fitTime)} min, or the sample readings are high. Check dissolved Fe and Mn in the jars.`,
      });
    }
    // No demand makes the residual rise faster than the dose: a slope above 1 beyond its error is a
    // stock stronger than labelled or a residual method reading high. Within the usual few per cent
    // of bench work it is said; beyond SLOPE_BLOCK (common practice) the doses themselves are in doubt.
    const excess = f.slope - 1;
    if (f.degreesOfFreedom > 0 && excess > 2 * f.slopeStdError && excess > SLOPE_TOLERANCE) {
      const blocks = excess > SLOPE_BLOCK;
      problems.push({
        code: 'FIT_SLOPE_ABOVE_ONE',
        severity: blocks ? 'error' : 'warning',
        message:
          `The residual rises faster than the dose (slope ${fmt(f.slope, 3)} ± ${fmt(f.slopeStdError, 2, slopeScale(f.slope))}), which no demand can do: the stock may be about ${fmt(excess * 100, 2)} % stronger than labelled, or the residual method reads high. ` +
          (blocks
            ? `Beyond ${fmt(SLOPE_BLOCK * 100)} % (common practice) the jar doses are not what they say; standardise the stock and the residual method and repeat the test.`
            : "Check the stock strength and the residual method's calibration."),
      });
    }
  }
  if (f !== null && Number.isFinite(f.r2) && f.r2 < 0.9) {
    problems.push({
      code: 'FIT_POOR',
      severity: 'warning',
      message:
        apparentDemand !== null
          ? `The residual line fits poorly (r² = ${roundSig(f.r2, 3)} over ${f.n} jars); treat the apparent demand as rough and repeat the jars that stand off the line.`
          : `The residual line fits poorly (r² = ${roundSig(f.r2, 3)} over ${f.n} jars), and no apparent demand was computed from it; repeat the jars that stand off the line.`,
    });
  }

  // ---- targets
  if (targets.length === 0) notes.push('No targets apply, so no lowest dose meeting targets is reported.');
  const lowest: LowestDose[] = targets.length === 0 ? [] : times.map((t): LowestDose => {
    const rows = jars
      .map((j) => ({ j, r: j.results.find((x) => x.contactTimeMin === t) }))
      .filter((x): x is { j: EvaluatedJar; r: EvaluatedResult } => x.r !== undefined)
      .sort((a, b) => a.j.doseMgPerL - b.j.doseMgPerL);
    const meeting = rows.filter((x) => x.r.meetsTargets === true);
    if (meeting.length === 0) {
      return { contactTimeMin: t, doseMgPerL: null, jar: null, jarsMeeting: [], higherDosesFailing: [], note: `No jar met every target at ${fmt(t)} min.` };
    }
    const first = meeting[0]!;
    const failingAbove = rows.filter((x) => x.j.doseMgPerL > first.j.doseMgPerL && x.r.meetsTargets !== true).map((x) => x.j.jar);
    const note =
      `Jar ${first.j.jar} (${fmt(first.j.doseMgPerL, 3)} mg/L) is the lowest dose meeting every target at ${fmt(t)} min` +
      (failingAbove.length > 0 ? `; jar(s) ${failingAbove.join(', ')} at higher doses did not (${rows.find((x) => x.j.jar === failingAbove[0])!.r.failures.join('; ')}).` : '.');
    return { contactTimeMin: t, doseMgPerL: first.j.doseMgPerL, jar: first.j.jar, jarsMeeting: meeting.map((x) => x.j.jar), higherDosesFailing: failingAbove, note };
  });

  // ---- recommendation
  const defaultMargin = isPermanganateBasis(basis) ? D.permanganateMargin : D.margin;
  const margin = input.margin ?? defaultMargin.value;
  const marginBasis = input.margin === undefined ? defaultMargin.basis : 'margin given by the caller';
  // A result the evaluation itself calls an error (residuals above the doses, no rising line)
  // puts the doses or the readings in doubt: no plant dose is recommended from it.
  const blocking = problems.filter((p) => p.severity === 'error');
  let benchTime: number;
  if (input.plantContactTimeMin === undefined) {
    benchTime = times[times.length - 1]!;
    problems.push({
      code: 'PLANT_CONTACT_TIME_NOT_GIVEN',
      severity: 'info',
      message: `No plant contact time given: the recommendation uses the longest bench time, ${fmt(benchTime)} min. Give the plant's available contact time so the recommendation does not assume more contact than the plant has.`,
    });
  } else {
    const within = times.filter((t) => t <= input.plantContactTimeMin!);
    if (within.length === 0) {
      benchTime = times[0]!;
      problems.push({
        code: 'PLANT_CONTACT_SHORTER_THAN_BENCH',
        severity: 'warning',
        message: `The plant's contact time (${fmt(input.plantContactTimeMin)} min) is shorter than the first bench sample (${fmt(times[0]!)} min); the recommendation at ${fmt(benchTime)} min may be low. Sample the jars earlier.`,
      });
    } else benchTime = within[within.length - 1]!;
    const last = times[times.length - 1]!;
    if (input.plantContactTimeMin > last) {
      const growth = demandGrowth(jars, residualTimes, dl);
      const grew =
        growth === null
          ? 'The bench readings do not show how the demand was still changing (that needs residuals at two contact times in jars that kept one).'
          : growth.to > growth.from + 1e-9 * Math.max(1, growth.to)
            ? `Between ${fmt(growth.fromMin)} and ${fmt(growth.toMin)} min the demand grew from ${fmt(growth.from, 3, scale)} to ${fmt(growth.to, 3, scale)} mg/L (+${fmt(growth.to - growth.from, 3, scale)} mg/L, ${growth.how}), so it was still rising when the bench stopped.`
            : `Between ${fmt(growth.fromMin)} and ${fmt(growth.toMin)} min the demand went from ${fmt(growth.from, 3, scale)} to ${fmt(growth.to, 3, scale)} mg/L (${growth.how}): it had levelled off on the bench, but a slow reaction may still go on.`;
      problems.push({
        code: 'PLANT_CONTACT_LONGER_THAN_BENCH',
        severity: 'warning',
        message:
          `The plant's contact time (${fmt(input.plantContactTimeMin)} min) is longer than the longest bench sample (${fmt(last)} min); the recommendation is for ${fmt(benchTime)} min of contact. ` +
          `Demand may go on growing after ${fmt(last)} min, so the residual after the plant's ${fmt(input.plantContactTimeMin)} min may be lower than predicted. ${grew} ` +
          `Sample the jars at ${fmt(input.plantContactTimeMin)} min too, or check the residual at the end of the plant's contact.`,
      });
    }
  }
  let atBench = lowest.find((l) => l.contactTimeMin === benchTime);
  const residualTarget = input.targets?.residualOxidantMgPerL ?? 0;
  // A residual the water must still carry when it leaves the plant's contact is judged at the first
  // bench time at or after that contact: iron and manganese fall with time (an earlier reading is
  // the safe one), a residual decays (a later reading is).
  let residualNotKept: JarProblem | null = null;
  const keepTime =
    input.targets?.residualOxidantMgPerL !== undefined && input.plantContactTimeMin !== undefined
      ? times.find((t) => t >= input.plantContactTimeMin! && jars.some((j) => j.results.some((r) => r.contactTimeMin === t && r.residualOxidantMgPerL !== null)))
      : undefined;
  if (atBench !== undefined && atBench.doseMgPerL !== null && keepTime !== undefined && keepTime > benchTime) {
    const keeps = (j: EvaluatedJar) => {
      const r = j.results.find((x) => x.contactTimeMin === keepTime);
      return r !== undefined && r.residualOxidantMgPerL !== null && r.residualOxidantMgPerL >= residualTarget;
    };
    const ok = jars.filter((j) => atBench!.jarsMeeting.includes(j.jar) && keeps(j)).sort((a, b) => a.doseMgPerL - b.doseMgPerL)[0];
    if (ok === undefined) {
      residualNotKept = {
        code: 'RESIDUAL_NOT_KEPT',
        severity: 'error',
        message: `Jars ${atBench.jarsMeeting.join(', ')} met every target at ${fmt(benchTime)} min, but none still held the ${fmt(residualTarget)} mg/L residual at ${fmt(keepTime)} min, the first reading after the plant's ${fmt(input.plantContactTimeMin!)} min of contact; no plant dose is recommended. Repeat with higher doses, or lower the residual target.`,
      };
    } else if (ok.jar !== atBench.jar) {
      notes.push(`Jar ${atBench.jar} met every target at ${fmt(benchTime)} min but its residual fell below ${fmt(residualTarget)} mg/L by ${fmt(keepTime)} min (the first reading after the plant's ${fmt(input.plantContactTimeMin!)} min of contact); jar ${ok.jar} is the lowest that also kept it.`);
      atBench = { ...atBench, doseMgPerL: ok.doseMgPerL, jar: ok.jar };
    }
  }
  let recommendedDose: RecommendedDose | null = null;
  const withMargin = (base: number) => (margin.kind === 'relative' ? base * margin.fraction : margin.mgPerL);
  const marginText = margin.kind === 'relative' ? `+${fmt(margin.fraction * 100)} %` : `+${fmt(margin.mgPerL)} mg/L`;
  // The residual expected at the recommended dose comes from the line at the contact time the
  // recommendation is for; where that time has no line of its own, none is predicted.
  const benchLine = f !== null && benchTime === fitTime ? f : residualLineAt(jars, benchTime, dl);
  const benchLineNote = () => {
    if (fitTime === null || benchTime === fitTime) return;
    notes.push(
      benchLine
        ? `Expected residuals at the recommended dose are read from the residual line at ${fmt(benchTime)} min, the contact time of the recommendation (the demand line above is at ${fmt(fitTime)} min).`
        : `No residual line at ${fmt(benchTime)} min (fewer than 3 jars with a measurable residual at 2 or more doses), so no residual is predicted at the recommended dose.`,
    );
  };
  const lineAt = (line: LinearFit | null) => (x: number) => (line !== null && line.slope > 0 ? Math.max(0, line.slope * x + line.intercept) : null);
  // each recommendation predicts from the line at its own contact time: the lowest dose meeting
  // the targets at the plant's bench time, the apparent demand at the fitted time
  let predict = lineAt(benchLine);
  let recLine: LinearFit | null = benchLine;
  const contaminantTargets = targets.filter((t) => t.analyte === 'iron' || t.analyte === 'manganese');
  // A control jar (no oxidant) that meets the iron and manganese targets while dosed jars read above
  // them cannot both be right: oxidant does not raise dissolved iron or manganese (permanganate
  // overdose aside, which shows above the jars that pass, not below them). A blank that passes then
  // says nothing about the dose, and no plant dose is recommended from it.
  const exceeds = (r: EvaluatedResult): string[] =>
    contaminantTargets.flatMap((t) => {
      const v = t.analyte === 'iron' ? r.ironMgPerL : r.manganeseMgPerL;
      return v !== null && v > t.limitMgPerL ? [`${t.analyte} ${fmt(v)} > ${fmt(t.limitMgPerL)} mg/L`] : [];
    });
  const contradicting =
    atBench !== undefined && atBench.doseMgPerL === 0
      ? jars
          .filter((j) => j.doseMgPerL > 0)
          .flatMap((j) => {
            const r = j.results.find((x) => x.contactTimeMin === benchTime);
            const over = r === undefined ? [] : exceeds(r);
            return over.length > 0 ? [{ j, over }] : [];
          })
          .sort((a, b) => a.j.doseMgPerL - b.j.doseMgPerL)
      : [];
  if (residualNotKept !== null && blocking.length === 0) problems.push(residualNotKept);
  if (residualNotKept !== null || blocking.length > 0) {
    if (blocking.length > 0) {
      problems.push({
        code: 'NO_RECOMMENDATION',
        severity: 'error',
        message: `No plant dose is recommended: ${blocking.map((b) => b.code).join(', ')} puts the jar doses or the readings in doubt. Check the stock strength, the aliquots and the residual method, then repeat the test.`,
      });
    }
  } else if (atBench !== undefined && atBench.doseMgPerL === 0 && contradicting.length > 0) {
    const first = contradicting[0]!;
    problems.push({
      code: 'CONTROL_JAR_CONTRADICTS_DOSED_JARS',
      severity: 'error',
      ...(atBench.jar !== null ? { jar: atBench.jar } : {}),
      message:
        `The control jar (jar ${atBench.jar}, no oxidant) met every target at ${fmt(benchTime)} min, but dosed jar(s) ${contradicting.map((c) => c.j.jar).join(', ')} ` +
        `(${contradicting.map((c) => fmt(c.j.doseMgPerL, 3)).join(', ')} mg/L) did not (jar ${first.j.jar}: ${first.over.join('; ')}). ` +
        'Oxidant does not raise dissolved iron or manganese, so a reading, the control\'s sample or a jar mix-up is wrong, and no plant dose is recommended. ' +
        "Check the control jar's sample (filtered through 0.45 µm and read like the others, from the same raw water) and the labels, then repeat the test.",
    });
  } else if (atBench !== undefined && atBench.doseMgPerL !== null) {
    benchLineNote();
    const base = atBench.doseMgPerL;
    const m = withMargin(base);
    recommendedDose = {
      doseMgPerL: base + m,
      baseDoseMgPerL: base,
      basis: 'lowest-dose-meeting-targets',
      contactTimeMin: benchTime,
      margin: { ...margin, mgPerL: m, basis: marginBasis },
      expectedResidualMgPerL: predict(base + m),
      reason: `Lowest bench dose meeting every target at ${fmt(benchTime)} min (jar ${atBench.jar}, ${fmt(base, 3)} mg/L) ${marginText} (${marginBasis}).`,
    };
  } else if (contaminantTargets.length > 0 && atBench !== undefined) {
    // The residual line says where the oxidant is used up, not where iron or manganese meet
    // their targets: with every jar failing, a dose from it would sit below doses that failed.
    const highest = [...jars].sort((a, b) => b.doseMgPerL - a.doseMgPerL)[0]!;
    const highestResult = highest.results.find((r) => r.contactTimeMin === benchTime);
    problems.push({
      code: 'NO_JAR_MET_TARGETS',
      severity: 'error',
      message:
        `No jar met every target at ${fmt(benchTime)} min, up to jar ${highest.jar} at ${fmt(highest.doseMgPerL, 3)} mg/L` +
        `${highestResult && highestResult.failures.length > 0 ? ` (${highestResult.failures.join('; ')})` : ''}, so no plant dose is recommended. ` +
        `${apparentDemand !== null ? `The apparent demand (${fmt(apparentDemand.doseMgPerL, 3, scale)} mg/L) is where the oxidant is used up, not where ${contaminantTargets.map((t) => t.analyte).join(' and ')} meet their targets. ` : ''}` +
        'Repeat with doses above the highest jar or a longer contact time, and check pH, filtration of the samples and the form of the metal (complexed or colloidal iron and manganese may need another treatment).',
    });
  } else if (apparentDemand !== null && apparentDemand.doseMgPerL >= 0 && f !== null && fitTime !== null) {
    predict = lineAt(f);
    recLine = f;
    const base = apparentDemand.doseMgPerL + residualTarget;
    const m = withMargin(base);
    recommendedDose = {
      doseMgPerL: base + m,
      baseDoseMgPerL: base,
      basis: 'apparent-demand-plus-residual',
      contactTimeMin: fitTime,
      margin: { ...margin, mgPerL: m, basis: marginBasis },
      expectedResidualMgPerL: predict(base + m),
      reason:
        `${targets.length === 0 ? 'No targets apply' : `No jar met every target at ${fmt(benchTime)} min`}: apparent demand ${fmt(apparentDemand.doseMgPerL, 3, scale)} mg/L (at ${fmt(fitTime)} min) + target residual ${fmt(residualTarget)} mg/L, ${marginText} (${marginBasis}).`,
    };
    if (fitTime > benchTime) {
      problems.push({
        code: 'FIT_TIME_BEYOND_PLANT_CONTACT',
        severity: 'warning',
        message:
          `The apparent demand comes from ${fmt(fitTime)} min of contact, longer than the ${fmt(benchTime)} min the recommendation is for (the plant's contact). ` +
          `Demand grows with contact, so in ${fmt(benchTime)} min the water uses no more oxidant than in ${fmt(fitTime)} min: the dose covers that demand and the residual after the plant's contact will be at least the expected one, ` +
          `but the oxidation the ${fmt(fitTime)} min line reflects may not be complete within the plant's contact. Check iron and manganese at ${fmt(benchTime)} min, or fit a bench time within the plant's contact (fitContactTimeMin).`,
      });
    }
  } else {
    problems.push({
      code: 'NO_RECOMMENDATION',
      severity: 'error',
      message: 'No jar met every target and the residual line gives no demand, so no plant dose can be recommended; repeat the test with a wider ladder.',
    });
  }
  // The edges of the ladder: a recommendation from its lowest jar says nothing of lower doses, and a
  // higher dose that fails after a lower one passed (permanganate overdose reads as manganese) is a finding.
  const benchRows = jars
    .map((j) => ({ j, r: j.results.find((x) => x.contactTimeMin === benchTime) }))
    .filter((x): x is { j: EvaluatedJar; r: EvaluatedResult } => x.r !== undefined)
    .sort((a, b) => a.j.doseMgPerL - b.j.doseMgPerL);
  if (recommendedDose !== null && recommendedDose.basis === 'lowest-dose-meeting-targets' && atBench !== undefined && atBench.jar !== null && benchRows.length > 0) {
    // a control jar (no oxidant) is a blank, not the ladder's lowest dose
    const dosed = benchRows.filter((x) => x.j.doseMgPerL > 0);
    const lowestRow = atBench.doseMgPerL === 0 || dosed.length === 0 ? benchRows[0]! : dosed[0]!;
    const highestRow = benchRows[benchRows.length - 1]!;
    if (atBench.doseMgPerL !== null && atBench.doseMgPerL > 0 && atBench.doseMgPerL >= highestRow.j.doseMgPerL && benchRows.length > 1) {
      problems.push({
        code: 'ONLY_HIGHEST_JAR_MEETS_TARGETS',
        severity: 'warning',
        jar: atBench.jar,
        message:
          `Only jar ${atBench.jar}, the highest dose of the ladder (${fmt(atBench.doseMgPerL, 3)} mg/L), met every target at ${fmt(benchTime)} min: the recommendation${recommendedDose.doseMgPerL > atBench.doseMgPerL ? `, ${fmt(recommendedDose.doseMgPerL, 3)} mg/L with its margin, is above every dose tested, and` : ''} rests on one jar at the edge of the ladder. ` +
          'Repeat with doses around and above it before changing the plant dose.',
      });
    }
    if (atBench.doseMgPerL !== null && atBench.doseMgPerL <= lowestRow.j.doseMgPerL) {
      const d = atBench.doseMgPerL;
      problems.push({
        code: 'LOWEST_JAR_MEETS_TARGETS',
        severity: 'warning',
        jar: atBench.jar,
        message:
          d === 0
            ? `The control jar (jar ${atBench.jar}, no oxidant) already met every target at ${fmt(benchTime)} min: the water may need no oxidant for these targets, and the recommendation rests on it. Check the raw-water readings and the targets before dosing.`
            : `Jar ${atBench.jar}, the lowest dose of the ladder (${fmt(d, 3)} mg/L), already met every target at ${fmt(benchTime)} min, so the true minimum may lie below the ladder and the recommended dose may be more than the plant needs. ` +
              `Extend the ladder down (e.g. doses from ${fmt(d / 4, 2)} to ${fmt(d, 3)} mg/L) and repeat to find it.`,
      });
    }
  }
  const atBenchTargets = lowest.find((l) => l.contactTimeMin === benchTime);
  // A higher jar that fails only on the largest residual allowed is what a higher dose does; one that
  // fails on iron, manganese or the residual it must keep is a finding.
  const otherTargets = targets.filter((t) => t.analyte !== 'residualOxidantMax');
  const failsOther = (r: EvaluatedResult) =>
    judge(
      {
        contactTimeMin: r.contactTimeMin,
        ...(r.residualOxidantMgPerL !== null ? { residualOxidantMgPerL: r.residualOxidantMgPerL } : {}),
        ...(r.ironMgPerL !== null ? { ironMgPerL: r.ironMgPerL } : {}),
        ...(r.manganeseMgPerL !== null ? { manganeseMgPerL: r.manganeseMgPerL } : {}),
      },
      otherTargets,
    );
  const failing =
    atBenchTargets === undefined || atBenchTargets.jar === null
      ? []
      : atBenchTargets.higherDosesFailing.filter((jar) => {
          const row = benchRows.find((x) => x.j.jar === jar);
          return row !== undefined && failsOther(row.r).meets === false;
        });
  if (atBenchTargets !== undefined && atBenchTargets.jar !== null && failing.length > 0 && contradicting.length === 0) {
    const first = benchRows.find((x) => x.j.jar === failing[0]);
    problems.push({
      code: 'HIGHER_DOSE_FAILS_TARGETS',
      severity: 'warning',
      message:
        `Jar ${atBenchTargets.jar} (${fmt(atBenchTargets.doseMgPerL!, 3)} mg/L) met every target at ${fmt(benchTime)} min, but jar(s) ${failing.join(', ')} at higher doses did not` +
        `${first !== undefined && first.r.failures.length > 0 ? ` (jar ${first.j.jar}: ${first.r.failures.join('; ')})` : ''}: ` +
        (isPermanganateBasis(basis)
          ? 'an overdose of permanganate passes the filter and reads as manganese, so the dose may have a ceiling as well as a floor; '
          : 'a result that gets worse as the dose rises points at a reading, a jar mix-up or an overdose effect; ') +
        'check those jars and confirm the recommended dose at the plant before relying on it.',
    });
  }

  // The largest residual allowed caps the margin: the plant dose stays where the line predicts that residual.
  const residualMax = input.targets?.residualOxidantMaxMgPerL;
  if (recommendedDose !== null && residualMax !== undefined && recommendedDose.expectedResidualMgPerL !== null && recommendedDose.expectedResidualMgPerL > residualMax && recLine !== null && recLine.slope > 0) {
    const rec: RecommendedDose = recommendedDose;
    const base = rec.baseDoseMgPerL;
    const atMax = (residualMax - recLine.intercept) / recLine.slope;
    const baseResidual = predict(base);
    if (atMax > base && baseResidual !== null && baseResidual <= residualMax) {
      const capped = atMax - base;
      const cappedMargin: RecommendedDose['margin'] =
        rec.margin.kind === 'relative'
          ? { kind: 'relative', fraction: base > 0 ? capped / base : 0, mgPerL: capped, basis: `${rec.margin.basis}; capped so the expected residual stays at the ${fmt(residualMax)} mg/L allowed` }
          : { kind: 'absolute', mgPerL: capped, basis: `${rec.margin.basis}; capped so the expected residual stays at the ${fmt(residualMax)} mg/L allowed` };
      problems.push({
        code: 'MARGIN_CAPPED_AT_RESIDUAL_MAX',
        severity: 'warning',
        message:
          `The ${marginText} margin (${fmt(rec.margin.mgPerL, 3, scale)} mg/L) would raise the expected residual to ${fmt(rec.expectedResidualMgPerL!, 2, scale)} mg/L, above the ${fmt(residualMax)} mg/L allowed: ` +
          `the margin is capped at ${fmt(capped, 3, scale)} mg/L, so the recommended dose is ${fmt(base + capped, 3)} mg/L, where the residual line predicts ${fmt(residualMax)} mg/L. ` +
          'The smaller margin leaves less room for a rise in raw-water demand; confirm the residual at the plant.',
      });
      recommendedDose = {
        ...rec,
        doseMgPerL: base + capped,
        margin: cappedMargin,
        expectedResidualMgPerL: residualMax,
        reason: `${rec.reason.replace(/\.$/, '')}; margin capped at ${fmt(capped, 3, scale)} mg/L so the expected residual stays at the ${fmt(residualMax)} mg/L allowed.`,
      };
    } else {
      // even the bench dose itself leaves more than the maximum: no margin, and say so
      const noMargin: RecommendedDose['margin'] =
        rec.margin.kind === 'relative'
          ? { kind: 'relative', fraction: 0, mgPerL: 0, basis: `${rec.margin.basis}; none, since the bench dose already leaves more than the ${fmt(residualMax)} mg/L allowed` }
          : { kind: 'absolute', mgPerL: 0, basis: `${rec.margin.basis}; none, since the bench dose already leaves more than the ${fmt(residualMax)} mg/L allowed` };
      recommendedDose = { ...rec, doseMgPerL: base, margin: noMargin, expectedResidualMgPerL: baseResidual, reason: `${rec.reason.replace(/\.$/, '')}; no margin, since the bench dose already leaves more than the ${fmt(residualMax)} mg/L allowed.` };
      problems.push({
        code: 'RECOMMENDED_ABOVE_RESIDUAL_MAX',
        severity: 'warning',
        message:
          `At the bench dose ${fmt(base, 3)} mg/L the residual line already predicts ${fmt(baseResidual ?? 0, 2, scale)} mg/L, above the ${fmt(residualMax)} mg/L allowed, so no margin is added. ` +
          'Repeat the test with doses just below it to find a lower dose that still meets the targets, or confirm the residual at the plant.',
      });
    }
  }

  // Permanganate without a caller's maximum: the residual that would show pink water is the default limit to check.
  if (recommendedDose !== null && input.targets?.residualOxidantMaxMgPerL === undefined && isPermanganateBasis(basis)) {
    const pink = pinkWaterThreshold(basis);
    const predicted = recommendedDose.expectedResidualMgPerL;
    if (pink === null) {
      problems.push({
        code: 'RESIDUAL_COLOUR_NOT_CHECKED',
        severity: 'info',
        message: `No largest residual was given and the pink-water threshold is stated as KMnO4, not as ${basis}, so the residual at the recommended dose was not checked for colour; give targets.residualOxidantMax.`,
      });
    } else if (predicted === null) {
      problems.push({
        code: 'RESIDUAL_COLOUR_NOT_CHECKED',
        severity: 'info',
        message: `${fit === null ? 'Without a residual line no residual is predicted' : 'The residual line gives no residual'} at the recommended ${fmt(recommendedDose.doseMgPerL, 3)} mg/L, so it was not checked against the ${fmt(pink.mgPerL)} mg/L as KMnO4 at which permanganate shows pink (${pink.basis}); look for pink in the jar nearest that dose.`,
      });
    } else if (predicted > pink.mgPerL) {
      const rec = recommendedDose;
      // only what can still be done: a margin of 0 cannot be made smaller, an apparent demand above the dose is no way down
      const options: string[] = [];
      if (rec.margin.mgPerL > 0) options.push(`use a smaller margin (the ${marginText} adds ${fmt(rec.margin.mgPerL, 3, scale)} mg/L)`);
      if (apparentDemand !== null && apparentDemand.doseMgPerL >= 0 && apparentDemand.doseMgPerL < rec.baseDoseMgPerL && rec.basis === 'lowest-dose-meeting-targets') {
        options.push(`repeat the test with doses between the apparent demand (${fmt(apparentDemand.doseMgPerL, 3, scale)} mg/L) and ${fmt(rec.baseDoseMgPerL, 3)} mg/L to find a lower dose that still meets the targets`);
      } else if (rec.basis === 'lowest-dose-meeting-targets') {
        options.push(`repeat the test with doses just below ${fmt(rec.baseDoseMgPerL, 3)} mg/L to find a lower dose that still meets the targets`);
      }
      if (rec.basis === 'apparent-demand-plus-residual' && residualTarget > 0) options.push(`lower the ${fmt(residualTarget)} mg/L target residual`);
      options.push('give targets.residualOxidantMax so the jars are judged on the residual too');
      options.push('confirm at the plant by watching for pink ahead of the filters');
      const last = options.pop()!;
      problems.push({
        code: 'RECOMMENDED_RESIDUAL_PINK',
        severity: 'warning',
        message:
          `At the recommended ${fmt(rec.doseMgPerL, 3)} mg/L the residual line predicts ${fmt(predicted, 2, scale)} mg/L of permanganate as KMnO4, above the ${fmt(pink.mgPerL)} mg/L default threshold at which water shows pink ` +
          `(${pink.basis}). Expect pink water unless the residual is consumed or removed before the tap: ${options.length > 0 ? `${options.join(', ')}, or ${last}` : last}.`,
      });
    } else {
      notes.push(`Residual at the recommended dose ${fmt(predicted, 2, scale)} mg/L as KMnO4, at or below the ${fmt(pink.mgPerL)} mg/L default pink-water threshold (${pink.basis}).`);
    }
  }

  // A dose read off the residual line below every jar tested is an extrapolation: below the ladder the
  // residual need not follow the line (a breakpoint curve with ammonia, a demand met at low doses).
  if (recommendedDose !== null && recommendedDose.basis === 'apparent-demand-plus-residual') {
    const dosedJars = jars.filter((j) => j.doseMgPerL > 0).sort((a, b) => a.doseMgPerL - b.doseMgPerL);
    const lowestJar = dosedJars[0];
    if (lowestJar !== undefined && recommendedDose.doseMgPerL < lowestJar.doseMgPerL) {
      const demand = apparentDemand?.doseMgPerL ?? recommendedDose.baseDoseMgPerL;
      problems.push({
        code: 'RECOMMENDATION_BELOW_LADDER',
        severity: 'warning',
        message:
          `The recommended ${fmt(recommendedDose.doseMgPerL, 3)} mg/L is below every jar tested (the lowest is jar ${lowestJar.jar}, ${fmt(lowestJar.doseMgPerL, 3)} mg/L): ` +
          `it is read off the residual line extrapolated below the ladder to the apparent demand ${fmt(demand, 3, scale)} mg/L, and no jar shows what the water does there ` +
          (basis === 'Cl2' ? '(with ammonia in the water chlorine follows a breakpoint curve, not a line)' : '(at low doses the demand need not follow the line: a fast demand may take all of the oxidant)') +
          '. ' +
          `Repeat the test with doses from about ${fmt(demand / 2, 2)} to ${fmt(lowestJar.doseMgPerL, 3)} mg/L before using it.`,
      });
    }
  }

  return {
    oxidant: input.oxidant,
    basis,
    jarVolumeL: input.jarVolumeL,
    estimateMgPerL: input.estimateMgPerL,
    detectionLimitMgPerL: dl,
    contactTimesMin: times,
    jars,
    demandCurves,
    fit,
    apparentDemand,
    backgroundDemand,
    targets,
    lowestDoseMeetingTargets: lowest,
    recommendedDose,
    problems,
    notes,
  };
}
