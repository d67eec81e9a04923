import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { evaluateCell, type CellInput } from '../../src/water/cell.js';
import { nernstSlopeV } from '../../src/water/constants.js';
import { kwAt, monoproticFractions, pKAt } from '../../src/water/speciation.js';
import { DomainError } from '../../src/core/errors.js';
import { parseFormula, speciesKey } from '../../src/chemistry/formula/index.js';
import { CODATA_2018, explicitHalf, KA_HOCL_MORRIS, KW_HARNED_OWEN } from './helpers.js';

const key = (f: string) => speciesKey(parseFormula(f));
const s25 = nernstSlopeV(25, CODATA_2018);

// Standard potentials at 25 °C, CRC Handbook (97th ed.), Electrochemical Series: O2/H2O 1.229, MnO2/Mn2+ 1.224,
// HOCl/Cl- 1.482. Fe(OH)3/Fe2+ 0.947 is a test value inside the 0.93–1.06 V spread of the iron(III) solids.
const o2 = explicitHalf([[1, 'O2(g)'], [4, 'H+'], [4, 'e-']], [[2, 'H2O']]);
const mno2 = explicitHalf([[1, 'MnO2(s)'], [4, 'H+'], [2, 'e-']], [[1, 'Mn2+'], [2, 'H2O']]);
const feOH3 = explicitHalf([[1, 'Fe(OH)3(s)'], [3, 'H+'], [1, 'e-']], [[1, 'Fe2+'], [3, 'H2O']]);
const hocl = explicitHalf([[1, 'HOCl'], [1, 'H+'], [2, 'e-']], [[1, 'Cl-'], [1, 'H2O']]);
const ocl = explicitHalf([[1, 'OCl-'], [1, 'H2O'], [2, 'e-']], [[1, 'Cl-'], [2, 'OH-']], 'base');

const o2Fe: CellInput = {
  oxidantHalf: o2,
  reductantHalf: feOH3,
  oxidantE0V: 1.229,
  reductantE0V: 0.947,
  pH: 7,
  temperatureC: 25,
  partialPressuresAtm: { [key('O2(g)')]: 0.21 },
  activities: { [key('Fe2+')]: 1e-5 },
  constants: CODATA_2018,
  reductantResidual: { molarMassGPerMol: 55.845 },
};

describe('evaluateCell: refused inputs (edge cases first)', () => {
  it('a non-finite E° names the field', () => {
    try {
      evaluateCell({ ...o2Fe, oxidantE0V: Number.NaN });
      expect.unreachable();
    } catch (e) {
      expect((e as DomainError).fields[0]?.pointer).toBe('/oxidantE0V');
    }
  });
  it('OH- in a half without Kw is refused', () => {
    expect(() => evaluateCell({ ...o2Fe, oxidantHalf: ocl, oxidantE0V: 0.9 })).toThrow(/Kw/);
  });
});

describe('evaluateCell: standard quantities', () => {
  it('O2 + Fe(OH)3/Fe2+: n = lcm(4, 1) = 4, ΔG° = −nFE°, log K = nE°/s (hand arithmetic)', () => {
    const r = evaluateCell(o2Fe);
    expect(r.electrons).toBe(4);
    expect(r.multipliers).toEqual({ oxidant: 1, reductant: 4 });
    expect(r.standardCellPotentialV).toBeCloseTo(0.282, 12);
    // ΔG° = −4 × 96485.33212 × 0.282 / 1000 = −108.835 kJ/mol; log K = 4 × 0.282 / 0.0591593 = 19.067
    expect(r.standardDeltaGkJPerMol).toBeCloseTo(-108.835, 3);
    expect(r.log10K).toBeCloseTo(19.067, 3);
    expect(r.deltaGkJPerMol).toBeCloseTo((-4 * 96485.33212 * r.cellPotentialV) / 1000, 9);
    expect(r.cellPotentialV).toBeCloseTo(r.oxidant.potentialV - r.reductant.potentialV, 12);
    expect(r.feasible).toBe(true);
    expect(r.marginV).toBe(r.cellPotentialV);
  });
});

describe('feasibility limit pH: the root finder against the analytic root', () => {
  it('O2 + MnO2/Mn2+: E = E°o − E°r + (s/4)log pO2 + (s/2)log a(Mn2+) + s·pH, root 2.585 (feasible above)', () => {
    // hand: pH* = (1.224 − 1.229 − (s/4)·log 0.21 − (s/2)·(−5)) / s = (−0.005 + 0.010025 + 0.147898) / 0.0591593 = 2.5849
    const r = evaluateCell({ ...o2Fe, reductantHalf: mno2, reductantE0V: 1.224, activities: { [key('Mn2+')]: 1e-5 } });
    const analytic = (1.224 - 1.229 - (s25 / 4) * Math.log10(0.21) - (s25 / 2) * -5) / s25;
    expect(analytic).toBeCloseTo(2.5849, 4);
    expect(Math.abs((r.feasibilityLimitPH ?? NaN) - analytic)).toBeLessThan(1e-6);
    expect(r.feasibleSide).toBe('above');
    expect(r.feasibleRangesPH).toEqual([{ fromPH: r.feasibilityLimitPH, toPH: 14 }]);
  });

  it('O2 + Fe(OH)3/Fe2+: E rises by 2s per pH unit, root 0.2013', () => {
    // hand: pH* = (0.947 − 1.229 − (s/4)·log 0.21 − s·(−5)) / (2s) = (−0.282 + 0.010025 + 0.295797) / 0.118319 = 0.2013
    const r = evaluateCell(o2Fe);
    const analytic = (0.947 - 1.229 - (s25 / 4) * Math.log10(0.21) + 5 * s25) / (2 * s25);
    expect(Math.abs((r.feasibilityLimitPH ?? NaN) - analytic)).toBeLessThan(1e-6);
    expect(r.feasibleSide).toBe('above');
  });

  it('HOCl + MnO2/Mn2+ keeps one sign over 0–14: null, feasible everywhere (chlorine–manganese is limited by kinetics, not thermodynamics)', () => {
    const r = evaluateCell({
      ...o2Fe,
      oxidantHalf: hocl,
      oxidantE0V: 1.482,
      reductantHalf: mno2,
      reductantE0V: 1.224,
      activities: { [key('HOCl')]: 1e-5, [key('Cl-')]: 1e-4, [key('Mn2+')]: 1e-6 },
    });
    expect(r.feasibilityLimitPH).toBeNull();
    expect(r.feasibleSide).toBe('everywhere');
    expect(r.feasibilityLimitsPH).toEqual([]);
  });

  it('a reverse-running cell is feasible nowhere', () => {
    const r = evaluateCell({ ...o2Fe, oxidantHalf: feOH3, oxidantE0V: 0.947, reductantHalf: hocl, reductantE0V: 1.482, activities: { [key('HOCl')]: 1, [key('Cl-')]: 1e-6, [key('Fe2+')]: 1 } });
    expect(r.feasibleSide).toBe('nowhere');
    expect(r.feasible).toBe(false);
  });

  it('with speciation the root is still exact: HOCl/OCl- (total 1e-5 M) as reductant against a couple of fixed E = 1.113 V, root at pH 9', () => {
    // Hand construction: E(HOCl/Cl-) at pH 9 with a(Cl-) = 1e-3, C = 1e-5, pKa = 7.537 (Morris, 25 °C):
    //   α(HOCl) = 1/(1 + 10^(9 − 7.537)); E = 1.482 − (s/2)(log a(Cl-) − log(α C) + pH). The fixed couple is set to that E.
    const pKa = pKAt(25, KA_HOCL_MORRIS, CODATA_2018);
    const alpha = monoproticFractions(9, pKa).alpha0;
    const eAt9 = 1.482 - (s25 / 2) * (-3 - Math.log10(alpha * 1e-5) + 9);
    const fixed = explicitHalf([[1, 'Fe3+'], [1, 'e-']], [[1, 'Fe2+']]); // used as a test couple with E° = eAt9
    const cell = {
      oxidantHalf: fixed,
      oxidantE0V: eAt9,
      reductantHalf: hocl,
      reductantE0V: 1.482,
      temperatureC: 25,
      constants: CODATA_2018,
      activities: { [key('Cl-')]: 1e-3 },
      speciation: [{ totalMolPerL: 1e-5, speciesKeys: [key('HOCl'), key('OCl-')], pKas: [pKa] }],
    };
    const r = evaluateCell({ ...cell, pH: 7 });
    expect(Math.abs((r.feasibilityLimitPH ?? NaN) - 9)).toBeLessThan(1e-5);
    expect(r.feasibleSide).toBe('above');
    const atRoot = evaluateCell({ ...cell, pH: r.feasibilityLimitPH! });
    expect(Math.abs(atRoot.cellPotentialV)).toBeLessThan(1e-6);
  });
});

describe('equilibrium residual of the reductant', () => {
  it('is the Fe2+ level at which E = 0: putting it back gives E = 0 (property over pH)', () => {
    fc.assert(
      fc.property(fc.double({ min: 5, max: 9, noNaN: true }), (pH) => {
        const r = evaluateCell({ ...o2Fe, pH });
        const res = r.reductantResidual!;
        expect(res.species).toBe('Fe2+');
        const back = evaluateCell({ ...o2Fe, pH, activities: { [key('Fe2+')]: res.activity } });
        expect(Math.abs(back.cellPotentialV)).toBeLessThan(1e-9);
        expect(res.mgPerL).toBeCloseTo(res.molPerL * 55845, 20);
      }),
    );
  });

  it('hand value at pH 7: log a* = log a − E/s (one electron, ν = 1)', () => {
    const r = evaluateCell(o2Fe);
    expect(r.reductantResidual!.log10Activity).toBeCloseTo(-5 - r.cellPotentialV / s25, 9);
  });

  it('is null, with the reason, when the reaction does not proceed (E ≤ 0): the reductant stays as given', () => {
    // Hand arithmetic at pH 0 (a(H+) = 1), pO2 = 0.21 atm, a(Fe2+) = 1e-5:
    //   E(O2/H2O)       = 1.229 + (s/4)·log10 0.21          (O2 + 4H+ + 4e- → 2H2O)
    //   E(Fe(OH)3/Fe2+) = 0.947 − s·log10 1e-5 = 0.947 + 5s (Fe(OH)3 + 3H+ + e- → Fe2+ + 3H2O)
    //   E = 0.282 + (s/4)·log10 0.21 − 5s = 0.282 − 0.0100 − 0.2958 = −0.0238 V < 0
    const r = evaluateCell({ ...o2Fe, pH: 0 });
    const e = 0.282 + (s25 / 4) * Math.log10(0.21) - 5 * s25;
    expect(r.cellPotentialV).toBeCloseTo(e, 12);
    expect(e).toBeLessThan(0);
    expect(r.feasible).toBe(false);
    expect(r.reductantResidual).toBeNull();
    expect(r.reductantResidualReason).toMatch(/does not proceed at these conditions/);
    expect(r.reductantResidualReason).toMatch(/Fe2\+ stays at the level given/);
    // Fe2+ not given (unit activity) against a test E° of 1.3 V: E = 1.229 + (s/4)·log10 0.21 − 1.3 < 0 at pH 0; the reason says it was not given
    const unit = evaluateCell({ ...o2Fe, pH: 0, activities: {}, reductantE0V: 1.3 });
    expect(unit.cellPotentialV).toBeCloseTo(1.229 + (s25 / 4) * Math.log10(0.21) - 1.3, 12);
    expect(unit.reductantResidual).toBeNull();
    expect(unit.reductantResidualReason).toMatch(/taken at unit activity/);
  });

  it('when feasible its note says every other activity is held (no mass balance)', () => {
    // at pH 0.5 the same cell is feasible: E = −0.0238 + 2s·0.5 = +0.0354 V (the cell gains 2s per pH unit: 3s − s)
    const r = evaluateCell({ ...o2Fe, pH: 0.5 });
    expect(r.cellPotentialV).toBeCloseTo(0.282 + (s25 / 4) * Math.log10(0.21) - 5 * s25 + s25, 12);
    expect(r.feasible).toBe(true);
    expect(r.reductantResidual!.note).toMatch(/every other activity held \(no mass balance/);
    expect(r.reductantResidualReason).toBeUndefined();
  });

  it('is null, with a reason, when the reduced form is a solid or water', () => {
    // reductant written as a reduction whose reduced form is water: H2O2 + 2H+ + 2e- → 2H2O
    const h2o2 = explicitHalf([[1, 'H2O2'], [2, 'H+'], [2, 'e-']], [[2, 'H2O']]);
    const r = evaluateCell({ ...o2Fe, reductantHalf: h2o2, reductantE0V: 1.776 });
    expect(r.reductantResidual).toBeNull();
    expect(r.reductantResidualReason).toMatch(/fixed activity/);
  });
});

describe('HOCl or OCl- as the tabled form: the same cell gives the same E (property)', () => {
  // E°(OCl-/Cl-, base) = E°(HOCl/Cl-) + (s/2)(pKa − 2 pKw): OCl- + H+ → HOCl (log K = pKa), then the acid couple,
  // then 2H2O → 2H+ + 2OH- (log K = −2 pKw). Derived here in the test from the Morris pKa and the Harned & Owen Kw.
  it('at every pH 0–14 and 0–35 °C, free chlorine split by speciation', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 14, noNaN: true }),
        fc.double({ min: 0, max: 35, noNaN: true }),
        fc.double({ min: 1e-7, max: 1e-3, noNaN: true }),
        (pH, t, totalMolPerL) => {
          const s = nernstSlopeV(t, CODATA_2018);
          const pKa = pKAt(t, KA_HOCL_MORRIS, CODATA_2018);
          const kw = kwAt(t, KW_HARNED_OWEN, CODATA_2018);
          const e0Hocl = 1.482;
          const e0Ocl = e0Hocl + (s / 2) * (pKa - 2 * kw.pKw);
          const { alpha0, alpha1 } = monoproticFractions(pH, pKa);
          const common = { reductantHalf: feOH3, reductantE0V: 0.947, pH, temperatureC: t, constants: CODATA_2018, kw: kw.Kw };
          const fixed = { [key('Cl-')]: 1e-4, [key('Fe2+')]: 1e-5 };
          const a = evaluateCell({ ...common, oxidantHalf: hocl, oxidantE0V: e0Hocl, activities: { ...fixed, [key('HOCl')]: alpha0 * totalMolPerL } });
          const b = evaluateCell({ ...common, oxidantHalf: ocl, oxidantE0V: e0Ocl, activities: { ...fixed, [key('OCl-')]: alpha1 * totalMolPerL } });
          expect(b.cellPotentialV).toBeCloseTo(a.cellPotentialV, 9);
          expect(b.electrons).toBe(a.electrons);
          // the same through the speciation group, which also carries the split into the root finder
          const group = [{ totalMolPerL, speciesKeys: [key('HOCl'), key('OCl-')], pKas: [pKa] }];
          const c = evaluateCell({ ...common, oxidantHalf: hocl, oxidantE0V: e0Hocl, activities: fixed, speciation: group });
          const d = evaluateCell({ ...common, oxidantHalf: ocl, oxidantE0V: e0Ocl, activities: fixed, speciation: group });
          expect(c.cellPotentialV).toBeCloseTo(a.cellPotentialV, 9);
          expect(d.cellPotentialV).toBeCloseTo(a.cellPotentialV, 9);
          expect(d.feasibleSide).toBe(c.feasibleSide);
          if (c.feasibilityLimitPH !== null) expect(d.feasibilityLimitPH!).toBeCloseTo(c.feasibilityLimitPH, 5);
        },
      ),
      { numRuns: 200 },
    );
  });

  it('at 25 °C the derived E°(OCl-/Cl-) is 0.877 V, about 70 mV above the 0.81 V printed in the CRC series (the known inconsistency)', () => {
    const s = nernstSlopeV(25, CODATA_2018);
    const e0Ocl = 1.482 + (s / 2) * (pKAt(25, KA_HOCL_MORRIS, CODATA_2018) - 2 * kwAt(25, KW_HARNED_OWEN, CODATA_2018).pKw);
    expect(e0Ocl).toBeCloseTo(0.877, 3);
    expect(e0Ocl - 0.81).toBeGreaterThan(0.06);
  });
});
