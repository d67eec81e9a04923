/**
 * The mappings from computed results to sheets, run on real results: computeDose with
 * the reference tables (tables/), planJarTest and evaluateJarTest on invented bench data.
 * The PDFs are read back with pdftotext (poppler-utils) and checked with qpdf and pdfsig.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { loadReferenceTables } from '../../src/reference/load.js';
import { buildDosingContext, computeDose, parseDoseRequest, type DoseRequest, type DoseResult } from '../../src/dosing/index.js';
import { evaluateJarTest, planJarTest, residualPlotData, type JarProductFacts } from '../../src/jar-tests/index.js';
import { doseSheetDocument } from '../../src/sheets/dose-sheet.js';
import { chartFromPlotData, jarTestEvaluationDocument, jarTestPlanDocument, type JarSheetContext } from '../../src/sheets/jar-test-sheets.js';
import { renderSheet } from '../../src/sheets/pdf.js';
import { safetyBoxFromCautions } from '../../src/sheets/safety.js';
import { createDemoSigner, renderSignedSheet } from '../../src/sheets/sign.js';
import { verifySignedPdf } from '../../src/sheets/verify.js';
import { equationRuns } from '../../src/sheets/formula-runs.js';
import { pdfFile, pdfText, requireTools, run } from './tools.js';

/** What pdftotext makes of a typeset equation: subscripts flattened, → for "=", − for a charge minus. */
const extracted = (equation: string): string => equationRuns(equation).map((r) => r.text).join('');
const squash = (s: string): string => s.replace(/\s+/g, ' ');

// An invented demo request (no real plant): permanganate for iron and manganese.
const REQUEST = {
  oxidant: 'potassium-permanganate',
  sample: { pH: 7.2, temperatureC: 11.5, iron: { value: 1.2, unit: 'mg/L' }, manganese: { value: 0.35, unit: 'mg/L' }, alkalinity: { value: 180, unit: 'mg/L' } },
  flow: { value: 4000, unit: 'm3/d' },
  product: { strength: { value: 2, unit: '% w/w' } },
  contactTime: { value: 12, unit: 'min' },
};

let request: DoseRequest;
let result: DoseResult;
let text: string;
let path: string;

beforeAll(async () => {
  requireTools('pdftotext', 'qpdf', 'pdfsig');
  const tables = loadReferenceTables();
  request = parseDoseRequest(REQUEST) as DoseRequest;
  result = computeDose(request, buildDosingContext(tables));
  const doc = doseSheetDocument({
    id: 'DS-DEMO-0100',
    request,
    result,
    sampledAt: '2025-03-14T08:30:00+01:00',
    issuedAt: '2025-03-14T09:05:00Z',
    preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' },
    samplingPoint: 'SP-02 aerator outlet',
    plantName: 'Demo Water Works (invented)',
  });
  path = pdfFile(await renderSheet(doc), 'dose-mapped');
  text = pdfText(path);
});

describe('dose result → sheet', () => {
  it('prints the total dose as the result rounds it, with its basis', () => {
    expect(text).toContain(`Total dose ${result.dose.rounded} ${result.dose.unit} ${result.dose.basis}`);
  });

  it('prints every balanced reaction of the demand (typeset; pdftotext flattens the subscripts)', () => {
    expect(result.demand.length).toBeGreaterThan(0);
    for (const d of result.demand) expect(text).toContain(squash(extracted(d.reaction)));
  });

  it('prints every flag code, every cited source id and the plant, sample and sampling point', () => {
    for (const f of result.flags) expect(text).toContain(f.code);
    for (const s of result.sources) expect(text.replace(/- /g, '-')).toContain(s.id);
    expect(text).toContain('Demo Water Works (invented)');
    expect(text).toContain('SP-02 aerator outlet');
    expect(text).toContain('2025-03-14 08:30 (UTC+01:00)');
  });

  it('the safety box carries the caution rows of the product (hazards, incompatibilities, PPE, overdose)', () => {
    expect(text).toContain('Safety: potassium permanganate');
    const cautions = result.cautionDetails.filter((c) => c.category !== 'standing');
    expect(cautions.length).toBeGreaterThan(0);
    // the first words of each caution ("m3" is printed m³)
    for (const c of cautions) expect(text).toContain(squash(c.text).replace(/\bm3\b/g, 'm³').slice(0, 40));
  });

  it('the feed settings are those of the result, in SI and US units', () => {
    expect(result.feed).not.toBeNull();
    expect(text).toContain(`${result.feed!.massRate.rounded} ${result.feed!.massRate.unit}`);
    expect(text).toContain(`${result.feed!.massRateUS.rounded} ${result.feed!.massRateUS.unit}`);
  });

  it('passes qpdf --check, and signs valid (pdfsig) after the signer is put in the block', async () => {
    expect(run('qpdf', ['--check', path])).toContain('No syntax or stream encoding errors found');
    const demo = createDemoSigner({ name: 'B. Engineer', role: 'Process engineer', organisation: 'Demo Water Works (invented)', notBefore: new Date('2024-01-01T00:00:00Z') });
    const doc = doseSheetDocument({ id: 'DS-DEMO-0101', request, result, sampledAt: '2025-03-14T08:30:00Z', issuedAt: '2025-03-14T09:05:00Z', preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' } });
    const { pdf, document } = await renderSignedSheet(doc, demo.signer, { signingTime: new Date('2025-03-14T09:06:00Z') });
    expect(document.signature.signedBy?.certificateSubject).toContain('DEMO — NOT FOR REGULATORY USE');
    expect(run('pdfsig', ['-nocert', pdfFile(pdf, 'dose-signed')])).toContain('Signature Validation: Signature is Valid.');
    expect(verifySignedPdf(pdf).signatureValid).toBe(true);
  });
});

describe('jar tests → bench sheet and evaluation sheet', () => {
  // Product facts as the HTTP layer passes them from the oxidant table (purity invented for the demo).
  const KMNO4: JarProductFacts = {
    name: 'potassium permanganate',
    basis: 'KMnO4',
    activeSpecies: 'MnO4-',
    productFormula: 'KMnO4',
    stock: { kind: 'solid', purityFraction: 0.97 },
  };
  let ctx: JarSheetContext;
  beforeAll(() => {
    const tables = loadReferenceTables();
    const ox = tables.oxidants.find((o) => o.id === 'potassium-permanganate')!;
    const cautions = tables.cautions.filter((c) => ox.cautions.includes(c.id));
    ctx = {
      id: 'JT-DEMO-0100',
      issuedAt: '2025-03-10T08:00:00Z',
      preparedBy: { name: 'B. Engineer (demo)', role: 'Process engineer' },
      productName: ox.name,
      safety: safetyBoxFromCautions({ productName: ox.name, cautions }),
      plantName: 'Demo Water Works (invented)',
      sampledAt: '2025-03-10T07:30:00Z',
    };
  });

  it('bench sheet: stock, each jar with its aliquot, a blank result table per contact time', async () => {
    const plan = planJarTest({ oxidant: 'potassium-permanganate', product: KMNO4, estimateMgPerL: 1.8, jarVolumeL: 2 });
    const p = pdfFile(await renderSheet(jarTestPlanDocument(plan, ctx)), 'plan');
    const txt = pdfText(p);
    expect(txt).toContain('Safety: potassium permanganate');
    for (const time of plan.schedule.contactTimesMin) expect(txt).toContain(`Results after ${time} min`);
    for (const j of plan.jars) expect(txt).toContain(j.aliquotMl.toFixed(1));
    expect(txt).toContain(`${plan.stock.flaskVolumeMl} mL volumetric flask`);
    expect(run('qpdf', ['--check', p])).toContain('No syntax or stream encoding errors found');
  });

  it('bench sheet: the aliquot column prints every volume to the 0.1 mL pipette step (9.0 beside 4.1 and 12.3)', async () => {
    const plan = planJarTest({ oxidant: 'potassium-permanganate', product: KMNO4, estimateMgPerL: 1.8, jarVolumeL: 2, doses: [2.05, 4.5, 6.15], stockStrengthGPerL: 1 });
    // by hand: a = D·V/C = 2.05 × 2 ÷ 1 = 4.1 mL, 4.5 × 2 = 9.0 mL, 6.15 × 2 = 12.3 mL (12.3 mL = 0.6 % of 2 L, no dilution correction)
    expect(plan.jars.map((j) => j.aliquotMl)).toEqual([4.1, 9, 12.3]);
    const txt = squash(pdfText(pdfFile(await renderSheet(jarTestPlanDocument(plan, ctx)), 'plan-decimals')));
    expect(txt).toMatch(/2 4\.50 9\.0 /);
    expect(txt).not.toMatch(/ 9 (?!\.)/);
  });

  // Invented results from a stated model: residual = dose − 1.8 mg/L after 30 min (demand 1.8), none below.
  const DOSES = [1.0, 1.5, 2.0, 2.5, 3.0, 3.5];
  const evaluation = () =>
    evaluateJarTest({
      oxidant: 'potassium-permanganate',
      basis: 'KMnO4',
      estimateMgPerL: 1.6,
      jarVolumeL: 2,
      targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05 },
      jars: DOSES.map((dose) => ({
        doseMgPerL: dose,
        results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, Number((dose - 1.8).toFixed(2))), ironMgPerL: dose >= 2 ? 0.05 : 0.45, manganeseMgPerL: dose >= 2.5 ? 0.02 : 0.1 }],
      })),
    });

  it('the chart block is the plot data of the evaluation: the fitted line keeps slope and intercept', () => {
    const ev = evaluation();
    const chart = chartFromPlotData(residualPlotData(ev));
    expect(chart.fit!.slope).toBeCloseTo(ev.fit!.slope, 9);
    expect(chart.fit!.intercept).toBeCloseTo(ev.fit!.intercept, 9);
    expect(chart.series.flatMap((s) => s.points)).toHaveLength(DOSES.length);
  });

  it('evaluation sheet: vector plot, recommended dose and apparent demand as the evaluation gives them', async () => {
    const ev = evaluation();
    const p = pdfFile(await renderSheet(jarTestEvaluationDocument(ev, { ...ctx, id: 'JT-DEMO-0101' })), 'eval');
    const txt = pdfText(p);
    expect(run('pdfimages', ['-list', p]).split('\n').filter((l) => /^\s*\d+/.test(l))).toHaveLength(0);
    expect(txt).toContain('Residual oxidant against applied dose');
    expect(ev.recommendedDose).not.toBeNull();
    expect(txt).toMatch(new RegExp(`Recommended plant dose ${ev.recommendedDose!.doseMgPerL.toPrecision(3)} mg/L`));
    expect(txt).toContain('Apparent demand');
    expect(run('qpdf', ['--check', p])).toContain('No syntax or stream encoding errors found');
  });

  it('evaluation sheet: the jar results table has a turbidity column when any result has a turbidity reading, and none otherwise', async () => {
    const base = evaluation();
    const col = (t: string) => squash(t).match(/Jar results.*?Targets met/)?.[0] ?? '';
    const without = pdfText(pdfFile(await renderSheet(jarTestEvaluationDocument(base, { ...ctx, id: 'JT-DEMO-0102' })), 'eval-no-ntu'));
    expect(col(without)).not.toContain('Turbidity');
    // invented readings: 0.85 NTU in jar 1, 0.42 NTU in jar 6
    const jars = base.jars.map((j, i) => ({ ...j, results: j.results.map((r) => ({ ...r, turbidityNTU: i === 0 ? 0.85 : i === base.jars.length - 1 ? 0.42 : null })) }));
    const txt = pdfText(pdfFile(await renderSheet(jarTestEvaluationDocument({ ...base, jars }, { ...ctx, id: 'JT-DEMO-0103' })), 'eval-ntu'));
    expect(col(txt)).toContain('Turbidity');
    expect(txt).toContain('0.850');
    expect(txt).toContain('0.420');
  });
});
