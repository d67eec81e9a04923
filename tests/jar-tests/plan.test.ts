import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DomainError } from '../../src/core/errors.js';
import { planJarTest, type PlanJarTestInput } from '../../src/jar-tests/plan.js';
import type { JarProductFacts } from '../../src/jar-tests/product.js';
import { isMultipleOf } from '../../src/jar-tests/common.js';
import { caught as invalid } from '../core/fixtures/caught.js';

// Product facts as the HTTP layer passes them in from the oxidant table. The numbers here are
// test inputs, not reference values: the purity is an invented assay; 64 g/L is about the
// solubility of KMnO4 near 20 °C (value from memory of the CRC Handbook; the tests do not depend on it).
const KMNO4: JarProductFacts = {
  name: 'potassium permanganate',
  basis: 'KMnO4',
  activeSpecies: 'MnO4-',
  productFormula: 'KMnO4',
  stock: { kind: 'solid', purityFraction: 0.97, solubility: { gPerL: 64, temperatureC: 20, source: 'test' } },
};
// 12.5 % trade hypochlorite = 125 g/L available chlorine (trade percent = g/L ÷ 10).
const NAOCL: JarProductFacts = {
  name: 'sodium hypochlorite',
  basis: 'Cl2',
  activeSpecies: 'OCl-',
  stock: { kind: 'trade-solution', tradeStrengthGPerL: 125 },
  decays: { note: 'faster when warm, concentrated or in light', measureBy: 'iodometric titration (or DPD titration)' },
};
const OZONE: JarProductFacts = { name: 'ozone', basis: 'O3', stock: { kind: 'generated', measureBy: 'indigo colorimetric', solubility: { gPerL: 0.04 } } };

const base = (over: Partial<PlanJarTestInput> = {}): PlanJarTestInput => ({
  oxidant: 'potassium-permanganate',
  product: KMNO4,
  estimateMgPerL: 2.0,
  jarVolumeL: 2,
  ...over,
});

function codes(p: { warnings: readonly { code: string }[] }): string[] {
  return p.warnings.map((w) => w.code);
}


describe('planJarTest: bad input (edge cases first)', () => {
  it.each([
    ['negative estimate', { estimateMgPerL: -1 }, '/estimateMgPerL'],
    ['zero jar volume', { jarVolumeL: 0 }, '/jarVolumeL'],
    ['one jar', { jars: 1 }, '/jars'],
    ['one explicit dose', { doses: [1] }, '/doses'],
    ['a negative dose', { doses: [1, -2, 3] }, '/doses/1'],
    ['all doses zero', { doses: [0, 0] }, '/doses'],
    ['zero pipette resolution', { pipetteResolutionMl: 0 }, '/pipetteResolutionMl'],
    ['negative contact time', { contactTimesMin: [5, -15] }, '/contactTimesMin/1'],
    ['purity as a percent', { product: { ...KMNO4, stock: { kind: 'solid', purityFraction: 97 } } }, '/product/stock/purityFraction'],
    ['ladder that does not straddle 1', { ladderFromFraction: 1.1 }, '/ladderToFraction'],
    ['negative target residual', { targetResidualMgPerL: -0.5 }, '/targetResidualMgPerL'],
    ['a 1 mL jar (a unit slip for 1 L)', { jarVolumeL: 0.001 }, '/jarVolumeL'],
    ['a 200 mL jar, below the 0.25 L bench minimum', { jarVolumeL: 0.2 }, '/jarVolumeL'],
  ] as const)('%s → JAR_TEST_INVALID at %s', (_name, over, pointer) => {
    const e = invalid(() => planJarTest(base(over as Partial<PlanJarTestInput>)));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields.map((f) => f.pointer)).toContain(pointer);
  });

  it('a jar volume below 0.25 L names the bound, its basis and the unit to check; 0.25 L itself is a jar', () => {
    // Bench jars hold 0.5 to 2 L (common practice; ASTM D2035 uses 1 L beakers, from memory).
    const e = invalid(() => planJarTest(base({ jarVolumeL: 0.001 })));
    const f = e.fields.find((x) => x.pointer === '/jarVolumeL')!;
    expect(f.message).toContain('at least 0.25 L');
    expect(f.message).toContain('got 0.001 L = 1 mL');
    expect(f.message).toContain('ASTM D2035');
    expect(f.message).toContain('Check the unit');
    expect(planJarTest(base({ jarVolumeL: 0.25 })).jarVolumeL).toBe(0.25);
  });

  it('a plan whose every aliquot rounds to 0 mL is refused, naming the stock and the jar volume, with a stock to dilute to', () => {
    // 10 g/L (10 mg/mL) in 1 L: 0.02 mg/L needs 0.02 × 1 / 10 = 0.002 mL, 0.04 mg/L 0.004 mL: both round to 0 at 0.1 mL.
    // A stock that gives the 1.0 mL minimum for the lowest dose: 0.02 mg/L × 1 L / 1.0 mL = 0.02 g/L.
    const e = invalid(() => planJarTest(base({ stockStrengthGPerL: 10, jarVolumeL: 1, doses: [0, 0.02, 0.04] })));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/stockStrengthGPerL', '/jarVolumeL']);
    expect(e.detail).toContain('Every aliquot rounds to 0 mL');
    expect(e.detail).toContain('Dilute the stock (0.02 g/L or weaker');
    expect(e.params).toMatchObject({ suggestedStockGPerL: 0.02, stockStrengthGPerL: 10, jarVolumeL: 1 });
  });

  it('one aliquot that rounds to 0 is an error in the plan; too strong says dilute, too weak says stronger', () => {
    // 1 g/L in 1 L: 0.04 mg/L needs 0.04 mL → 0 mL; a stock for 1.0 mL: 0.04 × 1 / 1.0 = 0.04 g/L
    const p = planJarTest(base({ stockStrengthGPerL: 1, jarVolumeL: 1, doses: [0.04, 2, 3] }));
    const zero = p.warnings.find((w) => w.code === 'ALIQUOT_ROUNDS_TO_ZERO')!;
    expect(zero).toMatchObject({ severity: 'error', jar: 1 });
    expect(zero.message).toContain('too strong');
    expect(zero.message).toContain('dilute it (0.04 g/L or weaker');
    // the weakest listed stock still too strong for the lowest dose: 0.05 mg/L × 0.5 L / 0.1 g/L = 0.25 mL < 1 mL;
    // a stock for 1.0 mL: 0.05 mg/L × 0.5 L / 1.0 mL = 0.025 g/L
    const q = planJarTest(base({ estimateMgPerL: 0.1, jarVolumeL: 0.5 }));
    const low = q.warnings.find((w) => w.code === 'STOCK_TOO_STRONG_FOR_LOW_DOSES')!;
    expect(low.message).toContain('too strong');
    expect(low.message).toContain('Dilute it (0.025 g/L or weaker');
    // too weak: the dilution by large aliquots is avoided by a stronger stock
    const r = planJarTest(base({ doses: [0.5, 5, 10, 20] }));
    expect(r.warnings.find((w) => w.code === 'DILUTION_CORRECTED')!.message).toContain('A stronger stock avoids this');
    for (const w of [...p.warnings, ...q.warnings, ...r.warnings]) {
      if (/too strong/.test(w.message)) expect(w.message).not.toMatch(/stronger stock/);
      expect(w.message).not.toMatch(/use a weaker stock/);
    }
  });

  it('a zero expected demand without doses asks for the doses', () => {
    const e = invalid(() => planJarTest(base({ estimateMgPerL: 0 })));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/estimateMgPerL', '/doses']);
  });

  it('a stock above the solubility is refused, naming the ceiling', () => {
    const e = invalid(() => planJarTest(base({ stockStrengthGPerL: 80 })));
    expect(e.fields[0]!.pointer).toBe('/stockStrengthGPerL');
    expect(e.detail).toContain('64 g/L');
  });

  it('a stock weaker than the dose cannot reach it', () => {
    // 0.001 g/L = 1 mg/L: a·C/(V + a/1000) < 1 mg/L whatever a is
    const e = invalid(() => planJarTest(base({ stockStrengthGPerL: 0.001, doses: [0.5, 2] })));
    expect(e.fields[0]!.pointer).toBe('/stockStrengthGPerL');
  });

  it('a generated stock without its measured strength is refused, asking for it', () => {
    const e = invalid(() => planJarTest(base({ oxidant: 'ozone', product: OZONE, estimateMgPerL: 1 })));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields[0]!.pointer).toBe('/stockStrengthGPerL');
  });
});

describe('planJarTest: worked examples', () => {
  it('1.0 g/L stock in 2 L jars: 1 mg/L needs 2 mL', () => {
    // aliquot = dose × jar volume ÷ stock = D mg/L × 2 L ÷ 1.0 mg/mL = 2·D mL
    //   0.5 → 1 mL, 1.0 → 2 mL, 1.5 → 3 mL, 2.0 → 4 mL, 2.5 → 5 mL, 3.0 → 6 mL (all ≤ 20 mL = 1 % of 2 L)
    // actual dose with the aliquot's volume: 2 mg / 2.002 L = 0.999001 mg/L, 6 mg / 2.006 L = 2.991027 mg/L
    const p = planJarTest(base({ stockStrengthGPerL: 1, doses: [0.5, 1, 1.5, 2, 2.5, 3] }));
    expect(p.stock.strengthChoice).toBe('caller');
    expect(p.jars.map((j) => j.aliquotMl)).toEqual([1, 2, 3, 4, 5, 6]);
    expect(p.jars[1]!.actualDoseMgPerL).toBeCloseTo(2 / 2.002, 12);
    expect(p.jars[5]!.actualDoseMgPerL).toBeCloseTo(6 / 2.006, 12);
    expect(p.dilutionCorrected).toBe(false);
    // expected residual if the 2.0 mg/L estimate is all the demand: max(0, 2.991027 − 2.0)
    expect(p.jars[5]!.expectedResidualMgPerL).toBeCloseTo(6 / 2.006 - 2, 12);
    expect(p.jars[0]!.expectedResidualMgPerL).toBe(0);
    // mass: 1.0 g/L × 0.1 L ÷ 0.97 = 0.103093 g ≥ 0.1 g, and 100 mL holds 2 × 21 mL used
    expect(p.stock.flaskVolumeMl).toBe(100);
    expect(p.stock.productMassG).toBeCloseTo(0.1 / 0.97, 12);
  });

  it('default ladder, stock and flask for permanganate at 2.0 mg/L in 2 L jars', () => {
    // ladder: 6 doses from 50 % to 150 % of 2.0 mg/L: 1.0, 1.4, 1.8, 2.2, 2.6, 3.0 mg/L
    // stock: the weakest round strength whose aliquots lie in [1.0 mL, 20 mL]:
    //   0.1 g/L → 20 … 60 mL (too large); 0.25 g/L → 8 … 24 mL (too large); 0.5 g/L → 4 … 12 mL ✓
    // flask: stock used 4+5.6+7.2+8.8+10.4+12 = 48 mL, wanted 96 mL;
    //   100 mL needs 0.5 × 0.1 ÷ 0.97 = 0.0515 g (< 0.1 g); 250 mL needs 0.5 × 0.25 ÷ 0.97 = 0.128866 g ✓
    const p = planJarTest(base());
    expect(p.ladder.source).toBe('default');
    expect(p.jars.map((j) => j.targetDoseMgPerL)).toEqual([1, 1.4, 1.8, 2.2, 2.6, 3]);
    expect(p.stock.strengthGPerL).toBe(0.5);
    expect(p.jars.map((j) => j.aliquotMl)).toEqual([4, 5.6, 7.2, 8.8, 10.4, 12]);
    expect(p.stock.stockUsedMl).toBeCloseTo(48, 9);
    expect(p.stock.flaskVolumeMl).toBe(250);
    expect(p.stock.productMassG).toBeCloseTo(0.125 / 0.97, 12);
    expect(p.stock.preparation).toMatchObject({ kind: 'weigh', purityFraction: 0.97, purityAssumed: false });
    expect(p.ladder.brackets).toBe(true);
    expect(p.warnings).toEqual([]);
    expect(p.assumptions.join(' ')).toContain('0.1 mL');
  });

  it('background demand moves the ladder: estimate 1.2 + background 0.5 = 1.7 mg/L (hypochlorite, 1 L jars)', () => {
    // ladder 0.85 … 2.55 mg/L in steps of 0.34; largest aliquot allowed 10 mL (1 % of 1 L)
    //   0.1 g/L → 25.5 mL (too large); 0.25 g/L → 10.2 mL (too large); 0.5 g/L → 1.7 … 5.1 mL ✓
    // aliquots 1.7, 2.38→2.4, 3.06→3.1, 3.74→3.7, 4.42→4.4, 5.1 mL; jar 2 gets 2.4 × 0.5 / 1.0024 = 1.197127 mg/L
    // trade solution: 100 mL needs 0.5 × 100 ÷ 125 = 0.4 mL (< 1.0 mL); 250 mL needs 1.0 mL ✓
    const p = planJarTest(base({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: 1.2, backgroundMgPerL: 0.5, jarVolumeL: 1 }));
    expect(p.estimate.expectedDemandMgPerL).toBeCloseTo(1.7, 12);
    expect(p.stock.strengthGPerL).toBe(0.5);
    expect(p.jars.map((j) => j.aliquotMl)).toEqual([1.7, 2.4, 3.1, 3.7, 4.4, 5.1]);
    expect(p.jars[1]!.actualDoseMgPerL).toBeCloseTo(1.2 / 1.0024, 12);
    expect(p.stock.productMassG).toBeNull();
    expect(p.stock.flaskVolumeMl).toBe(250);
    expect(p.stock.preparation).toMatchObject({ kind: 'dilute', tradeVolumeMl: 1, tradeStrengthMustBeMeasured: true });
    const decay = p.warnings.find((w) => w.code === 'TRADE_STRENGTH_DECAYS')!;
    expect(decay.severity).toBe('warning');
    expect(decay.message).toContain('iodometric');
    expect(p.stock.instructions[0]).toContain('measure');
  });

  it('a trade strength measured on the day turns the decay warning into advice', () => {
    const p = planJarTest(base({ product: { ...NAOCL, stock: { kind: 'trade-solution', tradeStrengthGPerL: 118, strengthMeasured: true } }, estimateMgPerL: 1.7, jarVolumeL: 1 }));
    expect(p.warnings.find((w) => w.code === 'TRADE_STRENGTH_DECAYS')!.severity).toBe('info');
  });

  it('dilution correction: a 20 mg/L ozone stock in 1 L jars', () => {
    // nominal aliquot for 2 mg/L: 2 × 1 ÷ 0.02 = 100 mL = 10 % of the jar (> 1 %), so every aliquot is
    // a = D·V/(C − D/1000): 0.5 → 0.5/0.0195 = 25.641 → 25.6 mL; 2.0 → 2/0.018 = 111.111 → 111.1 mL
    // actual: 25.6 × 0.02 / 1.0256 = 0.499220 mg/L; 111.1 × 0.02 / 1.1111 = 1.999820 mg/L
    const p = planJarTest(base({ oxidant: 'ozone', product: OZONE, estimateMgPerL: 1, jarVolumeL: 1, stockStrengthGPerL: 0.02, doses: [0.5, 1, 1.5, 2] }));
    expect(p.dilutionCorrected).toBe(true);
    expect(p.jars[0]!.aliquotMl).toBe(25.6);
    expect(p.jars[3]!.aliquotMl).toBe(111.1);
    expect(p.jars[0]!.actualDoseMgPerL).toBeCloseTo(0.512 / 1.0256, 12);
    expect(p.jars[3]!.actualDoseMgPerL).toBeCloseTo(2.222 / 1.1111, 12);
    expect(codes(p)).toContain('DILUTION_CORRECTED');
    expect(codes(p)).toContain('GENERATED_STOCK_MEASURE');
    expect(p.stock.preparation).toMatchObject({ kind: 'generate', measureBy: 'indigo colorimetric', stock: 'ozone water' });
    expect(p.stock.instructions[0]).toContain('ozone water: bubble ozone from a generator through chilled reagent water');
  });

  it('a ladder too wide for any one stock keeps the smallest aliquot measurable and corrects the largest', () => {
    // doses 0.5 … 20 mg/L in 2 L: aliquots ≥ 1 mL need C ≤ 0.5·2/1 = 1 g/L; at 1 g/L the 20 mg/L jar takes
    // 20 × 2 / (1 − 0.02) = 40.816 → 40.8 mL (2 % of the jar)
    const p = planJarTest(base({ doses: [0.5, 5, 10, 20] }));
    expect(p.stock.strengthGPerL).toBe(1);
    expect(p.dilutionCorrected).toBe(true);
    expect(p.jars[3]!.aliquotMl).toBe(40.8);
    expect(p.jars[3]!.actualDoseMgPerL).toBeCloseTo(40.8 / 2.0408, 12);
  });

  it('explicit doses that miss the estimate are warned about, not changed', () => {
    const p = planJarTest(base({ doses: [0.5, 1, 1.5] }));
    expect(p.jars.map((j) => j.targetDoseMgPerL)).toEqual([0.5, 1, 1.5]);
    expect(p.ladder.brackets).toBe(false);
    expect(codes(p)).toContain('NOT_BRACKETING');
  });

  it('doses that round to the same aliquot, out of order, and too few jars are warned about', () => {
    // 1 g/L in 2 L: 1.00 and 1.02 mg/L need 2.00 and 2.04 mL → both 2.0 mL
    const p = planJarTest(base({ stockStrengthGPerL: 1, doses: [1.0, 1.02] }));
    expect(codes(p)).toEqual(expect.arrayContaining(['DUPLICATE_DOSE', 'TOO_FEW_JARS', 'NOT_BRACKETING']));
    const q = planJarTest(base({ stockStrengthGPerL: 1, doses: [3, 1, 2] }));
    expect(codes(q)).toContain('NON_MONOTONIC_LADDER');
  });

  it('no purity, a tiny weighing and no solubility are each said', () => {
    // 0.1 g/L in at most 250 mL: 0.025 g, below the 0.1 g minimum
    const p = planJarTest(base({ product: { name: 'potassium permanganate', basis: 'KMnO4', stock: { kind: 'solid' } }, estimateMgPerL: 0.2, jarVolumeL: 1, flaskVolumesMl: [100, 250] }));
    expect(p.stock.strengthGPerL).toBe(0.1);
    expect(codes(p)).toEqual(expect.arrayContaining(['PURITY_ASSUMED', 'MASS_BELOW_WEIGHING_MINIMUM', 'SOLUBILITY_NOT_CHECKED']));
    expect(p.stock.productMassG).toBeCloseTo(0.025, 12);
  });

  it('a control jar (dose 0) gets no aliquot and no warning', () => {
    const p = planJarTest(base({ stockStrengthGPerL: 1, doses: [0, 1, 2, 3] }));
    expect(p.jars[0]).toMatchObject({ aliquotMl: 0, actualDoseMgPerL: 0 });
    expect(codes(p)).not.toContain('ALIQUOT_ROUNDS_TO_ZERO');
  });

  it('the schedule: rapid mix per ASTM D2035 (common practice speeds), contact times, 0.45 µm filtration, what to measure', () => {
    const p = planJarTest(base());
    const rapid = p.schedule.steps.find((s) => s.source === 'astm-d2035')!;
    expect(rapid.durationMin).toBe(1);
    expect(rapid.speedRpm).toEqual({ min: 100, max: 300 });
    expect(rapid.basis).toContain('common practice');
    expect(p.schedule.contactTimesMin).toEqual([5, 15, 30]);
    expect(p.schedule.filtration.poreSizeUm).toBe(0.45);
    expect(p.schedule.filtration.note).toContain('permanganate');
    const what = p.schedule.measurements.map((m) => m.what).join('; ');
    for (const w of ['residual oxidant', 'iron', 'manganese', 'pH', 'temperature', 'turbidity', 'colour']) expect(what).toContain(w);
    expect(p.schedule.measurements[0]!.method).toContain('525 nm');
    const q = planJarTest(base({ contactTimesMin: [30, 10, 10] }));
    expect(q.schedule.contactTimesMin).toEqual([10, 30]);
  });
});

describe('planJarTest: the target residual (the dose the plant would feed)', () => {
  it('hypochlorite, estimate 1.2 + background 0.3 + target residual 1.0 = planned dose 2.5 mg/L in 1 L jars', () => {
    // ladder from 50 % of the demand 1.5 (0.75) to 150 % of the planned dose 2.5 (3.75), 6 jars, step 0.6:
    //   0.75, 1.35, 1.95, 2.55, 3.15, 3.75 mg/L
    // stock: aliquots within [1.0, 10] mL (1 % of 1 L): 0.1 g/L → 7.5 … 37.5 mL, 0.25 g/L → 3 … 15 mL (too large);
    //   0.5 g/L → 1.5 … 7.5 mL ✓: 1.5, 2.7, 3.9, 5.1, 6.3, 7.5 mL
    // jar 4: 5.1 × 0.5 / 1.0051 = 2.537061 mg/L, above 2.5; jar 3: 3.9 × 0.5 / 1.0039 = 1.942424, below it
    // expected residual of jar 4 if the demand 1.5 is met: 2.537061 − 1.5 = 1.037061 mg/L (≈ the 1.0 target)
    const p = planJarTest(base({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: 1.2, backgroundMgPerL: 0.3, targetResidualMgPerL: 1.0, jarVolumeL: 1 }));
    expect(p.estimate).toMatchObject({ targetResidualMgPerL: 1.0 });
    expect(p.estimate.expectedDemandMgPerL).toBeCloseTo(1.5, 12);
    expect(p.estimate.plannedDoseMgPerL).toBeCloseTo(2.5, 12);
    expect(p.jars.map((j) => j.targetDoseMgPerL)).toEqual([0.75, 1.35, 1.95, 2.55, 3.15, 3.75].map((d) => expect.closeTo(d, 12)));
    expect(p.stock.strengthGPerL).toBe(0.5);
    expect(p.jars.map((j) => j.aliquotMl)).toEqual([1.5, 2.7, 3.9, 5.1, 6.3, 7.5]);
    expect(p.jars[3]!.actualDoseMgPerL).toBeCloseTo(2.55 / 1.0051, 12);
    expect(p.jars[3]!.expectedResidualMgPerL).toBeCloseTo(2.55 / 1.0051 - 1.5, 12);
    expect(p.ladder).toMatchObject({ source: 'default', fromFraction: 0.5, toFraction: 1.5, brackets: true, bracketsPlannedDose: true });
    expect(p.assumptions.join(' ')).toContain('to 150 % of the planned dose 2.5 mg/L');
    expect(p.assumptions.join(' ')).toContain('target residual 1');
  });

  it('without a target residual the ladder is 50–150 % of the demand, as before, and the planned dose is the demand', () => {
    const p = planJarTest(base());
    expect(p.estimate.plannedDoseMgPerL).toBe(p.estimate.expectedDemandMgPerL);
    expect(p.jars.map((j) => j.targetDoseMgPerL)).toEqual([1, 1.4, 1.8, 2.2, 2.6, 3]);
    expect(p.assumptions.join(' ')).toContain('no target residual given');
  });

  it('a sample with no demand but a target residual: the ladder is 50–150 % of the residual', () => {
    // planned dose = 0 + 0 + 1.0; ladder 0.5 … 1.5 mg/L
    const p = planJarTest(base({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: 0, targetResidualMgPerL: 1.0, jarVolumeL: 1 }));
    expect(p.jars[0]!.targetDoseMgPerL).toBeCloseTo(0.5, 12);
    expect(p.jars[5]!.targetDoseMgPerL).toBeCloseTo(1.5, 12);
    expect(p.ladder.bracketsPlannedDose).toBe(true);
  });

  it('explicit doses that miss the planned dose are warned about; with no residual that warning is not repeated', () => {
    // demand 2.0, residual 1.0 → planned 3.0; doses 1 … 2.5 bracket the demand but not 3.0
    const p = planJarTest(base({ stockStrengthGPerL: 1, targetResidualMgPerL: 1.0, doses: [1, 1.5, 2.5] }));
    expect(p.ladder).toMatchObject({ brackets: true, bracketsPlannedDose: false });
    expect(codes(p)).toContain('NOT_BRACKETING_PLANNED_DOSE');
    const q = planJarTest(base({ stockStrengthGPerL: 1, doses: [0.5, 1, 1.5] }));
    expect(codes(q)).toContain('NOT_BRACKETING');
    expect(codes(q)).not.toContain('NOT_BRACKETING_PLANNED_DOSE');
  });

  it.each([
    [0.2, true],
    [0.05, false], // at the threshold, not above it
    [0, false],
  ])('permanganate target residual %s mg/L: warned of pink water = %s (0.05 mg/L as KMnO4, common practice, from memory)', (residual, warned) => {
    const p = planJarTest(base({ targetResidualMgPerL: residual }));
    const w = p.warnings.find((x) => x.code === 'TARGET_RESIDUAL_VISIBLE');
    expect(w !== undefined).toBe(warned);
    if (w) {
      expect(w.message).toContain('0.05 mg/L');
      expect(w.message).toContain('common practice');
      expect(w.message).toContain('from memory');
      expect(w.message).toContain('usepa-1999-adogm');
    }
  });
});

describe('planJarTest: properties', () => {
  it('a default ladder brackets the expected demand, rises, and every aliquot is measurable to the pipette', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 20, noNaN: true }),
        fc.double({ min: 0, max: 3, noNaN: true }),
        fc.constantFrom(0.5, 1, 2),
        fc.integer({ min: 3, max: 12 }),
        fc.constantFrom(0.05, 0.1, 0.5),
        (estimate, background, V, n, res) => {
          const p = planJarTest(base({ estimateMgPerL: estimate, backgroundMgPerL: background, jarVolumeL: V, jars: n, pipetteResolutionMl: res }));
          const E = estimate + background;
          const doses = p.jars.map((j) => j.actualDoseMgPerL);
          expect(p.jars).toHaveLength(n);
          expect(doses.some((d) => d < E) && doses.some((d) => d > E)).toBe(true);
          for (let i = 1; i < doses.length; i++) expect(doses[i]!).toBeGreaterThanOrEqual(doses[i - 1]!);
          const C = p.stock.strengthGPerL;
          for (const j of p.jars) {
            expect(isMultipleOf(j.aliquotMl, res)).toBe(true);
            // the rounded aliquot misses the target by at most half a step of dose, plus the dilution it causes
            const halfStep = (0.5 * res * C) / V;
            const dilution = (j.aliquotMl * C) / V - j.actualDoseMgPerL;
            expect(Math.abs(j.actualDoseMgPerL - j.targetDoseMgPerL)).toBeLessThanOrEqual(halfStep + (p.dilutionCorrected ? halfStep * 0.05 : dilution) + 1e-9);
            if (!p.dilutionCorrected) expect(j.aliquotMl).toBeLessThanOrEqual(p.maxAliquotMl + res / 2);
          }
          expect(p.stock.strengthGPerL).toBeLessThanOrEqual(64);
          expect(p.stock.productMassG! * 0.97).toBeCloseTo((C * p.stock.flaskVolumeMl) / 1000, 12);
        },
      ),
      { seed: 20240611, numRuns: 150 },
    );
  });

  it('with a target residual, a default ladder brackets both the expected demand and the planned dose', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 10, noNaN: true }),
        fc.double({ min: 0, max: 2, noNaN: true }),
        fc.double({ min: 0.01, max: 3, noNaN: true }),
        fc.constantFrom(0.5, 1, 2),
        fc.integer({ min: 3, max: 12 }),
        (estimate, background, residual, V, n) => {
          const p = planJarTest(base({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: estimate, backgroundMgPerL: background, targetResidualMgPerL: residual, jarVolumeL: V, jars: n }));
          const E = estimate + background;
          const P = E + residual;
          const doses = p.jars.map((j) => j.actualDoseMgPerL);
          expect(p.estimate.plannedDoseMgPerL).toBeCloseTo(P, 12);
          expect(doses.some((d) => d < E) && doses.some((d) => d > E)).toBe(true);
          expect(doses.some((d) => d < P) && doses.some((d) => d > P)).toBe(true);
          expect(p.ladder).toMatchObject({ brackets: true, bracketsPlannedDose: true });
          expect(p.jars[0]!.targetDoseMgPerL).toBeCloseTo(0.5 * E, 12);
          expect(p.jars[n - 1]!.targetDoseMgPerL).toBeCloseTo(1.5 * P, 12);
        },
      ),
      { seed: 20260107, numRuns: 150 },
    );
  });
});

describe('planJarTest: a trade solution is measured to the pipette step', () => {
  // Invented trade strengths of the size of the products: hydrogen peroxide about 35 % w/w (≈ 395.5 g/L as H2O2),
  // sodium permanganate 40 % (≈ 610.2 g/L as KMnO4). Volume = strength × flask ÷ trade strength:
  //   0.5 g/L × 1000 mL ÷ 395.5 g/L = 1.264 mL → 1.3 mL at 0.1 mL, which gives 1.3 × 395.5 ÷ 1000 = 0.51415 g/L;
  //   1.0 g/L × 1000 mL ÷ 610.2 g/L = 1.639 mL → 1.6 mL, which gives 1.6 × 610.2 ÷ 1000 = 0.97632 g/L.
  const H2O2: JarProductFacts = { name: 'hydrogen peroxide', basis: 'H2O2', stock: { kind: 'trade-solution', tradeStrengthGPerL: 395.5 } };
  const NAMNO4: JarProductFacts = { name: 'sodium permanganate', basis: 'KMnO4', activeSpecies: 'MnO4-', stock: { kind: 'trade-solution', tradeStrengthGPerL: 610.2 } };

  it.each([
    ['hydrogen peroxide 0.5 g/L', H2O2, 0.5, 395.5, 1.3],
    ['sodium permanganate 1.0 g/L', NAMNO4, 1.0, 610.2, 1.6],
  ])('%s: the trade volume is rounded to 0.1 mL and the stock strength is what that volume gives', (_n, product, C, T, volume) => {
    const plan = planJarTest(base({ product, stockStrengthGPerL: C, doses: [1, 2, 3, 4, 5, 6], jarVolumeL: 2, flaskVolumesMl: [1000] }));
    const prep = plan.stock.preparation;
    expect(prep.kind).toBe('dilute');
    if (prep.kind !== 'dilute') return;
    expect(prep.tradeVolumeMl).toBe(volume);
    expect(isMultipleOf(prep.tradeVolumeMl, 0.1)).toBe(true);
    expect(plan.stock.strengthGPerL).toBeCloseTo((volume * T) / 1000, 12);
    expect(plan.stock.instructions.join(' ')).toContain(`Pipette ${volume} mL of trade solution`);
    expect(plan.stock.instructions.join(' ')).not.toMatch(/\d\.\d{2,} mL of trade/);
    expect(codes(plan)).toContain('STOCK_STRENGTH_FROM_ROUNDED_VOLUME');
    // the aliquots and the doses they give use the strength really made
    const real = plan.stock.strengthGPerL;
    for (const j of plan.jars) expect(j.actualDoseMgPerL).toBeCloseTo((j.aliquotMl * real) / (2 + j.aliquotMl / 1000), 12);
  });

  it('a coarser pipette step (0.5 mL) rounds the trade volume to it', () => {
    const plan = planJarTest(base({ product: H2O2, stockStrengthGPerL: 1, doses: [2, 4, 6, 8], jarVolumeL: 2, flaskVolumesMl: [1000], pipetteResolutionMl: 0.5, minAliquotMl: 1 }));
    // 1 × 1000 ÷ 395.5 = 2.528 mL → 2.5 mL → 0.98875 g/L
    expect(plan.stock.preparation).toMatchObject({ kind: 'dilute', tradeVolumeMl: 2.5 });
    expect(plan.stock.strengthGPerL).toBeCloseTo((2.5 * 395.5) / 1000, 12);
  });

  it('hypochlorite: 1.0 g/L from 125 g/L in 250 mL is exactly 2.0 mL, so the strength is kept and nothing is said', () => {
    const plan = planJarTest(base({ oxidant: 'sodium-hypochlorite', product: NAOCL, stockStrengthGPerL: 1, estimateMgPerL: 1.2, jarVolumeL: 1, doses: [0.5, 1, 1.5, 2] }));
    expect(plan.stock.flaskVolumeMl).toBe(250);
    expect(plan.stock.preparation).toMatchObject({ kind: 'dilute', tradeVolumeMl: 2 });
    expect(plan.stock.strengthGPerL).toBe(1);
    expect(codes(plan)).not.toContain('STOCK_STRENGTH_FROM_ROUNDED_VOLUME');
  });

  it('a volume below the 1 mL minimum in every flask is still a pipette step, with the two-stage dilution spelled out', () => {
    const plan = planJarTest(base({ product: H2O2, stockStrengthGPerL: 0.1, doses: [0.1, 0.2, 0.3], jarVolumeL: 2 }));
    const w = plan.warnings.find((x) => x.code === 'TRADE_VOLUME_BELOW_MINIMUM')!;
    expect(w.message).toContain('1 + 9');
    // the two-step stock's own strength is named, with the re-plan that makes the aliquots match it
    const m = /which gives ([\d.]+) g\/L/.exec(w.message)!;
    expect(w.message).toContain(`plan again with stockStrength ${m[1]} g/L`);
    const prep = plan.stock.preparation;
    if (prep.kind !== 'dilute') throw new Error('expected a dilution');
    expect(isMultipleOf(prep.tradeVolumeMl, 0.1)).toBe(true);
    expect(prep.tradeVolumeMl).toBeGreaterThan(0);
  });
});

describe('planJarTest: a control jar (dose 0) is a blank, not a bracket', () => {
  // doses 0, 1, 2 mg/L against an expected demand of 0.572 mg/L: the only jar below it is the control.
  it('[0, 1, 2] against 0.572 mg/L does not bracket the demand, and the control is named', () => {
    const plan = planJarTest(base({ estimateMgPerL: 0.572, doses: [0, 1, 2], stockStrengthGPerL: 1 }));
    expect(plan.ladder.brackets).toBe(false);
    expect(codes(plan)).toContain('NOT_BRACKETING');
    expect(codes(plan)).toContain('CONTROL_JAR');
    expect(plan.warnings.find((w) => w.code === 'NOT_BRACKETING')!.message).toContain('jar 1 at 0 mg/L is a control');
  });

  it('[0, 0.3, 1, 2] brackets it on the dosed jars, and the control is still named', () => {
    const plan = planJarTest(base({ estimateMgPerL: 0.572, doses: [0, 0.3, 1, 2], stockStrengthGPerL: 0.25, jarVolumeL: 2 }));
    expect(plan.ladder.brackets).toBe(true);
    expect(codes(plan)).not.toContain('NOT_BRACKETING');
    expect(codes(plan)).toContain('CONTROL_JAR');
  });
});

describe('planJarTest: the default stock can be made up in one step', () => {
  it('12.5 % w/w hypochlorite at 1.2 kg/L (150 g/L), 1 L jars, estimate 0.64 mg/L: 0.25 g/L, not 0.1 g/L that needs 0.67 mL of trade solution', () => {
    // by hand: ladder 0.32 … 0.96 mg/L (50 % to 150 % of 0.64, common practice); at 0.1 g/L the aliquots are 3.2 … 9.6 mL,
    // but 0.1 g/L × 1000 mL ÷ 150 g/L = 0.667 mL of trade solution, below the 1 mL a pipette measures well (common practice).
    // At 0.25 g/L the aliquots are 1.28 … 3.84 mL and 0.25 × 1000 ÷ 150 = 1.667 mL, measured as 1.7 mL:
    // 1.7 mL × 150 g/L ÷ 1000 mL = 0.255 g/L, the strength the aliquots use.
    const hypo: JarProductFacts = { ...NAOCL, stock: { kind: 'trade-solution', tradeStrengthGPerL: 150 } };
    const p = planJarTest({ oxidant: 'sodium-hypochlorite', product: hypo, estimateMgPerL: 0.64, jarVolumeL: 1 });
    expect(codes(p)).not.toContain('TRADE_VOLUME_BELOW_MINIMUM');
    expect(p.stock.flaskVolumeMl).toBe(1000);
    expect(p.stock.preparation).toMatchObject({ kind: 'dilute', tradeVolumeMl: 1.7 });
    expect(p.stock.strengthGPerL).toBeCloseTo(0.255, 12);
    expect(p.jars.every((j) => j.aliquotMl >= 1 && j.aliquotMl <= 10)).toBe(true);
    // 125 g/L trade solution (12.5 trade %): 0.25 × 1000 ÷ 125 = 2.0 mL, a pipette step, so 0.25 g/L is kept exactly
    const p125 = planJarTest({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: 0.64, jarVolumeL: 1 });
    expect(p125.stock.strengthGPerL).toBe(0.25);
    expect(codes(p125)).not.toContain('TRADE_VOLUME_BELOW_MINIMUM');
  });
});

describe('planJarTest: a trade strength measured on the day', () => {
  it('strengthMeasured: the instructions do not ask to measure it first; without it they do', () => {
    const measured = planJarTest({ oxidant: 'sodium-hypochlorite', product: { ...NAOCL, stock: { kind: 'trade-solution', tradeStrengthGPerL: 125, strengthMeasured: true } }, estimateMgPerL: 0.64, jarVolumeL: 1 });
    expect(measured.stock.instructions.join(' ')).not.toContain('First measure');
    expect(measured.stock.instructions.join(' ')).toContain('was measured on the day');
    const nominal = planJarTest({ oxidant: 'sodium-hypochlorite', product: NAOCL, estimateMgPerL: 0.64, jarVolumeL: 1 });
    expect(nominal.stock.instructions.join(' ')).toContain("First measure the trade solution's strength");
  });
});

describe('planJarTest: a jar count beside explicit doses', () => {
  it('jars: 4 with three doses → 3 jars and a JARS_IGNORED warning; jars: 3 with three doses → no warning', () => {
    const p = planJarTest(base({ jars: 4, doses: [1, 2, 3] }));
    expect(p.jars).toHaveLength(3);
    const w = p.warnings.find((x) => x.code === 'JARS_IGNORED')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('jars says 4 but 3 doses were given');
    expect(codes(planJarTest(base({ jars: 3, doses: [1, 2, 3] })))).not.toContain('JARS_IGNORED');
  });
});
