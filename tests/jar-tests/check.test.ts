import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DomainError } from '../../src/core/errors.js';
import { CHECK_CODES, checkJarPlan, type CheckJarPlanInput } from '../../src/jar-tests/check.js';
import { planJarTest } from '../../src/jar-tests/plan.js';
import { caught as invalid } from '../core/fixtures/caught.js';

// A sound plan: 1.0 g/L stock, 2 L jars, 1 mg/L per 2 mL (aliquot = D × 2 L ÷ 1.0 mg/mL),
// doses stated as the nominal a·C/V; estimate 1.8 mg/L lies inside 0.5 … 3.0.
const SOUND: CheckJarPlanInput = {
  oxidant: 'potassium-permanganate',
  estimateMgPerL: 1.8,
  jarVolumeL: 2,
  stockStrengthGPerL: 1,
  jars: [
    { doseMgPerL: 0.5, aliquotMl: 1 },
    { doseMgPerL: 1, aliquotMl: 2 },
    { doseMgPerL: 1.5, aliquotMl: 3 },
    { doseMgPerL: 2, aliquotMl: 4 },
    { doseMgPerL: 2.5, aliquotMl: 5 },
    { doseMgPerL: 3, aliquotMl: 6 },
  ],
  contactTimesMin: [5, 15, 30],
  solubility: { gPerL: 64, temperatureC: 20 },
};

function allCodes(r: ReturnType<typeof checkJarPlan>): string[] {
  return [...r.problems, ...r.jars.flatMap((j) => j.problems)].map((p) => p.code);
}


describe('checkJarPlan: bad input', () => {
  it.each([
    ['no jars', { jars: [] }, '/jars'],
    ['zero jar volume', { jarVolumeL: 0 }, '/jarVolumeL'],
    ['a 2 mL jar (2 L written in mL), below the 0.25 L bench minimum', { jarVolumeL: 0.002 }, '/jarVolumeL'],
    ['negative stock', { stockStrengthGPerL: -1 }, '/stockStrengthGPerL'],
    ['negative aliquot', { jars: [{ aliquotMl: 1 }, { aliquotMl: 2 }, { aliquotMl: -3 }] }, '/jars/2/aliquotMl'],
    ['NaN dose', { jars: [{ doseMgPerL: Number.NaN }] }, '/jars/0/doseMgPerL'],
    ['zero contact time', { contactTimesMin: [0, 15] }, '/contactTimesMin/0'],
  ] as const)('%s → JAR_TEST_INVALID at %s', (_n, over, pointer) => {
    const e = invalid(() => checkJarPlan({ ...SOUND, ...(over as Partial<CheckJarPlanInput>) }));
    expect(e.code).toBe('JAR_TEST_INVALID');
    expect(e.fields.map((f) => f.pointer)).toContain(pointer);
  });
});

describe('checkJarPlan: a sound plan', () => {
  it('passes with no problem, and each dose is recomputed with the dilution by the aliquot', () => {
    const r = checkJarPlan(SOUND);
    expect(allCodes(r)).toEqual([]);
    expect(r.ok).toBe(true);
    // jar 2: 2 mL × 1 mg/mL / (2 L + 0.002 L) = 0.999001 mg/L (nominal 1.000)
    expect(r.jars[1]!.recomputedDoseMgPerL).toBeCloseTo(2 / 2.002, 12);
    expect(r.jars[1]!.nominalDoseMgPerL).toBeCloseTo(1, 12);
  });

  it('recomputes the aliquot from a dose alone (rounded to the pipette) and the dose that aliquot gives', () => {
    // 1.53 mg/L from 0.5 g/L in 1 L: 3.06 mL → 3.1 mL → 3.1 × 0.5 / 1.0031 = 1.545210 mg/L
    const r = checkJarPlan({ ...SOUND, jarVolumeL: 1, stockStrengthGPerL: 0.5, estimateMgPerL: 1.2, jars: [{ doseMgPerL: 0.85 }, { doseMgPerL: 1.53 }, { doseMgPerL: 2.21 }] });
    expect(r.jars[1]!.recomputedAliquotMl).toBe(3.1);
    expect(r.jars[1]!.recomputedDoseMgPerL).toBeCloseTo(1.55 / 1.0031, 12);
    expect(r.ok).toBe(true);
  });

  it('accepts a target dose beside its pipette-rounded aliquot (rounding, not an error)', () => {
    // 1.53 mg/L stated with 3.1 mL: recomputed 1.545 mg/L; tolerance = dilution 0.0048 + half step 0.025 + 0.0077 = 0.0375
    const r = checkJarPlan({ ...SOUND, jarVolumeL: 1, stockStrengthGPerL: 0.5, estimateMgPerL: 1.2, jars: [{ doseMgPerL: 0.85, aliquotMl: 1.7 }, { doseMgPerL: 1.53, aliquotMl: 3.1 }, { doseMgPerL: 2.21, aliquotMl: 4.4 }] });
    expect(allCodes(r)).not.toContain('DOSE_MISMATCH');
  });
});

describe('checkJarPlan: the aliquot a dose needs, in words', () => {
  it('0.2 mg/L in 1 L of 1 g/L needs 0.2 mL (by hand: 0.2 × 1 ÷ 1): "the 0.2 mL aliquot that 0.2 mg/L needs is below 1 mL"', () => {
    const r = checkJarPlan({ oxidant: 'potassium-permanganate', jarVolumeL: 1, stockStrengthGPerL: 1, contactTimesMin: [30], jars: [{ doseMgPerL: 0.2 }, { doseMgPerL: 2 }, { doseMgPerL: 3 }] });
    const p = r.jars[0]!.problems.find((x) => x.code === 'ALIQUOT_BELOW_MINIMUM')!;
    expect(p.message).toContain('Jar 1: the 0.2 mL aliquot that 0.2 mg/L needs is below 1 mL');
  });
});

describe('checkJarPlan: a written aliquot against a written dose when the pipette step is coarse', () => {
  it('10 g/L in 500 mL jars: 0.1 mL gives 2.0 mg/L (one step is 2 mg/L), so 1.5 and 2.5 written beside 0.1 mL are DOSE_MISMATCH, and 5.5 beside 0.3 mL too', () => {
    // by hand: a·C/V = 0.1 mL × 10 mg/mL ÷ 0.5 L = 2.0 mg/L (2.0/1.0002 = 1.9996 with the dilution), 0.2 mL → 4.0, 0.3 mL → 6.0;
    // half a step is 1.0 mg/L, far above the 5 % of the dose a 10-step aliquot allows (common practice), so it is not rounding
    const r = checkJarPlan({
      oxidant: 'potassium-permanganate', jarVolumeL: 0.5, stockStrengthGPerL: 10, contactTimesMin: [5, 15, 30],
      jars: [{ doseMgPerL: 1.5, aliquotMl: 0.1 }, { doseMgPerL: 2.5, aliquotMl: 0.1 }, { doseMgPerL: 4, aliquotMl: 0.2 }, { doseMgPerL: 5.5, aliquotMl: 0.3 }],
    });
    const mismatched = r.jars.filter((j) => j.problems.some((p) => p.code === 'DOSE_MISMATCH')).map((j) => j.jar);
    expect(mismatched).toEqual([1, 2, 4]);
    expect(r.jars[0]!.recomputedDoseMgPerL).toBeCloseTo(1 / 0.5001, 9);
    expect(r.jars[0]!.problems.find((p) => p.code === 'DOSE_MISMATCH')!.message).toContain('not the stated 1.5 mg/L');
    expect(r.ok).toBe(false);
  });
});

describe('checkJarPlan: bracketing is judged on the doses the aliquots give', () => {
  // 0.5 g/L stock, 2 L jars: a mL gives a·0.5/(2 + a/1000) mg/L, so 0.5, 1, 1.5, 2 mL give about 0.125 … 0.5 mg/L,
  // a factor-of-4 slip against the stated 0.5 … 2.0 mg/L
  const slip: CheckJarPlanInput = {
    ...SOUND,
    stockStrengthGPerL: 0.5,
    estimateMgPerL: 1.415,
    jars: [0.5, 1, 1.5, 2].map((d) => ({ doseMgPerL: d, aliquotMl: d })),
  };
  it('stated 0.5 … 2.0 mg/L would bracket 1.415, but the jars get at most 0.5 mg/L: NOT_BRACKETING, besides DOSE_MISMATCH per jar', () => {
    const r = checkJarPlan(slip);
    expect(r.jars.every((j) => j.problems.some((p) => p.code === 'DOSE_MISMATCH'))).toBe(true);
    const b = r.problems.find((p) => p.code === 'NOT_BRACKETING')!;
    expect(b.message).toContain('No jar is above the expected demand 1.415 mg/L');
    expect(b.message).toContain('doses the aliquots give 0.125, 0.25, 0.375, 0.5 mg/L');
  });
  it('the other way round: stated 0.2 … 0.6 mg/L with aliquots that give 0.2 … 6 mg/L does bracket 1.415', () => {
    const r = checkJarPlan({ ...slip, stockStrengthGPerL: 1, jars: [{ doseMgPerL: 0.2, aliquotMl: 0.4 }, { doseMgPerL: 0.4, aliquotMl: 8 }, { doseMgPerL: 0.6, aliquotMl: 12 }] });
    expect(r.problems.map((p) => p.code)).not.toContain('NOT_BRACKETING');
  });
});

describe('checkJarPlan: each problem found by a crafted plan', () => {
  const jars = (list: CheckJarPlanInput['jars']) => ({ ...SOUND, jars: list });
  it.each<[string, CheckJarPlanInput, string, number | null]>([
    // [code, plan, expected code, jar (null = plan level)]
    ['arithmetic error: 2 mL of 1.0 g/L in 2 L is 1.0 mg/L, not 1.5', jars([{ doseMgPerL: 0.5, aliquotMl: 1 }, { doseMgPerL: 1.5, aliquotMl: 2 }, { doseMgPerL: 3, aliquotMl: 6 }]), 'DOSE_MISMATCH', 2],
    ['ladder 0.5 … 3.0 below an estimate of 4.0 mg/L', { ...SOUND, estimateMgPerL: 4 }, 'NOT_BRACKETING', null],
    ['estimate 0.2 mg/L below the whole ladder', { ...SOUND, estimateMgPerL: 0.2 }, 'NOT_BRACKETING', null],
    ['40 mL of 0.1 g/L in 2 L is 2 % of the jar', { ...SOUND, stockStrengthGPerL: 0.1, jars: [{ aliquotMl: 10 }, { aliquotMl: 20 }, { aliquotMl: 40 }] }, 'ALIQUOT_TOO_LARGE', 3],
    ['0.05 mL cannot be measured with a 0.1 mL pipette', jars([{ aliquotMl: 0.05 }, { aliquotMl: 2 }, { aliquotMl: 6 }]), 'BELOW_PIPETTE_RESOLUTION', 1],
    ['0.01 mg/L needs 0.02 mL, which rounds to 0', jars([{ doseMgPerL: 0.01 }, { doseMgPerL: 2 }, { doseMgPerL: 3 }]), 'BELOW_PIPETTE_RESOLUTION', 1],
    ['2.25 mL is not a multiple of 0.1 mL', jars([{ aliquotMl: 1 }, { aliquotMl: 2.25 }, { aliquotMl: 6 }]), 'NOT_PIPETTE_MULTIPLE', 2],
    ['0.5 mL is measurable but imprecise', jars([{ aliquotMl: 0.5 }, { aliquotMl: 2 }, { aliquotMl: 6 }]), 'ALIQUOT_BELOW_MINIMUM', 1],
    ['80 g/L KMnO4 is above its solubility', { ...SOUND, stockStrengthGPerL: 80, jars: [{ aliquotMl: 0.1 }, { aliquotMl: 0.2 }, { aliquotMl: 0.3 }] }, 'STOCK_ABOVE_SOLUBILITY', null],
    ['no contact times', { ...SOUND, contactTimesMin: undefined }, 'NO_CONTACT_TIMES', null],
    ['an empty contact-time list', { ...SOUND, contactTimesMin: [] }, 'NO_CONTACT_TIMES', null],
    ['15 min listed twice', { ...SOUND, contactTimesMin: [5, 15, 15] }, 'DUPLICATE_CONTACT_TIME', null],
    ['jar 2 repeats jar 1', jars([{ doseMgPerL: 1 }, { doseMgPerL: 1 }, { doseMgPerL: 3 }]), 'DUPLICATE_DOSE', 2],
    ['ladder 1, 3, 2', jars([{ doseMgPerL: 1 }, { doseMgPerL: 3 }, { doseMgPerL: 2 }]), 'NON_MONOTONIC_LADDER', null],
    ['a jar with neither dose nor aliquot', jars([{ doseMgPerL: 1 }, {}, { doseMgPerL: 3 }]), 'MISSING_DOSE_AND_ALIQUOT', 2],
    ['1000 mg/L from a 0.5 g/L (500 mg/L) stock', { ...jars([{ doseMgPerL: 1 }, { doseMgPerL: 1000 }, { doseMgPerL: 600 }]), stockStrengthGPerL: 0.5 }, 'DOSE_UNREACHABLE', 2],
    ['two jars', jars([{ doseMgPerL: 1 }, { doseMgPerL: 3 }]), 'TOO_FEW_JARS', null],
    ['no estimate', { ...SOUND, estimateMgPerL: undefined }, 'NO_ESTIMATE', null],
  ])('%s → %s', (_name, plan, code, jar) => {
    const r = checkJarPlan(plan);
    const where = jar === null ? r.problems : r.jars[jar - 1]!.problems;
    const found = where.find((p) => p.code === code);
    expect(found, `codes found: ${allCodes(r).join(', ')}`).toBeDefined();
    expect(found!.message.length).toBeGreaterThan(30);
    expect(Object.values(CHECK_CODES)).toContain(code);
  });

  it('a stock too strong for a dose says dilute it, with the strength that gives the minimum aliquot', () => {
    // 1.0 g/L in 2 L: 0.05 mL reads as below the 0.1 mL step; 1.0 × 0.05 / 1.0 mL = 0.05 g/L gives 1.0 mL
    // 0.01 mg/L needs 0.01 × 2 / 1.0 = 0.02 mL → 0 mL; 0.01 × 2 / 1.0 mL = 0.02 g/L gives 1.0 mL
    const a = checkJarPlan(jars([{ aliquotMl: 0.05 }, { aliquotMl: 2 }, { aliquotMl: 6 }])).jars[0]!.problems.find((p) => p.code === 'BELOW_PIPETTE_RESOLUTION')!;
    const b = checkJarPlan(jars([{ doseMgPerL: 0.01 }, { doseMgPerL: 2 }, { doseMgPerL: 3 }])).jars[0]!.problems.find((p) => p.code === 'BELOW_PIPETTE_RESOLUTION')!;
    expect(a.message).toContain('too strong for this dose; dilute it (about 0.05 g/L gives 1 mL)');
    expect(b.message).toContain('too strong for this dose; dilute it (0.02 g/L or weaker gives at least 1 mL)');
    const c = checkJarPlan(jars([{ aliquotMl: 0.5 }, { aliquotMl: 2 }, { aliquotMl: 6 }])).jars[0]!.problems.find((p) => p.code === 'ALIQUOT_BELOW_MINIMUM')!;
    expect(c.message).toContain('Diluting the stock gives larger');
    for (const p of [a, b, c]) expect(p.message).not.toMatch(/weaker stock|stronger stock/);
  });

  it('the mismatch message gives the recomputed dose and the aliquot that would be right', () => {
    // 2 mL → 0.999 mg/L; for 1.5 mg/L: 1.5 × 2 / 1.0 = 3.0 mL
    const r = checkJarPlan(jars([{ doseMgPerL: 0.5, aliquotMl: 1 }, { doseMgPerL: 1.5, aliquotMl: 2 }, { doseMgPerL: 3, aliquotMl: 6 }]));
    const m = r.jars[1]!.problems.find((p) => p.code === 'DOSE_MISMATCH')!.message;
    expect(m).toContain('0.999 mg/L');
    expect(m).toContain('add 3 mL');
    expect(r.ok).toBe(false);
  });

  it('the mismatch threshold beside 2 mL (0.999 mg/L): 1.025 and 0.97 pass, 1.04 and 0.95 do not', () => {
    // recomputed 0.999001; tolerance = dilution 0.000999 + half step (0.5 × 0.1 × 1 / 2 = 0.025) + 0.005 = 0.031
    // 1.04 − 0.999 = 0.041 > 0.031 fails; 1.025 − 0.999 = 0.026 passes
    const at = (d: number) => checkJarPlan(jars([{ doseMgPerL: 0.5, aliquotMl: 1 }, { doseMgPerL: d, aliquotMl: 2 }, { doseMgPerL: 3, aliquotMl: 6 }])).jars[1]!.problems.map((p) => p.code);
    expect(at(1.025)).not.toContain('DOSE_MISMATCH');
    expect(at(1.04)).toContain('DOSE_MISMATCH');
    expect(at(0.97)).not.toContain('DOSE_MISMATCH');
    expect(at(0.95)).toContain('DOSE_MISMATCH');
  });

  it('a large aliquot whose stated dose already allows for dilution is only noted', () => {
    // 40 mL of 0.1 g/L in 2 L: nominal 2.0, diluted 4 / 2.04 = 1.960784 mg/L
    const stated = checkJarPlan({ ...SOUND, stockStrengthGPerL: 0.1, jars: [{ aliquotMl: 10 }, { aliquotMl: 20 }, { doseMgPerL: 1.96, aliquotMl: 40 }] });
    expect(stated.jars[2]!.problems.find((p) => p.code === 'ALIQUOT_TOO_LARGE')!.severity).toBe('info');
    const naive = checkJarPlan({ ...SOUND, stockStrengthGPerL: 0.1, jars: [{ aliquotMl: 10 }, { aliquotMl: 20 }, { doseMgPerL: 2, aliquotMl: 40 }] });
    const p = naive.jars[2]!.problems.find((x) => x.code === 'ALIQUOT_TOO_LARGE')!;
    expect(p.severity).toBe('warning');
    expect(p.message).toContain('1.96 mg/L');
  });
});

describe('checkJarPlan: property', () => {
  it('every plan the planner writes passes the check without errors or mismatches', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 15, noNaN: true }),
        fc.constantFrom(1, 2),
        fc.integer({ min: 3, max: 10 }),
        fc.constantFrom(0.05, 0.1),
        (estimate, V, n, res) => {
          const plan = planJarTest({
            oxidant: 'potassium-permanganate',
            product: { basis: 'KMnO4', stock: { kind: 'solid', purityFraction: 0.98, solubility: { gPerL: 64 } } },
            estimateMgPerL: estimate,
            jarVolumeL: V,
            jars: n,
            pipetteResolutionMl: res,
          });
          const r = checkJarPlan({
            oxidant: plan.oxidant,
            estimateMgPerL: estimate,
            jarVolumeL: V,
            stockStrengthGPerL: plan.stock.strengthGPerL,
            jars: plan.jars.map((j) => ({ doseMgPerL: j.targetDoseMgPerL, aliquotMl: j.aliquotMl })),
            contactTimesMin: plan.schedule.contactTimesMin,
            pipetteResolutionMl: res,
            solubility: { gPerL: 64 },
          });
          expect(r.ok).toBe(true);
          expect(r.jars.flatMap((j) => j.problems).filter((p) => p.code === 'DOSE_MISMATCH')).toEqual([]);
          r.jars.forEach((j, i) => expect(j.recomputedDoseMgPerL).toBeCloseTo(plan.jars[i]!.actualDoseMgPerL, 12));
        },
      ),
      { seed: 99, numRuns: 150 },
    );
  });
});

describe('checkJarPlan: a control jar (dose 0) is a blank, not a bracket', () => {
  const withControl = (doses: number[]): CheckJarPlanInput => ({
    ...SOUND,
    estimateMgPerL: 0.572,
    jars: doses.map((d) => ({ doseMgPerL: d, aliquotMl: d * 2 })),
  });

  it('[0, 1, 2] against 0.572 mg/L: no dosed jar below the demand, NOT_BRACKETING (error) naming the control', () => {
    const r = checkJarPlan(withControl([0, 1, 2]));
    const nb = r.problems.find((p) => p.code === CHECK_CODES.NOT_BRACKETING)!;
    expect(nb.severity).toBe('error');
    expect(nb.message).toContain('No dosed jar is below the expected demand 0.572 mg/L');
    expect(nb.message).toContain('jar 1 at 0 mg/L is a control');
    expect(allCodes(r)).toContain(CHECK_CODES.CONTROL_JAR);
    expect(r.ok).toBe(false);
  });

  it('[0, 0.5, 1, 2] brackets it on the dosed jars; the control is an info', () => {
    const r = checkJarPlan(withControl([0, 0.5, 1, 2]));
    expect(allCodes(r)).not.toContain(CHECK_CODES.NOT_BRACKETING);
    expect(r.problems.find((p) => p.code === CHECK_CODES.CONTROL_JAR)!.severity).toBe('info');
  });
});

describe('checkJarPlan: doses written without aliquots are judged on the aliquot the pipette really delivers', () => {
  // By hand: 1 g/L stock (1 mg/mL), 1 L jars, 0.5 mL pipette step. Exact aliquot = D × 1 L ÷ 1 mg/mL = D mL;
  // rounded half to even at 0.5 mL steps: 0.3 → 0.5, 0.8 → 1.0, 1.2 → 1.0, 1.6 → 1.5 mL;
  // doses a·C/(V + a/1000): 0.5/1.0005 = 0.49975, 1/1.001 = 0.99900, 1.5/1.0015 = 1.49775 mg/L.
  // Jar 1 gets +66.6 %, far above the 5 % a rounding may move a dose (ten-step minimum aliquot, common practice);
  // jars 2 and 3 both pipette 1.0 mL, so they are the same jar.
  const input: CheckJarPlanInput = {
    oxidant: 'potassium-permanganate',
    jarVolumeL: 1,
    stockStrengthGPerL: 1,
    pipetteResolutionMl: 0.5,
    contactTimesMin: [5, 15, 30],
    jars: [0.3, 0.8, 1.2, 1.6].map((d) => ({ doseMgPerL: d })),
  };

  it('recomputed doses, DOSE_OFF_PIPETTE_STEP for jar 1 (+67 %) and DUPLICATE_DOSE for jar 3', () => {
    const r = checkJarPlan(input);
    expect(r.ok).toBe(false);
    expect(r.jars.map((j) => j.recomputedAliquotMl)).toEqual([0.5, 1, 1, 1.5]);
    [0.5 / 1.0005, 1 / 1.001, 1 / 1.001, 1.5 / 1.0015].forEach((d, i) => expect(r.jars[i]!.recomputedDoseMgPerL).toBeCloseTo(d, 12));
    const off = r.jars[0]!.problems.find((p) => p.code === CHECK_CODES.DOSE_OFF_PIPETTE_STEP)!;
    expect(off.severity).toBe('error');
    expect(off.message).toContain('+67 %');
    // weaker stock for at least 5 mL (10 steps of 0.5 mL): 0.3 mg/L × 1 L ÷ 5 mL = 0.06 g/L
    expect(off.message).toContain('0.06 g/L');
    const dup = r.jars[2]!.problems.find((p) => p.code === CHECK_CODES.DUPLICATE_DOSE)!;
    expect(dup.message).toContain('repeats the dose of jar 2');
    expect(dup.message).toContain('both pipette 1 mL');
    expect(r.jars[1]!.problems.map((p) => p.code)).not.toContain(CHECK_CODES.DUPLICATE_DOSE);
  });

  it('the same doses with a 0.01 mL pipette are within rounding: no dose problem, no duplicate', () => {
    const r = checkJarPlan({ ...input, pipetteResolutionMl: 0.01, minAliquotMl: 0.1 });
    const codes = allCodes(r);
    expect(codes).not.toContain(CHECK_CODES.DOSE_OFF_PIPETTE_STEP);
    expect(codes).not.toContain(CHECK_CODES.DUPLICATE_DOSE);
  });

  it('DOSE_MISMATCH whose exact aliquot rounds back to the written one suggests a weaker stock, not the same aliquot', () => {
    // By hand: 10 g/L in 0.5 L; 1.5 mg/L needs 1.5 × 0.5 ÷ 10 = 0.075 mL, which rounds to 0.1 mL (the one written),
    // and 0.1 mL gives 0.1 × 10 ÷ 0.5001 = 1.9996 mg/L. A stock for 1 mL: 1.5 × 0.5 ÷ 1 = 0.75 g/L.
    const r = checkJarPlan({ oxidant: 'potassium-permanganate', jarVolumeL: 0.5, stockStrengthGPerL: 10, contactTimesMin: [30], jars: [{ doseMgPerL: 1.5, aliquotMl: 0.1 }, { doseMgPerL: 4, aliquotMl: 0.2 }, { doseMgPerL: 6, aliquotMl: 0.3 }] });
    const m = r.jars[0]!.problems.find((p) => p.code === CHECK_CODES.DOSE_MISMATCH)!;
    expect(m.message).not.toContain('add 0.1 mL');
    expect(m.message).toContain('cannot be made at the 0.1 mL pipette step');
    expect(m.message).toContain('0.075 mL');
    expect(m.message).toContain('0.75 g/L');
    // a mismatch the pipette can fix still names the aliquot: 2 mg/L written beside 0.3 mL (about 6 mg/L)
    const fixable = checkJarPlan({ oxidant: 'potassium-permanganate', jarVolumeL: 0.5, stockStrengthGPerL: 10, contactTimesMin: [30], jars: [{ doseMgPerL: 2, aliquotMl: 0.3 }, { doseMgPerL: 4, aliquotMl: 0.2 }, { doseMgPerL: 6, aliquotMl: 0.3 }] });
    // 2 mg/L needs 2 × 0.5 ÷ 10 = 0.1 mL
    expect(fixable.jars[0]!.problems.find((p) => p.code === CHECK_CODES.DOSE_MISMATCH)!.message).toContain('For 2 mg/L add 0.1 mL');
  });
});
