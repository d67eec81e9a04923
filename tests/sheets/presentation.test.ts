/**
 * What an operator reads on a sheet: no floating-point noise, no field names or JSON paths, no
 * internal codes in the text that explains a result, pages that do not strand the signature block
 * or split a numbered step, ids and date-times never broken, and the units the request prefers.
 * The PDFs are read back with pdftotext (poppler-utils). Every plant, sample and reading is
 * invented demo data.
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadReferenceTables } from '../../src/reference/load.js';
import { buildDosingContext, computeDose, parseDoseRequest, parsePlantProfile, type DoseRequest, type DosingContext } from '../../src/dosing/index.js';
import { evaluateJarTest } from '../../src/jar-tests/index.js';
import { doseSheetDocument } from '../../src/sheets/dose-sheet.js';
import { jarTestEvaluationDocument, type JarSheetContext } from '../../src/sheets/jar-test-sheets.js';
import { buildSheetDocument, type Block, type PageSize, type SheetDocument } from '../../src/sheets/model.js';
import { renderSheet } from '../../src/sheets/pdf.js';
import { safetyBoxFromCautions } from '../../src/sheets/safety.js';
import { inWords, isNegligible } from '../../src/sheets/wording.js';
import { PERMANGANATE_SAFETY } from './fixtures.js';
import { pdfFile, pdfText, requireTools, run } from './tools.js';

const mgL = (value: number) => ({ value, unit: 'mg/L' });
/** e-notation as roundSig or Decimal print it ("1.27e-16", "9e-17", "1.3e−16"). */
const E_NOTATION = /\d(?:\.\d+)?e[-−+]\d/;
const pages = (path: string): string[] => {
  const n = Number(/Pages:\s+(\d+)/.exec(run('pdfinfo', [path]))![1]);
  return Array.from({ length: n }, (_, i) => pdfText(path, i + 1));
};

let tables: ReturnType<typeof loadReferenceTables>;
let dosing: DosingContext;
beforeAll(() => {
  requireTools('pdftotext', 'pdfinfo');
  tables = loadReferenceTables();
  dosing = buildDosingContext(tables);
});

describe('inWords: API field paths in words, exact-fit noise as 0', () => {
  it.each([
    ['Give product.purity from the certificate of analysis.', 'Give the product purity from the certificate of analysis.'],
    ['give sample.bromide to check the bromate risk.', 'give a bromide reading to check the bromate risk.'],
    ['was not checked for colour; give targets.residualOxidantMax.', 'was not checked for colour; give the largest residual allowed among the targets.'],
    [
      'Target residual 1 mg/L as Cl2 after contact (from the plant profile: targets.residualByOxidant.sodium-hypochlorite, set for sodium-hypochlorite).',
      "Target residual 1 mg/L as Cl2 after contact (from the plant profile's residual target for sodium hypochlorite).",
    ],
    ["from the plant profile: targets.residual, the plant's residual target, read as Cl2", "from the plant profile's general residual target, read as Cl2"],
    ['or add targets.residualByOxidant.ozone to the plant profile.', 'or add a residual target for ozone to the plant profile.'],
    ['Give targetResidual (mg/L as O3) in the request', 'Give a target residual (mg/L as O3) in the request'],
    ['apparent demand 1.1 ± 9e-17 mg/L', 'apparent demand 1.1 ± 0 mg/L'],
    // a real standard error, a file name and plain text stay as they are
    ['slope 1.02 ± 0.013', 'slope 1.02 ± 0.013'],
    ['see oxidants.json', 'see oxidants.json'],
    ['No jar met every target at 30 min.', 'No jar met every target at 30 min.'],
  ])('%s', (text, words) => {
    expect(inWords(text)).toBe(words);
  });

  it.each([
    [1.27e-16, 1.1, true],
    [0, 0, true],
    [1e-10, 1, true],
    [1e-6, 1, false],
    [0.0314, 1.31, false],
    [Number.NaN, 1, false],
  ])('isNegligible(%s, %s) = %s', (x, scale, expected) => {
    expect(isNegligible(x, scale)).toBe(expected);
  });
});

describe('jar-test evaluation sheet', () => {
  let ctx: JarSheetContext;
  beforeAll(() => {
    const ox = tables.oxidants.find((o) => o.id === 'potassium-permanganate')!;
    ctx = {
      id: 'JT-20261205-AB12CD34EF',
      issuedAt: '2026-12-05T09:05:00Z',
      preparedBy: { name: 'B. Engineer (demo)', role: 'Process engineer' },
      productName: ox.name,
      safety: safetyBoxFromCautions({ productName: ox.name, cautions: tables.cautions.filter((c) => ox.cautions.includes(c.id)) }),
      plantName: 'Demo Water Works (invented)',
      sampledAt: '2026-12-01T23:30:00Z',
    };
  });
  const DOSES = [1.5, 2.0, 2.5, 3.0, 3.5];
  const evaluate = (residual: (dose: number) => number, targets: Parameters<typeof evaluateJarTest>[0]['targets'], manganese = (d: number) => (d >= 2 ? 0.02 : 0.1)) =>
    evaluateJarTest({
      oxidant: 'potassium-permanganate',
      basis: 'KMnO4',
      estimateMgPerL: 1.0,
      jarVolumeL: 2,
      targets,
      jars: DOSES.map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: residual(d), ironMgPerL: 0.05, manganeseMgPerL: manganese(d) }] })),
    });

  it('a perfect line (residual = dose − 1.1 mg/L, invented): standard errors print as 0, no e-notation anywhere', async () => {
    const ev = evaluate((d) => Number((d - 1.1).toFixed(2)), { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMgPerL: 0.2 });
    // the premise: floating point leaves noise where the exact standard error is 0
    expect(ev.fit!.slopeStdError).toBeGreaterThan(0);
    expect(ev.fit!.slopeStdError).toBeLessThan(1e-12);
    const text = pdfText(pdfFile(await renderSheet(jarTestEvaluationDocument(ev, ctx)), 'eval-exact'));
    expect(text).not.toMatch(E_NOTATION);
    expect(text).toContain('1.10 mg/L (SE 0, exact fit');
    expect(text).not.toContain('95 % interval 1.10 to 1.10');
    expect(text).toContain('Slope 1.00 (SE 0, exact fit)');
    expect(text).toContain('residual SE 0 mg/L (exact fit)');
    expect(text).toContain('apparent demand 1.1 ± 0 mg/L');
  });

  it('a scattered line keeps its standard errors and interval', async () => {
    const ev = evaluate((d) => Math.max(0, Number((d - 1.3 + 0.03 * Math.sin(d * 7)).toFixed(2))), { ironMgPerL: 0.3 });
    const text = pdfText(pdfFile(await renderSheet(jarTestEvaluationDocument(ev, ctx)), 'eval-scatter'));
    expect(text).toContain(`(SE ${ev.apparentDemand!.stdError.toPrecision(3)}; 95 % interval`);
  });

  it('"none" names the problem that withheld the dose: a control jar that contradicts the dosed jars', async () => {
    // Invented: the control jar (0 mg/L) reads Mn 0.02 mg/L, every dosed jar Mn 0.10 mg/L, against the 0.05 mg/L
    // target (40 CFR 143.3). Oxidant does not raise dissolved manganese, so the two cannot both be right (common practice).
    const ev = evaluateJarTest({
      oxidant: 'potassium-permanganate',
      basis: 'KMnO4',
      estimateMgPerL: 1.0,
      jarVolumeL: 2,
      targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05 },
      jars: [0, ...DOSES].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, Number((d - 1.1).toFixed(2))), ironMgPerL: 0.05, manganeseMgPerL: d === 0 ? 0.02 : 0.1 }] })),
    });
    expect(ev.recommendedDose).toBeNull();
    expect(ev.problems.map((p) => p.code)).toContain('CONTROL_JAR_CONTRADICTS_DOSED_JARS');
    const text = pdfText(pdfFile(await renderSheet(jarTestEvaluationDocument(ev, ctx)), 'eval-none-control')).replace(/\s+/g, ' ');
    expect(text).toContain('Recommended plant dose none: the control jar (no oxidant) met every target while dosed jars did not');
    expect(text).not.toContain('no usable fit or jar meeting the targets');
  });

  it('targets are named in words, and "none" says why in words and points to the section that lists the problems', async () => {
    const ev = evaluate((d) => Number((d - 1.1).toFixed(2)), { ironMgPerL: 0.01, manganeseMgPerL: 0.001, residualOxidantMgPerL: 0.2, residualOxidantMaxMgPerL: 3 });
    expect(ev.recommendedDose).toBeNull();
    expect(ev.problems.map((p) => p.code)).toContain('NO_JAR_MET_TARGETS');
    const doc = jarTestEvaluationDocument(ev, ctx);
    const text = pdfText(pdfFile(await renderSheet(doc), 'eval-none'));
    expect(text).toContain('Recommended plant dose none: no jar met every target; see section 4, Problems and notes');
    expect(doc.sections[3]!.heading).toBe('Problems and notes');
    expect(text).not.toContain('(NO_JAR_MET_TARGETS)');
    expect(text).not.toContain('see the flags');
    expect(text).toContain('Residual oxidant (as KMnO4) 0.200 at least');
    expect(text).toContain('Residual oxidant, largest allowed (as KMnO4) 3.00 at most');
    expect(text).not.toMatch(/\bresidualOxidant(Max)?\b|targets\.residual/);
  });

  it('a corrected evaluation says why, or that no reason was recorded', () => {
    const ev = evaluate((d) => Number((d - 1.1).toFixed(2)), { manganeseMgPerL: 0.05 });
    const meta = (c: JarSheetContext) => JSON.stringify(jarTestEvaluationDocument(ev, c).meta);
    expect(meta({ ...ctx, supersedes: 'JT-20261204-KB3VRK5CJ2' })).toContain('not recorded: this evaluation replaces JT-20261204-KB3VRK5CJ2 without a stated reason');
    expect(meta({ ...ctx, supersedes: 'JT-20261204-KB3VRK5CJ2', correctionReason: 'jar 3 residual misread' })).toContain('"value":"jar 3 residual misread"');
    expect(meta(ctx)).not.toContain('Reason for correction');
  });
});

describe('dose sheet', () => {
  const plant = () => parsePlantProfile(JSON.parse(readFileSync(new URL('../../tables/demo/demo-plant.json', import.meta.url), 'utf8')));
  const hypo = (extra: Record<string, unknown> = {}) =>
    parseDoseRequest({
      plantId: 'demo-groundwater',
      oxidant: 'sodium-hypochlorite',
      sample: { pH: 7.4, temperatureC: 14, iron: mgL(1.5), manganese: mgL(0.3), sulfide: mgL(0.5), arsenite: mgL(0.02), nitrite: mgL(0.2), ammoniaN: mgL(0.1), alkalinity: mgL(150) },
      ...extra,
    }) as DoseRequest;
  const sheet = (request: DoseRequest, pageSize: PageSize = 'A4', extra: Partial<Parameters<typeof doseSheetDocument>[0]> = {}) =>
    doseSheetDocument({
      id: 'DS-20261205-AB12CD34EF',
      request,
      result: computeDose(request, dosing, { plant: plant() }),
      sampledAt: '2026-12-01T23:30:00Z',
      issuedAt: '2026-12-05T09:05:00Z',
      preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' },
      samplingPoint: 'SP-02 filter inlet',
      supersedes: 'DS-20261204-KB3VRK5CJ2',
      pageSize,
      ...extra,
    });

  it.each([
    ['A4', {}],
    ['LETTER', {}],
    ['A4', { options: { units: 'US' } }],
    ['A4', { sample: { pH: 7.4, temperatureC: 14, iron: mgL(1.5), manganese: mgL(0.3), sulfide: mgL(0.5) } }],
    ['LETTER', { sample: { pH: 7.8, temperatureC: 8, iron: mgL(0.8), manganese: mgL(0.2), ammoniaN: mgL(0.3), nitrite: mgL(0.1) } }],
  ] as const)('%s %j: the signature block never stands alone on the last page', async (pageSize, extra) => {
    const path = pdfFile(await renderSheet(sheet(hypo(extra), pageSize)), 'dose-tail');
    const all = pages(path);
    const last = all[all.length - 1]!;
    expect(last).toContain('SIGNATURES');
    // the page holds the end of the sources table too (a source id of the result)
    const before = last.slice(0, last.indexOf('SIGNATURES'));
    expect(before).toMatch(/Id Citation|\b[a-z]+-\d{4}\b|cfr-40/);
    expect(all.slice(0, -1).every((p) => !p.includes('SIGNATURES'))).toBe(true);
  });

  it('reads as a document, not a dump: no "Compound fed" row that only repeats the basis, the chlorite share as a range, the temperature conversion beside its unit', async () => {
    const asCells = (doc: SheetDocument) => JSON.stringify(doc);
    const km = parseDoseRequest({ plantId: 'demo-groundwater', oxidant: 'potassium-permanganate', sample: { pH: 7.4, temperatureC: 14, iron: mgL(1.5) } }) as DoseRequest;
    // KMnO4 dosed as KMnO4: the compound row would say "1 g KMnO4 per g KMnO4"
    expect(asCells(sheet(km))).not.toContain('Compound fed');
    // hypochlorite dosed as Cl2 and fed as NaOCl: the row stays, with its conversion
    expect(asCells(sheet(hypo()))).toContain('Compound fed');
    const clo2 = parseDoseRequest({ oxidant: 'chlorine-dioxide', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7.4, temperatureC: 14, iron: mgL(0.2) } }) as DoseRequest;
    const text = pdfText(pdfFile(await renderSheet(doseSheetDocument({ id: 'DS-20261205-AB12CD34EF', request: clo2, result: computeDose(clo2, dosing), sampledAt: '2026-12-01T23:30:00Z', issuedAt: '2026-12-05T09:05:00Z', preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' } })), 'dose-clo2-words'));
    expect(text).not.toContain('(Fraction of the chlorine dioxide dose');
    expect(text).toMatch(/usually 50 to 70 %, the high end taken here/);
    const tempRow = JSON.stringify(sheet(hypo({ sample: { pH: 7.4, temperature: { value: 57.2, unit: '°F' }, iron: mgL(1.5) } })));
    expect(tempRow).toContain('°F (= 14 °C)');
    // a correction without a stated reason says so on the sheet itself
    expect(asCells(sheet(hypo()))).toContain('"label":"Reason for correction","value":"not recorded: this sheet replaces DS-20261204-KB3VRK5CJ2 without a stated reason"');
    expect(asCells(sheet(hypo(), 'A4', { correctionReason: 'iron reading entered as 15 instead of 1.5' }))).toContain('"value":"iron reading entered as 15 instead of 1.5"');
  });

  it('the superseded sheet id and the sample time are never broken inside', async () => {
    const raw = run('pdftotext', ['-f', '1', '-l', '1', pdfFile(await renderSheet(sheet(hypo())), 'dose-ids'), '-']);
    const lines = raw.split('\n');
    // the header's Supersedes item (printed once): the whole id on each line that holds part of it
    const idLines = lines.filter((l) => l.includes('KB3VRK5'));
    expect(idLines.length).toBeGreaterThanOrEqual(1);
    expect(idLines.every((l) => l.includes('DS-20261204-KB3VRK5CJ2'))).toBe(true);
    expect(lines.filter((l) => l.includes('2026-12-01')).every((l) => l.includes('2026-12-01 23:30 UTC'))).toBe(true);
  });

  it('SI units lead with SI, US in brackets; options.units "US" leads with MGD, lb/d, gal/d and °F, SI in brackets', async () => {
    const si = computeDose(hypo(), dosing, { plant: plant() });
    const siText = pdfText(pdfFile(await renderSheet(sheet(hypo())), 'dose-si'));
    const f = si.feed!;
    const flow = si.units.flow!;
    expect(siText).toContain(`${flow.si.rounded} m³/d (${flow.us.rounded} MGD)`);
    expect(siText).toContain(`${f.massRate.rounded} kg/d as Cl2 (${f.massRateUS.rounded} lb/d)`);
    expect(siText).toContain(`${si.conditions.temperatureC} °C (`);

    const usReq = hypo({ options: { units: 'US' } });
    const us = computeDose(usReq, dosing, { plant: plant() });
    expect(us.units.preferred).toBe('US');
    const usText = pdfText(pdfFile(await renderSheet(sheet(usReq)), 'dose-us'));
    expect(usText).toContain(`${flow.us.rounded} MGD (${flow.si.rounded} m³/d)`);
    expect(usText).toContain(`Feed, mass ${f.massRateUS.rounded} lb/d as Cl2 (${f.massRate.rounded} kg/d)`);
    expect(usText).toContain(`Feed, solution ${f.solutionRateGalPerD!.rounded} gal/d (${f.solutionRate!.rounded} L/h)`);
    expect(usText).toMatch(/\d °F \(14 °C\)/);
  });

  it("a plant profile's preferredUnits US is the sheet's too", async () => {
    const profile = { ...plant(), preferredUnits: 'US' as const };
    const request = hypo();
    const result = computeDose(request, dosing, { plant: profile });
    expect(result.units.preferred).toBe('US');
    const doc = doseSheetDocument({ id: 'DS-20261205-AB12CD34EG', request, result, sampledAt: '2026-12-01T23:30:00Z', issuedAt: '2026-12-05T09:05:00Z', preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' } });
    expect(pdfText(pdfFile(await renderSheet(doc), 'dose-plant-us'))).toContain(`${result.units.flow!.us.rounded} MGD (`);
  });

  it('the residual target from the plant profile is named in words, not by its JSON path', async () => {
    const text = pdfText(pdfFile(await renderSheet(sheet(hypo())), 'dose-words'));
    expect(text).toContain("plant profile's residual target for sodium hypochlorite");
    expect(text).not.toMatch(/targets\.residual|residualByOxidant/);
  });
});

describe('page layout', () => {
  // A long bench procedure: numbered steps of one to four lines, so that many fall at a page foot.
  const step = (i: number) => `${i}. Step ${i} begins here. ` + 'Pipette the aliquot into the jar, start the paddles and note the time on the bench sheet. '.repeat(1 + (i % 4)) + `Step ${i} ends here.`;
  const doc = (pageSize: PageSize, subtitle: string): SheetDocument =>
    buildSheetDocument({
      id: 'JT-20261205-AB12CD34EF',
      kind: 'jar-test-plan',
      title: 'Jar test plan: page layout',
      subtitle,
      pageSize,
      issuedAt: '2026-12-05T09:05:00Z',
      meta: [
        { label: 'Plant', value: 'Demo Water Works (invented)' },
        { label: 'Sampled at', value: '2026-12-01 23:30 UTC' },
        { label: 'Oxidant', value: 'Potassium permanganate' },
        { label: 'Jars', value: '6 × 2 L' },
        { label: 'Supersedes', value: 'JT-20261204-KB3VRK5CJ2' },
      ],
      sections: [{ heading: 'Stock solution', blocks: Array.from({ length: 40 }, (_, i): Block => ({ kind: 'paragraph', text: step(i + 1) })) }],
      safety: PERMANGANATE_SAFETY,
      safetyPosition: 'start',
      signature: { preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' }, preparedAt: '2026-12-05T09:05:00Z' },
    });

  it.each(['A4', 'LETTER'] as const)('%s: each numbered step is on one page, the last one with the signature block', async (pageSize) => {
    const all = pages(pdfFile(await renderSheet(doc(pageSize, 'Bench sheet')), 'steps'));
    expect(all.length).toBeGreaterThan(2);
    for (let i = 1; i <= 40; i++) {
      const page = all.findIndex((p) => p.includes(`Step ${i} begins here.`));
      expect(page, `step ${i}`).toBeGreaterThanOrEqual(0);
      expect(all[page], `step ${i} ends on its page`).toContain(`Step ${i} ends here.`);
    }
    // the last step is kept on the page of the signature block
    expect(all[all.length - 1]).toContain('Step 40 begins here.');
    expect(all[all.length - 1]).toContain('SIGNATURES');
  });

  it.each([
    'Demo Water Works (invented); raw water, well blend 2; sampled 2026-12-01 23:30 UTC',
    'Demo Water Works (invented) (profile demo-water-works); well 2; sampled 2026-12-01 23:30 UTC',
    'Demo Water Works (invented) (profile demo-water-works, version 12); raw; sampled 2026-12-01 23:30 (UTC+01:00)',
  ])('the title band wraps at spaces between items: %s', async (subtitle) => {
    const raw = run('pdftotext', ['-f', '1', '-l', '1', pdfFile(await renderSheet(doc('A4', subtitle)), 'subtitle'), '-']);
    const lines = raw.split('\n');
    expect(lines.some((l) => /sampled 2026-12-01 23:30 (UTC|\(UTC\+01:00\))/.test(l))).toBe(true);
    expect(lines.filter((l) => l.includes('KB3VRK5')).every((l) => l.includes('JT-20261204-KB3VRK5CJ2'))).toBe(true);
  });

  it('renders to the same bytes twice', async () => {
    const d = doc('A4', 'Demo Water Works (invented); sampled 2026-12-01 23:30 UTC');
    expect((await renderSheet(d)).equals(await renderSheet(d))).toBe(true);
  });
});
