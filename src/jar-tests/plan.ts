/**
 * Plan a jar test: a dose ladder that brackets the expected demand and the planned dose
 * (demand + target residual, the dose the plant would feed), a stock solution whose
 * aliquots are measurable and small beside the jar, what to weigh or dilute, and the
 * bench schedule.
 *
 * The stoichiometric estimate comes in as a number (the dosing module computes it
 * from the sample readings); product facts come in as arguments (see product.ts).
 */
import { DomainError } from '../core/errors.js';
import { Dec } from '../core/decimal.js';
import {
  FieldCheck,
  JAR_TEST_DEFAULTS as D,
  aliquotForDose,
  checkJarVolume,
  doseFromAliquot,
  evenlySpaced,
  fmt,
  isNegligible,
  isPermanganateBasis,
  pinkWaterThreshold,
  roundToResolution,
  strengthForAliquot,
  type JarProblem,
} from './common.js';
import { defaultResidualMethod, generatedStockText, productLabel, type JarProductFacts } from './product.js';

export interface PlanJarTestInput {
  /** Oxidant product id (e.g. "potassium-permanganate"). */
  readonly oxidant: string;
  readonly product: JarProductFacts;
  /** Stoichiometric demand of the sample, mg/L on the product's basis. */
  readonly estimateMgPerL: number;
  /** Measured or assumed background demand, mg/L (default 0). */
  readonly backgroundMgPerL?: number;
  /**
   * Residual the plant must carry after contact, mg/L on the basis (default 0). The planned dose is
   * estimate + background + target residual, the dose the dosing module computes for the same inputs;
   * a default ladder reaches above it.
   */
  readonly targetResidualMgPerL?: number;
  readonly jarVolumeL: number;
  /** Number of jars for the default ladder (default 6; ignored when doses are given). */
  readonly jars?: number;
  /** Explicit target doses, mg/L, in jar order (0 = a control jar). */
  readonly doses?: readonly number[];
  /** Stock strength, g/L on the basis; chosen from stockStrengthsGPerL when absent. */
  readonly stockStrengthGPerL?: number;
  /** Default 0.1 mL (common practice). */
  readonly pipetteResolutionMl?: number;
  /** Default [5, 15, 30] min (common practice). */
  readonly contactTimesMin?: readonly number[];
  readonly ladderFromFraction?: number;
  readonly ladderToFraction?: number;
  readonly minAliquotMl?: number;
  readonly maxAliquotFraction?: number;
  readonly stockStrengthsGPerL?: readonly number[];
  readonly flaskVolumesMl?: readonly number[];
}

export type StockPreparation =
  | {
      readonly kind: 'weigh';
      readonly productMassG: number;
      readonly purityFraction: number;
      readonly purityAssumed: boolean;
    }
  | {
      readonly kind: 'dilute';
      readonly tradeVolumeMl: number;
      readonly tradeStrengthGPerL: number;
      readonly tradeStrengthMustBeMeasured: boolean;
    }
  | { readonly kind: 'generate'; readonly measureBy: string; readonly stock: string; readonly make: string };

export interface PlannedStock {
  readonly strengthGPerL: number;
  readonly basis: string;
  readonly strengthChoice: 'caller' | 'chosen';
  readonly flaskVolumeMl: number;
  /** Mass of product to weigh (g), or null when the stock is diluted from a solution or generated. */
  readonly productMassG: number | null;
  readonly preparation: StockPreparation;
  /** Stock the ladder uses (Σ aliquots) and the volume wanted (× stockVolumeFactor). */
  readonly stockUsedMl: number;
  readonly stockWantedMl: number;
  readonly solubilityGPerL: number | null;
  readonly instructions: readonly string[];
}

export interface PlannedJar {
  readonly jar: number;
  readonly targetDoseMgPerL: number;
  /** Aliquot before rounding, mL. */
  readonly aliquotExactMl: number;
  /** Aliquot rounded to the pipette resolution, mL. */
  readonly aliquotMl: number;
  /** Dose the rounded aliquot gives, dilution by the aliquot accounted for: a·C/(V + a/1000). */
  readonly actualDoseMgPerL: number;
  readonly aliquotFractionOfJar: number;
  /** max(0, actual dose − expected demand): the residual if all the expected demand is met. */
  readonly expectedResidualMgPerL: number;
}

export interface ScheduleStep {
  readonly order: number;
  readonly action: string;
  readonly durationMin?: number;
  readonly speedRpm?: { readonly min: number; readonly max: number };
  /** "common practice", or a named practice with its source id. */
  readonly basis: string;
  readonly source?: string;
}

export interface Measurement {
  readonly what: string;
  readonly method: string;
  readonly when: string;
  readonly basis: string;
}

export interface JarTestSchedule {
  readonly steps: readonly ScheduleStep[];
  readonly contactTimesMin: readonly number[];
  readonly filtration: { readonly poreSizeUm: number; readonly for: readonly string[]; readonly basis: string; readonly note: string };
  readonly measurements: readonly Measurement[];
}

export interface JarTestPlan {
  readonly oxidant: string;
  readonly basis: string;
  readonly estimate: {
    readonly doseMgPerL: number;
    readonly backgroundMgPerL: number;
    /** estimate + background: the demand the ladder brackets. */
    readonly expectedDemandMgPerL: number;
    readonly targetResidualMgPerL: number;
    /** estimate + background + target residual: the dose the plant would feed, which the ladder also brackets. */
    readonly plannedDoseMgPerL: number;
  };
  readonly ladder: {
    readonly source: 'default' | 'caller';
    /** Default ladder: the first dose is fromFraction × the expected demand (× the planned dose when the demand is 0). */
    readonly fromFraction?: number;
    /** Default ladder: the last dose is toFraction × the planned dose. */
    readonly toFraction?: number;
    /** Some dosed jar below and some above the expected demand (a control jar at 0 mg/L is a blank, not a bracket). */
    readonly brackets: boolean;
    /** Some dosed jar below and some above the planned dose. */
    readonly bracketsPlannedDose: boolean;
  };
  readonly jarVolumeL: number;
  readonly pipetteResolutionMl: number;
  readonly minAliquotMl: number;
  readonly maxAliquotMl: number;
  /** True when aliquots exceed maxAliquotFraction of the jar and were computed with a = D·V/(C − D/1000). */
  readonly dilutionCorrected: boolean;
  readonly stock: PlannedStock;
  readonly jars: readonly PlannedJar[];
  readonly schedule: JarTestSchedule;
  readonly warnings: readonly JarProblem[];
  /** Every default used, with its basis. */
  readonly assumptions: readonly string[];
}

const MAX_JARS = 24;
const MAX_JAR_VOLUME_L = 20;

function validate(input: PlanJarTestInput): void {
  const c = new FieldCheck();
  if (typeof input.oxidant !== 'string' || input.oxidant.length === 0) c.add('/oxidant', 'give the oxidant product id');
  c.nonNegative(input.estimateMgPerL, '/estimateMgPerL', 'the stoichiometric estimate (mg/L)');
  if (input.backgroundMgPerL !== undefined) c.nonNegative(input.backgroundMgPerL, '/backgroundMgPerL', 'the background demand (mg/L)');
  if (input.targetResidualMgPerL !== undefined) c.nonNegative(input.targetResidualMgPerL, '/targetResidualMgPerL', 'the target residual (mg/L)');
  checkJarVolume(c, input.jarVolumeL, MAX_JAR_VOLUME_L);
  if (input.doses === undefined && input.jars !== undefined) c.integerInRange(input.jars, '/jars', 'the number of jars', 2, MAX_JARS);
  if (input.doses !== undefined) {
    if (!Array.isArray(input.doses) || input.doses.length < 2 || input.doses.length > MAX_JARS) {
      c.add('/doses', `give from 2 to ${MAX_JARS} doses (mg/L), one per jar`);
    } else {
      input.doses.forEach((d, i) => c.doseMgPerL(d, `/doses/${i}`, `the dose of jar ${i + 1} (mg/L)`));
      if (input.doses.every((d) => d === 0)) c.add('/doses', 'at least one dose must be above 0 mg/L');
    }
  }
  if (input.stockStrengthGPerL !== undefined) c.positive(input.stockStrengthGPerL, '/stockStrengthGPerL', 'the stock strength (g/L)');
  if (input.pipetteResolutionMl !== undefined && c.positive(input.pipetteResolutionMl, '/pipetteResolutionMl', 'the pipette resolution (mL)') && input.pipetteResolutionMl > 10) {
    c.add('/pipetteResolutionMl', `the pipette resolution must be at most 10 mL (got ${input.pipetteResolutionMl})`);
  }
  if (input.contactTimesMin !== undefined) {
    if (!Array.isArray(input.contactTimesMin) || input.contactTimesMin.length === 0) c.add('/contactTimesMin', 'give at least one contact time (min)');
    else input.contactTimesMin.forEach((t, i) => c.positive(t, `/contactTimesMin/${i}`, 'a contact time (min)'));
  }
  if (input.ladderFromFraction !== undefined) c.nonNegative(input.ladderFromFraction, '/ladderFromFraction', 'the ladder start fraction');
  if (input.ladderToFraction !== undefined) c.positive(input.ladderToFraction, '/ladderToFraction', 'the ladder end fraction');
  const from = input.ladderFromFraction ?? D.ladderFromFraction.value;
  const to = input.ladderToFraction ?? D.ladderToFraction.value;
  if (input.doses === undefined && !(from < 1 && to > 1)) c.add('/ladderToFraction', `the ladder must run from below to above the expected demand (from ${from} to ${to} of it)`);
  if (input.minAliquotMl !== undefined) c.positive(input.minAliquotMl, '/minAliquotMl', 'the minimum aliquot (mL)');
  if (input.maxAliquotFraction !== undefined) c.fraction(input.maxAliquotFraction, '/maxAliquotFraction', 'the largest aliquot as a fraction of the jar volume');
  for (const [key, list] of [['stockStrengthsGPerL', input.stockStrengthsGPerL], ['flaskVolumesMl', input.flaskVolumesMl]] as const) {
    if (list === undefined) continue;
    if (!Array.isArray(list) || list.length === 0) c.add(`/${key}`, 'give at least one value');
    else list.forEach((v, i) => c.positive(v, `/${key}/${i}`, 'each value'));
  }
  const p = input.product;
  if (p === undefined || p === null || typeof p !== 'object') c.add('/product', 'give the product facts (basis and stock route)');
  else {
    if (typeof p.basis !== 'string' || p.basis.length === 0) c.add('/product/basis', 'give the dose basis, e.g. "KMnO4" or "Cl2"');
    const s = p.stock;
    if (s === undefined) c.add('/product/stock', 'give how the stock is made: solid, trade-solution or generated');
    else if (s.kind === 'solid') {
      if (s.purityFraction !== undefined) c.fraction(s.purityFraction, '/product/stock/purityFraction', 'the purity');
      if (s.solubility !== undefined) c.positive(s.solubility.gPerL, '/product/stock/solubility/gPerL', 'the solubility (g/L)');
    } else if (s.kind === 'trade-solution') {
      c.positive(s.tradeStrengthGPerL, '/product/stock/tradeStrengthGPerL', 'the trade strength (g/L on the dose basis)');
    } else if (s.kind === 'generated') {
      if (s.solubility !== undefined) c.positive(s.solubility.gPerL, '/product/stock/solubility/gPerL', 'the solubility (g/L)');
    } else if (s.kind !== 'aeration') {
      c.add('/product/stock/kind', 'the stock route must be "solid", "trade-solution", "generated" or "aeration"');
    }
  }
  c.throwIfAny('The jar-test plan request is not valid');
}

/** The largest stock strength the product allows, and why. */
function strengthCeiling(p: JarProductFacts): { gPerL: number; why: string } | null {
  const s = p.stock;
  if (s.kind === 'aeration') return null;
  if (s.kind === 'trade-solution') return { gPerL: s.tradeStrengthGPerL, why: `the trade strength ${fmt(s.tradeStrengthGPerL)} g/L` };
  if (s.solubility !== undefined) {
    const at = s.solubility.temperatureC !== undefined ? ` at ${s.solubility.temperatureC} °C` : '';
    return { gPerL: s.solubility.gPerL, why: `the solubility ${fmt(s.solubility.gPerL)} g/L${at}` };
  }
  return null;
}

interface StockChoice {
  readonly strengthGPerL: number;
  readonly choice: 'caller' | 'chosen';
  readonly correctDilution: boolean;
}

function chooseStock(input: PlanJarTestInput, targets: readonly number[], minAliquotMl: number, maxAliquotMl: number, res: number, warnings: JarProblem[]): StockChoice {
  const V = input.jarVolumeL;
  const positive = targets.filter((d) => d > 0);
  const minDose = Math.min(...positive);
  const maxDose = Math.max(...positive);
  const ceiling = strengthCeiling(input.product);
  const needsDilutionCorrection = (C: number) => targets.some((d) => aliquotForDose(d, C, V, false) > maxAliquotMl);

  if (input.stockStrengthGPerL !== undefined) {
    const C = input.stockStrengthGPerL;
    if (ceiling !== null && C > ceiling.gPerL) {
      const code = input.product.stock.kind === 'trade-solution' ? 'above the trade strength' : 'above the solubility';
      throw new DomainError('JAR_TEST_INVALID', {
        detail: `A stock of ${fmt(C)} g/L is ${code}: the product allows at most ${ceiling.why}. Choose a weaker stock.`,
        params: { stockStrengthGPerL: C, ceilingGPerL: ceiling.gPerL },
        fields: [{ pointer: '/stockStrengthGPerL', message: `must be at most ${fmt(ceiling.gPerL)} g/L (${ceiling.why})` }],
      });
    }
    if (1000 * C <= maxDose) {
      throw new DomainError('JAR_TEST_INVALID', {
        detail: `A stock of ${fmt(C)} g/L (${fmt(1000 * C)} mg/L) cannot give a jar dose of ${fmt(maxDose)} mg/L however much is added; use a stock stronger than the dose.`,
        fields: [{ pointer: '/stockStrengthGPerL', message: `must be above ${fmt(maxDose / 1000)} g/L to reach ${fmt(maxDose)} mg/L` }],
      });
    }
    return { strengthGPerL: C, choice: 'caller', correctDilution: needsDilutionCorrection(C) };
  }

  if (input.product.stock.kind === 'generated') {
    const g = generatedStockText(input.product);
    const measureBy = input.product.stock.measureBy ?? defaultResidualMethod(input.product.basis);
    throw new DomainError('JAR_TEST_INVALID', {
      detail:
        `A jar test with ${productLabel(input.product)} is dosed from ${g.stock} made on the day: ${g.make}. ` +
        `Measure its strength by ${measureBy} and give the measured strength as stockStrengthGPerL (g/L as ${input.product.basis}) so the aliquots can be computed.`,
      fields: [{ pointer: '/stockStrengthGPerL', message: `give the measured strength of the ${g.stock} stock (g/L as ${input.product.basis})` }],
    });
  }
  const list = [...(input.stockStrengthsGPerL ?? D.stockStrengthsGPerL.value)].sort((a, b) => a - b);
  const allowed = list.filter((C) => (ceiling === null || C <= ceiling.gPerL) && 1000 * C > maxDose);
  if (allowed.length === 0) {
    const why = ceiling !== null ? ` at or below ${ceiling.why}` : '';
    throw new DomainError('JAR_TEST_INVALID', {
      detail: `None of the stock strengths ${list.join(', ')} g/L is usable${why} for doses up to ${fmt(maxDose)} mg/L. Give stockStrengthGPerL (for a generated stock, its measured strength).`,
      params: { candidatesGPerL: list, ceilingGPerL: ceiling?.gPerL ?? null },
      fields: [{ pointer: '/stockStrengthGPerL', message: 'give the stock strength (g/L) to use' }],
    });
  }
  const aliquots = (C: number) => ({ min: (minDose * V) / C, max: (maxDose * V) / C });
  // A stock that can be made up in one step: at least minTradeVolumeMl of trade solution (rounded to the
  // pipette step) or minWeighMassG of solid in the largest flask; a stock that cannot is a last resort.
  const largestFlask = Math.max(...(input.flaskVolumesMl ?? D.flaskVolumesMl.value));
  const stockRoute = input.product.stock;
  const preparable = (C: number): boolean => {
    if (stockRoute.kind === 'trade-solution') return roundToResolution((C * largestFlask) / stockRoute.tradeStrengthGPerL, res) >= D.minTradeVolumeMl.value;
    if (stockRoute.kind === 'solid') return (C * largestFlask) / 1000 / (stockRoute.purityFraction ?? 1) >= D.minWeighMassG.value;
    return true;
  };
  const inRange = (C: number) => aliquots(C).min >= minAliquotMl && aliquots(C).max <= maxAliquotMl;
  // Lowest strength that keeps every aliquot within [minAliquot, maxAliquot]: the largest aliquots, so the
  // finest relative resolution, while dilution stays negligible; one that can be made up in one step first.
  // When no strength on the list does both, the weakest stock a trade solution makes up in one step (the
  // minimum trade volume in the largest flask: 1.0 mL of 125 g/L in 1000 mL is 0.125 g/L) may.
  const oneStep =
    stockRoute.kind === 'trade-solution'
      ? (() => {
          const C = (D.minTradeVolumeMl.value * stockRoute.tradeStrengthGPerL) / largestFlask;
          return (ceiling === null || C <= ceiling.gPerL) && 1000 * C > maxDose && inRange(C) && preparable(C) ? C : undefined;
        })()
      : undefined;
  const feasible = allowed.find((C) => inRange(C) && preparable(C)) ?? oneStep ?? allowed.find(inRange);
  if (feasible !== undefined) return { strengthGPerL: feasible, choice: 'chosen', correctDilution: false };
  // No strength does both: keep the smallest aliquot measurable and correct the large ones for dilution.
  const measurable = allowed.filter((C) => aliquots(C).min >= minAliquotMl);
  if (measurable.length > 0) {
    const C = [...measurable].reverse().find(preparable) ?? measurable[measurable.length - 1]!;
    return { strengthGPerL: C, choice: 'chosen', correctDilution: needsDilutionCorrection(C) };
  }
  const C = allowed[0]!;
  warnings.push({
    code: 'STOCK_TOO_STRONG_FOR_LOW_DOSES',
    severity: 'warning',
    message:
      `Even the weakest stock on the list (${fmt(C)} g/L) needs less than ${fmt(minAliquotMl)} mL for ${fmt(minDose)} mg/L in a ${fmt(V)} L jar: the stock is too strong for the lowest doses. ` +
      `Dilute it (${fmt(strengthForAliquot(minDose, V, minAliquotMl))} g/L or weaker gives at least ${fmt(minAliquotMl)} mL; give it as stockStrengthGPerL) or use larger jars.`,
  });
  return { strengthGPerL: C, choice: 'chosen', correctDilution: needsDilutionCorrection(C) };
}

function planStock(
  input: PlanJarTestInput,
  C: number,
  choice: 'caller' | 'chosen',
  stockUsedMl: number,
  res: number,
  warnings: JarProblem[],
  assumptions: string[],
): PlannedStock {
  const p = input.product;
  const s = p.stock;
  const basis = p.basis;
  const flasks = [...(input.flaskVolumesMl ?? D.flaskVolumesMl.value)].sort((a, b) => a - b);
  const factor = D.stockVolumeFactor.value;
  const wanted = stockUsedMl * factor;
  assumptions.push(`Stock volume: at least ${factor} × the ${fmt(stockUsedMl)} mL the ladder uses (${D.stockVolumeFactor.basis}).`);
  const bigEnough = flasks.filter((f) => f >= wanted);
  const largest = flasks[flasks.length - 1]!;
  if (bigEnough.length === 0) {
    warnings.push({
      code: 'STOCK_VOLUME_LARGE',
      severity: 'warning',
      message: `The ladder uses ${fmt(stockUsedMl)} mL of stock, more than half the largest flask (${largest} mL); make up ${Math.ceil(wanted / largest)} flasks or use a stronger stock.`,
    });
  }
  const candidates = bigEnough.length > 0 ? bigEnough : [largest];
  const solubility = s.kind === 'solid' || s.kind === 'generated' ? (s.solubility?.gPerL ?? null) : null;
  const instructions: string[] = [];
  const label = productLabel(p);

  if (s.kind === 'solid') {
    const purityAssumed = s.purityFraction === undefined;
    const purity = s.purityFraction ?? 1;
    if (purityAssumed) {
      warnings.push({
        code: 'PURITY_ASSUMED',
        severity: 'warning',
        message: `No purity given for ${label}; the mass assumes 100 % ${basis}. Use the assay on the product's certificate of analysis.`,
      });
    }
    if (solubility === null) {
      warnings.push({
        code: 'SOLUBILITY_NOT_CHECKED',
        severity: 'info',
        message: `No solubility given for ${label}; the ${fmt(C)} g/L stock was not checked against it.`,
      });
    }
    const massFor = (flaskMl: number) => (C * flaskMl) / 1000 / purity;
    const minMass = D.minWeighMassG.value;
    let flask = candidates.find((f) => massFor(f) >= minMass);
    if (flask === undefined) {
      flask = candidates[candidates.length - 1]!;
      warnings.push({
        code: 'MASS_BELOW_WEIGHING_MINIMUM',
        severity: 'warning',
        message: `Only ${fmt(massFor(flask))} g of ${label} makes ${flask} mL of ${fmt(C)} g/L, below the ${minMass} g that weighs to 0.1 %; make a 10× stronger stock and dilute it 1 + 9.`,
      });
    }
    assumptions.push(`Flask: the smallest standard flask that holds the stock wanted and needs at least ${minMass} g of product (${D.minWeighMassG.basis}).`);
    const mass = massFor(flask);
    instructions.push(
      `Weigh ${fmt(mass)} g of ${label}${purityAssumed ? '' : ` (purity ${fmt(purity * 100)} % as ${basis})`} into a ${flask} mL volumetric flask; ` +
        `dissolve in reagent water and make up to the mark: ${fmt(C)} g/L (${fmt(C)} mg/mL) as ${basis}.`,
    );
    instructions.push(`Mass = strength × flask volume ÷ purity = ${fmt(C)} g/L × ${flask / 1000} L ÷ ${fmt(purity)} = ${fmt(mass)} g.`);
    if (p.decays !== undefined) instructions.push(`The product loses strength in storage (${noteText(p.decays.note)}); confirm the stock strength by ${p.decays.measureBy} before dosing.`);
    return {
      strengthGPerL: C,
      basis,
      strengthChoice: choice,
      flaskVolumeMl: flask,
      productMassG: mass,
      preparation: { kind: 'weigh', productMassG: mass, purityFraction: purity, purityAssumed },
      stockUsedMl,
      stockWantedMl: wanted,
      solubilityGPerL: solubility,
      instructions,
    };
  }

  if (s.kind === 'trade-solution') {
    const T = s.tradeStrengthGPerL;
    // The trade solution is measured with a pipette read to the plan's pipette step: the volume is
    // rounded to it, and the stock strength is what that volume really gives in the flask.
    const exactFor = (flaskMl: number) => (C * flaskMl) / T;
    const volFor = (flaskMl: number) => Math.max(res, roundToResolution(exactFor(flaskMl), res));
    const minVol = D.minTradeVolumeMl.value;
    let flask = candidates.find((f) => volFor(f) >= minVol);
    if (flask === undefined) {
      flask = candidates[candidates.length - 1]!;
      const predilutedVol = Math.max(res, roundToResolution((C * flask) / (T / 10), res));
      const predilutedStrength = (predilutedVol * (T / 10)) / flask;
      warnings.push({
        code: 'TRADE_VOLUME_BELOW_MINIMUM',
        severity: 'warning',
        message:
          `Only ${fmt(exactFor(flask))} mL of trade solution makes ${flask} mL of ${fmt(C)} g/L, below the ${minVol} mL a pipette measures well; ` +
          `measured as ${fmt(volFor(flask))} mL it gives ${fmt((volFor(flask) * T) / flask)} g/L, and half a pipette step is ${fmt((res / 2 / volFor(flask)) * 100, 2)} % of it. ` +
          `Better: dilute the trade solution 1 + 9 first (10 mL to 100 mL: ${fmt(T / 10)} g/L), then pipette ${fmt(predilutedVol)} mL of that into the ${flask} mL flask, which gives ${fmt(predilutedStrength)} g/L; ` +
          (Math.abs(predilutedStrength / ((volFor(flask) * T) / flask) - 1) < 1e-9
            ? `that is the strength the aliquots below are computed for, so they hold for the two-step stock.`
            : `the aliquots below are computed for the single step (${fmt((volFor(flask) * T) / flask)} g/L), so for the two-step stock plan again with stockStrength ${fmt(predilutedStrength)} g/L, or the jars will be off by ${fmt(Math.abs(predilutedStrength / ((volFor(flask) * T) / flask) - 1) * 100, 2)} %.`),
      });
    }
    assumptions.push(
      `Flask: the smallest standard flask that holds the stock wanted and needs at least ${minVol} mL of trade solution (${D.minTradeVolumeMl.basis}), the volume rounded to the ${fmt(res)} mL pipette step (${D.pipetteResolutionMl.basis}).`,
    );
    const exact = exactFor(flask);
    const vol = volFor(flask);
    // a volume that is already a pipette step (2.0 mL of 125 g/L into 250 mL) keeps the strength aimed at
    const rounded = !isNegligible(vol - exact, exact);
    const real = rounded ? new Dec(vol).times(T).dividedBy(flask).toNumber() : C;
    const aimed = choice === 'caller' ? 'the stock strength asked for' : 'the round strength aimed at';
    if (rounded) {
      warnings.push({
        code: 'STOCK_STRENGTH_FROM_ROUNDED_VOLUME',
        severity: 'info',
        message: `${fmt(C)} g/L (${aimed}) needs ${fmt(exact)} mL of trade solution in the ${flask} mL flask, which a pipette read to ${fmt(res)} mL cannot measure; ${fmt(vol)} mL gives ${fmt(real)} g/L as ${basis}, and the aliquots are computed with ${fmt(real)} g/L.`,
      });
    }
    const mustMeasure = p.decays !== undefined && s.strengthMeasured !== true;
    if (p.decays !== undefined) {
      warnings.push({
        code: 'TRADE_STRENGTH_DECAYS',
        severity: mustMeasure ? 'warning' : 'info',
        message: mustMeasure
          ? `The strength of ${label} decays in storage (${noteText(p.decays.note)}). Measure the trade solution by ${p.decays.measureBy} before making the stock and recompute the volume with the measured strength; the ${fmt(T)} g/L used here is nominal.`
          : `The trade strength ${fmt(T)} g/L was measured on the day; make the stock fresh and confirm it by ${p.decays.measureBy}.`,
      });
      instructions.push(
        mustMeasure
          ? `First measure the trade solution's strength by ${p.decays.measureBy}; it decays in storage.`
          : `The trade solution's strength (${fmt(T)} g/L) was measured on the day of the test; it decays in storage, so use it the same day.`,
      );
    }
    instructions.push(
      `Pipette ${fmt(vol)} mL of trade solution (${fmt(T)} g/L as ${basis}) into a ${flask} mL volumetric flask and make up to the mark with reagent water: ${fmt(real)} g/L as ${basis}.`,
    );
    instructions.push(
      `Strength = trade volume × trade strength ÷ flask volume = ${fmt(vol)} mL × ${fmt(T)} g/L ÷ ${flask} mL = ${fmt(real)} g/L` +
        (rounded ? ` (${fmt(C)} g/L would need ${fmt(exact)} mL, rounded to the ${fmt(res)} mL pipette step); the aliquots use ${fmt(real)} g/L.` : '.'),
    );
    if (p.decays !== undefined) instructions.push('Make the stock on the day of the test and confirm its strength before dosing; a dilute stock decays faster than the trade solution.');
    return {
      strengthGPerL: real,
      basis,
      strengthChoice: choice,
      flaskVolumeMl: flask,
      productMassG: null,
      preparation: { kind: 'dilute', tradeVolumeMl: vol, tradeStrengthGPerL: T, tradeStrengthMustBeMeasured: mustMeasure },
      stockUsedMl,
      stockWantedMl: wanted,
      solubilityGPerL: null,
      instructions,
    };
  }

  if (s.kind === 'aeration') throw aerationNotPlanned(p);
  // generated
  const measureBy = s.measureBy ?? defaultResidualMethod(basis);
  const g = generatedStockText(p);
  const flask = candidates[0]!;
  warnings.push({
    code: 'GENERATED_STOCK_MEASURE',
    severity: 'warning',
    message: `The ${g.stock} stock is made on the day and loses strength as it stands: make at least ${fmt(wanted)} mL, measure its strength by ${measureBy} just before dosing, and recompute the aliquots with the measured strength (jar-test check).`,
  });
  instructions.push(`Make at least ${fmt(wanted)} mL (a ${flask} mL flask) of ${g.stock}: ${g.make}. Keep it cold, dark and closed, and measure its strength by ${measureBy}.`);
  instructions.push(`The aliquots assume ${fmt(C)} g/L as ${basis}; if the strength measured just before dosing differs, recompute them (jar-test check).`);
  return {
    strengthGPerL: C,
    basis,
    strengthChoice: choice,
    flaskVolumeMl: flask,
    productMassG: null,
    preparation: { kind: 'generate', measureBy, stock: g.stock, make: g.make },
    stockUsedMl,
    stockWantedMl: wanted,
    solubilityGPerL: solubility,
    instructions,
  };
}

/** A note as a parenthesis inside a sentence: first letter lower-case, no closing full stop. */
function noteText(note: string): string {
  const t = note.trim().replace(/[.;]+$/, '');
  return /^[A-Z][a-z]/.test(t) ? t.charAt(0).toLowerCase() + t.slice(1) : t;
}

/** Oxygen (air) is dosed by aeration: there is no stock to pipette, so no aliquots to plan or check. */
export function aerationNotPlanned(p: JarProductFacts): DomainError {
  return new DomainError('JAR_TEST_INVALID', {
    detail:
      `${p.basis === 'O2' ? 'Oxygen' : productLabel(p).replace(/^./, (ch) => ch.toUpperCase())} is dosed by aeration, not from a stock solution, so there are no aliquots to plan. ` +
      'Run an aeration test instead: aerate each jar (diffuser or vigorous mixing open to air) for a different time, then measure dissolved oxygen with a probe and dissolved iron and manganese after 0.45 µm filtration (common practice). ' +
      'The stoichiometric oxygen demand of the sample is in POST /api/v1/doses.',
    fields: [{ pointer: '/oxidant', message: `${p.basis === 'O2' ? 'oxygen' : productLabel(p)} is dosed by aeration, not from a stock; a stock-dosed jar-test plan does not apply` }],
  });
}

function planSchedule(input: PlanJarTestInput, contactTimesMin: readonly number[]): JarTestSchedule {
  const V = input.jarVolumeL;
  const method = input.product.residualMethod ?? defaultResidualMethod(input.product.basis);
  const isPermanganate = /MnO4/.test(input.product.basis) || input.product.activeSpecies === 'MnO4-';
  const last = contactTimesMin[contactTimesMin.length - 1]!;
  const steps: ScheduleStep[] = [
    {
      order: 1,
      action: `Fill each jar with ${fmt(V)} L of raw water taken at one time and mixed; measure the raw water (pH, temperature, dissolved Fe and Mn, turbidity, colour).`,
      basis: 'common practice',
    },
    {
      order: 2,
      action: 'Pipette each jar\'s aliquot into a labelled dosing tube or beaker, ready to add to all jars at once.',
      basis: 'common practice',
    },
    {
      order: 3,
      action: 'Start the stirrer at the rapid-mix speed, add all aliquots at the same moment (start the clock), rapid mix for 1 min.',
      durationMin: 1,
      speedRpm: { min: 100, max: 300 },
      basis: 'rapid-mix step of the ASTM D2035 jar test practice (1 min; value from memory of ASTM D2035, verify); speed range common practice',
      source: 'astm-d2035',
    },
    {
      order: 4,
      action: `Slow mix for the contact time (to ${last} min), just fast enough to keep the jars uniform.`,
      durationMin: Math.max(0, last - 1),
      speedRpm: { min: 20, max: 40 },
      basis: 'common practice',
    },
    {
      order: 5,
      action: `At ${contactTimesMin.join(', ')} min from dosing, draw a sample from each jar at the same depth and measure at once.`,
      basis: 'common practice',
    },
  ];
  const measurements: Measurement[] = [
    { what: `residual oxidant (mg/L as ${input.product.basis})`, method, when: 'each contact time, immediately', basis: 'common practice' },
    { what: 'dissolved iron (mg/L as Fe)', method: 'filtered 0.45 µm, then a colorimetric iron method', when: 'each contact time', basis: 'common practice' },
    { what: 'dissolved manganese (mg/L as Mn)', method: 'filtered 0.45 µm, then a colorimetric manganese method', when: 'each contact time', basis: 'common practice' },
    { what: 'pH', method: 'pH meter', when: 'raw water and the last contact time', basis: 'common practice' },
    { what: 'temperature (°C)', method: 'thermometer', when: 'raw water and the last contact time', basis: 'common practice' },
    { what: 'turbidity (NTU)', method: 'turbidimeter', when: 'each contact time', basis: 'common practice' },
    { what: 'colour', method: isPermanganate ? 'by eye against white (note any pink: unreacted permanganate)' : 'by eye or apparent colour', when: 'each contact time', basis: 'common practice' },
  ];
  return {
    steps,
    contactTimesMin,
    filtration: {
      poreSizeUm: 0.45,
      for: ['dissolved iron', 'dissolved manganese'],
      basis: 'common practice: 0.45 µm membrane separates dissolved from oxidised, particulate Fe and Mn',
      note: isPermanganate
        ? 'Dissolved permanganate passes the filter and reads as manganese; a pink filtrate means overdose, not unoxidised Mn(II).'
        : 'Filter at once: oxidation continues in the sample while it waits.',
    },
    measurements,
  };
}

/**
 * Plan a jar test. Throws DomainError JAR_TEST_INVALID (with field pointers into the input) for bad input,
 * an unusable stock strength, or a zero expected demand without explicit doses.
 */
export function planJarTest(input: PlanJarTestInput): JarTestPlan {
  validate(input);
  if (input.product.stock.kind === 'aeration') throw aerationNotPlanned(input.product);
  const warnings: JarProblem[] = (input.product.notes ?? []).map((message) => ({ code: 'PRODUCT_NOTE', severity: 'info' as const, message }));
  const assumptions: string[] = [];
  const V = input.jarVolumeL;
  const basis = input.product.basis;
  const background = input.backgroundMgPerL ?? 0;
  const expected = input.estimateMgPerL + background;
  const residual = input.targetResidualMgPerL ?? 0;
  const planned = expected + residual;
  const pink = isPermanganateBasis(basis, input.product.activeSpecies) ? pinkWaterThreshold(basis) : null;
  if (pink !== null && residual > pink.mgPerL) {
    warnings.push({
      code: 'TARGET_RESIDUAL_VISIBLE',
      severity: 'warning',
      message: `A target residual of ${fmt(residual)} mg/L as ${basis} is above the ${fmt(pink.mgPerL)} mg/L at which permanganate colours water pink (${pink.basis}). Permanganate is dosed to leave no residual after the filters; lower the target unless the residual is removed downstream.`,
    });
  }
  const res = input.pipetteResolutionMl ?? D.pipetteResolutionMl.value;
  if (input.pipetteResolutionMl === undefined) assumptions.push(`Pipette resolution ${res} mL (${D.pipetteResolutionMl.basis}).`);
  const minAliquotMl = input.minAliquotMl ?? Math.max(D.minAliquotMl.value, D.minAliquotResolutionSteps.value * res);
  if (input.minAliquotMl === undefined) assumptions.push(`Smallest aliquot ${fmt(minAliquotMl)} mL (${D.minAliquotMl.basis}).`);
  const maxFraction = input.maxAliquotFraction ?? D.maxAliquotFraction.value;
  const maxAliquotMl = maxFraction * V * 1000;
  if (input.maxAliquotFraction === undefined) assumptions.push(`Largest aliquot ${fmt(maxAliquotMl)} mL = 1 % of the jar (${D.maxAliquotFraction.basis}).`);

  let targets: number[];
  let ladder: { source: 'default' | 'caller'; fromFraction?: number; toFraction?: number };
  if (input.doses !== undefined) {
    targets = [...input.doses];
    ladder = { source: 'caller' };
    if (input.jars !== undefined && input.jars !== input.doses.length) {
      warnings.push({
        code: 'JARS_IGNORED',
        severity: 'warning',
        message: `jars says ${fmt(input.jars)} but ${input.doses.length} doses were given: the plan has ${input.doses.length} jars, one per dose (the doses win). Give as many doses as jars, or leave jars out.`,
      });
    }
  } else {
    if (!(planned > 0)) {
      throw new DomainError('JAR_TEST_INVALID', {
        detail: 'The planned dose (estimate + background + target residual) is 0 mg/L, so there is no ladder to bracket it; give the doses to test.',
        fields: [
          { pointer: '/estimateMgPerL', message: 'is 0 mg/L; a default ladder needs a positive expected demand or target residual' },
          { pointer: '/doses', message: 'give the doses (mg/L) to test' },
        ],
      });
    }
    const n = input.jars ?? D.jars.value;
    const from = input.ladderFromFraction ?? D.ladderFromFraction.value;
    const to = input.ladderToFraction ?? D.ladderToFraction.value;
    // From below the demand (jars that leave Fe/Mn show where the targets start to be met) to above the planned
    // dose (jars that keep a residual give the residual line and confirm the dose the plant would feed).
    const low = expected > 0 ? from * expected : from * planned;
    targets = evenlySpaced(low, to * planned, n);
    ladder = { source: 'default', fromFraction: from, toFraction: to };
    const terms = `estimate ${fmt(input.estimateMgPerL)} + background ${fmt(background)}`;
    assumptions.push(
      residual > 0
        ? `Ladder: ${n} doses evenly spaced from ${fmt(from * 100)} % of the ${expected > 0 ? `expected demand ${fmt(expected)} mg/L (${terms})` : `planned dose ${fmt(planned)} mg/L`} ` +
            `to ${fmt(to * 100)} % of the planned dose ${fmt(planned)} mg/L (${terms} + target residual ${fmt(residual)}), so it brackets both (common practice).`
        : `Ladder: ${n} doses evenly spaced from ${fmt(from * 100)} % to ${fmt(to * 100)} % of the expected demand ${fmt(expected)} mg/L (${terms}; no target residual given) (common practice).`,
    );
  }

  const stockChoice = chooseStock(input, targets, minAliquotMl, maxAliquotMl, res, warnings);
  const nominalC = stockChoice.strengthGPerL;
  if (stockChoice.choice === 'chosen') {
    assumptions.push(
      `Stock strength ${fmt(nominalC)} g/L: the weakest round strength whose aliquots lie between ${fmt(minAliquotMl)} mL and ${fmt(maxAliquotMl)} mL where one exists, ` +
        `preferring one made up in one step (at least ${fmt(D.minTradeVolumeMl.value)} mL of trade solution or ${fmt(D.minWeighMassG.value)} g of solid in a flask of at most ${fmt(Math.max(...(input.flaskVolumesMl ?? D.flaskVolumesMl.value)))} mL) (${D.stockStrengthsGPerL.basis}).`,
    );
  }
  const ladderJars = (C: number, correct: boolean): PlannedJar[] =>
    targets.map((target, i) => {
      const exact = target === 0 ? 0 : aliquotForDose(target, C, V, correct);
      const aliquotMl = roundToResolution(exact, res);
      const actual = doseFromAliquot(aliquotMl, C, V);
      return {
        jar: i + 1,
        targetDoseMgPerL: target,
        aliquotExactMl: exact,
        aliquotMl,
        actualDoseMgPerL: actual,
        aliquotFractionOfJar: new Dec(aliquotMl).dividedBy(new Dec(V).times(1000)).toNumber(),
        expectedResidualMgPerL: Math.max(0, actual - expected),
      };
    });
  // The stock is made first: a trade solution is measured to the pipette step, and the strength that
  // rounded volume really gives (not the round strength aimed at) is the one the aliquots are computed with.
  const firstJars = ladderJars(nominalC, stockChoice.correctDilution);
  const stock = planStock(input, nominalC, stockChoice.choice, firstJars.reduce((sum, j) => sum + j.aliquotMl, 0), res, warnings, assumptions);
  const C = stock.strengthGPerL;
  const correct = C === nominalC ? stockChoice.correctDilution : targets.some((d) => aliquotForDose(d, C, V, false) > maxAliquotMl);
  const jars: PlannedJar[] = C === nominalC ? firstJars : ladderJars(C, correct);

  jars.forEach((j, i) => {
    const { targetDoseMgPerL: target, aliquotExactMl: exact, aliquotMl } = j;
    if (target > 0 && aliquotMl === 0) {
      warnings.push({
        code: 'ALIQUOT_ROUNDS_TO_ZERO',
        severity: 'error',
        jar: i + 1,
        message: `Jar ${i + 1}: ${fmt(exact)} mL rounds to 0 at ${res} mL resolution: the ${fmt(C)} g/L stock is too strong for ${fmt(target)} mg/L; dilute it (${fmt(strengthForAliquot(target, V, minAliquotMl))} g/L or weaker gives at least ${fmt(minAliquotMl)} mL).`,
      });
    } else if (aliquotMl > 0 && aliquotMl < minAliquotMl) {
      warnings.push({
        code: 'ALIQUOT_BELOW_MINIMUM',
        severity: 'warning',
        jar: i + 1,
        message: `Jar ${i + 1}: ${fmt(aliquotMl)} mL is below ${fmt(minAliquotMl)} mL; rounding to the pipette changes its dose by up to ${fmt((res / 2 / aliquotMl) * 100, 2)} %.`,
      });
    }
  });

  const dosed = jars.filter((j) => j.targetDoseMgPerL > 0);
  if (dosed.every((j) => j.aliquotMl === 0)) {
    // No jar would get any oxidant: refuse rather than print a bench sheet of empty pipettes.
    const minDose = Math.min(...dosed.map((j) => j.targetDoseMgPerL));
    const largestExact = Math.max(...dosed.map((j) => j.aliquotExactMl));
    const weaker = strengthForAliquot(minDose, V, minAliquotMl);
    throw new DomainError('JAR_TEST_INVALID', {
      detail:
        `Every aliquot rounds to 0 mL at the ${fmt(res)} mL pipette resolution (the largest is ${fmt(largestExact, 3)} mL), so no jar would get any oxidant: ` +
        `the ${fmt(C)} g/L stock is too strong for doses of ${fmt(minDose, 3)} to ${fmt(Math.max(...dosed.map((j) => j.targetDoseMgPerL)), 3)} mg/L in a ${fmt(V)} L jar. ` +
        `Dilute the stock (${fmt(weaker)} g/L or weaker gives at least ${fmt(minAliquotMl)} mL for the lowest dose), or check the jar volume.`,
      params: { jarVolumeL: V, stockStrengthGPerL: C, pipetteResolutionMl: res, largestAliquotMl: largestExact, suggestedStockGPerL: weaker },
      fields: [
        { pointer: '/stockStrengthGPerL', message: `${fmt(C)} g/L is too strong: every aliquot rounds to 0 mL; dilute it to ${fmt(weaker)} g/L or weaker` },
        { pointer: '/jarVolumeL', message: `${fmt(V)} L; with a larger jar the aliquots are larger` },
      ],
    });
  }

  if (correct) {
    const largest = Math.max(...jars.map((j) => j.aliquotMl));
    warnings.push({
      code: 'DILUTION_CORRECTED',
      severity: 'warning',
      message: `The largest aliquot (${fmt(largest)} mL) is ${fmt((largest / (V * 1000)) * 100, 3)} % of the ${fmt(V)} L jar, over the ${fmt(maxFraction * 100)} % that is negligible; every aliquot was computed as a = D·V/(C − D/1000) so the dose is right after dilution. A stronger stock avoids this.`,
    });
  }
  const actualDoses = jars.map((j) => j.actualDoseMgPerL);
  // A control jar (dose 0) is a blank: it shows what the raw water does without oxidant, not a dose
  // below the demand, so the bracketing is judged on the dosed jars only.
  const controls = jars.filter((j) => j.targetDoseMgPerL === 0).map((j) => j.jar);
  const dosedDoses = jars.filter((j) => j.targetDoseMgPerL > 0).map((j) => j.actualDoseMgPerL);
  const controlText = controls.length === 0 ? '' : ` (jar ${controls.join(', ')} at 0 mg/L ${controls.length === 1 ? 'is a control' : 'are controls'}, not ${controls.length === 1 ? 'a dose' : 'doses'} below it)`;
  if (controls.length > 0) {
    warnings.push({
      code: 'CONTROL_JAR',
      severity: 'info',
      message: `Jar ${controls.join(', ')} ${controls.length === 1 ? 'gets' : 'get'} no oxidant: a control (blank) that shows what the raw water does without oxidant (settling, aeration while stirring). It is not a dose below the demand; the bracketing is judged on the dosed jars.`,
    });
  }
  const dosedText = `The dosed jars (${dosedDoses.map((d) => fmt(d, 3)).join(', ')} mg/L)`;
  const brackets = expected > 0 && dosedDoses.some((d) => d < expected) && dosedDoses.some((d) => d > expected);
  if (!brackets && expected > 0) {
    warnings.push({
      code: 'NOT_BRACKETING',
      severity: 'warning',
      message: `${dosedText} do not include one below and one above the expected demand ${fmt(expected)} mg/L${controlText}; add a dosed jar on the missing side.`,
    });
  }
  const bracketsPlannedDose = planned > 0 && dosedDoses.some((d) => d < planned) && dosedDoses.some((d) => d > planned);
  if (!bracketsPlannedDose && residual > 0) {
    warnings.push({
      code: 'NOT_BRACKETING_PLANNED_DOSE',
      severity: 'warning',
      message: `${dosedText} do not include one below and one above the planned dose ${fmt(planned)} mg/L (expected demand ${fmt(expected)} + target residual ${fmt(residual)})${controlText}; add a dosed jar on the missing side.`,
    });
  }
  for (let i = 1; i < jars.length; i++) {
    const prev = jars.slice(0, i).findIndex((j) => j.aliquotMl === jars[i]!.aliquotMl);
    if (prev >= 0) {
      warnings.push({
        code: 'DUPLICATE_DOSE',
        severity: 'warning',
        jar: i + 1,
        message: `Jar ${i + 1} gets the same aliquot (${fmt(jars[i]!.aliquotMl)} mL) as jar ${prev + 1}; spread the doses, or dilute the stock so the aliquots are larger and differ by more than the pipette step.`,
      });
    }
  }
  if (ladder.source === 'caller' && !actualDoses.every((d, i) => i === 0 || d > actualDoses[i - 1]!)) {
    warnings.push({ code: 'NON_MONOTONIC_LADDER', severity: 'info', message: 'The doses are not in increasing order from jar 1; a rising ladder is harder to mix up at the bench.' });
  }
  if (jars.length < 3) {
    warnings.push({ code: 'TOO_FEW_JARS', severity: 'warning', message: `${jars.length} jars cannot give a demand line; the evaluation needs at least 3 jars that keep a residual.` });
  }

  const stockUsedMl = jars.reduce((sum, j) => sum + j.aliquotMl, 0);
  if (stockUsedMl !== stock.stockUsedMl) {
    const wanted = stockUsedMl * D.stockVolumeFactor.value;
    if (wanted > stock.flaskVolumeMl && stock.stockWantedMl <= stock.flaskVolumeMl) {
      warnings.push({
        code: 'STOCK_VOLUME_LARGE',
        severity: 'warning',
        message: `The ladder uses ${fmt(stockUsedMl)} mL of the ${fmt(C)} g/L stock, more than half the ${stock.flaskVolumeMl} mL flask; make up two flasks.`,
      });
    }
  }
  const stockFinal: PlannedStock = stockUsedMl === stock.stockUsedMl ? stock : { ...stock, stockUsedMl, stockWantedMl: stockUsedMl * D.stockVolumeFactor.value };

  const times = [...new Set(input.contactTimesMin ?? D.contactTimesMin.value)].sort((a, b) => a - b);
  if (input.contactTimesMin === undefined) assumptions.push(`Contact times ${times.join(', ')} min (${D.contactTimesMin.basis}).`);
  const schedule = planSchedule(input, times);

  return {
    oxidant: input.oxidant,
    basis,
    estimate: { doseMgPerL: input.estimateMgPerL, backgroundMgPerL: background, expectedDemandMgPerL: expected, targetResidualMgPerL: residual, plannedDoseMgPerL: planned },
    ladder: { ...ladder, brackets, bracketsPlannedDose },
    jarVolumeL: V,
    pipetteResolutionMl: res,
    minAliquotMl,
    maxAliquotMl,
    dilutionCorrected: correct,
    stock: stockFinal,
    jars,
    schedule,
    warnings,
    assumptions,
  };
}
