import { describe, expect, it } from 'vitest';
import { loadTables } from '../../src/reference/load.js';
import { atomicWeightMap } from '../../src/reference/schemas.js';
import { productPerBasis } from '../../src/dosing/ratio.js';
import { DomainError } from '../../src/core/errors.js';
import { jarProductFacts, secondaryLimitTargets } from '../../src/jar-tests/adapt.js';
import { planJarTest } from '../../src/jar-tests/plan.js';
import { checkJarPlan } from '../../src/jar-tests/check.js';
import { evaluateJarTest } from '../../src/jar-tests/evaluate.js';

// The real reference tables (tables/oxidants.json, limits.json, atomic-weights.json), validated by the loader.
const tables = loadTables(['oxidants', 'limits', 'atomicWeights']);
const row = (id: string) => tables.oxidants.find((r) => r.id === id)!;
const weights = atomicWeightMap(tables);

describe('jarProductFacts from tables/oxidants.json', () => {
  it('maps every product id of the dose contract', () => {
    const ids = ['potassium-permanganate', 'sodium-permanganate', 'sodium-hypochlorite', 'calcium-hypochlorite', 'chlorine-gas', 'chlorine-dioxide', 'ozone', 'hydrogen-peroxide', 'oxygen'];
    for (const id of ids) {
      const r = row(id);
      const f = jarProductFacts(r, { productPerBasis: productPerBasis(r, weights).factor.toNumber() });
      expect(f.basis).toBe(r.doseBasis);
      expect(['solid', 'trade-solution', 'generated', 'aeration']).toContain(f.stock.kind);
    }
  });

  it('potassium permanganate: purity from the table, solubility at 20 °C as g/L of solution', () => {
    // 6.4 g KMnO4 per 100 g water at 20 °C (table row; the value US EPA 1999 §5.2 also prints)
    // → 1000 × 6.4 / 106.4 = 60.15 g per kg of solution, taken as g/L
    const f = jarProductFacts(row('potassium-permanganate'));
    expect(f.stock).toMatchObject({ kind: 'solid', purityFraction: 0.97 });
    if (f.stock.kind !== 'solid') throw new Error('solid expected');
    expect(f.stock.solubility!.gPerL).toBeCloseTo(6400 / 106.4, 9);
    expect(f.notes!.join(' ')).toContain('certificate of analysis');
    // at 5 °C: interpolated 2.83 + (4.4 − 2.83)/2 = 3.615 g/100 g → 1000 × 3.615 / 103.615 = 34.89 g/L
    const cold = jarProductFacts(row('potassium-permanganate'), { temperatureC: 5 });
    if (cold.stock.kind !== 'solid') throw new Error('solid expected');
    expect(cold.stock.solubility!.gPerL).toBeCloseTo(3615 / 103.615, 9);
  });

  it('sodium hypochlorite: 12.5 trade % = 125 g/L available chlorine, with the storage decay note', () => {
    const f = jarProductFacts(row('sodium-hypochlorite'));
    expect(f.stock).toMatchObject({ kind: 'trade-solution', tradeStrengthGPerL: 125 });
    expect(f.decays!.note).toContain('loses strength');
    expect(f.decays!.measureBy).toContain('iodometric');
    const measured = jarProductFacts(row('sodium-hypochlorite'), { tradeStrength: { value: 10.8, unit: '% w/v', measured: true } });
    expect(measured.stock).toMatchObject({ tradeStrengthGPerL: 108, strengthMeasured: true });
  });

  it('sodium permanganate 40 % w/w at 1.37 kg/L as KMnO4, through the molar masses', () => {
    // 40 % × 1.37 kg/L = 548 g/L NaMnO4; × M(KMnO4)/M(NaMnO4) = 548 × 158.03/141.93 ≈ 610.2 g/L as KMnO4
    // (molar masses KMnO4 158.03 g/mol and NaMnO4 141.93 g/mol, CRC Handbook formula weights)
    const r = row('sodium-permanganate');
    const f = jarProductFacts(r, { productPerBasis: productPerBasis(r, weights).factor.toNumber() });
    if (f.stock.kind !== 'trade-solution') throw new Error('solution expected');
    expect(f.stock.tradeStrengthGPerL / ((548 * 158.03) / 141.93)).toBeCloseTo(1, 3);
    expect(() => jarProductFacts(r)).toThrow(DomainError);
  });

  it('calcium hypochlorite: 65 % available chlorine on the basis, and it decays', () => {
    const f = jarProductFacts(row('calcium-hypochlorite'));
    expect(f.stock).toMatchObject({ kind: 'solid', purityFraction: 0.65 });
    expect(f.decays).toBeDefined();
  });

  it('hydrogen peroxide 35 % w/w at 1.13 kg/L = 395.5 g/L', () => {
    const f = jarProductFacts(row('hydrogen-peroxide'));
    if (f.stock.kind !== 'trade-solution') throw new Error('solution expected');
    expect(f.stock.tradeStrengthGPerL).toBeCloseTo(395.5, 9);
  });

  it('generated and gas products need a measured stock strength to plan', () => {
    for (const id of ['chlorine-dioxide', 'ozone', 'chlorine-gas']) {
      const f = jarProductFacts(row(id));
      expect(f.stock.kind).toBe('generated');
      expect(() => planJarTest({ oxidant: id, product: f, estimateMgPerL: 1, jarVolumeL: 2 })).toThrow(/measured strength/);
    }
    const o3 = planJarTest({ oxidant: 'ozone', product: jarProductFacts(row('ozone')), estimateMgPerL: 1, jarVolumeL: 1, stockStrengthGPerL: 0.02 });
    expect(o3.dilutionCorrected).toBe(true);
  });

  // How each generated stock is made, per oxidant (common practice of bench work): the words must name the
  // right stock, and no sentence may carry a wrong article ("A Ozone …") or a capitalised name mid-sentence.
  it.each([
    ['ozone', 'ozone water', /generator/, /indigo/],
    ['chlorine-gas', 'chlorine water', /bubble chlorine gas into chilled reagent water/, /hypochlorite/],
    ['chlorine-dioxide', 'chlorine dioxide solution', /generator/, /glycine|amperometric/],
  ] as const)('%s: the stock is %s, in words that fit the oxidant', (id, stock, make, measure) => {
    const f = jarProductFacts(row(id));
    const refused = (() => {
      try {
        planJarTest({ oxidant: id, product: f, estimateMgPerL: 1, jarVolumeL: 2 });
      } catch (e) {
        if (e instanceof DomainError) return e;
      }
      throw new Error('expected a refusal asking for the measured strength');
    })();
    expect(refused.detail).toContain(stock);
    expect(refused.detail).toMatch(make);
    expect(refused.detail).toMatch(measure);
    expect(refused.fields[0]!.pointer).toBe('/stockStrengthGPerL');
    const plan = planJarTest({ oxidant: id, product: f, estimateMgPerL: 1, jarVolumeL: 2, stockStrengthGPerL: 0.05 });
    expect(plan.stock.preparation).toMatchObject({ kind: 'generate', stock });
    const texts = [refused.detail, ...plan.stock.instructions, ...plan.warnings.map((w) => w.message)];
    expect(texts.join(' ')).toContain(stock);
    for (const t of texts) {
      expect(t).not.toMatch(/\bA [AEIOUaeiou]/); // "A Ozone", "A oxygen"
      expect(t).not.toMatch(/(?<!^|[.:] )\b(Ozone|Chlorine|Oxygen)\b/); // a capitalised product name inside a sentence
    }
    if (id === 'chlorine-gas') expect(texts.join(' ')).not.toMatch(/from the generator|comes from a generator/);
  });

  it('oxygen is dosed by aeration: no stock, so a jar-test plan is refused at /oxidant with what to do instead', () => {
    const f = jarProductFacts(row('oxygen'));
    expect(f.stock.kind).toBe('aeration');
    for (const stock of [undefined, 0.009]) {
      let e: DomainError | null = null;
      try {
        planJarTest({ oxidant: 'oxygen', product: f, estimateMgPerL: 0.2, jarVolumeL: 2, ...(stock !== undefined ? { stockStrengthGPerL: stock } : {}) });
      } catch (x) {
        if (x instanceof DomainError) e = x;
      }
      expect(e).not.toBeNull();
      expect(e!.code).toBe('JAR_TEST_INVALID');
      expect(e!.fields.map((x) => x.pointer)).toEqual(['/oxidant']);
      expect(e!.detail).toMatch(/^Oxygen is dosed by aeration, not from a stock solution/);
      expect(e!.detail).toContain('dissolved oxygen');
      expect(e!.detail).not.toMatch(/generator|g\/L as O2/);
    }
  });
});

describe('secondaryLimitTargets from tables/limits.json', () => {
  it('gives the 40 CFR 143.3 secondary levels: iron 0.3 mg/L, manganese 0.05 mg/L', () => {
    const t = secondaryLimitTargets(tables.limits);
    expect(t.iron!.valueMgPerL).toBe(0.3);
    expect(t.manganese!.valueMgPerL).toBe(0.05);
    expect(t.iron!.name).toContain('40 CFR 143.3');
    expect(tables.sources.some((s) => s.id === t.iron!.source)).toBe(true);
  });
});

describe('plan → check → evaluate with the real product rows', () => {
  it.each(['potassium-permanganate', 'sodium-permanganate', 'sodium-hypochlorite', 'calcium-hypochlorite', 'hydrogen-peroxide'])('%s: the plan passes its own check', (id) => {
    const r = row(id);
    const product = jarProductFacts(r, { productPerBasis: productPerBasis(r, weights).factor.toNumber() });
    const plan = planJarTest({ oxidant: id, product, estimateMgPerL: 2.4, jarVolumeL: 2 });
    const solubility = product.stock.kind === 'solid' ? product.stock.solubility : undefined;
    const check = checkJarPlan({
      oxidant: id,
      estimateMgPerL: 2.4,
      jarVolumeL: 2,
      stockStrengthGPerL: plan.stock.strengthGPerL,
      jars: plan.jars.map((j) => ({ doseMgPerL: j.targetDoseMgPerL, aliquotMl: j.aliquotMl })),
      contactTimesMin: plan.schedule.contactTimesMin,
      ...(solubility !== undefined ? { solubility } : {}),
    });
    expect(check.ok).toBe(true);
    expect(plan.stock.flaskVolumeMl).toBeGreaterThanOrEqual(plan.stock.stockWantedMl);
  });

  it('an evaluation with the table limits as default targets names 40 CFR 143.3', () => {
    const jars = [1, 1.5, 2, 2.5, 3].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, Number((d - 1.6).toFixed(10))), ironMgPerL: d >= 2 ? 0.05 : 0.5, manganeseMgPerL: d >= 2.5 ? 0.02 : 0.2 }] }));
    const e = evaluateJarTest({ oxidant: 'potassium-permanganate', basis: 'KMnO4', estimateMgPerL: 1.5, jarVolumeL: 2, jars, limits: secondaryLimitTargets(tables.limits), plantContactTimeMin: 30 });
    expect(e.lowestDoseMeetingTargets[0]!.doseMgPerL).toBe(2.5);
    expect(e.notes.join(' ')).toContain('40 CFR 143.3');
  });
});
