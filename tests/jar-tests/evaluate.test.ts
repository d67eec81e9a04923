import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DomainError } from '../../src/core/errors.js';
import { evaluateJarTest, type EvaluateJarTestInput, type JarInput } from '../../src/jar-tests/evaluate.js';
import { studentTQuantile } from '../../src/jar-tests/stats.js';
import { syntheticResiduals } from './prng.js';
import { caught as fails } from '../core/fixtures/caught.js';


// US secondary drinking-water levels, 40 CFR 143.3: iron 0.3 mg/L, manganese 0.05 mg/L.
// Passed in the way the HTTP layer passes the rows of tables/limits.json.
const SECONDARY = {
  iron: { valueMgPerL: 0.3, source: '40-cfr-143.3', name: 'US EPA secondary level, iron' },
  manganese: { valueMgPerL: 0.05, source: '40-cfr-143.3', name: 'US EPA secondary level, manganese' },
};

/**
 * A noise-free invented jar test (hypochlorite as Cl2, 2 L jars), built from a stated model:
 *   demand D(t) = 1.4, 1.7, 1.8 mg/L at 5, 15, 30 min;  residual = max(0, dose − D(t));
 *   dissolved Fe ≤ 0.3 once dose ≥ 2.5 (5 min), 2.0 (15 min), 1.5 (30 min), else 0.4–0.6;
 *   dissolved Mn ≤ 0.05 once dose ≥ 3.0 (5 min), 2.5 (15 min), 2.0 (30 min), else 0.08–0.12.
 * So the lowest dose meeting both is 3.0 at 5 min, 2.5 at 15 min, 2.0 at 30 min.
 */
const DOSES = [1.0, 1.5, 2.0, 2.5, 3.0, 3.5];
const D_AT: Record<number, number> = { 5: 1.4, 15: 1.7, 30: 1.8 };
const FE: Record<number, [number, number, number]> = { 5: [2.5, 0.1, 0.6], 15: [2.0, 0.1, 0.5], 30: [1.5, 0.05, 0.4] };
const MN: Record<number, [number, number, number]> = { 5: [3.0, 0.03, 0.12], 15: [2.5, 0.03, 0.1], 30: [2.0, 0.02, 0.08] };
function modelJars(): JarInput[] {
  return DOSES.map((dose) => ({
    doseMgPerL: dose,
    results: [5, 15, 30].map((t) => ({
      contactTimeMin: t,
      residualOxidantMgPerL: Math.max(0, Number((dose - D_AT[t]!).toFixed(10))),
      ironMgPerL: dose >= FE[t]![0] ? FE[t]![1] : FE[t]![2],
      manganeseMgPerL: dose >= MN[t]![0] ? MN[t]![1] : MN[t]![2],
    })),
  }));
}
const MODEL: EvaluateJarTestInput = {
  oxidant: 'sodium-hypochlorite',
  basis: 'Cl2',
  estimateMgPerL: 1.6,
  jarVolumeL: 2,
  jars: modelJars(),
  targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05 },
  plantContactTimeMin: 20,
};
/** The same jars read as permanganate (as KMnO4): no margin by default, and the pink-water check. */
const PMN: EvaluateJarTestInput = { ...MODEL, oxidant: 'potassium-permanganate', basis: 'KMnO4' };

describe('evaluateJarTest: bad input and too few points (edge cases first)', () => {
  it.each([
    ['negative dose', { jars: [{ doseMgPerL: -1, results: [] }] }, '/jars/0/doseMgPerL'],
    ['no jars', { jars: [] }, '/jars'],
    ['two results at one time', { jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 5 }, { contactTimeMin: 5 }] }] }, '/jars/0/results/1/contactTimeMin'],
    ['negative manganese', { jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 5, manganeseMgPerL: -0.1 }] }] }, '/jars/0/results/0/manganeseMgPerL'],
    ['margin of 10 (not a fraction)', { margin: { kind: 'relative', fraction: 10 } }, '/margin/fraction'],
    ['negative target', { targets: { ironMgPerL: -0.3 } }, '/targets/ironMgPerL'],
    // 1000 mg/L: the dose route's bound on a target residual; 100 mg/L Fe, 50 mg/L Mn: its refusal bounds on
    // raw-water readings (src/dosing/bounds.ts, common practice); 10 000 NTU: a slurry, not a sample (common practice)
    ['target residual 2000 mg/L', { targets: { residualOxidantMgPerL: 2000 } }, '/targets/residualOxidantMgPerL'],
    ['iron target 101 mg/L', { targets: { ironMgPerL: 101 } }, '/targets/ironMgPerL'],
    ['iron reading 1e6 mg/L', { jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 5, ironMgPerL: 1e6 }] }] }, '/jars/0/results/0/ironMgPerL'],
    ['manganese reading 50.1 mg/L', { jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 5, manganeseMgPerL: 50.1 }] }] }, '/jars/0/results/0/manganeseMgPerL'],
    ['turbidity 1e9 NTU', { jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 5, turbidityNTU: 1e9 }] }] }, '/jars/0/results/0/turbidityNTU'],
    ['zero jar volume', { jarVolumeL: 0 }, '/jarVolumeL'],
    ['a 1 mL jar (1 L written in mL), below the 0.25 L bench minimum', { jarVolumeL: 0.001 }, '/jarVolumeL'],
  ] as const)('%s → JAR_TEST_INVALID at %s', (_n, over, pointer) => {
    const e = fails(() => evaluateJarTest({ ...MODEL, ...(over as Partial<EvaluateJarTestInput>) }));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields.map((f) => f.pointer)).toContain(pointer);
  });

  it('a fit contact time with no residuals is refused, naming the times that have them', () => {
    const e = fails(() => evaluateJarTest({ ...MODEL, fitContactTimeMin: 10 }));
    expect(e.fields[0]!.pointer).toBe('/fitContactTimeMin');
    expect(e.detail).toContain('5, 15, 30');
  });

  it('only 2 jars above the detection limit → JAR_TEST_TOO_FEW_POINTS with the jars named', () => {
    // doses 1, 2, 3, 4 with residual = max(0, dose − 2.5): 0, 0, 0.5, 1.5 → only jars 3 and 4 keep a residual
    const jars = [1, 2, 3, 4].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, d - 2.5) }] }));
    const e = fails(() => evaluateJarTest({ ...MODEL, jars, targets: {} }));
    expect(e.code).toBe('JAR_TEST_TOO_FEW_POINTS');
    expect(e.params).toMatchObject({ n: 2, jarsUsed: [3, 4], detectionLimitMgPerL: 0.05, contactTimeMin: 30 });
    expect(e.detail).toContain('at least 3');
  });

  it('no residual read at all and nothing else to judge by → JAR_TEST_TOO_FEW_POINTS (n = 0)', () => {
    const jars = [1, 2, 3].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, turbidityNTU: 0.4 }] }));
    expect(fails(() => evaluateJarTest({ ...MODEL, jars, targets: {} })).params).toMatchObject({ n: 0 });
  });

  it('three replicates at one dose cannot make a line', () => {
    const jars = [2, 2, 2].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 0.3 }] }));
    const e = fails(() => evaluateJarTest({ ...MODEL, jars, targets: {} }));
    expect(e.params).toMatchObject({ n: 3, distinctDoses: 1 });
    // the field message says the real reason: one dose, not too few jars
    expect(e.fields[0]!.message).toBe('3 jars with a measurable residual at 30 min, but all at one dose (2 mg/L); a line needs jars at 2 or more doses');
  });

  it('no line but iron and manganese targets: the lowest jar meeting them is recommended, with no demand figures (permanganate: info; hypochlorite: warning)', () => {
    // invented jars: iron and manganese (filtered) meet 0.3 / 0.05 mg/L from 2.0 mg/L; every residual 0
    const jars = [1, 1.5, 2, 2.5].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 20, residualOxidantMgPerL: 0, ironMgPerL: d >= 2 ? 0.05 : 0.4, manganeseMgPerL: d >= 2 ? 0.02 : 0.12 }] }));
    const pmn = evaluateJarTest({ ...PMN, jars });
    expect(pmn.fit).toBeNull();
    expect(pmn.apparentDemand).toBeNull();
    expect(pmn.backgroundDemand).toBeNull();
    expect(pmn.recommendedDose).toMatchObject({ basis: 'lowest-dose-meeting-targets', baseDoseMgPerL: 2, doseMgPerL: 2, expectedResidualMgPerL: null });
    expect(pmn.problems.find((p) => p.code === 'RESIDUAL_LINE_NOT_FITTED')?.severity).toBe('info');
    const hypo = evaluateJarTest({ ...MODEL, jars });
    expect(hypo.recommendedDose?.doseMgPerL).toBeCloseTo(2.2, 12); // 2.0 + 10 % (common practice margin)
    expect(hypo.problems.find((p) => p.code === 'RESIDUAL_LINE_NOT_FITTED')?.severity).toBe('warning');
    // and with no jar meeting them, no dose (the error says why), still no line
    const failing = jars.map((j) => ({ ...j, results: j.results.map((r) => ({ ...r, manganeseMgPerL: 0.2 })) }));
    const none = evaluateJarTest({ ...PMN, jars: failing });
    expect(none.recommendedDose).toBeNull();
    expect(none.problems.map((p) => p.code)).toEqual(expect.arrayContaining(['RESIDUAL_LINE_NOT_FITTED', 'NO_JAR_MET_TARGETS']));
  });

  it('a residual that falls with dose is a problem (no demand), not a crash, and no dose is recommended from it', () => {
    const jars = [2, 2.5, 3].map((d, i) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 0.9 - 0.2 * i, ironMgPerL: 0.1, manganeseMgPerL: 0.02 }] }));
    const r = evaluateJarTest({ ...MODEL, jars });
    expect(r.fit!.slope).toBeLessThan(0);
    expect(r.apparentDemand).toBeNull();
    expect(r.backgroundDemand).toBeNull();
    expect(r.problems.map((p) => p.code)).toContain('FIT_SLOPE_NOT_POSITIVE');
    // more oxidant leaving less residual means the doses or the readings are wrong: the jars that met the
    // targets are reported, but no plant dose is recommended from them
    expect(r.lowestDoseMeetingTargets.find((l) => l.contactTimeMin === 30)!.doseMgPerL).toBe(2);
    expect(r.recommendedDose).toBeNull();
    const no = r.problems.find((p) => p.code === 'NO_RECOMMENDATION')!;
    expect(no.severity).toBe('error');
    expect(no.message).toContain('FIT_SLOPE_NOT_POSITIVE');
  });

  it('a poor fit with no apparent demand does not say to treat the apparent demand as rough', () => {
    // invented readings falling with dose, scattered: 1 → 2.0, 2 → 0.5, 3 → 1.5, 4 → 0.2 mg/L; by hand x̄ = 2.5, ȳ = 1.05,
    // Sxy = −1.425 + 0.275 + 0.225 − 1.275 = −2.2, Sxx = 5, Syy = 2.13: slope −0.44, r² = 4.84/(5 × 2.13) = 0.4545
    const jars = [[1, 2.0], [2, 0.5], [3, 1.5], [4, 0.2]].map(([d, r]) => ({ doseMgPerL: d!, results: [{ contactTimeMin: 30, residualOxidantMgPerL: r!, ironMgPerL: 0.1 }] }));
    const e = evaluateJarTest({ ...MODEL, jars, targets: { ironMgPerL: 0.3 } });
    expect(e.fit!.slope).toBeCloseTo(-0.44, 12);
    expect(e.fit!.r2).toBeCloseTo(4.84 / 10.65, 12);
    const poor = e.problems.find((p) => p.code === 'FIT_POOR')!;
    expect(poor.message).toContain('no apparent demand was computed');
    expect(poor.message).not.toContain('treat the apparent demand as rough');
  });
});

describe('evaluateJarTest: worked example from the stated model', () => {
  const r = evaluateJarTest(MODEL);

  it("fits the longest bench time within the plant's 20 min of contact (15 min) over the jars that kept a residual", () => {
    // at 15 min residuals 0, 0, 0.3, 0.8, 1.3, 1.8: jars 3–6 are above 0.05 mg/L
    expect(r.fit!.contactTimeMin).toBe(15);
    expect(r.fit!.contactTimeChoice).toBe('plant-contact');
    expect(r.fit!.jarsUsed).toEqual([3, 4, 5, 6]);
    expect(r.fit!.jarsExcluded.map((x) => x.jar)).toEqual([1, 2]);
    expect(r.fit!.n).toBe(4);
    // exact line residual = dose − 1.7
    expect(r.fit!.slope).toBeCloseTo(1, 10);
    expect(r.fit!.intercept).toBeCloseTo(-1.7, 10);
    expect(r.fit!.r2).toBeCloseTo(1, 10);
    expect(r.notes.join(' ')).toContain("not beyond the plant's 20 min of contact");
  });

  it('without a plant contact time the fit is at the longest contact time, 30 min: residual = dose − 1.8', () => {
    const { plantContactTimeMin: _p, ...noPlant } = MODEL;
    const e = evaluateJarTest(noPlant);
    expect(e.fit!.contactTimeMin).toBe(30);
    expect(e.fit!.contactTimeChoice).toBe('longest');
    expect(e.fit!.intercept).toBeCloseTo(-1.8, 10);
    expect(e.notes.join(' ')).toContain('longest');
  });

  it('apparent demand = −intercept/slope = 1.7 mg/L at 15 min; background = 1.7 − 1.6 = 0.1 mg/L (1.8 and 0.2 at 30 min)', () => {
    expect(r.apparentDemand!.doseMgPerL).toBeCloseTo(1.7, 10);
    expect(r.backgroundDemand!.doseMgPerL).toBeCloseTo(0.1, 10);
    const at30 = evaluateJarTest({ ...MODEL, fitContactTimeMin: 30 });
    expect(at30.apparentDemand!.doseMgPerL).toBeCloseTo(1.8, 10);
    expect(at30.backgroundDemand!.doseMgPerL).toBeCloseTo(0.2, 10);
  });

  it('oxidant consumed per jar and the demand curve: consumed = applied − residual', () => {
    // jar 6 at 5 min: 3.5 − (3.5 − 1.4) = 1.4 mg/L consumed; jar 1 at 30 min: 1.0 − 0 = 1.0
    expect(r.jars[5]!.results[0]!.consumedMgPerL).toBeCloseTo(1.4, 10);
    expect(r.jars[0]!.results[2]!.consumedMgPerL).toBeCloseTo(1.0, 10);
    expect(r.jars[0]!.results[2]!.residualBelowDetection).toBe(true);
    expect(r.demandCurves.map((c) => c.contactTimeMin)).toEqual([5, 15, 30]);
    expect(r.demandCurves[2]!.points.map((p) => p.consumedMgPerL)).toEqual(DOSES.map((d) => expect.closeTo(Math.min(d, 1.8), 10)));
    // consumed = x − y, so its line has slope 1 − m and intercept −b: here 0 and 1.7 (the 15 min line)
    expect(r.fit!.demandLine.slope).toBeCloseTo(0, 10);
    expect(r.fit!.demandLine.intercept).toBeCloseTo(1.7, 10);
  });

  it('the lowest dose meeting every target at each contact time', () => {
    expect(r.lowestDoseMeetingTargets.map((l) => [l.contactTimeMin, l.doseMgPerL, l.jar])).toEqual([
      [5, 3.0, 5],
      [15, 2.5, 4],
      [30, 2.0, 3],
    ]);
    expect(r.jars[0]!.results[0]!.failures).toEqual(['iron 0.6 > 0.3 mg/L', 'manganese 0.12 > 0.05 mg/L']);
  });

  it('recommended plant dose: lowest dose at the longest bench time within the plant contact, + 10 % (common practice)', () => {
    // plant 20 min → bench 15 min → 2.5 mg/L × 1.10 = 2.75 mg/L
    const rec = r.recommendedDose!;
    expect(rec.basis).toBe('lowest-dose-meeting-targets');
    expect(rec.contactTimeMin).toBe(15);
    expect(rec.baseDoseMgPerL).toBe(2.5);
    expect(rec.margin).toMatchObject({ kind: 'relative', fraction: 0.1 });
    expect(rec.margin.mgPerL).toBeCloseTo(0.25, 12);
    expect(rec.doseMgPerL).toBeCloseTo(2.75, 12);
    expect(rec.margin.basis).toContain('common practice');
    // the residual line at the recommendation's own contact time, 15 min: 2.75 − 1.7 = 1.05 mg/L
    expect(rec.expectedResidualMgPerL).toBeCloseTo(1.05, 10);
    expect(r.fit!.contactTimeMin).toBe(rec.contactTimeMin);
  });

  it('permanganate: no margin by default (a residual shows as pink water), 2.5 mg/L at 15 min', () => {
    const rec = evaluateJarTest(PMN).recommendedDose!;
    expect(rec.margin).toMatchObject({ kind: 'relative', fraction: 0, mgPerL: 0 });
    expect(rec.margin.basis).toContain('usepa-1999-adogm');
    expect(rec.doseMgPerL).toBe(2.5);
    // a margin the caller gives is kept
    expect(evaluateJarTest({ ...PMN, margin: { kind: 'relative', fraction: 0.1 } }).recommendedDose!.doseMgPerL).toBeCloseTo(2.75, 12);
  });

  it.each([
    // [plant contact, margin, bench time, dose, extra problem code]
    [60, undefined, 30, 2.2, null], // 2.0 × 1.1
    [20, { kind: 'absolute', mgPerL: 0.2 } as const, 15, 2.7, null],
    [3, undefined, 5, 3.3, 'PLANT_CONTACT_SHORTER_THAN_BENCH'], // 3.0 × 1.1
    [undefined, undefined, 30, 2.2, 'PLANT_CONTACT_TIME_NOT_GIVEN'],
  ])('plant contact %s min, margin %j → bench %s min, %s mg/L', (plant, margin, bench, dose, code) => {
    const e = evaluateJarTest({ ...MODEL, plantContactTimeMin: plant, margin });
    expect(e.recommendedDose!.contactTimeMin).toBe(bench);
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(dose, 12);
    if (code !== null) expect(e.problems.map((p) => p.code)).toContain(code);
  });

  it('targets default to the 40 CFR 143.3 secondary levels passed in, and say so', () => {
    const e = evaluateJarTest({ ...MODEL, targets: undefined, limits: SECONDARY });
    expect(e.targets).toEqual([
      expect.objectContaining({ analyte: 'iron', limitMgPerL: 0.3, origin: 'default limit', source: '40-cfr-143.3' }),
      expect.objectContaining({ analyte: 'manganese', limitMgPerL: 0.05, origin: 'default limit', source: '40-cfr-143.3' }),
    ]);
    expect(e.notes.join(' ')).toContain('40-cfr-143.3');
    expect(e.lowestDoseMeetingTargets.map((l) => l.doseMgPerL)).toEqual([3.0, 2.5, 2.0]);
  });

  it('a caller target wins over the default limit for that analyte only', () => {
    const e = evaluateJarTest({ ...MODEL, targets: { ironMgPerL: 0.1 }, limits: SECONDARY });
    expect(e.targets.map((t) => [t.analyte, t.limitMgPerL, t.origin])).toEqual([
      ['iron', 0.1, 'caller'],
      ['manganese', 0.05, 'default limit'],
    ]);
  });

  it('a default limit for an analyte nobody measured is not applied', () => {
    const jars = MODEL.jars.map((j) => ({ ...j, results: j.results.map(({ manganeseMgPerL: _m, ...rest }) => rest) }));
    const e = evaluateJarTest({ ...MODEL, jars, targets: undefined, limits: SECONDARY });
    expect(e.targets.map((t) => t.analyte)).toEqual(['iron']);
    expect(e.notes.join(' ')).toContain('manganese was not measured');
  });

  it('permanganate overdose: a higher dose that fails again is reported (pink filtrate reads as Mn)', () => {
    const jars = modelJars();
    (jars[5]!.results[2] as { manganeseMgPerL: number }).manganeseMgPerL = 0.2;
    const e = evaluateJarTest({ ...PMN, jars });
    const at30 = e.lowestDoseMeetingTargets.find((l) => l.contactTimeMin === 30)!;
    expect(at30.doseMgPerL).toBe(2.0);
    expect(at30.higherDosesFailing).toEqual([6]);
    expect(at30.note).toContain('manganese 0.2 > 0.05');
  });

  it("no targets at all: recommend apparent demand + target residual + margin, from the line at the plant's contact", () => {
    // plant 20 min → the 15 min line, D = 1.7: (1.7 + 0) × 1.1 = 1.87 mg/L; the residual it predicts there is 1.87 − 1.7 = 0.17
    const jars = MODEL.jars.map((j) => ({ ...j, results: j.results.map((x) => ({ contactTimeMin: x.contactTimeMin, residualOxidantMgPerL: x.residualOxidantMgPerL })) }));
    const e = evaluateJarTest({ ...MODEL, jars, targets: undefined });
    expect(e.lowestDoseMeetingTargets).toEqual([]);
    expect(e.recommendedDose!.basis).toBe('apparent-demand-plus-residual');
    expect(e.recommendedDose!.contactTimeMin).toBe(15);
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(1.87, 10);
    expect(e.recommendedDose!.expectedResidualMgPerL).toBeCloseTo(0.17, 10);
    expect(e.problems.map((p) => p.code)).not.toContain('FIT_TIME_BEYOND_PLANT_CONTACT');
    // a residual target no jar met takes the same path and the same line: (1.7 + 5) × 1.1 = 7.37 mg/L
    const withTarget = evaluateJarTest({ ...MODEL, jars, targets: { residualOxidantMgPerL: 5 } });
    expect(withTarget.recommendedDose!.basis).toBe('apparent-demand-plus-residual');
    expect(withTarget.recommendedDose!.doseMgPerL).toBeCloseTo(7.37, 10);
    expect(withTarget.recommendedDose!.contactTimeMin).toBe(15);
  });

  it('a fit the caller puts beyond the plant contact says why that errs on the side of the residual, not of the oxidation', () => {
    const jars = MODEL.jars.map((j) => ({ ...j, results: j.results.map((x) => ({ contactTimeMin: x.contactTimeMin, residualOxidantMgPerL: x.residualOxidantMgPerL })) }));
    const e = evaluateJarTest({ ...MODEL, jars, targets: undefined, fitContactTimeMin: 30 });
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(1.98, 10); // (1.8 + 0) × 1.1
    const w = e.problems.find((p) => p.code === 'FIT_TIME_BEYOND_PLANT_CONTACT')!;
    expect(w.message).toContain('uses no more oxidant than in 30 min');
    expect(w.message).toContain('may not be complete');
    expect(w.message).not.toContain('may need more oxidant');
  });

  it('an iron target no jar met: no dose is recommended (the demand line would sit below doses that failed)', () => {
    const e = evaluateJarTest({ ...MODEL, targets: { ironMgPerL: 0.01, residualOxidantMgPerL: 0.2 }, plantContactTimeMin: 30 });
    expect(e.lowestDoseMeetingTargets.every((l) => l.doseMgPerL === null)).toBe(true);
    expect(e.recommendedDose).toBeNull();
    const p = e.problems.find((x) => x.code === 'NO_JAR_MET_TARGETS')!;
    expect(p.severity).toBe('error');
    // the highest jar and why it failed, and the apparent demand said to be something else
    expect(p.message).toContain('up to jar 6 at 3.5 mg/L (iron 0.05 > 0.01 mg/L)');
    expect(p.message).toContain('apparent demand (1.8 mg/L)');
  });

  it('only a residual target no jar met: the demand line gives the dose, (1.8 + 5) × 1.1 = 7.48 mg/L', () => {
    const e = evaluateJarTest({ ...MODEL, targets: { residualOxidantMgPerL: 5 }, plantContactTimeMin: 30 });
    expect(e.lowestDoseMeetingTargets.every((l) => l.doseMgPerL === null)).toBe(true);
    expect(e.recommendedDose!.basis).toBe('apparent-demand-plus-residual');
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(7.48, 10);
    expect(e.problems.map((x) => x.code)).not.toContain('NO_JAR_MET_TARGETS');
  });

  it('a residual target is judged at the first bench time at or after the plant contact, where iron and manganese are judged before it', () => {
    // plant 10 min: Fe and Mn are judged at 5 min (the last bench time within the contact), a 1.5 mg/L minimum residual
    // at 15 min (the first after it). By the model, residual = dose − D(t), D = 1.4 at 5 min and 1.7 at 15 min:
    // jar 5 (3.0 mg/L) holds 1.6 at 5 min but 1.3 at 15 min; jar 6 (3.5 mg/L) holds 1.8 at 15 min
    const e = evaluateJarTest({ ...MODEL, plantContactTimeMin: 10, targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMgPerL: 1.5 } });
    // at 5 min jars 5 and 6 meet every target (residual 3.0 − 1.4 = 1.6 ≥ 1.5); at 15 min only jar 6 still holds 1.5
    expect(e.lowestDoseMeetingTargets.find((l) => l.contactTimeMin === 5)!.jar).toBe(5);
    expect(e.recommendedDose!.baseDoseMgPerL).toBe(3.5);
    expect(e.notes.join(' ')).toMatch(/Jar 5 met every target at 5 min but its residual fell below 1.5 mg\/L by 15 min/);
    // a target no jar keeps to 15 min: no recommendation, saying why
    const none = evaluateJarTest({ ...MODEL, plantContactTimeMin: 10, targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMgPerL: 1.9 } });
    expect(none.recommendedDose).toBeNull();
    expect(none.problems.find((p) => p.code === 'RESIDUAL_NOT_KEPT')!.severity).toBe('error');
  });

  it('a residual line steeper than 1: within 5 % nothing, 5–10 % a warning, beyond 10 % an error that blocks the recommendation (common practice)', () => {
    // residual = k·dose − 1.8·k at 30 min (a stock k times stronger than labelled), exactly, jars 3–6 above detection
    const jarsFor = (k: number) => DOSES.map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, k * (d - 1.8)) }] }));
    const codes = (k: number) => evaluateJarTest({ ...MODEL, jars: jarsFor(k), targets: {}, plantContactTimeMin: 30 });
    // an exact line has zero standard error, so any excess is "beyond its error"
    expect(codes(1.03).problems.map((p) => p.code)).not.toContain('FIT_SLOPE_ABOVE_ONE');
    expect(codes(1.07).problems.find((p) => p.code === 'FIT_SLOPE_ABOVE_ONE')!.severity).toBe('warning');
    expect(codes(1.07).recommendedDose).not.toBeNull();
    const strong = codes(1.3);
    expect(strong.problems.find((p) => p.code === 'FIT_SLOPE_ABOVE_ONE')!.message).toMatch(/about 30 % stronger than labelled/);
    expect(strong.recommendedDose).toBeNull();
    expect(strong.problems.map((p) => p.code)).toContain('NO_RECOMMENDATION');
  });

  it('a residual maximum that the margin would exceed caps the margin, so the expected residual stays at the maximum', () => {
    // +10 %: recommended 2.75 predicts 2.75 − 1.7 = 1.05 mg/L on the 15 min line: within 1.1, above 1.0
    const e = evaluateJarTest({ ...MODEL, targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMaxMgPerL: 1.1 } });
    expect(e.problems.map((p) => p.code)).not.toContain('MARGIN_CAPPED_AT_RESIDUAL_MAX');
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(2.75, 10);
    // 1.0 allowed: the line reaches 1.0 at 1.0 + 1.7 = 2.7 mg/L, so the margin is 0.2 mg/L (8 %), not 0.25
    const tight = evaluateJarTest({ ...MODEL, targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMaxMgPerL: 1.0 } });
    const capped = tight.problems.find((p) => p.code === 'MARGIN_CAPPED_AT_RESIDUAL_MAX')!;
    expect(capped.severity).toBe('warning');
    expect(capped.message).toContain('capped at 0.2 mg/L');
    expect(tight.recommendedDose!.doseMgPerL).toBeCloseTo(2.7, 10);
    expect(tight.recommendedDose!.expectedResidualMgPerL).toBeCloseTo(1.0, 10);
    expect(tight.recommendedDose!.margin).toMatchObject({ kind: 'relative' });
    expect(tight.recommendedDose!.margin.mgPerL).toBeCloseTo(0.2, 10);
    expect(tight.recommendedDose!.reason).toContain('margin capped');
    expect(tight.problems.map((p) => p.code)).not.toContain('RECOMMENDED_ABOVE_RESIDUAL_MAX');
    // jars above 2.5 mg/L fail only on the residual maximum: what a higher dose does, not a finding
    expect(tight.problems.map((p) => p.code)).not.toContain('HIGHER_DOSE_FAILS_TARGETS');
    // an absolute margin is capped the same way: 2.5 + 0.5 = 3.0 would predict 1.3 mg/L; capped at 2.7
    const f = evaluateJarTest({ ...MODEL, margin: { kind: 'absolute', mgPerL: 0.5 }, targets: { ironMgPerL: 0.3, manganeseMgPerL: 0.05, residualOxidantMaxMgPerL: 1.0 } });
    expect(f.recommendedDose!.doseMgPerL).toBeCloseTo(2.7, 10);
    expect(f.recommendedDose!.margin).toMatchObject({ kind: 'absolute' });
    expect(f.problems.map((p) => p.code)).toContain('MARGIN_CAPPED_AT_RESIDUAL_MAX');
  });
});

describe('evaluateJarTest: pink water from residual permanganate', () => {
  // Default threshold: 0.05 mg/L as KMnO4, a commonly quoted visibility threshold for permanganate colour (common
  // practice, from memory; US EPA 1999 ADOGM §5.1.2: a permanganate residual is not desirable, it gives water a pink colour).
  const codesOf = (e: { problems: readonly { code: string }[] }) => e.problems.map((p) => p.code);

  it('no residual maximum given: the recommended 2.5 mg/L predicts 0.8 mg/L (2.5 − 1.7, the 15 min line), above 0.05 → warning naming the threshold and its basis', () => {
    const e = evaluateJarTest(PMN);
    const w = e.problems.find((p) => p.code === 'RECOMMENDED_RESIDUAL_PINK')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('predicts 0.8 mg/L');
    expect(w.message).toContain('0.05 mg/L default threshold');
    expect(w.message).toContain('common practice');
    expect(w.message).toContain('from memory');
    expect(w.message).toContain('usepa-1999-adogm');
    expect(codesOf(e)).not.toContain('RECOMMENDED_ABOVE_RESIDUAL_MAX');
  });

  it("the caller's maximum is kept: 1.0 mg/L allowed → no default pink check, and 0.8 is within it", () => {
    const e = evaluateJarTest({ ...PMN, targets: { ...PMN.targets, residualOxidantMaxMgPerL: 1.0 } });
    expect(codesOf(e)).not.toContain('RECOMMENDED_RESIDUAL_PINK');
    expect(codesOf(e)).not.toContain('RECOMMENDED_ABOVE_RESIDUAL_MAX');
    // + 0.5 mg/L on the 2.5 mg/L jar: 3.0 mg/L predicts 3.0 − 1.7 = 1.3 mg/L, above the caller's 1.0 (their limit, not the default)
    const f = evaluateJarTest({ ...PMN, margin: { kind: 'absolute', mgPerL: 0.5 }, targets: { ...PMN.targets, residualOxidantMaxMgPerL: 1.0 } });
    expect(codesOf(f)).toContain('MARGIN_CAPPED_AT_RESIDUAL_MAX');
    expect(f.recommendedDose!.doseMgPerL).toBeCloseTo(2.7, 10); // capped where the line predicts 1.0: 1.0 + 1.7
    expect(codesOf(f)).not.toContain('RECOMMENDED_RESIDUAL_PINK');
  });

  it('a recommendation whose predicted residual is at or below 0.05 mg/L gets a note, not a warning', () => {
    // No targets, the plant's 30 min of contact, no margin (permanganate): the recommendation is the apparent demand
    // 1.8 mg/L at 30 min, where the 30 min line predicts 1.8 − 1.8 = 0.
    const jars = PMN.jars.map((j) => ({ ...j, results: j.results.map((x) => ({ contactTimeMin: x.contactTimeMin, residualOxidantMgPerL: x.residualOxidantMgPerL })) }));
    const e = evaluateJarTest({ ...PMN, jars, targets: undefined, plantContactTimeMin: 30 });
    expect(e.recommendedDose!.expectedResidualMgPerL).toBeCloseTo(0, 9);
    expect(codesOf(e)).not.toContain('RECOMMENDED_RESIDUAL_PINK');
    expect(e.notes.join(' ')).toContain('at or below the 0.05 mg/L default pink-water threshold');
  });

  it.each([
    ['Cl2', null],
    ['NaMnO4', 'RESIDUAL_COLOUR_NOT_CHECKED'],
  ])('basis %s: no pink warning (%s)', (basis, code) => {
    const e = evaluateJarTest({ ...MODEL, basis, oxidant: basis === 'Cl2' ? 'sodium-hypochlorite' : 'sodium-permanganate' });
    expect(codesOf(e)).not.toContain('RECOMMENDED_RESIDUAL_PINK');
    if (code === null) expect(codesOf(e)).not.toContain('RESIDUAL_COLOUR_NOT_CHECKED');
    else expect(e.problems.find((p) => p.code === code)!.severity).toBe('info');
  });

  it('no residual line at the contact time of the recommendation: the colour is not checked, and the evaluation says so', () => {
    // residuals read at 30 min only; the plant's 20 min of contact puts the recommendation at the 15 min readings
    const jars = PMN.jars.map((j) => ({ ...j, results: j.results.map((x) => (x.contactTimeMin === 30 ? x : { ...x, residualOxidantMgPerL: undefined })) }));
    const e = evaluateJarTest({ ...PMN, jars });
    expect(e.recommendedDose!.contactTimeMin).toBe(15);
    expect(e.recommendedDose!.expectedResidualMgPerL).toBeNull();
    expect(e.notes.join(' ')).toContain('No residual line at 15 min');
    expect(codesOf(e)).toContain('RESIDUAL_COLOUR_NOT_CHECKED');
  });
});

describe('evaluateJarTest: readings that need a second look', () => {
  const line = (pairs: [number, number][]) => pairs.map(([d, r]) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: r }] }));
  it.each<[string, [number, number][], number, string]>([
    ['apparent demand below the estimate', [[1, 0.5], [2, 1.5], [3, 2.5]], 1.6, 'APPARENT_BELOW_ESTIMATE'],
    ['residual above the applied dose', [[1, 1.5], [2, 2.5], [3, 3.5]], 0, 'RESIDUAL_ABOVE_DOSE'],
    ['residual rising faster than dose', [[2, 0.2], [2.5, 1.2], [3, 2.2], [3.5, 3.2]], 0, 'FIT_SLOPE_ABOVE_ONE'],
    ['a scattered line', [[2, 0.2], [2.5, 1.0], [3, 0.3], [3.5, 1.1]], 0, 'FIT_POOR'],
  ])('%s → %s', (_n, pairs, estimate, code) => {
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: estimate, jarVolumeL: 1, jars: line(pairs), plantContactTimeMin: 30 });
    expect(e.problems.map((p) => p.code)).toContain(code);
  });
});

describe('evaluateJarTest: recovers a known demand from noisy synthetic results', () => {
  // Model: residual = max(0, dose − D) + N(0, σ²) with D = 1.8 mg/L, σ = 0.03 mg/L, readings clipped at 0;
  // 8 jars 0.8 … 3.6 mg/L in steps of 0.4; noise from the seeded mulberry32 PRNG (tests/jar-tests/prng.ts).
  const doses = [0.8, 1.2, 1.6, 2.0, 2.4, 2.8, 3.2, 3.6];
  const D = 1.8;
  const run = (seed: number, detectionLimitMgPerL?: number) => {
    const ys = syntheticResiduals(doses, D, 0.03, seed);
    return evaluateJarTest({
      oxidant: 'potassium-permanganate',
      basis: 'KMnO4',
      estimateMgPerL: 1.5,
      jarVolumeL: 2,
      jars: doses.map((d, i) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: ys[i]! }] })),
      detectionLimitMgPerL,
    });
  };

  it('one seeded run: D recovered within 3 standard errors and 0.05 mg/L; background ≈ 0.3 mg/L', () => {
    const e = run(2024);
    const a = e.apparentDemand!;
    expect(e.fit!.jarsUsed).toEqual([4, 5, 6, 7, 8]); // 2.0 … 3.6 mg/L kept a residual
    expect(Math.abs(a.doseMgPerL - D)).toBeLessThan(3 * a.stdError);
    expect(Math.abs(a.doseMgPerL - D)).toBeLessThan(0.05);
    expect(a.ci95[0]).toBeLessThan(D);
    expect(a.ci95[1]).toBeGreaterThan(D);
    // the interval is ± t(0.975, n − 2) × se
    expect(a.ci95[1] - a.doseMgPerL).toBeCloseTo(studentTQuantile(0.975, 3) * a.stdError, 12);
    expect(Math.abs(e.fit!.slope - 1)).toBeLessThan(3 * e.fit!.slopeStdError);
    expect(e.fit!.r2).toBeGreaterThan(0.99);
    expect(Math.abs(e.backgroundDemand!.doseMgPerL - 0.3)).toBeLessThan(0.05);
    expect(e.notes.join(' ')).toContain('0.05 mg/L');
  });

  it('over 400 seeds the 95 % interval covers D = 1.8 in 90–99 % of runs', () => {
    // detection limit 0.1 mg/L ≈ 3σ keeps jars whose true residual is 0 out of the fit
    // (a 0.05 mg/L limit is only 1.7σ and lets about 5 % of them in, which biases the line).
    let covered = 0;
    const seeds = 400;
    for (let s = 1; s <= seeds; s++) {
      const a = run(s, 0.1).apparentDemand!;
      if (a.ci95[0] <= D && D <= a.ci95[1]) covered++;
    }
    expect(covered / seeds).toBeGreaterThan(0.9);
    expect(covered / seeds).toBeLessThan(0.99);
  });

  it('property: for any demand 0.5–4 mg/L and noise 0.005–0.05 mg/L the estimate lies in its 99.9 % interval', () => {
    // (D̂ − D)/se follows Student's t with n − 2 degrees of freedom, so a fixed multiple of se (say 5) fails
    // about 1.5 % of runs at 3 degrees of freedom; the t quantile makes the bound exact: 0.1 % of runs.
    fc.assert(
      fc.property(fc.double({ min: 0.5, max: 4, noNaN: true }), fc.double({ min: 0.005, max: 0.05, noNaN: true }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (demand, sigma, seed) => {
        const ds = [demand - 0.5, demand - 0.25, ...[0.3, 0.5, 0.7, 0.9, 1.1, 1.3, 1.5, 1.7].map((k) => demand + k)].map((d) => Math.max(0, d));
        const ys = syntheticResiduals(ds, demand, sigma, seed);
        const e = evaluateJarTest({
          oxidant: 'sodium-hypochlorite',
          basis: 'Cl2',
          estimateMgPerL: demand,
          jarVolumeL: 1,
          detectionLimitMgPerL: Math.max(0.05, 3 * sigma),
          jars: ds.map((d, i) => ({ doseMgPerL: d, results: [{ contactTimeMin: 15, residualOxidantMgPerL: ys[i]! }] })),
        });
        const a = e.apparentDemand!;
        expect(e.fit!.n).toBe(8);
        const bound = studentTQuantile(0.9995, e.fit!.degreesOfFreedom) * a.stdError + 1e-9;
        expect(Math.abs(a.doseMgPerL - demand)).toBeLessThanOrEqual(bound);
        expect(Math.abs(e.backgroundDemand!.doseMgPerL)).toBeLessThanOrEqual(bound);
      }),
      { seed: 31337, numRuns: 200 },
    );
  });
});

describe('evaluateJarTest: the edges of the ladder', () => {
  const codesOf = (e: { problems: readonly { code: string }[] }) => e.problems.map((p) => p.code);

  it('the lowest jar already meets every target: LOWEST_JAR_MEETS_TARGETS (warning), extend the ladder down', () => {
    // iron ≤ 0.7 and manganese ≤ 0.2 are met by every jar of the model, so jar 1 (1.0 mg/L) is the lowest meeting them
    const e = evaluateJarTest({ ...MODEL, targets: { ironMgPerL: 0.7, manganeseMgPerL: 0.2 } });
    expect(e.recommendedDose!.baseDoseMgPerL).toBe(1.0);
    const w = e.problems.find((p) => p.code === 'LOWEST_JAR_MEETS_TARGETS')!;
    expect(w.severity).toBe('warning');
    expect(w.jar).toBe(1);
    expect(w.message).toContain('true minimum may lie below the ladder');
    expect(w.message).toContain('Extend the ladder down');
    // the worked model's lowest jar meeting the targets is inside the ladder: no such warning
    expect(codesOf(evaluateJarTest(MODEL))).not.toContain('LOWEST_JAR_MEETS_TARGETS');
  });

  it('a control jar (no oxidant) that meets every target, as every dosed jar does, says the water may need no oxidant', () => {
    // iron ≤ 0.7 and manganese ≤ 0.2 are met by every jar of the model (readings ≤ 0.6 and ≤ 0.12), and by the blank
    const jars = [{ doseMgPerL: 0, results: [{ contactTimeMin: 15, residualOxidantMgPerL: 0, ironMgPerL: 0.1, manganeseMgPerL: 0.02 }] }, ...modelJars()];
    const e = evaluateJarTest({ ...MODEL, jars, targets: { ironMgPerL: 0.7, manganeseMgPerL: 0.2 } });
    const w = e.problems.find((p) => p.code === 'LOWEST_JAR_MEETS_TARGETS')!;
    expect(w.message).toContain('control jar');
    expect(w.message).toContain('may need no oxidant');
    expect(e.problems.map((p) => p.code)).not.toContain('CONTROL_JAR_CONTRADICTS_DOSED_JARS');
  });

  it('a control jar that passes while dosed jars above it fail: no recommendation, an error that says why', () => {
    // Invented jars (hypochlorite as Cl2, 30 min): doses 0, 0.5 … 3 mg/L; dissolved Fe 0.1, 0.8, 0.4, 0.1, 0.05, 0.02, 0.02;
    // residual max(0, dose − 1.2). The blank reads 0.1 ≤ 0.3 mg/L (40 CFR 143.3 level as the target) but jars 2 and 3,
    // dosed with 0.5 and 1 mg/L, read 0.8 and 0.4: oxidant does not raise dissolved iron, so one side is wrong.
    const doses = [0, 0.5, 1, 1.5, 2, 2.5, 3];
    const fe = [0.1, 0.8, 0.4, 0.1, 0.05, 0.02, 0.02];
    const jars = doses.map((d, i) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, Number((d - 1.2).toFixed(10))), ironMgPerL: fe[i]! }] }));
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 0.64, jarVolumeL: 2, jars, targets: { ironMgPerL: 0.3 }, plantContactTimeMin: 30 });
    expect(e.recommendedDose).toBeNull();
    const p = e.problems.find((x) => x.code === 'CONTROL_JAR_CONTRADICTS_DOSED_JARS')!;
    expect(p.severity).toBe('error');
    expect(p.jar).toBe(1);
    expect(p.message).toContain('dosed jar(s) 2, 3 (0.5, 1 mg/L)');
    expect(p.message).toContain('iron 0.8 > 0.3 mg/L');
    expect(p.message).toContain("control jar's sample");
    // the residual line is still reported: residual = dose − 1.2 over jars 4–7, so it crosses zero at 1.2 mg/L (by hand)
    expect(e.apparentDemand!.doseMgPerL).toBeCloseTo(1.2, 9);
    expect(e.problems.map((x) => x.code)).not.toContain('HIGHER_DOSE_FAILS_TARGETS');
  });

  it('a higher dose that fails after a lower one passed: HIGHER_DOSE_FAILS_TARGETS (warning), not only a note', () => {
    // permanganate overdose: jar 6 (3.5 mg/L) reads 0.2 mg/L Mn at 15 min (dissolved permanganate reads as Mn)
    const jars = modelJars().map((j, i) => (i === 5 ? { ...j, results: j.results.map((r) => (r.contactTimeMin === 15 ? { ...r, manganeseMgPerL: 0.2 } : r)) } : j));
    const e = evaluateJarTest({ ...PMN, jars });
    const w = e.problems.find((p) => p.code === 'HIGHER_DOSE_FAILS_TARGETS')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('jar(s) 6');
    expect(w.message).toContain('manganese 0.2 > 0.05 mg/L');
    expect(w.message).toContain('reads as manganese');
    expect(e.lowestDoseMeetingTargets.find((l) => l.contactTimeMin === 15)!.higherDosesFailing).toEqual([6]);
    expect(codesOf(evaluateJarTest(PMN))).not.toContain('HIGHER_DOSE_FAILS_TARGETS');
  });

  it('the line predicts more than the maximum at the bench dose itself: no margin, RECOMMENDED_ABOVE_RESIDUAL_MAX says so', () => {
    // Invented readings at 15 min: doses 1, 2, 3, 4 mg/L, residuals 0.1, 0.5, 1.9, 2.9; iron ≤ 0.3 from 2 mg/L on.
    // Jar 2 meets iron and the 0.6 mg/L maximum as read (0.5), but the least-squares line over the four jars,
    // slope Sxy/Sxx = 4.9/5 = 0.98 and intercept 1.35 − 0.98 × 2.5 = −1.1 (worked by hand), predicts
    // 0.98 × 2 − 1.1 = 0.86 mg/L there: above 0.6, so there is no margin to cap.
    const jars = [[1, 0.1, 0.5], [2, 0.5, 0.2], [3, 1.9, 0.1], [4, 2.9, 0.1]].map(([d, r, fe]) => ({ doseMgPerL: d!, results: [{ contactTimeMin: 15, residualOxidantMgPerL: r!, ironMgPerL: fe! }] }));
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 1, jarVolumeL: 1, jars, targets: { ironMgPerL: 0.3, residualOxidantMaxMgPerL: 0.6 } });
    expect(e.fit!.slope).toBeCloseTo(0.98, 12);
    expect(e.recommendedDose!.doseMgPerL).toBe(2);
    expect(e.recommendedDose!.margin.mgPerL).toBe(0);
    expect(e.recommendedDose!.expectedResidualMgPerL).toBeCloseTo(0.86, 12);
    const w = e.problems.find((p) => p.code === 'RECOMMENDED_ABOVE_RESIDUAL_MAX')!;
    expect(w.message).toContain('already predicts 0.86 mg/L');
    expect(w.message).toContain('no margin is added');
    expect(codesOf(e)).not.toContain('MARGIN_CAPPED_AT_RESIDUAL_MAX');
  });
});

describe('evaluateJarTest: suggestions and the detection limit follow the oxidant', () => {
  it('permanganate with no margin: RECOMMENDED_RESIDUAL_PINK does not suggest a smaller margin', () => {
    const w = evaluateJarTest(PMN).problems.find((p) => p.code === 'RECOMMENDED_RESIDUAL_PINK')!;
    expect(evaluateJarTest(PMN).recommendedDose!.margin.mgPerL).toBe(0);
    expect(w.message).not.toContain('smaller margin');
    expect(w.message).toContain('doses between the apparent demand');
    expect(w.message).toContain('targets.residualOxidantMax');
  });

  it('permanganate with a caller margin of +10 %: the smaller margin is suggested, with what it adds', () => {
    const w = evaluateJarTest({ ...PMN, margin: { kind: 'relative', fraction: 0.1 } }).problems.find((p) => p.code === 'RECOMMENDED_RESIDUAL_PINK')!;
    expect(w.message).toContain('use a smaller margin (the +10 % adds 0.25 mg/L)');
  });

  it('the default detection limit is stated on the residual method: colour / 525 nm for permanganate, DPD for chlorine', () => {
    const pmn = evaluateJarTest(PMN).notes.find((n) => n.startsWith('Detection limit'))!;
    expect(pmn).toContain('525 nm');
    expect(pmn).not.toContain('DPD');
    const cl = evaluateJarTest(MODEL).notes.find((n) => n.startsWith('Detection limit'))!;
    expect(cl).toContain('DPD');
    const own = evaluateJarTest({ ...MODEL, residualMethod: 'amperometric titration' }).notes.find((n) => n.startsWith('Detection limit'))!;
    expect(own).toContain('amperometric titration');
  });

  it('an exact fit whose line crosses zero at 0 mg/L within rounding is not APPARENT_DEMAND_NEGATIVE', () => {
    // residual = dose exactly (no demand): −intercept/slope is 0 or a rounding residue of ~1e-17
    const jars = [0.5, 1.1, 1.7, 2.3].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: d }] }));
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 0, jarVolumeL: 1, jars });
    expect(e.problems.map((p) => p.code)).not.toContain('APPARENT_DEMAND_NEGATIVE');
    for (const p of e.problems) expect(p.message).not.toMatch(/\d[eE][+-]?\d/);
  });
});

describe('evaluateJarTest: the edges of the ladder with a control jar and at the top', () => {
  // invented jars, no residual line needed: iron and manganese (filtered) against 0.3 / 0.05 mg/L
  const jarsMeetingFrom = (doses: number[], from: number) =>
    doses.map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 20, residualOxidantMgPerL: 0, ironMgPerL: d >= from ? 0.05 : 0.4, manganeseMgPerL: d >= from ? 0.02 : 0.12 }] }));
  it('a control jar (0 mg/L) does not hide that the lowest dosed jar already met the targets', () => {
    const e = evaluateJarTest({ ...PMN, jars: jarsMeetingFrom([0, 0.5, 1.0, 1.5], 0.5) });
    expect(e.recommendedDose?.baseDoseMgPerL).toBe(0.5);
    expect(e.problems.map((p) => p.code)).toContain('LOWEST_JAR_MEETS_TARGETS');
  });
  it('only the highest jar met the targets: a warning that the recommendation rests on the ladder\'s edge (above every dose tested with its margin)', () => {
    const e = evaluateJarTest({ ...MODEL, jars: jarsMeetingFrom([2, 4, 6, 8], 8) });
    expect(e.recommendedDose?.doseMgPerL).toBeCloseTo(8.8, 12); // 8 + 10 % margin (common practice)
    const p = e.problems.find((x) => x.code === 'ONLY_HIGHEST_JAR_MEETS_TARGETS')!;
    expect(p.severity).toBe('warning');
    expect(p.message).toMatch(/above every dose tested/);
    // a ladder whose middle jar meets them raises neither edge warning
    const mid = evaluateJarTest({ ...MODEL, jars: jarsMeetingFrom([2, 4, 6, 8], 4) });
    expect(mid.problems.map((x) => x.code)).not.toEqual(expect.arrayContaining(['ONLY_HIGHEST_JAR_MEETS_TARGETS']));
    expect(mid.problems.map((x) => x.code)).not.toContain('LOWEST_JAR_MEETS_TARGETS');
  });
});

describe('evaluateJarTest: a recommendation below the ladder, and jar figures beyond any bench', () => {
  it('no targets, jars 3, 4, 5 mg/L keep 1.8, 2.8, 3.8: the line crosses zero at 1.2 mg/L, and 1.32 mg/L is flagged as extrapolated below the ladder', () => {
    // by hand: residual = dose − 1.2 exactly, so the apparent demand is 1.2 mg/L and +10 % (common practice) gives 1.32 mg/L, below jar 1 (3 mg/L)
    const jars = [3, 4, 5].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Number((d - 1.2).toFixed(10)) }] }));
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 0.64, jarVolumeL: 1, jars, plantContactTimeMin: 30 });
    expect(e.recommendedDose!.doseMgPerL).toBeCloseTo(1.32, 9);
    const w = e.problems.find((p) => p.code === 'RECOMMENDATION_BELOW_LADDER')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('below every jar tested (the lowest is jar 1, 3 mg/L)');
    expect(w.message).toContain('doses from about 0.6 to 3 mg/L');
    // a ladder reaching below the recommendation raises no such warning: add a jar at 1 mg/L that keeps nothing
    const wider = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 0.64, jarVolumeL: 1, jars: [{ doseMgPerL: 1, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 0 }] }, ...jars], plantContactTimeMin: 30 });
    expect(wider.recommendedDose!.doseMgPerL).toBeCloseTo(1.32, 9);
    expect(wider.problems.map((p) => p.code)).not.toContain('RECOMMENDATION_BELOW_LADDER');
  });

  // Breakpoint chlorination (White's Handbook, from memory): with ammonia, free chlorine appears only past the
  // breakpoint (about 7.6 mg Cl2 per mg NH3-N), a curve chlorine-based oxidants follow and the others do not.
  it.each([
    ['sodium-hypochlorite', 'Cl2', true],
    ['calcium-hypochlorite', 'Cl2', true],
    ['potassium-permanganate', 'KMnO4', false],
    ['ozone', 'O3', false],
    ['hydrogen-peroxide', 'H2O2', false],
    ['chlorine-dioxide', 'ClO2', false],
  ] as const)('RECOMMENDATION_BELOW_LADDER for %s (as %s) names the breakpoint curve: %s', (oxidant, basis, breakpoint) => {
    const jars = [3, 4, 5].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Number((d - 1.2).toFixed(10)) }] }));
    const e = evaluateJarTest({ oxidant, basis, estimateMgPerL: 0.64, jarVolumeL: 1, jars, plantContactTimeMin: 30 });
    const w = e.problems.find((p) => p.code === 'RECOMMENDATION_BELOW_LADDER')!;
    expect(w).toBeDefined();
    expect(w.message.includes('breakpoint')).toBe(breakpoint);
    expect(w.message.includes('ammonia')).toBe(breakpoint);
  });

  it.each([
    ['a jar dose of 1e9 mg/L', { jars: [{ doseMgPerL: 1e9, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 1 }] }] }, '/jars/0/doseMgPerL'],
    ['a residual of 5000 mg/L', { jars: [{ doseMgPerL: 5, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 5000 }] }] }, '/jars/0/results/0/residualOxidantMgPerL'],
  ] as const)('%s is refused (above 1000 mg/L, the bound of src/dosing/bounds.ts on a target residual; common practice)', (_n, over, pointer) => {
    const e = fails(() => evaluateJarTest({ ...MODEL, ...(over as Partial<EvaluateJarTestInput>) }));
    expect(e.code).toBe('JAR_TEST_INVALID');
    const f = e.fields.find((x) => x.pointer === pointer)!;
    expect(f.message).toContain('at most 1000 mg/L');
  });
  it('1000 mg/L itself is taken (the bound is inclusive)', () => {
    const jars = [500, 750, 1000].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: d - 100 }] }));
    expect(() => evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 1, jarVolumeL: 1, jars })).not.toThrow();
  });
});

describe('evaluateJarTest: a plant contact longer than the longest bench time', () => {
  // Stated model (invented): demand D(t) = 0.8, 1.0, 1.2 mg/L at 5, 15, 30 min (still rising),
  // residual = max(0, dose − D(t)) for hypochlorite doses 1, 2, 3, 4 mg/L; the plant gives 120 min.
  // By the model the residual lines at 15 and 30 min cross zero at 1.0 and 1.2 mg/L: +0.2 mg/L in 15 min.
  const DEM: Record<number, number> = { 5: 0.8, 15: 1.0, 30: 1.2 };
  const input = (plantContactTimeMin: number): EvaluateJarTestInput => ({
    oxidant: 'sodium-hypochlorite',
    basis: 'Cl2',
    estimateMgPerL: 0.64,
    jarVolumeL: 2,
    targets: { residualOxidantMgPerL: 0.5 },
    plantContactTimeMin,
    jars: [1, 2, 3, 4].map((d) => ({ doseMgPerL: d, results: [5, 15, 30].map((t) => ({ contactTimeMin: t, residualOxidantMgPerL: Math.max(0, Number((d - DEM[t]!).toFixed(10))) })) })),
  });

  it('warns that the demand may go on growing, with how much it grew between 15 and 30 min', () => {
    const ev = evaluateJarTest(input(120));
    expect(ev.recommendedDose!.contactTimeMin).toBe(30);
    const w = ev.problems.find((p) => p.code === 'PLANT_CONTACT_LONGER_THAN_BENCH')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('(120 min) is longer than the longest bench sample (30 min)');
    expect(w.message).toContain('may be lower than predicted');
    expect(w.message).toContain('Between 15 and 30 min the demand grew from 1 to 1.2 mg/L (+0.2 mg/L');
    const note = ev.notes.find((n) => n.startsWith('Residual line fitted at 30 min'))!;
    expect(note).toContain("shorter than the plant's 120 min of contact");
    expect(note).not.toContain('the time the recommendation is for');
  });

  it.each([30, 20])('no such warning when the plant gives %s min (within the bench times)', (t) => {
    const ev = evaluateJarTest(input(t));
    expect(ev.problems.map((p) => p.code)).not.toContain('PLANT_CONTACT_LONGER_THAN_BENCH');
  });
});

describe('evaluateJarTest: a falling residual line', () => {
  it('slope −0.44, intercept 1.9 (invented): the message gives the crossing, 1.9 ÷ 0.44 = 4.32 mg/L, and says a falling line has no demand meaning', () => {
    // residual = 1.9 − 0.44 × dose exactly at doses 1, 2, 3 mg/L: 1.46, 1.02, 0.58 mg/L (by hand)
    const jars = [1, 2, 3].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Number((1.9 - 0.44 * d).toFixed(10)) }] }));
    const e = evaluateJarTest({ oxidant: 'sodium-hypochlorite', basis: 'Cl2', estimateMgPerL: 0.64, jarVolumeL: 1, jars, plantContactTimeMin: 30 });
    const p = e.problems.find((x) => x.code === 'FIT_SLOPE_NOT_POSITIVE')!;
    expect(p.message).toContain('slope -0.44');
    expect(p.message).toContain('crosses zero residual at 4.32 mg/L only because it falls');
    expect(p.message).not.toContain('never crosses');
  });
});
