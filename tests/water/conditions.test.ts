import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { compileHalf, evaluateLog10Q, nernst, prepareLog10Q } from '../../src/water/conditions.js';
import { nernstSlopeV } from '../../src/water/constants.js';
import { kwAt } from '../../src/water/speciation.js';
import { DomainError } from '../../src/core/errors.js';
import { parseFormula, speciesKey } from '../../src/chemistry/formula/index.js';
import { halfReaction } from '../../src/chemistry/balance/index.js';
import { CODATA_2018, explicitHalf, KW_HARNED_OWEN } from './helpers.js';

const key = (f: string) => speciesKey(parseFormula(f));
const fe3fe2 = explicitHalf([[1, 'Fe3+'], [1, 'e-']], [[1, 'Fe2+']]);
// O2(g) + 4H+ + 4e- → 2H2O, E° = 1.229 V (CRC Handbook, Electrochemical Series)
const o2Acid = explicitHalf([[1, 'O2(g)'], [4, 'H+'], [4, 'e-']], [[2, 'H2O']]);
// O2(g) + 2H2O + 4e- → 4OH-, the same couple in base
const o2Base = explicitHalf([[1, 'O2(g)'], [2, 'H2O'], [4, 'e-']], [[4, 'OH-']], 'base');
const base = { pH: 7, temperatureC: 25, constants: CODATA_2018 };

function err(f: () => unknown): DomainError {
  try {
    f();
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('did not throw');
}

describe('nernst: refused inputs (edge cases first)', () => {
  it('a half-reaction without electrons on the reactant side is not a reduction', () => {
    const notRedox = explicitHalf([[1, 'HOCl']], [[1, 'H+'], [1, 'OCl-']]);
    expect(err(() => nernst({ ...base, half: notRedox, standardPotentialV: 0 })).code).toBe('BALANCE_NOT_REDOX');
  });
  it('a zero or negative activity points at the species', () => {
    const e = err(() => nernst({ ...base, half: fe3fe2, standardPotentialV: 0.771, activities: { [key('Fe2+')]: 0 } }));
    expect(e.code).toBe('ACTIVITY_INVALID');
    expect(e.fields[0]?.pointer).toBe(`/activities/${key('Fe2+')}`);
  });
  it('OH- needs Kw at the temperature', () => {
    const e = err(() => nernst({ ...base, half: o2Base, standardPotentialV: 0.401 }));
    expect(e.code).toBe('ACTIVITY_INVALID');
    expect(e.fields.map((f) => f.pointer)).toContain('/kw');
  });
  it.each([[-1], [15]])('pH %s is refused', (pH) => {
    expect(err(() => nernst({ ...base, pH, half: fe3fe2, standardPotentialV: 0.771 })).code).toBe('QUANTITY_OUT_OF_RANGE');
  });
});

describe('nernst: textbook values', () => {
  it('Fe3+/Fe2+ with a(Fe3+)/a(Fe2+) = 10 is +0.05916 V above E° at 25 °C (Harris 2010, ch. 13: 59.16 mV per decade)', () => {
    const r = nernst({ ...base, half: fe3fe2, standardPotentialV: 0.771, activities: { [key('Fe3+')]: 1e-3, [key('Fe2+')]: 1e-4 } });
    expect(r.potentialV - 0.771).toBeCloseTo(0.05916, 5);
    expect(r.log10Q).toBeCloseTo(-1, 12);
    expect(r.notGiven).toEqual([]);
  });

  it.each([
    // slope from CODATA R, F: RT ln10/F at 5 °C = 0.0551909 V, at 30 °C = 0.0601515 V (hand arithmetic in constants.test.ts)
    [5, 0.0551909],
    [30, 0.0601515],
  ])('at %s °C a tenfold ratio moves Fe3+/Fe2+ by the slope at that temperature, %s V', (t, slope) => {
    const r = nernst({ ...base, temperatureC: t, half: fe3fe2, standardPotentialV: 0.771, activities: { [key('Fe3+')]: 1e-3, [key('Fe2+')]: 1e-4 } });
    expect(r.slopeV).toBeCloseTo(slope, 6);
    expect(r.potentialV - 0.771).toBeCloseTo(slope, 6);
  });

  it('O2/H2O at pH 7 and pO2 = 1 atm is 0.815 V (E°\' of the biochemistry tables, e.g. Stumm & Morgan 1996 Table 8.1: pε°(W) = 13.75)', () => {
    // hand: 1.229 − 0.0591593 × 7 = 0.8149 V; Stumm & Morgan pε°(W) 13.75 × 0.05916 = 0.813 V
    const r = nernst({ ...base, half: o2Acid, standardPotentialV: 1.229 });
    expect(r.potentialV).toBeCloseTo(0.815, 3);
    const byOrigin = Object.fromEntries(r.activities.map((a) => [a.text, [a.origin, a.reason ?? null]]));
    expect(byOrigin).toEqual({ 'O2(g)': ['unit-by-convention', 'gas-at-1-atm'], 'H+': ['pH', null], H2O: ['unit-by-convention', 'water'] });
  });

  it('the same couple from the balancer gives the same potential as the hand-written one', () => {
    const fromBalancer = halfReaction({ oxidised: parseFormula('O2(g)'), reduced: parseFormula('H2O'), medium: 'acid' });
    const a = nernst({ ...base, half: fromBalancer, standardPotentialV: 1.229, partialPressuresAtm: { [key('O2(g)')]: 0.21 } });
    const b = nernst({ ...base, half: o2Acid, standardPotentialV: 1.229, partialPressuresAtm: { [key('O2(g)')]: 0.21 } });
    expect(a.potentialV).toBeCloseTo(b.potentialV, 12);
    // air: (s/4)·log10 0.21 = −0.0100 V below the 1 atm value
    expect(a.potentialV - nernst({ ...base, half: o2Acid, standardPotentialV: 1.229 }).potentialV).toBeCloseTo((0.0591593 / 4) * Math.log10(0.21), 6);
  });

  it('acid and base forms of O2 agree at every pH and temperature when E°(base) = E°(acid) − s·pKw (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 14, noNaN: true }), fc.double({ min: 0, max: 60, noNaN: true }), (pH, t) => {
        const kw = kwAt(t, KW_HARNED_OWEN, CODATA_2018);
        const s = nernstSlopeV(t, CODATA_2018);
        const acid = nernst({ pH, temperatureC: t, constants: CODATA_2018, half: o2Acid, standardPotentialV: 1.229 });
        const baseForm = nernst({ pH, temperatureC: t, constants: CODATA_2018, half: o2Base, standardPotentialV: 1.229 - s * kw.pKw, kw: kw.Kw });
        expect(baseForm.potentialV).toBeCloseTo(acid.potentialV, 9);
      }),
    );
  });
});

describe('nernst: activities and their origins', () => {
  it('solids are at unit activity, by phase or by the solids set; species not given are listed', () => {
    // Fe(OH)3 + 3H+ + e- → Fe2+ + 3H2O
    const withPhase = explicitHalf([[1, 'Fe(OH)3(s)'], [3, 'H+'], [1, 'e-']], [[1, 'Fe2+'], [3, 'H2O']]);
    const noPhase = explicitHalf([[1, 'Fe(OH)3'], [3, 'H+'], [1, 'e-']], [[1, 'Fe2+'], [3, 'H2O']]);
    const a = nernst({ ...base, half: withPhase, standardPotentialV: 0.947 });
    expect(a.notGiven).toEqual(['Fe2+']);
    expect(a.activities.find((x) => x.text === 'Fe(OH)3(s)')).toMatchObject({ origin: 'unit-by-convention', reason: 'solid', activity: 1 });
    const b = nernst({ ...base, half: noPhase, standardPotentialV: 0.947, solids: new Set([key('Fe(OH)3')]) });
    expect(b.potentialV).toBeCloseTo(a.potentialV, 12);
    // hand: E = 0.947 − 0.0591593·(log a(Fe2+) + 3 pH) = 0.947 − 0.0591593·21 = −0.2953 V at a(Fe2+) = 1
    expect(a.potentialV).toBeCloseTo(0.947 - 0.0591593 * 21, 5);
  });

  it('OH- takes its activity from Kw and the pH', () => {
    const kw = kwAt(25, KW_HARNED_OWEN, CODATA_2018).Kw;
    const r = nernst({ ...base, pH: 9, half: o2Base, standardPotentialV: 0.401, kw });
    const oh = r.activities.find((x) => x.text === 'OH-');
    expect(oh?.origin).toBe('Kw');
    expect(oh?.activity).toBeCloseTo(kw / 1e-9, 12);
  });

  it('a Map of activities works the same as a record', () => {
    const rec = nernst({ ...base, half: fe3fe2, standardPotentialV: 0.771, activities: { [key('Fe3+')]: 2e-5 } });
    const map = nernst({ ...base, half: fe3fe2, standardPotentialV: 0.771, activities: new Map([[key('Fe3+'), 2e-5]]) });
    expect(map.potentialV).toBe(rec.potentialV);
    expect(rec.notGiven).toEqual(['Fe2+']);
  });
});

describe('nernst: linked activities (a term converted from a given partner, log10 a = c0 + k·pH)', () => {
  // OCl- + 2H+ + 2e- → Cl- + H2O, and OCl- converted from a(HOCl) = 1e-5 through HOCl = H+ + OCl-:
  // log10 a(OCl-) = log10 a(HOCl) − pKa + pH, pKa = 7.537 at 25 °C (Morris 1966, tables/equilibria.json morris-hocl)
  const oclAcid = explicitHalf([[1, 'OCl-'], [2, 'H+'], [2, 'e-']], [[1, 'Cl-'], [1, 'H2O']]);
  const pKa = 7.537;
  const linked = new Map([[key('OCl-'), { log10ActivityAtPH0: -5 - pKa, perPH: 1 }]]);
  const cl = { [key('Cl-')]: 1e-3 };

  it('a linked term is reported as converted, with the activity c0 + k·pH (hand arithmetic: 10^(−5 − 7.537 + 8) at pH 8)', () => {
    const r = nernst({ ...base, pH: 8, half: oclAcid, standardPotentialV: 1.715, activities: cl, linked });
    const ocl = r.activities.find((a) => a.text === 'OCl-');
    expect(ocl).toMatchObject({ origin: 'converted' });
    expect(ocl?.log10Activity).toBeCloseTo(-5 - pKa + 8, 12);
    expect(r.notGiven).toEqual([]);
    const given = nernst({ ...base, pH: 8, half: oclAcid, standardPotentialV: 1.715, activities: { ...cl, [key('OCl-')]: Math.pow(10, -5 - pKa + 8) } });
    expect(r.potentialV).toBeCloseTo(given.potentialV, 12);
  });

  it("the term's own value wins over its linked one", () => {
    const r = nernst({ ...base, pH: 8, half: oclAcid, standardPotentialV: 1.715, activities: { ...cl, [key('OCl-')]: 2e-6 }, linked });
    const ocl = r.activities.find((a) => a.text === 'OCl-');
    expect(ocl?.origin).toBe('given');
    expect(ocl?.log10Activity).toBeCloseTo(Math.log10(2e-6), 12);
  });

  it('a linked gas takes the place of its pressure (O2(g) from dissolved O2 by Henry, phreeqc log K_H = −2.8983)', () => {
    const r = nernst({ ...base, half: o2Acid, standardPotentialV: 1.229, linked: new Map([[key('O2(g)'), { log10ActivityAtPH0: Math.log10(2.5e-4) + 2.8983, perPH: 0 }]]) });
    expect(r.activities.find((a) => a.text === 'O2(g)')).toMatchObject({ origin: 'converted' });
    const p = nernst({ ...base, half: o2Acid, standardPotentialV: 1.229, partialPressuresAtm: { [key('O2(g)')]: 2.5e-4 * Math.pow(10, 2.8983) } });
    expect(r.potentialV).toBeCloseTo(p.potentialV, 12);
  });

  it('the root finder\'s log Q (fixed part + per-pH part) equals the reported one at every pH (property)', () => {
    const ch = compileHalf(oclAcid);
    const c = { temperatureC: 25, constants: CODATA_2018, activities: cl, linked };
    const q = prepareLog10Q(ch, c);
    fc.assert(
      fc.property(fc.double({ min: 0, max: 14, noNaN: true }), (pH) => {
        expect(q(pH)).toBeCloseTo(evaluateLog10Q(ch, pH, c, new Map(), false).log10Q, 9);
      }),
    );
  });

  it('a linked activity that is not finite is refused', () => {
    const e = err(() => nernst({ ...base, half: oclAcid, standardPotentialV: 1.715, linked: new Map([[key('OCl-'), { log10ActivityAtPH0: Number.NaN, perPH: 1 }]]) }));
    expect(e.code).toBe('ACTIVITY_INVALID');
    expect(e.fields[0]?.pointer).toBe(`/linked/${key('OCl-')}`);
  });
});
