/**
 * Jar-test routes over HTTP (issue 5, "HTTP contract"): plan (JSON and bench sheet PDF), check,
 * evaluate (signed, archived), and the evaluation's GET, plot.svg and pdf. Needs poppler-utils
 * (pdftotext, pdfsig) and qpdf: apt-get install -y poppler-utils qpdf.
 *
 * All sample readings and bench results here are invented demo data.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';
import { gaussian, mulberry32 } from '../jar-tests/prng.js';
import { pdfFile, pdfText, requireTools, run, runAny } from '../sheets/tools.js';

const ADMIN_TOKEN = 'jar-tests-admin-token-0123456789';
let app: FastifyInstance;
let operatorToken: string;

beforeAll(async () => {
  requireTools('pdftotext', 'pdfsig', 'qpdf');
  app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-jar-tests-')), bootstrapToken: ADMIN_TOKEN });
  const r = await app.inject({ method: 'POST', url: '/api/v1/users', headers: { authorization: `Bearer ${ADMIN_TOKEN}` }, payload: { name: 'N. Shift (demo operator)', role: 'operator' } });
  expect(r.statusCode).toBe(201);
  operatorToken = r.json().token;
});
afterAll(async () => {
  await app.close();
});

const post = (url: string, payload: unknown, headers: Record<string, string> = {}) => app.inject({ method: 'POST', url, payload: payload as object, headers });
const asAdmin = { authorization: `Bearer ${ADMIN_TOKEN}` };
const mgL = (value: number) => ({ value, unit: 'mg/L' });

// Invented raw water: 1.0 mg/L Fe(II) and 0.5 mg/L Mn(II) at pH 7.5, 15 °C.
const SAMPLE = { pH: 7.5, temperatureC: 15, iron: mgL(1.0), manganese: mgL(0.5) };
// Stoichiometric permanganate demand, from the balanced reactions and IUPAC atomic weights (the service's
// own derivation): 0.9433 mg KMnO4/mg Fe × 1.0 + 1.9177 mg KMnO4/mg Mn × 0.5 = 0.9433 + 0.9589 = 1.9021 mg/L.
// Outside reference: US EPA 1999, Alternative Disinfectants and Oxidants Guidance Manual §5, prints the ratios
// 0.94 and 1.92 mg KMnO4 per mg Fe and per mg Mn → 0.94 + 0.96 = 1.90 mg/L.
const EPA_ESTIMATE = 0.94 * 1.0 + 1.92 * 0.5;

// ---------------------------------------------------------------------------------------------
describe('POST /api/v1/jar-tests/plans', () => {
  // Worked example: permanganate, 2 L jars, 1.0 g/L (= 1.0 mg/mL) stock, doses 0.5 … 3.0 mg/L.
  //   aliquot a = D·V/C = D mg/L × 2 L ÷ 1.0 mg/mL: 0.5 → 1.0 mL, 1.0 → 2.0 mL, … 3.0 → 6.0 mL
  //   (the largest is 6.0 mL = 0.3 % of the 2000 mL jar, under the 1 % limit, so no dilution correction);
  //   the dose the rounded aliquot really gives, with the jar diluted by the aliquot: a·C/(V + a/1000),
  //   e.g. 2.0 mL → 2.0 × 1.0 / 2.002 = 0.999001 mg/L; 6.0 mL → 6.0 / 2.006 = 2.99103 mg/L;
  //   expected residual if all of the 1.9021 mg/L demand is met: 2.99103 − 1.9021 = 1.0889 mg/L for jar 6;
  //   stock used Σa = 21 mL, made ×2 (42 mL) → the smallest flask that holds it and needs ≥ 0.1 g: 100 mL;
  //   mass = 1.0 g/L × 0.100 L ÷ 0.97 (table purity, AWWA B603 assay) = 0.10309 g.
  const worked = {
    oxidant: 'potassium-permanganate',
    sample: SAMPLE,
    jarVolume: { value: 2, unit: 'L' },
    doses: [0.5, 1, 1.5, 2, 2.5, 3].map(mgL),
    stockStrength: { value: 1.0, unit: 'g/L' },
  };

  it('worked example: aliquots, actual doses, expected residuals, stock and flask', async () => {
    const r = await post('/api/v1/jar-tests/plans', worked);
    expect(r.statusCode).toBe(200);
    const b = r.json();
    expect(b.estimate.unit).toBe('mg/L');
    expect(b.estimate.basis).toBe('as KMnO4');
    expect(b.estimate.value).toBeCloseTo(EPA_ESTIMATE, 1); // US EPA 1999 ratios, within 0.05 mg/L
    expect(b.estimate.terms.map((t: { contaminant: string }) => t.contaminant)).toEqual(['iron', 'manganese']);
    expect(b.estimate.value).toBeCloseTo(b.estimate.terms.reduce((s: number, t: { demand: { value: number } }) => s + t.demand.value, 0), 12);
    expect(b.jars.map((j: { aliquotMl: number }) => j.aliquotMl)).toEqual([1, 2, 3, 4, 5, 6]);
    expect(b.jars[1].dose).toMatchObject({ value: 1, unit: 'mg/L' });
    expect(b.jars[1].actualDose.value).toBeCloseTo(2.0 / 2.002, 9);
    expect(b.jars[5].actualDose.value).toBeCloseTo(6.0 / 2.006, 9);
    expect(b.jars[5].expectedResidual.value).toBeCloseTo(6.0 / 2.006 - b.estimate.value, 9);
    expect(b.jars[0].expectedResidual.value).toBe(0);
    expect(b.dilutionCorrected).toBe(false);
    expect(b.stock.strength).toMatchObject({ value: 1, unit: 'g/L', basis: 'as KMnO4', rounded: '1.00' });
    expect(b.stock.flaskVolume).toEqual({ value: 100, unit: 'mL' });
    expect(b.stock.productMass.value).toBeCloseTo((1.0 * 0.1) / 0.97, 9);
    expect(b.stock.productMass.unit).toBe('g');
    expect(b.stock.stockUsed.value).toBeCloseTo(21, 9);
    expect(b.schedule.contactTimesMin).toEqual([5, 15, 30]);
    expect(b.schedule.filtration.poreSizeUm).toBe(0.45);
    expect(Array.isArray(b.warnings)).toBe(true);
    expect(b.ladder).toMatchObject({ source: 'caller', brackets: true });
  });

  it('the same plan with the jar volume in mL, the doses in µg/L and the stock in mg/mL', async () => {
    const r = await post('/api/v1/jar-tests/plans', {
      ...worked,
      jarVolume: { value: 2000, unit: 'mL' },
      doses: [500, 1000, 1500, 2000, 2500, 3000].map((value) => ({ value, unit: 'µg/L' })),
      stockStrength: { value: 1.0, unit: 'mg/mL' },
    });
    expect(r.statusCode).toBe(200);
    expect(r.json().jars.map((j: { aliquotMl: number }) => j.aliquotMl)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it.each([
    ['ppm', 1],
    ['g/m3', 1],
    ['ppb', 1000],
  ])('doses in %s, as the dose route takes them (1 ppm = 1 mg/L in dilute water), give the same aliquots', async (unit, per) => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, doses: [0.5, 1, 1.5, 2, 2.5, 3].map((d) => ({ value: d * per, unit })) });
    expect(r.statusCode).toBe(200);
    expect(r.json().jars.map((j: { aliquotMl: number }) => j.aliquotMl)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('a stock in % w/v is 10 g/L per %: 0.1 % w/v = 1.0 g/L gives the same aliquots', async () => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, stockStrength: { value: 0.1, unit: '% w/v' } });
    expect(r.json().stock.strength.value).toBeCloseTo(1.0, 12);
    expect(r.json().jars.map((j: { aliquotMl: number }) => j.aliquotMl)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('default ladder: 6 jars from 50 % to 150 % of the estimate (common practice), bracketing it', async () => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'potassium-permanganate', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' } });
    const b = r.json();
    expect(b.jars).toHaveLength(6);
    expect(b.jars[0].dose.value).toBeCloseTo(0.5 * b.estimate.value, 9);
    expect(b.jars[5].dose.value).toBeCloseTo(1.5 * b.estimate.value, 9);
    expect(b.ladder).toMatchObject({ source: 'default', brackets: true });
    // the chosen stock keeps every aliquot between 1.0 mL and 1 % of the jar (20 mL)
    for (const j of b.jars) {
      expect(j.aliquotMl).toBeGreaterThanOrEqual(1);
      expect(j.aliquotMl).toBeLessThanOrEqual(20);
    }
  });

  it('background demand is added to the demand the ladder brackets', async () => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'potassium-permanganate', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, backgroundDemand: mgL(0.6) });
    const b = r.json();
    expect(b.backgroundDemand.value).toBeCloseTo(0.6, 12);
    expect(b.expectedDemand.value).toBeCloseTo(b.estimate.value + 0.6, 12);
    expect(b.jars[5].dose.value).toBeCloseTo(1.5 * (b.estimate.value + 0.6), 9);
  });

  it('sodium hypochlorite: the stock is diluted from the trade solution, whose strength must be measured first', async () => {
    // 12.5 % w/v trade hypochlorite = 125 g/L available chlorine (trade percent × 10, AWWA B300 convention);
    // a 1.0 g/L stock in a 100 mL flask needs 1.0 × 100 ÷ 125 = 0.8 mL, below the 1.0 mL a pipette measures
    // well, so the next flask (250 mL) takes 1.0 × 250 ÷ 125 = 2.0 mL.
    const r = await post('/api/v1/jar-tests/plans', {
      oxidant: 'sodium-hypochlorite',
      sample: { pH: 7.2, temperatureC: 12, iron: mgL(2.0) },
      jarVolume: { value: 1, unit: 'L' },
      stockStrength: { value: 1.0, unit: 'g/L' },
      product: { strength: { value: 12.5, unit: '% w/v' } },
    });
    expect(r.statusCode).toBe(200);
    const b = r.json();
    // US EPA 1999 §4: 0.64 mg Cl2 per mg Fe(II) → 1.28 mg/L as Cl2 for 2.0 mg/L Fe
    expect(b.estimate.value).toBeCloseTo(0.64 * 2.0, 1);
    expect(b.estimate.basis).toBe('as Cl2');
    expect(b.stock.productMass).toBeNull();
    expect(b.stock.preparation.kind).toBe('dilute');
    expect(b.stock.preparation.tradeStrength.value).toBeCloseTo(125, 9);
    expect(b.stock.preparation.tradeVolume.value).toBeCloseTo((1.0 * b.stock.flaskVolume.value) / 125, 9);
    expect(b.warnings.map((w: { code: string }) => w.code)).toContain('TRADE_STRENGTH_DECAYS');
  });

  it('Accept: application/pdf returns the bench sheet with the safety box and blank result tables', async () => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, contactTimesMin: [10, 30] }, { accept: 'application/pdf' });
    expect(r.statusCode).toBe(200);
    expect(r.headers['content-type']).toBe('application/pdf');
    expect(r.rawPayload.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const p = pdfFile(r.rawPayload, 'jar-plan-http');
    const txt = pdfText(p);
    expect(txt).toContain('Jar test plan: potassium permanganate');
    expect(txt).toContain('Safety: potassium permanganate');
    expect(txt).toContain('Results after 10 min');
    expect(txt).toContain('Results after 30 min');
    expect(txt).toContain('100 mL volumetric flask');
    expect(run('qpdf', ['--check', p])).toContain('No syntax or stream encoding errors found');
  });

  it.each([
    ['application/json', 'application/json'],
    ['application/pdf;q=0.5, application/json', 'application/json'],
    ['application/json;q=0.2, application/pdf', 'application/pdf'],
    ['*/*', 'application/json'],
  ])('Accept %s answers %s', async (accept, type) => {
    const r = await post('/api/v1/jar-tests/plans', worked, { accept });
    expect(r.statusCode).toBe(200);
    expect(String(r.headers['content-type'])).toContain(type);
  });

  it('an Accept header that allows neither JSON nor PDF is refused with 406 Not Acceptable (RFC 9110 §15.5.7)', async () => {
    const r = await post('/api/v1/jar-tests/plans', worked, { accept: 'text/html' });
    expect(r.statusCode).toBe(406);
    expect(r.headers['content-type']).toContain('application/problem+json');
    expect(r.json().code).toBe('NOT_ACCEPTABLE');
    expect(r.json().status).toBe(406);
  });

  it.each([
    ['a jar volume unit that is not L or mL', { jarVolume: { value: 2, unit: 'gal' } }, '/jarVolume/unit', 'VALIDATION_FAILED'],
    ['a 50 L jar (domain limit 20 L)', { jarVolume: { value: 50, unit: 'L' } }, '/jarVolume/value', 'JAR_TEST_INVALID'],
    ['a stock above the solubility of KMnO4 (about 60 g/L at 20 °C)', { stockStrength: { value: 100, unit: 'g/L' } }, '/stockStrength/value', 'JAR_TEST_INVALID'],
    ['a stock of more than 100 % w/v', { stockStrength: { value: 150, unit: '% w/v' } }, '/stockStrength/value', 'QUANTITY_OUT_OF_RANGE'],
    ['a stock too weak to reach the top dose', { stockStrength: { value: 0.002, unit: 'g/L' } }, '/stockStrength/value', 'JAR_TEST_INVALID'],
    ['a dose unit that is not a concentration', { doses: [{ value: 1, unit: 'mL' }, mgL(2)] }, '/doses/0/unit', 'VALIDATION_FAILED'],
    ['no temperature in the sample', { sample: { pH: 7.5, iron: mgL(1) } }, '/sample/temperatureC', 'DOSE_INPUT_MISSING'],
  ])('400 naming the field: %s', async (_what, change, pointer, code) => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, ...change });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe(code);
    expect(p.errors.map((e: { pointer: string }) => e.pointer)).toContain(pointer);
  });

  it('a generated oxidant (ozone) needs the measured stock strength: 400 naming /stockStrength in the request\'s words', async () => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'ozone', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' } });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.errors[0].pointer).toBe('/stockStrength');
    expect(p.detail).toContain('stockStrength');
    expect(p.detail).not.toMatch(/GPerL|MgPerL/);
  });

  // The planned dose is what POST /api/v1/doses computes for the same oxidant, sample, background and target residual
  // (demand + background + residual); the plan's ladder must reach above it.
  it('targetResidual: the planned dose equals the dose of POST /api/v1/doses, and the default ladder brackets it', async () => {
    const sample = { pH: 7.2, temperatureC: 12, iron: mgL(2.0) };
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'sodium-hypochlorite', sample, jarVolume: { value: 1, unit: 'L' }, backgroundDemand: mgL(0.3), targetResidual: mgL(1.0) });
    expect(r.statusCode, r.body).toBe(200);
    const b = r.json();
    const d = (await post('/api/v1/doses', { oxidant: 'sodium-hypochlorite', sample, backgroundDemand: mgL(0.3), targetResidual: mgL(1.0) })).json();
    expect(b.targetResidual).toMatchObject({ value: 1, unit: 'mg/L', basis: 'as Cl2', source: 'request' });
    expect(b.plannedDose.value).toBeCloseTo(d.dose.value, 9);
    expect(b.plannedDose.value).toBeCloseTo(b.estimate.value + 0.3 + 1.0, 12);
    expect(b.plannedDose.includes).toContain('target residual 1.00 mg/L');
    expect(b.plannedDose.includes).toContain('background demand 0.3');
    expect(b.ladder).toMatchObject({ source: 'default', brackets: true, bracketsPlannedDose: true });
    const doses = b.jars.map((j: { actualDose: { value: number } }) => j.actualDose.value);
    expect(Math.min(...doses)).toBeLessThan(b.plannedDose.value);
    expect(Math.max(...doses)).toBeGreaterThan(b.plannedDose.value);
    expect(b.jars[0].dose.value).toBeCloseTo(0.5 * b.expectedDemand.value, 9);
    expect(b.jars[5].dose.value).toBeCloseTo(1.5 * b.plannedDose.value, 9);
  });

  it('targetResidual above the chlorine MRDL carries the dose route\'s flag into the plan warnings', async () => {
    // 40 CFR 141.65(a): MRDL 4.0 mg/L as Cl2 (tables/limits.json)
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, targetResidual: mgL(5) });
    expect(r.statusCode).toBe(200);
    const w = r.json().warnings.find((x: { code: string }) => x.code === 'RESIDUAL_ABOVE_MRDL');
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('4.0 mg/L');
  });

  it('a negative targetResidual is a 400 naming /targetResidual/value', async () => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, targetResidual: mgL(-1) });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/targetResidual/value');
  });

  it.each(['hydrogen-peroxide', 'sodium-permanganate'])('%s: the trade solution is pipetted to the 0.1 mL step and the stock strength is what that volume gives', async (oxidant) => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant, sample: { pH: 7.4, temperatureC: 11, iron: mgL(3) }, jarVolume: { value: 2, unit: 'L' }, stockStrength: { value: 0.5, unit: 'g/L' } });
    expect(r.statusCode, r.body).toBe(200);
    const st = r.json().stock;
    const v = st.preparation.tradeVolume.value;
    expect(Math.abs(v * 10 - Math.round(v * 10))).toBeLessThan(1e-9); // a multiple of 0.1 mL
    // strength = trade volume × trade strength ÷ flask volume, and the aliquots use it
    expect(st.strength.value).toBeCloseTo((v * st.preparation.tradeStrength.value) / st.flaskVolume.value, 12);
    for (const j of r.json().jars) expect(j.actualDose.value).toBeCloseTo((j.aliquotMl * st.strength.value) / (2 + j.aliquotMl / 1000), 12);
    expect(st.instructions.join(' ')).not.toMatch(/Pipette \d+\.\d{2,} mL/);
  });

  it('plantId: the target residual and the product on hand come from the stored profile, as for POST /api/v1/doses', async () => {
    // The invented demo plant (tables/demo/demo-plant.json): sodium hypochlorite 12.5 % w/v (125 g/L), residual 1.0 mg/L.
    const sample = { pH: 7.4, temperatureC: 11, iron: mgL(1.2) };
    const r = await post('/api/v1/jar-tests/plans', { plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample, jarVolume: { value: 1, unit: 'L' } });
    expect(r.statusCode, r.body).toBe(200);
    const b = r.json();
    expect(b.plant).toMatchObject({ id: 'demo-groundwater', invented: true, fromPlant: ['targetResidual', 'product'] });
    expect(b.targetResidual).toMatchObject({ value: 1, source: 'plant profile' });
    expect(b.plannedDose.includes).toContain('(from the plant profile)');
    expect(b.stock.preparation.tradeStrength.value).toBeCloseTo(125, 9);
    expect(b.warnings.map((w: { code: string }) => w.code)).not.toContain('PRODUCT_NOTE'); // strength from the profile, not the table's nominal
    const d = (await post('/api/v1/doses', { plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample })).json();
    expect(b.plannedDose.value).toBeCloseTo(d.dose.value, 9);
    // the request's own residual wins over the profile's
    const own = (await post('/api/v1/jar-tests/plans', { plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample, jarVolume: { value: 1, unit: 'L' }, targetResidual: mgL(0.5) })).json();
    expect(own.targetResidual).toMatchObject({ value: 0.5, source: 'request' });
    expect(own.plant.fromPlant).toEqual(['product']);
    // the bench sheet names the plant and the planned dose
    const pdf = await post('/api/v1/jar-tests/plans', { plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample, jarVolume: { value: 1, unit: 'L' } }, { accept: 'application/pdf' });
    expect(pdf.statusCode).toBe(200);
    const txt = pdfText(pdfFile(pdf.rawPayload, 'jar-plan-plant'));
    expect(txt).toContain('Demo groundwater plant (invented)');
    expect(txt).toContain('Planned dose');
    expect(txt).toContain('Target residual');
  });

  it("plantId: another oxidant's residual is never taken, by the same rule as POST /api/v1/doses", async () => {
    const sample = { pH: 7.4, temperatureC: 11, iron: mgL(1.2) };
    for (const oxidant of ['sodium-permanganate', 'hydrogen-peroxide', 'ozone']) {
      const plan = (await post('/api/v1/jar-tests/plans', { plantId: 'demo-groundwater', oxidant, sample, jarVolume: { value: 1, unit: 'L' }, stockStrength: { value: 1, unit: 'g/L' } })).json();
      const dose = (await post('/api/v1/doses', { plantId: 'demo-groundwater', oxidant, sample })).json();
      const doseResidual = dose.terms.find((t: { term: string }) => t.term === 'residual')?.value.value ?? 0;
      expect(plan.targetResidual.value, oxidant).toBeCloseTo(doseResidual, 9);
      expect(plan.plannedDose.value, oxidant).toBeCloseTo(dose.dose.value, 9);
      const doseFlag = dose.flags.find((f: { code: string }) => f.code === 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT');
      const planFlag = plan.warnings.find((w: { code: string }) => w.code === 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT');
      expect(planFlag !== undefined, oxidant).toBe(doseFlag !== undefined);
      // a stored target the plan does not take changes what the operator expected: a warning in both answers
      if (doseFlag) expect([doseFlag.severity, planFlag.severity], oxidant).toEqual(['warning', 'warning']);
    }
  });

  it('calcium hypochlorite: a 300 g/L stock is above its solubility (about 21 g per 100 g water = 173.55 g/L, tables/strength-limits.json): 400 naming /stockStrength/value', async () => {
    const body = { oxidant: 'calcium-hypochlorite', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, stockStrength: { value: 300, unit: 'g/L' } };
    const r = await post('/api/v1/jar-tests/plans', body);
    expect(r.statusCode).toBe(400);
    const e = r.json().errors.find((x: { pointer: string }) => x.pointer === '/stockStrength/value');
    expect(e.message).toContain('173.6 g/L'); // 173.55 to 4 significant figures
    // the default plan now states the solubility it was checked against, instead of SOLUBILITY_NOT_CHECKED
    const ok = await post('/api/v1/jar-tests/plans', { ...body, stockStrength: undefined });
    expect(ok.statusCode).toBe(200);
    expect(ok.json().stock.solubility.value).toBeCloseTo(21000 / 121, 9);
    expect(ok.json().warnings.map((w: { code: string }) => w.code)).not.toContain('SOLUBILITY_NOT_CHECKED');
  });

  it('sodium hypochlorite on hand at 25 % w/v (250 g/L, above the 200 g/L no trade product reaches) is a 400 naming /product/strength/value, as POST /api/v1/doses refuses it', async () => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, product: { strength: { value: 25, unit: '% w/v' } } });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors[0].pointer).toBe('/product/strength/value');
    const dose = await post('/api/v1/doses', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, product: { strength: { value: 25, unit: '% w/v' } } });
    expect(dose.statusCode).toBe(400);
    expect(dose.json().errors[0].pointer).toBe('/product/strength/value');
  });

  it('sodium hypochlorite at 10 % w/w without a density: the tabled density interpolated, as POST /api/v1/doses does, and said', async () => {
    // tables/oxidants.json (White's Handbook, from memory): 10 trade % = 100 g/L at 1.14 kg/L → 100/11.4 = 8.7719 % w/w;
    // 12.5 trade % = 125 g/L at 1.17 kg/L → 125/11.7 = 10.6838 % w/w. At 10 % w/w, by hand:
    //   ρ = 1.14 + 0.03 × (10 − 8.7719)/(10.6838 − 8.7719) = 1.14 + 0.03 × 0.64235 = 1.15927 kg/L → 10 × 1.15927 × 10 = 115.93 g/L
    const rho = 1.14 + (0.03 * (10 - 100 / 11.4)) / (125 / 11.7 - 100 / 11.4);
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, product: { strength: { value: 10, unit: '% w/w' } } });
    expect(r.statusCode, r.body).toBe(200);
    expect(r.json().stock.preparation.tradeStrength.value).toBeCloseTo(100 * rho, 9);
    const note = r.json().warnings.find((w: { message: string }) => w.message.includes('No density was given for 10 % w/w'));
    expect(note.message).toContain('1.159 kg/L interpolated');
    expect(note.message).toMatch(/g\/L as Cl2\. The density also moves with temperature and excess caustic/);
    // peroxide at 30 % w/w: between the tabled 27.5 % (1.10 kg/L) and 35 % (1.13 kg/L) rows → 1.11 kg/L, 333 g/L as H2O2; no caustic
    const hp = await post('/api/v1/jar-tests/plans', { oxidant: 'hydrogen-peroxide', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, product: { strength: { value: 30, unit: '% w/w' } } });
    expect(hp.statusCode, hp.body).toBe(200);
    const hpNote = hp.json().warnings.find((w: { message: string }) => w.message.includes('No density was given for 30 % w/w'));
    expect(hpNote.message).toMatch(/333 g\/L as H2O2\. The density also moves with temperature;/);
    expect(hpNote.message).not.toMatch(/caustic/);
    const dose = await post('/api/v1/doses', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, flow: { value: 1000, unit: 'm3/d' }, product: { strength: { value: 10, unit: '% w/w' } } });
    expect(dose.statusCode).toBe(200);
    expect(JSON.stringify(dose.json().flags)).toContain('1.159 kg/L');
    // beyond the tabled strengths (12.4 % w/w at 15 trade %) the density is not extrapolated: 400 naming /product/density
    const out = await post('/api/v1/jar-tests/plans', { oxidant: 'sodium-hypochlorite', sample: SAMPLE, jarVolume: { value: 1, unit: 'L' }, product: { strength: { value: 14, unit: '% w/w' } } });
    expect(out.statusCode).toBe(400);
    expect(out.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/product/density');
  });

  it('a ladder dose of 1e9 mg/L is a 400 naming /doses/1/value', async () => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, doses: [mgL(1), mgL(1e9)] });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors.find((x: { pointer: string }) => x.pointer === '/doses/1/value').message).toContain('at most 1000 mg/L');
  });

  it('an unknown plantId is a 404 naming /plantId', async () => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, plantId: 'no-such-plant' });
    expect(r.statusCode).toBe(404);
    expect(r.json().code).toBe('PLANT_NOT_FOUND');
    expect(r.json().errors[0].pointer).toBe('/plantId');
  });

  it.each([
    ['application/json', 'the plan'],
    ['application/pdf', 'the bench sheet'],
  ])('a 1 mL jar (a unit slip for 1 L) is refused with 400 naming /jarVolume/value, asking for %s: no %s', async (accept) => {
    const r = await post('/api/v1/jar-tests/plans', { ...worked, jarVolume: { value: 1, unit: 'mL' } }, { accept });
    expect(r.statusCode).toBe(400);
    expect(String(r.headers['content-type'])).toContain('application/problem+json');
    const p = r.json();
    expect(p.code).toBe('JAR_TEST_INVALID');
    expect(p.errors[0].pointer).toBe('/jarVolume/value');
    expect(p.errors[0].message).toContain('at least 0.25 L (got 0.001 L = 1 mL)');
    expect(p.errors[0].message).toContain('Check the unit');
  });

  it('a plan whose every aliquot rounds to 0 mL is a 400 naming /stockStrength/value and /jarVolume/value', async () => {
    // 10 g/L in 2 L: 0.01 mg/L needs 0.002 mL, 0.02 mg/L 0.004 mL → both 0 at 0.1 mL; 0.01 × 2 / 1.0 mL = 0.02 g/L gives 1 mL
    const r = await post('/api/v1/jar-tests/plans', { ...worked, stockStrength: { value: 10, unit: 'g/L' }, doses: [mgL(0.01), mgL(0.02)] });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/stockStrength/value', '/jarVolume/value']);
    expect(p.detail).toContain('Dilute the stock (0.02 g/L or weaker');
    expect(p.detail).not.toMatch(/GPerL|MgPerL/);
  });

  it.each([
    ['chlorine-gas', 'chlorine water', /hypochlorite/],
    ['ozone', 'ozone water', /generator/],
  ])('%s: the stock is %s', async (oxidant, stock, how) => {
    const refused = await post('/api/v1/jar-tests/plans', { oxidant, sample: SAMPLE, jarVolume: { value: 2, unit: 'L' } });
    expect(refused.statusCode).toBe(400);
    expect(refused.json().detail).toContain(stock);
    expect(refused.json().detail).toMatch(how);
    expect(refused.json().detail).not.toMatch(/\bA [AEIOU]/);
    const r = await post('/api/v1/jar-tests/plans', { oxidant, sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, stockStrength: { value: 0.05, unit: 'g/L' } });
    expect(r.statusCode).toBe(200);
    expect(r.json().stock.preparation).toMatchObject({ kind: 'generate', stockSolution: stock });
    expect(r.json().stock.instructions[0]).toContain(stock);
  });

  it('oxygen is dosed by aeration: a plan is a 400 naming /oxidant, with or without a stock strength', async () => {
    for (const extra of [{}, { stockStrength: { value: 0.009, unit: 'g/L' } }]) {
      const r = await post('/api/v1/jar-tests/plans', { oxidant: 'oxygen', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, ...extra });
      expect(r.statusCode).toBe(400);
      expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/oxidant']);
      expect(r.json().detail).toContain('aeration');
      expect(r.json().detail).not.toContain('generator');
    }
  });

  it('a sample with nothing to oxidise and no doses: 400 pointing at the sample and the doses', async () => {
    const r = await post('/api/v1/jar-tests/plans', { oxidant: 'potassium-permanganate', sample: { pH: 7.5, temperatureC: 15 }, jarVolume: { value: 2, unit: 'L' } });
    expect(r.statusCode).toBe(400);
    const pointers = r.json().errors.map((e: { pointer: string }) => e.pointer);
    expect(pointers).toEqual(expect.arrayContaining(['/sample', '/doses']));
  });
});

describe('POST /api/v1/jar-tests/plans: a hypochlorite stock made up in one step', () => {
  // 12.5 % w/v = 125 g/L available chlorine (1 % w/v = 10 g/L). The weakest stock made from at least 1.0 mL of
  // trade solution (common practice) in the largest 1000 mL flask: 1.0 × 125 ÷ 1000 = 0.125 g/L; in 0.5 L jars each
  // aliquot is D × 0.5 L ÷ 0.125 mg/mL = 4·D mL. The listed 0.1 g/L would need 0.8 mL of trade solution.
  const body = { oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 12, iron: mgL(1.0) }, jarVolume: { value: 0.5, unit: 'L' }, product: { strength: { value: 12.5, unit: '% w/v' } } };

  it('the default ladder gets 0.125 g/L from 1.0 mL of trade solution in 1000 mL, with no trade-volume warning', async () => {
    const r = await post('/api/v1/jar-tests/plans', body);
    expect(r.statusCode, r.body).toBe(200);
    const b = r.json();
    expect(b.stock.strength.value).toBeCloseTo(0.125, 12);
    expect(b.stock.flaskVolume).toEqual({ value: 1000, unit: 'mL' });
    expect(b.stock.preparation.tradeVolume.value).toBeCloseTo(1.0, 12);
    for (const j of b.jars) expect(j.aliquotMl).toBeCloseTo(Math.round(4 * j.dose.value * 10) / 10, 9);
    expect(b.warnings.map((w: { code: string }) => w.code)).not.toContain('TRADE_VOLUME_BELOW_MINIMUM');
  });

  it('a caller\'s 0.1 g/L (0.8 mL of trade): the 1 + 9 pre-dilution gives the same 0.1 g/L, and the warning says so plainly', async () => {
    // 8 mL of 12.5 g/L into 1000 mL = 0.1 g/L, as 0.8 mL of 125 g/L: no "off by 0 %"
    const r = await post('/api/v1/jar-tests/plans', { ...body, stockStrength: { value: 0.1, unit: 'g/L' } });
    const w = r.json().warnings.find((x: { code: string }) => x.code === 'TRADE_VOLUME_BELOW_MINIMUM');
    expect(w.message).toContain('pipette 8 mL of that into the 1000 mL flask, which gives 0.1 g/L');
    expect(w.message).not.toMatch(/off by 0 %|plan again with stockStrength 0\.1 g\/L/);
    expect(w.message).toContain('they hold for the two-step stock');
  });
});

// ---------------------------------------------------------------------------------------------
describe('POST /api/v1/jar-tests/checks', () => {
  const base = {
    oxidant: 'potassium-permanganate',
    jarVolume: { value: 2, unit: 'L' },
    stockStrength: { value: 1.0, unit: 'g/L' },
    contactTimesMin: [5, 15, 30],
  };
  // A correct plan for the invented sample (estimate 1.90 mg/L): 1.0 … 6.0 mL of 1.0 g/L in 2 L jars.
  const goodJars = [1, 2, 3, 4, 5, 6].map((a) => ({ aliquotMl: a, dose: mgL(a / 2) }));

  it('a correct plan: every dose recomputed as a·C/(V + a/1000), no problems', async () => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, sample: SAMPLE, jars: goodJars });
    expect(r.statusCode).toBe(200);
    const b = r.json();
    expect(b.problems).toEqual([]);
    expect(b.jars.flatMap((j: { problems: unknown[] }) => j.problems)).toEqual([]);
    expect(b.ok).toBe(true);
    // 2.0 mL × 1.0 mg/mL ÷ (2 L + 0.002 L) = 0.999001 mg/L; stated 1.0 mg/L is within rounding
    expect(b.jars[1].recomputedDose.value).toBeCloseTo(2.0 / 2.002, 9);
    expect(b.jars[1].dose).toMatchObject({ value: 1, unit: 'mg/L' });
    expect(b.estimate.value).toBeCloseTo(EPA_ESTIMATE, 1);
  });

  it('a dose without an aliquot gets the aliquot it needs, rounded to the pipette', async () => {
    // 1.7 mg/L × 2 L ÷ 1.0 mg/mL = 3.4 mL; 3.4 × 1.0 / 2.0034 = 1.69712 mg/L
    const r = await post('/api/v1/jar-tests/checks', { ...base, jars: [{ dose: mgL(1.7) }, { dose: mgL(2.0) }, { dose: mgL(2.5) }] });
    const j = r.json().jars[0];
    expect(j.recomputedAliquotMl).toBe(3.4);
    expect(j.recomputedDose.value).toBeCloseTo(3.4 / 2.0034, 9);
  });

  // One plan per kind of problem; each changes the correct plan in one place.
  it.each([
    ['DOSE_MISMATCH', 'jar 2 says 1.5 mg/L but 2.0 mL of 1.0 g/L in 2 L gives 0.999 mg/L', { jars: [goodJars[0], { aliquotMl: 2, dose: mgL(1.5) }, ...goodJars.slice(2)] }, 2],
    ['NOT_BRACKETING', 'every dose (0.5 to 1.5 mg/L) below the 1.90 mg/L estimate', { jars: goodJars.slice(0, 3) }, null],
    ['ALIQUOT_TOO_LARGE', '30 mL is 1.5 % of a 2 L jar (limit 1 %, common practice)', { jars: [...goodJars.slice(0, 5), { aliquotMl: 30 }] }, 6],
    ['BELOW_PIPETTE_RESOLUTION', '0.05 mL is below the 0.1 mL pipette step', { jars: [{ aliquotMl: 0.05 }, ...goodJars.slice(1)] }, 1],
    ['NOT_PIPETTE_MULTIPLE', '2.05 mL is not a multiple of 0.1 mL', { jars: [goodJars[0], { aliquotMl: 2.05 }, ...goodJars.slice(2)] }, 2],
    ['STOCK_ABOVE_SOLUBILITY', '100 g/L (10 % w/v) KMnO4 is above its solubility, about 60 g/L at 20 °C (tables/oxidants.json)', { stockStrength: { value: 10, unit: '% w/v' }, jars: goodJars.map((j) => ({ aliquotMl: j.aliquotMl / 100 + 0.1 })) }, null],
    ['NO_CONTACT_TIMES', 'no contact times given', { contactTimesMin: undefined }, null],
    ['MISSING_DOSE_AND_ALIQUOT', 'jar 3 has neither dose nor aliquot', { jars: [goodJars[0], goodJars[1], {}, ...goodJars.slice(3)] }, 3],
    ['DUPLICATE_DOSE', 'jar 3 repeats jar 2', { jars: [goodJars[0], goodJars[1], goodJars[1], ...goodJars.slice(3)] }, 3],
    ['NON_MONOTONIC_LADDER', 'doses neither rise nor fall', { jars: [goodJars[0], goodJars[3], goodJars[1], goodJars[4], goodJars[2], goodJars[5]] }, null],
    ['TOO_FEW_JARS', 'two jars cannot give a demand line', { jars: [goodJars[2], goodJars[5]] }, null],
  ])('finds %s: %s', async (code, _why, change, jar) => {
    const body: Record<string, unknown> = { ...base, sample: SAMPLE, jars: goodJars, ...change };
    if ('contactTimesMin' in change && change.contactTimesMin === undefined) delete body['contactTimesMin'];
    const r = await post('/api/v1/jar-tests/checks', body);
    expect(r.statusCode).toBe(200);
    const b = r.json();
    const found = jar === null ? b.problems : b.jars[jar - 1].problems;
    expect(found.map((p: { code: string }) => p.code)).toContain(code);
    const p = found.find((x: { code: string }) => x.code === code);
    expect(p.message.length).toBeGreaterThan(20);
  });

  it('without a sample the bracketing is not checked, and says so', async () => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, jars: goodJars.slice(0, 3) });
    const codes = r.json().problems.map((p: { code: string }) => p.code);
    expect(codes).toContain('NO_ESTIMATE');
    expect(codes).not.toContain('NOT_BRACKETING');
    expect(r.json().estimate).toBeNull();
    expect(JSON.stringify(r.json().problems)).not.toMatch(/MgPerL|GPerL/);
  });

  it('oxygen is dosed by aeration, not from a stock: a check of aliquots is a 400 naming /oxidant', async () => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, oxidant: 'oxygen', jars: goodJars });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/oxidant']);
    expect(r.json().detail).toContain('aeration');
  });

  it('a 2 mL jar (2 L written in mL) is a 400 naming /jarVolume/value', async () => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, jarVolume: { value: 2, unit: 'mL' }, jars: goodJars });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors[0].pointer).toBe('/jarVolume/value');
    expect(r.json().errors[0].message).toContain('at least 0.25 L');
  });

  it('a dose beyond any bench (1e9 mg/L) or an aliquot larger than the jar is a 400 naming the field', async () => {
    // 1000 mg/L is the bound src/dosing/bounds.ts puts on a target residual (common practice); 2 L = 2000 mL
    const r = await post('/api/v1/jar-tests/checks', { ...base, jars: [goodJars[0], { dose: mgL(1e9) }, { aliquotMl: 2500 }] });
    expect(r.statusCode).toBe(400);
    const errors = r.json().errors as { pointer: string; message: string }[];
    expect(errors.find((e) => e.pointer === '/jars/1/dose/value')!.message).toContain('at most 1000 mg/L');
    expect(errors.find((e) => e.pointer === '/jars/2/aliquotMl')!.message).toContain('more than the 2000 mL jar');
  });

  // tables/strength-limits.json, the limits POST /api/v1/doses uses (values from memory there, as its rows say):
  //   calcium hypochlorite dissolves to about 21 g per 100 g water → 1000 × 21 ÷ 121 = 173.55 g/L of solution;
  //   sodium hypochlorite refused above 200 g/L, strongest grade 15 trade % = 150 g/L;
  //   hydrogen peroxide refused above 80 % w/w (× 1.20 kg/L × 10 = 960 g/L), strongest grade 50 % w/w = 600 g/L.
  it.each([
    ['calcium-hypochlorite', 30, 'STOCK_ABOVE_SOLUBILITY', 'error'],
    ['sodium-hypochlorite', 50, 'STOCK_ABOVE_PRODUCT_LIMIT', 'error'],
    ['sodium-hypochlorite', 16, 'STOCK_ABOVE_TRADE_GRADE', 'warning'],
    ['hydrogen-peroxide', 90, 'STOCK_ABOVE_TRADE_GRADE', 'warning'],
  ] as const)('%s stock at %s %% w/v → %s (%s), from the product limits of the dose route', async (oxidant, pct, code, severity) => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, oxidant, stockStrength: { value: pct, unit: '% w/v' }, jars: [{ aliquotMl: 0.1 }, { aliquotMl: 0.2 }, { aliquotMl: 0.3 }] });
    expect(r.statusCode).toBe(200);
    const p = r.json().problems.find((x: { code: string }) => x.code === code);
    expect(p, JSON.stringify(r.json().problems)).toBeDefined();
    expect(p.severity).toBe(severity);
    if (severity === 'error') expect(r.json().ok).toBe(false);
  });

  // Sodium permanganate: the stock is as KMnO4, the limits as NaMnO4 (tables/strength-limits.json: strongest grade
  // 40 % w/w × 1.37 kg/L = 548 g/L NaMnO4, refused above 50 % w/w × 1.37 = 685 g/L). Molar masses (IUPAC 2021):
  // NaMnO4 22.990 + 54.938 + 4 × 15.999 = 141.924, KMnO4 39.098 + 54.938 + 63.996 = 158.032; 141.924/158.032 = 0.89807.
  //   560 as KMnO4 = 502.9 g/L NaMnO4 (below 548: nothing); 700 = 628.6 (above 548, below 685: the grade warning);
  //   800 = 718.5 (above 685: the product limit). The plan refuses a stock above the 548/0.89807 = 610.2 g/L as KMnO4.
  const NA_PER_K = 141.924 / 158.032;
  it.each([
    [560, null, null],
    [700, 'STOCK_ABOVE_TRADE_GRADE', 'warning'],
    [800, 'STOCK_ABOVE_PRODUCT_LIMIT', 'error'],
  ] as const)('sodium permanganate stock %s g/L as KMnO4 is judged as NaMnO4 → %s', async (gPerL, code, severity) => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, oxidant: 'sodium-permanganate', stockStrength: { value: gPerL, unit: 'g/L' }, jars: [{ aliquotMl: 0.1 }, { aliquotMl: 0.2 }, { aliquotMl: 0.3 }] });
    expect(r.statusCode).toBe(200);
    const stockProblems = r.json().problems.filter((x: { code: string }) => x.code.startsWith('STOCK_ABOVE'));
    if (code === null) {
      expect(stockProblems).toEqual([]);
      return;
    }
    expect(stockProblems.map((x: { code: string }) => x.code)).toEqual([code]);
    expect(stockProblems[0].severity).toBe(severity);
    expect(stockProblems[0].message).toContain(`${gPerL} g/L as KMnO4, is ${(gPerL * NA_PER_K).toPrecision(4)} g/L NaMnO4`);
  });

  it('the plan agrees: a sodium permanganate stock above 610.2 g/L as KMnO4 (548 g/L NaMnO4) is refused, 600 is not refused for strength', async () => {
    const plan = (v: number) => post('/api/v1/jar-tests/plans', { oxidant: 'sodium-permanganate', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, stockStrength: { value: v, unit: 'g/L' } });
    const over = await plan(620);
    expect(over.statusCode).toBe(400);
    expect(over.json().errors[0].message).toContain(`${(548 / NA_PER_K).toFixed(1)} g/L`);
    const under = await plan(600);
    expect(JSON.stringify(under.json())).not.toContain('trade strength');
  });

  it('a stock within every limit (hypochlorite 10 g/L, calcium hypochlorite 10 g/L) raises none of them', async () => {
    for (const oxidant of ['sodium-hypochlorite', 'calcium-hypochlorite']) {
      const r = await post('/api/v1/jar-tests/checks', { ...base, oxidant, stockStrength: { value: 10, unit: 'g/L' }, jars: goodJars });
      const codes = r.json().problems.map((x: { code: string }) => x.code);
      expect(codes).not.toEqual(expect.arrayContaining(['STOCK_ABOVE_SOLUBILITY']));
      expect(codes).not.toContain('STOCK_ABOVE_PRODUCT_LIMIT');
      expect(codes).not.toContain('STOCK_ABOVE_TRADE_GRADE');
    }
  });

  it('a negative aliquot is a 400 naming /jars/1/aliquotMl', async () => {
    const r = await post('/api/v1/jar-tests/checks', { ...base, jars: [goodJars[0], { aliquotMl: -1 }] });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/jars/1/aliquotMl');
  });
});

// ---------------------------------------------------------------------------------------------
describe('POST /api/v1/jar-tests/evaluations', () => {
  // Stated model (invented): stoichiometric estimate E = 1.9021 mg/L (SAMPLE above) plus a background
  // demand B = 0.6 mg/L, so the true demand at 30 min is D = E + B = 2.5021 mg/L (at 15 min, D − 0.3).
  //   residual    = max(0, dose − D) + N(0, σ²), σ = 0.03 mg/L, seed 20261201 (mulberry32 + Box–Muller), never < 0
  //   dissolved Fe = 1.0 × max(0, 1 − dose/D) + 0.02 mg/L;  dissolved Mn = 500 × max(0, 1 − dose/D) + 10 µg/L
  // The fit of residual on dose over the jars above the 0.05 mg/L detection limit crosses zero at ≈ D.
  const E = 0.9432775240994419 * 1.0 + 1.9177011661630687 * 0.5;
  const B = 0.6;
  const D = E + B;
  const SIGMA = 0.03;
  const DOSES = [1, 1.5, 2, 3, 3.5, 4, 4.5, 5];
  const z = gaussian(mulberry32(20261201));
  const jars = DOSES.map((dose) => ({
    dose: mgL(dose),
    results: [15, 30].map((t) => {
      const demand = t === 30 ? D : D - 0.3;
      const left = Math.max(0, 1 - dose / demand);
      return {
        contactTimeMin: t,
        residualOxidant: mgL(Math.max(0, Math.max(0, dose - demand) + SIGMA * z())),
        iron: mgL(1.0 * left + 0.02),
        manganese: { value: 500 * left + 10, unit: 'µg/L' },
        ...(t === 30 && dose >= 4.5 ? { note: 'faint pink' } : {}),
      };
    }),
  }));
  const body = {
    oxidant: 'potassium-permanganate',
    sample: SAMPLE,
    jarVolume: { value: 2, unit: 'L' },
    jars,
    targets: { iron: mgL(0.3), manganese: mgL(0.05) },
    sampledAt: '2026-11-30T07:30:00Z',
    sampleLabel: 'Well 2 raw water (invented demo)',
  };
  let created: Record<string, any>;

  beforeAll(async () => {
    const r = await post('/api/v1/jar-tests/evaluations', body, asAdmin);
    expect(r.statusCode, r.body).toBe(201);
    created = r.json();
  });

  it('recovers the model demand: apparent ≈ D, background ≈ B, within 0.1 mg/L and inside the 95 % interval', () => {
    expect(created.id).toMatch(/^JT-\d{8}-[0-9A-HJKMNP-TV-Z]{10}$/);
    expect(created.apparentDemand.unit).toBe('mg/L');
    expect(Math.abs(created.apparentDemand.value - D)).toBeLessThan(0.1);
    expect(created.apparentDemand.ci95[0]).toBeLessThan(D);
    expect(created.apparentDemand.ci95[1]).toBeGreaterThan(D);
    expect(Math.abs(created.backgroundDemand.value - B)).toBeLessThan(0.1);
    expect(created.backgroundDemand.value).toBeCloseTo(created.apparentDemand.value - created.estimate.value, 9);
    expect(created.estimate.value).toBeCloseTo(E, 9);
    // slope of residual on dose ≈ 1 above the demand; jars 4–8 (3.0 … 5.0 mg/L) kept a residual at 30 min
    expect(created.fit.slope).toBeGreaterThan(0.9);
    expect(created.fit.slope).toBeLessThan(1.1);
    expect(created.fit.r2).toBeGreaterThan(0.99);
    expect(created.fit.intercept).toBeCloseTo(-created.apparentDemand.value * created.fit.slope, 9);
    expect(created.fit.jarsUsed).toEqual([4, 5, 6, 7, 8]);
    expect(created.fit.contactTimeMin).toBe(30);
  });

  it('permanganate with no residual maximum: the recommended dose is checked against the 0.05 mg/L pink-water threshold', async () => {
    // 3.0 mg/L against a demand near 2.5 mg/L leaves about 0.5 mg/L of permanganate: pink (threshold 0.05 mg/L as KMnO4,
    // common practice, from memory; US EPA 1999 ADOGM §5.1.2: a permanganate residual gives water a pink colour)
    const w = created.problems.find((p: { code: string }) => p.code === 'RECOMMENDED_RESIDUAL_PINK');
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('0.05 mg/L');
    expect(created.recommendedDose.expectedResidual.value).toBeGreaterThan(0.05);
    const txt = pdfText(pdfFile((await app.inject({ url: created.pdfUrl })).rawPayload, 'jar-eval-pink'));
    expect(txt).toContain('RECOMMENDED_RESIDUAL_PINK');
    // the caller's maximum replaces the default
    const own = await post('/api/v1/jar-tests/evaluations', { ...body, targets: { ...body.targets, residualOxidantMax: mgL(2) } }, asAdmin);
    expect(own.statusCode).toBe(201);
    expect(own.json().problems.map((p: { code: string }) => p.code)).not.toContain('RECOMMENDED_RESIDUAL_PINK');
  });

  it('lowest dose meeting the Fe and Mn targets, and the recommended dose with its margin', () => {
    // By the model, 2.0 mg/L leaves Mn 500 × (1 − 2/2.502) + 10 = 110 µg/L > 50: fails; 3.0 mg/L leaves 10 µg/L.
    expect(created.lowestDoseMeetingTargets).toMatchObject({ value: 3, unit: 'mg/L', contactTimeMin: 30, jar: 4 });
    // permanganate: no margin by default (common practice; a residual shows as pink water, US EPA 1999 ADOGM §5.1.2)
    expect(created.recommendedDose.value).toBeCloseTo(3.0, 9);
    expect(created.recommendedDose.unit).toBe('mg/L');
    expect(created.recommendedDose.from).toBe('lowest-dose-meeting-targets');
    expect(created.recommendedDose.reason).toContain('+0 %');
    expect(created.recommendedDose.reason).toContain('pink water');
  });

  it('the answer links the plot, the PDF and the verification; the archive record is there', () => {
    expect(created.plotUrl).toBe(`/api/v1/jar-tests/evaluations/${created.id}/plot.svg`);
    expect(created.pdfUrl).toBe(`/api/v1/jar-tests/evaluations/${created.id}/pdf`);
    expect(created.archive.contentSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(created.archive.sampledAt).toBe('2026-11-30T07:30:00.000Z');
  });

  it('plotUrl returns the residual plot as SVG', async () => {
    const r = await app.inject({ url: created.plotUrl });
    expect(r.statusCode).toBe(200);
    expect(r.headers['content-type']).toContain('image/svg+xml');
    expect(r.body).toMatch(/<svg[\s>]/);
    expect(r.body).toContain('apparent demand');
  });

  it('pdfUrl returns the signed sheet: title, plot, content hash in the footer, valid signature', async () => {
    const r = await app.inject({ url: created.pdfUrl });
    expect(r.statusCode).toBe(200);
    expect(r.headers['content-type']).toBe('application/pdf');
    expect(r.rawPayload.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const p = pdfFile(r.rawPayload, 'jar-eval-http');
    const txt = pdfText(p);
    expect(txt).toContain('Jar test evaluation: potassium permanganate');
    expect(txt).toContain('Residual oxidant against applied dose');
    expect(txt).toContain('Safety: potassium permanganate');
    expect(txt).toContain(created.archive.contentSha256);
    const sig = runAny('pdfsig', ['-nocert', p]).output;
    expect(sig).toContain('Signature Validation: Signature is Valid.');
    expect(sig).toContain('Total document signed');
  });

  it('GET the evaluation: the same result as the POST answered, with the request', async () => {
    const r = await app.inject({ url: `/api/v1/jar-tests/evaluations/${created.id}` });
    expect(r.statusCode).toBe(200);
    const g = r.json();
    expect(g.apparentDemand).toEqual(created.apparentDemand);
    expect(g.recommendedDose).toEqual(created.recommendedDose);
    expect(g.fit).toEqual(created.fit);
    expect(g.archive.recordHash).toBe(created.archive.recordHash);
    expect(g.request.jars).toHaveLength(DOSES.length);
  });

  it('the archive verification stays valid after the evaluation, for the sheet and the whole chain', async () => {
    const one = (await app.inject({ url: `/api/v1/sheets/${created.id}/verification` })).json();
    expect(one).toMatchObject({ valid: true, hashMatches: true, signatureValid: true, chainValid: true });
    const all = (await app.inject({ url: '/api/v1/archive/verification' })).json();
    expect(all.valid).toBe(true);
    expect(all.problems).toEqual([]);
  });

  it('401 without a token, 403 for an operator token', async () => {
    const none = await post('/api/v1/jar-tests/evaluations', body);
    expect(none.statusCode).toBe(401);
    expect(none.json().code).toBe('AUTH_REQUIRED');
    const op = await post('/api/v1/jar-tests/evaluations', body, { authorization: `Bearer ${operatorToken}` });
    expect(op.statusCode).toBe(403);
    expect(op.json().code).toBe('AUTH_FORBIDDEN');
  });

  it('marginPercent 150 is a 400 naming /marginPercent, saying what the field is and the range it takes', async () => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, marginPercent: 150 }, asAdmin);
    expect(r.statusCode).toBe(400);
    const e = r.json().errors.find((x: { pointer: string }) => x.pointer === '/marginPercent');
    expect(e.message).toBe('marginPercent, the margin added to the bench dose, must be from 0 to 100 % (10 % is common practice); got 150');
  });

  it('a jar dose of 1e9 mg/L is a 400 naming /jars/0/dose/value (at most 1000 mg/L, common practice), not a 201', async () => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, jars: [{ ...jars[0]!, dose: mgL(1e9) }, ...jars.slice(1)] }, asAdmin);
    expect(r.statusCode).toBe(400);
    expect(r.headers['content-type']).toContain('application/problem+json');
    const e = r.json().errors.find((x: { pointer: string }) => x.pointer === '/jars/0/dose/value');
    expect(e.message).toContain('at most 1000 mg/L');
  });

  it('too few jars with a residual and no iron or manganese to judge by: 422 naming /jars', async () => {
    const residualsOnly = jars.slice(0, 5).map((j) => ({ dose: j.dose, results: j.results.map((x) => ({ contactTimeMin: x.contactTimeMin, residualOxidant: x.residualOxidant })) }));
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, jars: residualsOnly, targets: {} }, asAdmin);
    expect(r.statusCode).toBe(422);
    expect(r.json().code).toBe('JAR_TEST_TOO_FEW_POINTS');
    expect(r.json().errors[0].pointer).toBe('/jars');
  });

  it('a permanganate test dosed to leave no residual is evaluated on its iron and manganese: no line, the lowest jar meeting the targets, a signed sheet and a plot', async () => {
    // invented: every jar used all its permanganate (residual 0, as intended); from 2.0 mg/L the
    // filtered iron and manganese meet 0.3 and 0.05 mg/L (US secondary levels, 40 CFR 143.3)
    const pinkFree = [1, 1.5, 2, 2.5].map((d) => ({
      dose: mgL(d),
      results: [{ contactTimeMin: 20, residualOxidant: mgL(0), iron: mgL(d >= 2 ? 0.05 : 0.4), manganese: mgL(d >= 2 ? 0.02 : 0.12) }],
    }));
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, jars: pinkFree, plantContactTimeMin: 20 }, asAdmin);
    expect(r.statusCode, r.body).toBe(201);
    const ev = r.json();
    expect(ev.fit).toBeNull();
    expect(ev.apparentDemand).toBeNull();
    expect(ev.recommendedDose.value).toBeCloseTo(2, 9); // lowest jar meeting both targets, no margin for permanganate
    expect(ev.recommendedDose.from).toBe('lowest-dose-meeting-targets');
    const p = ev.problems.find((x: { code: string }) => x.code === 'RESIDUAL_LINE_NOT_FITTED');
    expect(p.severity).toBe('info');
    expect(p.message).toMatch(/pink/);
    const pdf = await app.inject({ url: ev.pdfUrl });
    expect(pdf.statusCode).toBe(200);
    expect(pdfText(pdfFile(pdf.rawPayload, 'jar-eval-no-line'))).toMatch(/too few jars kept a measurable residual/);
    const svg = await app.inject({ url: ev.plotUrl });
    expect(svg.statusCode).toBe(200);
    expect(svg.body).toMatch(/<svg[\s>]/);
  });

  it('two results at one contact time: 400 pointing into the request body', async () => {
    const twice = jars.map((j, i) => (i === 2 ? { ...j, results: [j.results[1]!, j.results[1]!] } : j));
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, jars: twice }, asAdmin);
    expect(r.statusCode).toBe(400);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/jars/2/results/1/contactTimeMin');
  });

  it('plantId: the evaluation is filed under the plant and its profile version, listed by GET /api/v1/sheets?plantId, and the sheet names the plant', async () => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, plantId: 'demo-groundwater' }, asAdmin);
    expect(r.statusCode, r.body).toBe(201);
    const ev = r.json();
    const plant = (await app.inject({ url: '/api/v1/plants/demo-groundwater', headers: asAdmin })).json();
    const list = (await app.inject({ url: '/api/v1/sheets?plantId=demo-groundwater', headers: asAdmin })).json().sheets as Record<string, any>[];
    const listed = list.find((x) => x.id === ev.id)!;
    expect(listed).toBeDefined();
    expect(listed.plantId).toBe('demo-groundwater');
    // an evaluation without plantId is not filed under the plant
    expect(list.map((x) => x.id)).not.toContain(created.id);
    expect(listed.plantVersion).toBe(plant.version); // the profile version in force, as a dose sheet records it
    expect(listed.kind).toBe('jar-test-evaluation');
    const txt = pdfText(pdfFile((await app.inject({ url: ev.pdfUrl })).rawPayload, 'jar-eval-plant'));
    expect(txt).toContain('Demo groundwater plant (invented)');
    expect(txt).toContain('profile demo-groundwater');
    const v = await app.inject({ url: `/api/v1/sheets/${ev.id}/verification` });
    expect(v.statusCode).toBe(200);
  });

  it.each([
    ['an unknown plant', 'no-such-plant', 404, 'PLANT_NOT_FOUND'],
    ['an empty id', '', 400, undefined],
  ])('plantId naming %s: %s, pointing at /plantId, as plans do', async (_what, plantId, status, code) => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...body, plantId }, asAdmin);
    expect(r.statusCode).toBe(status);
    if (code !== undefined) expect(r.json().code).toBe(code);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/plantId');
    const plan = await post('/api/v1/jar-tests/plans', { oxidant: 'potassium-permanganate', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, plantId });
    expect(plan.statusCode).toBe(status);
  });

  it('unknown evaluation id: 404; malformed id: 400', async () => {
    expect((await app.inject({ url: '/api/v1/jar-tests/evaluations/JT-20260101-0000000000' })).statusCode).toBe(404);
    expect((await app.inject({ url: '/api/v1/jar-tests/evaluations/not-an-id/plot.svg' })).statusCode).toBe(400);
  });
});

// ---------------------------------------------------------------------------------------------
describe('POST /api/v1/jar-tests/evaluations: the daily dose checks at the recommended dose', () => {
  // Invented jars whose residual is dose − demand (noise-free) and whose iron and manganese meet the
  // US secondary levels (0.3 / 0.05 mg/L, 40 CFR 143.3) from `meetsFrom` mg/L on.
  const ladder = (doses: number[], demand: number, meetsFrom: number) =>
    doses.map((d) => ({
      dose: mgL(d),
      results: [{ contactTimeMin: 20, residualOxidant: mgL(Math.max(0, Number((d - demand).toFixed(10)))), iron: mgL(d >= meetsFrom ? 0.05 : 0.5), manganese: mgL(d >= meetsFrom ? 0.02 : 0.2) }],
    }));
  const evaluate = async (body: Record<string, unknown>) => {
    const r = await post('/api/v1/jar-tests/evaluations', { jarVolume: { value: 2, unit: 'L' }, plantContactTimeMin: 20, ...body }, asAdmin);
    expect(r.statusCode, r.body).toBe(201);
    return r.json() as { recommendedDose: { value: number; expectedResidual: { value: number } | null } | null; problems: { code: string; severity: string; message: string }[] };
  };
  const problem = (ev: Awaited<ReturnType<typeof evaluate>>, code: string) => ev.problems.find((p) => p.code === code);

  it('chlorine dioxide: the chlorite the recommended dose forms is judged against the MCL, as the dose route does', async () => {
    // recommended 2.5 mg/L + 10 % = 2.75 mg/L ClO2; chlorite ≥ 70 % of it × 67.45/67.45 ≈ 1.9 mg/L > 1.0 mg/L (40 CFR 141.64)
    const ev = await evaluate({ oxidant: 'chlorine-dioxide', sample: { pH: 7.2, temperatureC: 15, iron: mgL(1), manganese: mgL(0.3) }, jars: ladder([1.5, 2, 2.5, 3, 3.5], 2.0, 2.5) });
    expect(ev.recommendedDose!.value).toBeCloseTo(2.75, 9);
    const p = problem(ev, 'CHLORITE_ABOVE_MCL')!;
    expect(p.severity).toBe('error');
    expect(p.message).toMatch(/^At the recommended 2\.75 mg\/L/);
    expect(p.message).toMatch(/141\.64/);
  });

  it('hypochlorite: an expected residual above the MRDL (4.0 mg/L as Cl2, 40 CFR 141.65) and TOC above 2 mg/L come back as problems', async () => {
    // demand 1.0, Fe/Mn met from 5.0 → recommended 5.5 mg/L, expected residual 4.5 mg/L
    const ev = await evaluate({ oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, iron: mgL(1), toc: mgL(4) }, jars: ladder([3, 4, 5, 6], 1.0, 5.0) });
    expect(ev.recommendedDose!.value).toBeCloseTo(5.5, 9);
    expect(ev.recommendedDose!.expectedResidual!.value).toBeCloseTo(4.5, 9);
    expect(problem(ev, 'RESIDUAL_ABOVE_MRDL')!.severity).toBe('error');
    expect(problem(ev, 'DBP_CAUTION')!.severity).toBe('warning');
  });

  it('a recommendation below the sample\'s stoichiometric demand is judged with what the jars consumed as the demand, and says so', async () => {
    // hypochlorite: Fe 2 and Mn 0.5 mg/L need 0.6348 × 2 + 1.2905 × 0.5 = 1.915 mg/L as Cl2 (balanced reactions);
    // the jars met the targets from 1.5 mg/L (invented: less demand than the readings imply) → 1.5 + 10 % = 1.65 mg/L
    const ev = await evaluate({ oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, iron: mgL(2), manganese: mgL(0.5), toc: mgL(4) }, jars: ladder([1, 1.5, 2, 2.5], 0.8, 1.5) });
    expect(ev.recommendedDose!.value).toBeCloseTo(1.65, 9);
    expect(problem(ev, 'DBP_CAUTION')!.message).toMatch(/^At the recommended 1\.65 mg\/L \(expected residual 0\.850 mg\/L\), with the 0\.800 mg\/L the jars consumed as its demand \(less than the 1\.91 mg\/L the readings imply/);
  });

  it('ozone with bromide: the bromate risk is named; permanganate at a pink-free dose raises none of these', async () => {
    const oz = await evaluate({ oxidant: 'ozone', sample: { pH: 7.2, temperatureC: 15, iron: mgL(1), bromide: mgL(0.2) }, jars: ladder([0.5, 1, 1.5, 2], 0.4, 1.0) });
    expect(problem(oz, 'BROMATE_RISK')!.message).toMatch(/bromate/);
    const pmn = await evaluate({ oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 15, iron: mgL(1) }, jars: ladder([0.5, 1, 1.5], 2, 1.0) });
    expect(pmn.problems.filter((p) => p.message.startsWith('At the recommended'))).toEqual([]);
  });
});

describe('POST /api/v1/jar-tests/evaluations: corrections say why', () => {
  const jarsFrom = (doses: number[]) =>
    doses.map((d) => ({ dose: mgL(d), results: [{ contactTimeMin: 20, residualOxidant: mgL(Math.max(0, d - 1)), iron: mgL(d >= 1.5 ? 0.05 : 0.5), manganese: mgL(d >= 1.5 ? 0.02 : 0.2) }] }));
  const body = { oxidant: 'potassium-permanganate', sample: SAMPLE, jarVolume: { value: 2, unit: 'L' }, jars: jarsFrom([0.5, 1, 1.5, 2, 2.5]), plantContactTimeMin: 20 };
  it('a correction with correctionReason prints it on the signed sheet; one without gets a warning; a reason without supersedes is a 400', async () => {
    const first = await post('/api/v1/jar-tests/evaluations', body, asAdmin);
    expect(first.statusCode, first.body).toBe(201);
    const reason = 'Jar 3 manganese re-read after filtering again (invented)';
    const fix = await post('/api/v1/jar-tests/evaluations', { ...body, supersedes: first.json().id, correctionReason: reason }, asAdmin);
    expect(fix.statusCode, fix.body).toBe(201);
    expect(fix.json().warnings).toEqual([]);
    const pdf = await app.inject({ url: fix.json().pdfUrl });
    const text = pdfText(pdfFile(pdf.rawPayload, 'jar-correction')).replace(/\s+/g, ' ');
    expect(text).toMatch(/reason for correction/i);
    expect(text).toContain('Jar 3 manganese re-read');
    const bare = await post('/api/v1/jar-tests/evaluations', { ...body, supersedes: fix.json().id }, asAdmin);
    expect(bare.statusCode, bare.body).toBe(201);
    expect(bare.json().warnings[0]).toMatch(/without a correctionReason/);
    const lone = await post('/api/v1/jar-tests/evaluations', { ...body, correctionReason: reason }, asAdmin);
    expect(lone.statusCode).toBe(400);
    expect(lone.json().errors[0].pointer).toBe('/correctionReason');
  });
});

// ---------------------------------------------------------------------------------------------
describe('POST /api/v1/jar-tests/evaluations: figures no jar test can give are refused, naming the field', () => {
  // Jars of hypochlorite at 1, 2, 3, 4 mg/L against a 0.8 mg/L demand (residual = dose − 0.8 at 30 min).
  const lin = (extra: (i: number) => Record<string, unknown> = () => ({})) =>
    [1, 2, 3, 4].map((d, i) => ({ dose: mgL(d), results: [{ contactTimeMin: 30, residualOxidant: mgL(Math.max(0, d - 0.8)), ...extra(i) }] }));
  const base = { oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 12, iron: mgL(1.0) }, jarVolume: { value: 2, unit: 'L' } };

  it.each([
    // 1000 mg/L: the bound src/dosing/bounds.ts puts on a dose request's targetResidual (common practice)
    ['a target residual of 2000 mg/L (above 1000)', { jars: lin(), targets: { residualOxidant: mgL(2000) } }, '/targets/residualOxidant/value', '1000 mg/L'],
    ['a largest residual of 2000 mg/L (above 1000)', { jars: lin(), targets: { residualOxidantMax: mgL(2000) } }, '/targets/residualOxidantMax/value', '1000 mg/L'],
    // 100 mg/L Fe and 50 mg/L Mn: the dose route's refusal bounds on raw-water readings (src/dosing/bounds.ts, common practice)
    ['an iron target of 150 mg/L', { jars: lin(), targets: { iron: mgL(150) } }, '/targets/iron/value', '100 mg/L'],
    ['a manganese target of 60 mg/L', { jars: lin(), targets: { manganese: mgL(60) } }, '/targets/manganese/value', '50 mg/L'],
    ['a jar reading 1e6 mg/L of iron', { jars: lin((i) => (i === 1 ? { iron: mgL(1e6) } : {})) }, '/jars/1/results/0/iron/value', '100 mg/L'],
    ['a jar reading 51 000 µg/L of manganese (51 mg/L)', { jars: lin((i) => (i === 2 ? { manganese: { value: 51000, unit: 'µg/L' } } : {})) }, '/jars/2/results/0/manganese/value', '50 mg/L'],
    // 10 000 NTU: above it the sample is a slurry (common practice)
    ['a jar reading 1e9 NTU', { jars: lin((i) => (i === 0 ? { turbidityNTU: 1e9 } : {})) }, '/jars/0/results/0/turbidityNTU', '10000 NTU'],
  ])('%s → 400 at %s', async (_n, over, pointer, bound) => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...base, ...over }, asAdmin);
    expect(r.statusCode, r.body).toBe(400);
    expect(r.headers['content-type']).toContain('application/problem+json');
    const p = r.json();
    const f = p.errors.find((x: { pointer: string }) => x.pointer === pointer);
    expect(f, JSON.stringify(p.errors)).toBeDefined();
    expect(f.message).toContain(bound);
    expect(f.message).not.toMatch(/MgPerL/);
  });

  it.each([
    ['iron 100 mg/L, at the bound', { jars: lin((i) => (i === 0 ? { iron: mgL(100) } : {})) }],
    ['turbidity 10 000 NTU, at the bound', { jars: lin((i) => (i === 0 ? { turbidityNTU: 10000 } : {})) }],
    ['a target residual of 1000 mg/L, at the bound', { jars: lin(), targets: { residualOxidant: mgL(1000) } }],
  ])('%s is taken (201)', async (_n, over) => {
    const r = await post('/api/v1/jar-tests/evaluations', { ...base, ...over }, asAdmin);
    expect(r.statusCode, r.body).toBe(201);
  });
});

describe('POST /api/v1/jar-tests/checks: pipette resolution', () => {
  // 0.001 mL (1 µL) is the finest step of a bench micropipette (common practice); below it the aliquots print as 2.53917092 mL
  const check = (pipetteResolutionMl: number) =>
    post('/api/v1/jar-tests/checks', { oxidant: 'potassium-permanganate', jarVolume: { value: 1, unit: 'L' }, stockStrength: { value: 1, unit: 'g/L' }, pipetteResolutionMl, jars: [{ aliquotMl: 1 }, { aliquotMl: 2 }, { aliquotMl: 3 }] });
  it('1e-9 mL is a 400 naming /pipetteResolutionMl; 0.001 mL is taken', async () => {
    const bad = await check(1e-9);
    expect(bad.statusCode).toBe(400);
    const e = bad.json().errors.find((x: { pointer: string }) => x.pointer === '/pipetteResolutionMl');
    expect(e.message).toContain('at least 0.001 mL');
    expect((await check(0.001)).statusCode).toBe(200);
  });
});
