/** Jar tests: plan the bench work, check a plan someone wrote, evaluate the results, plot the residuals. */
export { planJarTest, aerationNotPlanned } from './plan.js';
export type { PlanJarTestInput, JarTestPlan, PlannedJar, PlannedStock, StockPreparation, JarTestSchedule, ScheduleStep, Measurement } from './plan.js';
export { checkJarPlan, CHECK_CODES } from './check.js';
export type { CheckJarPlanInput, JarPlanCheck, CheckedJar, CheckCode } from './check.js';
export { evaluateJarTest, whyNoRecommendation, NO_RECOMMENDATION_CODES, TURBIDITY_MAX_NTU } from './evaluate.js';
export type {
  EvaluateJarTestInput,
  JarTestEvaluation,
  JarInput,
  JarResultInput,
  JarTargets,
  LimitTarget,
  ResolvedTarget,
  ResidualFit,
  LowestDose,
  RecommendedDose,
  DemandCurve,
  EvaluatedJar,
  EvaluatedResult,
} from './evaluate.js';
export { residualPlotSvg, residualPlotData, niceTicks } from './plot.js';
export type { ResidualPlotData, PlotAxis, PlotSeries, PlotLine, PlotMarker, PlotPoint, MarkerShape } from './plot.js';
export { JAR_TEST_DEFAULTS, doseFromAliquot, nominalDoseFromAliquot, aliquotForDose, roundToResolution } from './common.js';
export type { JarProblem, Severity, DoseMargin } from './common.js';
export { defaultResidualMethod } from './product.js';
export type { JarProductFacts, JarStockRoute, Solubility } from './product.js';
export { olsFit, inversePrediction, studentTQuantile, studentTCdf } from './stats.js';
export type { LinearFit } from './stats.js';
export { jarProductFacts, secondaryLimitTargets } from './adapt.js';
export type { JarProductOptions } from './adapt.js';
