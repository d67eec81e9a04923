/**
 * Jar-test plan → bench sheet, jar-test evaluation → evaluation sheet (src/jar-tests onto
 * the sheet model). Figures are those of the plan or evaluation, rounded here for print
 * (3 significant figures, half to even, `roundSig`); nothing is computed but the rounding.
 */
import { Dec, roundSig } from '../core/decimal.js';
import { residualPlotData, whyNoRecommendation, type JarTestEvaluation, type JarTestPlan, type ResidualPlotData } from '../jar-tests/index.js';
import { inWords, isNegligible } from './wording.js';
import {
  autoRich,
  buildSheetDocument,
  displayTime,
  f,
  t,
  type Block,
  type ChartBlock,
  type FlagItem,
  type KeyValueRow,
  type MetaItem,
  type PageSize,
  type Person,
  type SafetyBox,
  type Section,
  type SheetDocument,
  type TableCell,
} from './model.js';

export interface JarSheetContext {
  readonly id: string;
  /** ISO 8601; becomes the PDF's CreationDate. */
  readonly issuedAt: string;
  readonly preparedBy: Person;
  /** Product name as printed, e.g. "Potassium permanganate". */
  readonly productName: string;
  /** From the product's caution rows (safetyBoxFromCautions). */
  readonly safety: SafetyBox;
  readonly plantName?: string;
  readonly sampleLabel?: string;
  readonly samplingPoint?: string;
  /** ISO 8601 time the sample was taken. */
  readonly sampledAt?: string;
  readonly supersedes?: string;
  /** Why the evaluation named in supersedes is corrected. */
  readonly correctionReason?: string;
  readonly pageSize?: PageSize;
  /** Where a plan's target residual came from when not from the request (the plant profile entry). */
  readonly residualFrom?: string;
}

const n3 = (x: number | null | undefined): string => (x === null || x === undefined || !Number.isFinite(x) ? '–' : roundSig(x, 3).replace(/^-/, '−'));
const nGiven = (x: number): string => String(x);
/** A volume measured with a pipette, to the decimals of its step (9.0 beside 4.1 for a 0.1 mL pipette). */
const nPipette = (x: number, resolutionMl: number): string => new Dec(x).toFixed(Math.max(0, new Dec(resolutionMl).decimalPlaces()));
/**
 * A figure of the fit (an intercept, a demand, a standard error) as printed: "0" when it is
 * rounding noise against `scale`, the size of the figures it goes with (an exact fit gives
 * standard errors of 1e-16, not 0), so no e-notation noise reaches the sheet.
 */
const nFit = (x: number | null | undefined, scale: number): string => (x !== null && x !== undefined && isNegligible(x, scale) ? '0' : n3(x));
/** "0, exact fit" for a standard error that is rounding noise against `scale`, else the rounded figure. */
const seText = (se: number, scale: number): string => (isNegligible(se, scale) ? '0, exact fit' : n3(se));
const SEVERITY = { error: 'danger', warning: 'warning', info: 'info' } as const;

function problems(list: readonly { code: string; severity: 'error' | 'warning' | 'info'; message: string; jar?: number }[]): FlagItem[] {
  return list.map((p) => ({
    severity: SEVERITY[p.severity],
    code: p.code,
    message: autoRich(p.jar !== undefined ? `Jar ${p.jar}: ${p.message}` : p.message),
  }));
}

function basisRuns(basis: string) {
  return [t('mg/L as '), f(basis)];
}

function metaFor(ctx: JarSheetContext, extra: MetaItem[], archived = false): MetaItem[] {
  const notGiven = archived ? 'not given (filed in the archive under the time of issue)' : 'not given';
  return [
    { label: 'Plant', value: ctx.plantName ?? 'Plant not named' },
    { label: 'Sample', value: [ctx.sampleLabel ?? 'Water sample', ctx.samplingPoint].filter(Boolean).join(', ') },
    { label: 'Sampled at', value: ctx.sampledAt ? displayTime(ctx.sampledAt) : notGiven },
    ...extra,
    ...(ctx.supersedes ? [{ label: 'Supersedes', value: ctx.supersedes }] : []),
    ...(ctx.supersedes ? [{ label: 'Reason for correction', value: ctx.correctionReason ?? `not recorded: this evaluation replaces ${ctx.supersedes} without a stated reason` }] : []),
  ];
}

/** The bench sheet of a jar-test plan: stock, jars, schedule and blank result tables. */
export function jarTestPlanDocument(plan: JarTestPlan, ctx: JarSheetContext): SheetDocument {
  const b = plan.basis;
  const st = plan.stock;
  const ladderRows: KeyValueRow[] = [
    { label: 'Stoichiometric estimate', value: [t(`${n3(plan.estimate.doseMgPerL)} `), ...basisRuns(b)] },
    { label: 'Background demand', value: `${n3(plan.estimate.backgroundMgPerL)} mg/L` },
    { label: 'Demand the ladder brackets', value: [{ text: `${n3(plan.estimate.expectedDemandMgPerL)} mg/L`, style: 'bold' }, t(' (estimate + background)')] },
    {
      label: 'Target residual',
      value: autoRich(
        ctx.residualFrom !== undefined
          ? `${n3(plan.estimate.targetResidualMgPerL)} mg/L after contact; ${ctx.residualFrom}`
          : plan.estimate.targetResidualMgPerL > 0
            ? `${n3(plan.estimate.targetResidualMgPerL)} mg/L after contact`
            : 'not given (0 mg/L)',
      ),
    },
    {
      label: 'Planned dose',
      value: [{ text: `${n3(plan.estimate.plannedDoseMgPerL)} mg/L`, style: 'bold' }, t(' (estimate + background + target residual: the dose the plant would feed)')],
    },
    {
      label: 'Dose ladder',
      value:
        (plan.ladder.source === 'default'
          ? `${Math.round((plan.ladder.fromFraction ?? 0) * 100)} % of the demand to ${Math.round((plan.ladder.toFraction ?? 0) * 100)} % of the planned dose, ${plan.jars.length} jars; `
          : `doses given by the caller, ${plan.jars.length} jars; `) +
        `${plan.ladder.brackets ? 'brackets the demand' : 'does NOT bracket the demand'}` +
        (plan.estimate.targetResidualMgPerL > 0 ? `; ${plan.ladder.bracketsPlannedDose ? 'brackets the planned dose' : 'does NOT bracket the planned dose'}` : ''),
    },
    { label: 'Jar volume', value: `${nGiven(plan.jarVolumeL)} L` },
    { label: 'Pipette', value: `resolution ${nGiven(plan.pipetteResolutionMl)} mL; aliquots from ${n3(plan.minAliquotMl)} to ${n3(plan.maxAliquotMl)} mL${plan.dilutionCorrected ? '; aliquots corrected for dilution' : ''}` },
  ];

  const prep = st.preparation;
  const stockRows: KeyValueRow[] = [
    { label: 'Stock strength', value: [{ text: `${n3(st.strengthGPerL)} g/L`, style: 'bold' }, t(' as '), f(st.basis), t(st.strengthChoice === 'chosen' ? ' (chosen for measurable aliquots)' : ' (given)')] },
    { label: 'Flask', value: `${nGiven(st.flaskVolumeMl)} mL volumetric flask` },
  ];
  if (prep.kind === 'weigh') {
    stockRows.push({ label: 'Weigh', value: `${n3(prep.productMassG)} g of product (purity ${n3(prep.purityFraction * 100)} %${prep.purityAssumed ? ', assumed' : ''})` });
  } else if (prep.kind === 'dilute') {
    stockRows.push({
      label: 'Dilute',
      value: `${n3(prep.tradeVolumeMl)} mL of the trade solution (${n3(prep.tradeStrengthGPerL)} g/L) to the mark${prep.tradeStrengthMustBeMeasured ? '; measure the trade strength first, it decays in storage' : ''}`,
    });
  } else {
    stockRows.push({ label: 'Make', value: autoRich(`${prep.stock} on the day: ${prep.make}; measure its strength by ${prep.measureBy}`) });
  }
  stockRows.push({ label: 'Stock used', value: `${n3(st.stockUsedMl)} mL by the ladder (make ${n3(st.stockWantedMl)} mL)` });
  if (st.solubilityGPerL !== null) stockRows.push({ label: 'Solubility', value: `${n3(st.solubilityGPerL)} g/L` });
  const stockBlocks: Block[] = [{ kind: 'keyValue', rows: stockRows }];
  st.instructions.forEach((line, i) => stockBlocks.push({ kind: 'paragraph', text: autoRich(`${i + 1}. ${line}`) }));

  const jarsTable: Block = {
    kind: 'table',
    columns: [
      { header: 'Jar' },
      { header: 'Target dose', unit: 'mg/L' },
      { header: 'Aliquot', unit: 'mL' },
      { header: 'Dose given', unit: 'mg/L' },
      { header: 'Aliquot of jar', unit: '%' },
      { header: 'Expected residual', unit: 'mg/L' },
    ],
    rows: plan.jars.map((j) => [String(j.jar), n3(j.targetDoseMgPerL), nPipette(j.aliquotMl, plan.pipetteResolutionMl), n3(j.actualDoseMgPerL), n3(j.aliquotFractionOfJar * 100), n3(j.expectedResidualMgPerL)]),
    notes: [autoRich(`Doses in mg/L as ${b}. "Dose given" is what the rounded aliquot delivers; the expected residual assumes all of the expected demand is met.`)],
  };

  const sch = plan.schedule;
  const scheduleBlocks: Block[] = [
    {
      kind: 'table',
      columns: [{ header: 'Step' }, { header: 'Action' }, { header: 'Time', unit: 'min' }, { header: 'Speed', unit: 'rpm' }, { header: 'Basis' }],
      rows: sch.steps.map((s) => [
        String(s.order),
        autoRich(s.action),
        s.durationMin === undefined ? '–' : nGiven(s.durationMin),
        s.speedRpm ? `${s.speedRpm.min}–${s.speedRpm.max}` : '–',
        s.basis,
      ]),
    },
    { kind: 'note', text: autoRich(`Filter the samples for ${sch.filtration.for.join(' and ')} through ${sch.filtration.poreSizeUm} µm (${sch.filtration.basis}). ${sch.filtration.note}`) },
    {
      kind: 'table',
      caption: 'Measurements',
      columns: [{ header: 'What' }, { header: 'Method' }, { header: 'When' }],
      rows: sch.measurements.map((m) => [autoRich(m.what), autoRich(m.method), m.when]),
    },
  ];

  const resultBlocks: Block[] = sch.contactTimesMin.map((time) => ({
    kind: 'table' as const,
    caption: `Results after ${time} min`,
    writeIn: true,
    columns: [
      { header: 'Jar', width: 0.6 },
      { header: 'Dose', unit: 'mg/L', width: 0.9 },
      { header: 'Residual oxidant', unit: 'mg/L', width: 1.3 },
      { header: 'Fe, filtered', unit: 'mg/L', width: 1.1 },
      { header: 'Mn, filtered', unit: 'mg/L', width: 1.1 },
      { header: 'Turbidity', unit: 'NTU', width: 1 },
      { header: 'Colour, notes', width: 2.4 },
    ],
    rows: plan.jars.map((j) => [String(j.jar), n3(j.actualDoseMgPerL), null, null, null, null, null]),
  }));

  const warnBlocks: Block[] = [{ kind: 'flags', items: problems(plan.warnings), emptyText: 'No warnings.' }];
  if (plan.assumptions.length > 0) {
    warnBlocks.push({ kind: 'keyValue', rows: plan.assumptions.map((a, i) => ({ label: `Assumption ${i + 1}`, value: autoRich(a) })) });
  }

  const sections: Section[] = [
    { heading: 'Estimate and dose ladder', blocks: [{ kind: 'keyValue', rows: ladderRows }] },
    { heading: 'Stock solution', blocks: stockBlocks },
    { heading: 'Jars', blocks: [jarsTable] },
    { heading: 'Schedule', blocks: scheduleBlocks },
    { heading: 'Bench results', blocks: resultBlocks },
    { heading: 'Warnings and assumptions', blocks: warnBlocks },
  ];
  return buildSheetDocument({
    id: ctx.id,
    kind: 'jar-test-plan',
    title: `Jar test plan: ${ctx.productName.charAt(0).toLowerCase() + ctx.productName.slice(1)}`,
    subtitle: [ctx.plantName, ctx.sampleLabel, ctx.sampledAt ? `sampled ${displayTime(ctx.sampledAt)}` : undefined].filter(Boolean).join('; ') || 'Bench sheet',
    pageSize: ctx.pageSize ?? 'A4',
    issuedAt: ctx.issuedAt,
    meta: metaFor(ctx, [
      { label: 'Oxidant', value: ctx.productName },
      { label: 'Jars', value: `${plan.jars.length} × ${nGiven(plan.jarVolumeL)} L` },
      { label: 'Stock', value: [t(`${n3(st.strengthGPerL)} g/L as `), f(st.basis)] },
      { label: 'Contact times', value: `${sch.contactTimesMin.join(', ')} min` },
    ]),
    sections,
    safety: ctx.safety,
    safetyPosition: 'start',
    signature: { preparedBy: ctx.preparedBy, preparedAt: ctx.issuedAt, statement: 'Bench work done by: ____________________   Date: ____________' },
  });
}

/** The residual plot of an evaluation as a vector chart block (the same data as the SVG). */
export function chartFromPlotData(data: ResidualPlotData): ChartBlock {
  const fit = data.lines.find((l) => l.kind === 'fit');
  const dl = data.lines.find((l) => l.kind === 'detection-limit');
  const guides = [
    // the plot's labels are the API's text: "± 9e-17" of an exact fit is printed as "± 0"
    ...(dl ? [{ axis: 'y' as const, value: dl.from.y, label: inWords(dl.label) }] : []),
    ...data.markers.map((m) => ({ axis: 'x' as const, value: m.x, label: inWords(m.label) })),
  ];
  let fitBlock: ChartBlock['fit'];
  if (fit && fit.to.x !== fit.from.x) {
    const slope = (fit.to.y - fit.from.y) / (fit.to.x - fit.from.x);
    fitBlock = { label: inWords(fit.label), slope, intercept: fit.from.y - slope * fit.from.x, xFrom: fit.from.x, xTo: fit.to.x };
  }
  const axis = (a: ResidualPlotData['xAxis']) => ({
    label: autoRich(a.label),
    unit: a.label.includes(a.unit) ? '' : a.unit,
    min: a.min,
    max: a.max,
    ticks: a.ticks.map((tk) => tk.value),
  });
  const subtitle = data.subtitle.trim();
  return {
    kind: 'chart',
    title: 'Residual oxidant against applied dose',
    xAxis: axis(data.xAxis),
    yAxis: axis(data.yAxis),
    series: data.series.map((s) => ({ name: `Residual after ${s.label}`, points: s.points.map((p) => ({ x: p.x, y: p.y, hollow: p.belowDetection })) })),
    ...(fitBlock ? { fit: { ...fitBlock, label: fitBlock.label.charAt(0).toUpperCase() + fitBlock.label.slice(1) } } : {}),
    guides,
    caption: autoRich(`${subtitle}${/[.!]$/.test(subtitle) || subtitle === '' ? '' : '.'} Open markers: at or below the detection limit, left out of the fit.`),
  };
}

/** The section of the evaluation sheet that lists the evaluation's problems (the Result row points to it). */
const PROBLEMS_HEADING = 'Problems and notes';
const PROBLEMS_SECTION = 4;

/** Why no dose is recommended, in words, by the evaluation's problem code. */
const WHY_NONE: Readonly<Record<string, string>> = {
  NO_JAR_MET_TARGETS: 'no jar met every target',
  CONTROL_JAR_CONTRADICTS_DOSED_JARS: 'the control jar (no oxidant) met every target while dosed jars did not, so a reading or a jar is wrong',
  RESIDUAL_NOT_KEPT: "no jar that met the targets still held the target residual after the plant's contact",
  NO_RECOMMENDATION: 'no dose can be recommended from these results',
};

/** A target's analyte as the operator says it ("residualOxidant" → "Residual oxidant (as KMnO₄)"). */
function analyteRuns(analyte: JarTestEvaluation['targets'][number]['analyte'], basis: string): TableCell {
  switch (analyte) {
    case 'iron':
      return 'Iron, dissolved (as Fe)';
    case 'manganese':
      return 'Manganese, dissolved (as Mn)';
    case 'residualOxidant':
      return [t('Residual oxidant (as '), f(basis), t(')')];
    case 'residualOxidantMax':
      return [t('Residual oxidant, largest allowed (as '), f(basis), t(')')];
    default:
      return autoRich(String(analyte).replace(/([a-z])([A-Z])/g, '$1 $2').toLowerCase());
  }
}

/** The evaluation sheet: result, residual plot (vector), fit, jar results, targets. */
export function jarTestEvaluationDocument(ev: JarTestEvaluation, ctx: JarSheetContext, plot: ResidualPlotData = residualPlotData(ev)): SheetDocument {
  const b = ev.basis;
  const ap = ev.apparentDemand;
  const rec = ev.recommendedDose;
  // Why there is none: the evaluation's own error (no jar met the targets, or readings in doubt)
  const why = whyNoRecommendation(ev);
  // the size of the mg/L figures of the test: a standard error far below it is rounding noise
  const doseScale = Math.max(ev.estimateMgPerL, ...ev.jars.map((j) => Math.abs(j.doseMgPerL)), ...ev.jars.flatMap((j) => j.results.map((r) => Math.abs(r.residualOxidantMgPerL ?? 0))));
  const apExact = ap !== null && isNegligible(ap.stdError, Math.max(Math.abs(ap.doseMgPerL), doseScale));
  const resultRows: KeyValueRow[] = [
    {
      label: 'Recommended plant dose',
      value: rec
        ? [{ text: `${n3(rec.doseMgPerL)} mg/L`, style: 'bold' }, t(' as '), f(b)]
        : [{ text: 'none', style: 'bold' }, t(`: ${why ? (WHY_NONE[why.code] ?? 'no dose can be recommended from these results') : 'no dose can be recommended from these results'}; see section ${PROBLEMS_SECTION}, ${PROBLEMS_HEADING}`)],
      ...(rec ? { source: autoRich(rec.reason) } : why ? { source: autoRich(why.message) } : {}),
    },
    {
      label: 'Apparent demand',
      value: ap
        ? apExact
          ? `${n3(ap.doseMgPerL)} mg/L (SE 0, exact fit: every jar of the fit lies on the line)`
          : `${n3(ap.doseMgPerL)} mg/L (SE ${n3(ap.stdError)}; 95 % interval ${n3(ap.ci95[0])} to ${n3(ap.ci95[1])})`
        : ev.fit === null ? 'not determined: too few jars kept a measurable residual for a residual line' : 'not determined: the residual line does not cross zero residual',
      ...(ap ? { source: ap.method } : {}),
    },
    { label: 'Stoichiometric estimate', value: `${n3(ev.estimateMgPerL)} mg/L` },
    {
      label: 'Background demand',
      value: ev.backgroundDemand ? `${nFit(ev.backgroundDemand.doseMgPerL, doseScale)} mg/L (SE ${seText(ev.backgroundDemand.stdError, doseScale)})` : 'not determined (it needs the apparent demand)',
      source: 'apparent demand − stoichiometric estimate',
    },
  ];
  for (const low of ev.lowestDoseMeetingTargets) {
    resultRows.push({
      label: `Lowest dose meeting targets, ${low.contactTimeMin} min`,
      value: low.doseMgPerL === null ? 'none of the jars' : `${n3(low.doseMgPerL)} mg/L (jar ${low.jar})`,
      source: autoRich(low.note),
    });
  }

  const fit = ev.fit;
  // slope: mg/L of residual per mg/L dosed, so of the order of 1
  const slopeScale = Math.max(Math.abs(fit?.slope ?? 1), 1);
  const sign = (x: number, scale: number): string => (x < 0 && !isNegligible(x, scale) ? '−' : '+');
  const fitRows: KeyValueRow[] = fit === null
    ? [{ label: 'Line', value: 'none: too few jars kept a measurable residual to fit one (see the problems); the recommendation rests on the jars that met the targets' }]
    : [
    {
      label: 'Line',
      value: `residual = ${nFit(fit.slope, slopeScale)} × dose ${sign(fit.intercept, doseScale)} ${nFit(Math.abs(fit.intercept), doseScale)}, at ${fit.contactTimeMin} min (${fit.contactTimeChoice === 'caller' ? 'chosen' : fit.contactTimeChoice === 'plant-contact' ? "longest within the plant's contact" : 'longest contact time'})`,
    },
    { label: 'Slope', value: `${nFit(fit.slope, slopeScale)} (SE ${seText(fit.slopeStdError, slopeScale)})` },
    { label: 'Intercept', value: `${nFit(fit.intercept, doseScale).replace(/^-/, '−')} mg/L (SE ${seText(fit.interceptStdError, doseScale)})` },
    {
      label: 'r²',
      value: `${n3(fit.r2)}; residual SE ${isNegligible(fit.residualStdError, doseScale) ? '0 mg/L (exact fit)' : `${n3(fit.residualStdError)} mg/L`}; ${fit.degreesOfFreedom} degrees of freedom`,
    },
    { label: 'Jars in the fit', value: `${fit.jarsUsed.join(', ') || 'none'} (n = ${fit.n})` },
    ...fit.jarsExcluded.map((x) => ({ label: `Jar ${x.jar} left out`, value: autoRich(x.reason) })),
    {
      label: 'Demand line',
      value: `consumed = ${nFit(fit.demandLine.slope, slopeScale)} × dose ${sign(fit.demandLine.intercept, doseScale)} ${nFit(Math.abs(fit.demandLine.intercept), doseScale)} (r² ${n3(fit.demandLine.r2)})`,
    },
  ];

  // turbidity is a column when any result has it (the bench sheet asks for it at every contact time)
  const withTurbidity = ev.jars.some((j) => j.results.some((r) => r.turbidityNTU !== null));
  const resultRowsTable: TableCell[][] = [];
  for (const jar of ev.jars) {
    for (const r of jar.results) {
      resultRowsTable.push([
        String(jar.jar),
        n3(jar.doseMgPerL),
        String(r.contactTimeMin),
        r.residualOxidantMgPerL === null ? '–' : r.residualBelowDetection ? `≤ ${n3(ev.detectionLimitMgPerL)}` : n3(r.residualOxidantMgPerL),
        n3(r.consumedMgPerL),
        n3(r.ironMgPerL),
        n3(r.manganeseMgPerL),
        ...(withTurbidity ? [n3(r.turbidityNTU)] : []),
        r.meetsTargets === null ? '–' : r.meetsTargets ? 'yes' : 'no',
        autoRich([r.failures.join('; '), r.note ?? ''].filter(Boolean).join('. ')),
      ]);
    }
  }

  const sections: Section[] = [
    { heading: 'Result', blocks: [{ kind: 'keyValue', rows: resultRows }] },
    { heading: 'Residuals against dose', blocks: [chartFromPlotData(plot), { kind: 'keyValue', rows: fitRows }] },
    {
      heading: 'Jar results',
      blocks: [
        {
          kind: 'table',
          columns: [
            { header: 'Jar' },
            { header: 'Dose', unit: 'mg/L' },
            { header: 'Time', unit: 'min' },
            { header: 'Residual', unit: 'mg/L' },
            { header: 'Consumed', unit: 'mg/L' },
            { header: 'Fe', unit: 'mg/L' },
            { header: 'Mn', unit: 'mg/L' },
            ...(withTurbidity ? [{ header: 'Turbidity', unit: 'NTU' }] : []),
            { header: 'Targets met' },
            { header: 'Why not, notes' },
          ],
          rows: resultRowsTable,
          notes: [autoRich(`Doses and residuals in mg/L as ${b}; Fe and Mn dissolved (filtered), as Fe and as Mn. Figures to 3 significant figures.`)],
        },
        {
          kind: 'table',
          caption: 'Targets',
          columns: [{ header: 'Analyte' }, { header: 'Limit', unit: 'mg/L' }, { header: 'Rule' }, { header: 'From' }],
          rows: ev.targets.map((tg) => [
            analyteRuns(tg.analyte, b),
            n3(tg.limitMgPerL),
            tg.comparison,
            tg.origin === 'caller' ? 'the request' : autoRich(`default limit${tg.name ? `: ${tg.name}` : ''}${tg.source ? ` (${tg.source})` : ''}`),
          ]),
        },
      ],
    },
    {
      heading: PROBLEMS_HEADING,
      blocks: [{ kind: 'flags', items: problems(ev.problems), emptyText: 'No problems found.' }, ...ev.notes.map((n) => ({ kind: 'paragraph' as const, text: autoRich(n) }))],
    },
  ];
  if (sections[PROBLEMS_SECTION - 1]?.heading !== PROBLEMS_HEADING) throw new Error(`the evaluation sheet's section ${PROBLEMS_SECTION} must be "${PROBLEMS_HEADING}"`);
  return buildSheetDocument({
    id: ctx.id,
    kind: 'jar-test-evaluation',
    title: `Jar test evaluation: ${ctx.productName.charAt(0).toLowerCase() + ctx.productName.slice(1)}`,
    subtitle: [ctx.plantName, ctx.sampleLabel, ctx.sampledAt ? `sampled ${displayTime(ctx.sampledAt)}` : undefined].filter(Boolean).join('; ') || 'Evaluation',
    pageSize: ctx.pageSize ?? 'A4',
    issuedAt: ctx.issuedAt,
    meta: metaFor(ctx, [
      { label: 'Oxidant', value: ctx.productName },
      { label: 'Jars', value: `${ev.jars.length} × ${nGiven(ev.jarVolumeL)} L` },
      { label: 'Contact times', value: `${ev.contactTimesMin.join(', ')} min` },
      { label: 'Dose basis', value: basisRuns(b) },
    ], true),
    sections,
    safety: ctx.safety,
    safetyPosition: 'end',
    signature: { preparedBy: ctx.preparedBy, preparedAt: ctx.issuedAt },
  });
}
