import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  acidFractions,
  diproticFractions,
  equilibriumSpecFromRow,
  kwAt,
  log10KAt,
  mixedPKa,
  monoproticFractions,
  pKAt,
  type EquilibriumSpec,
} from '../../src/water/speciation.js';
import { daviesA, daviesGamma } from '../../src/water/activity.js';
import type { EquilibriumRow } from '../../src/reference/schemas.js';
import { CODATA_2018, K1_PLUMMER_BUSENBERG, K2_PLUMMER_BUSENBERG, KA_HOCL_MORRIS, KW_HARNED_OWEN } from './helpers.js';

describe('acid fractions (edge cases first)', () => {
  it('needs at least one pKa and finite numbers', () => {
    expect(() => acidFractions(7, [])).toThrow(/pKa/);
    expect(() => acidFractions(Number.NaN, [7])).toThrow(/pH/);
    expect(() => acidFractions(7, [Number.NaN])).toThrow(/pKa/);
  });

  it('stays finite and normalised at the ends of the pH scale for a triprotic acid', () => {
    for (const pH of [0, 14]) {
      const a = acidFractions(pH, [2.15, 7.2, 12.35]); // phosphoric acid pKa's (CRC Handbook, 25 °C)
      expect(a.every((x) => Number.isFinite(x) && x >= 0)).toBe(true);
      expect(a.reduce((s, x) => s + x, 0)).toBeCloseTo(1, 14);
    }
  });

  it('splits 50/50 at pH = pKa (Henderson–Hasselbalch)', () => {
    const f = monoproticFractions(7.54, 7.54);
    expect(f.alpha0).toBeCloseTo(0.5, 14);
    expect(f.alpha1).toBeCloseTo(0.5, 14);
  });

  it('fractions sum to 1 and the diprotic middle form peaks at (pKa1 + pKa2)/2 (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 14, noNaN: true }), fc.double({ min: 1, max: 7, noNaN: true }), fc.double({ min: 0.5, max: 6, noNaN: true }), (pH, pK1, gap) => {
        const d = diproticFractions(pH, pK1, pK1 + gap);
        expect(d.alpha0 + d.alpha1 + d.alpha2).toBeCloseTo(1, 12);
        const mid = pK1 + gap / 2;
        expect(diproticFractions(mid, pK1, pK1 + gap).alpha1).toBeGreaterThanOrEqual(d.alpha1 - 1e-12);
      }),
    );
  });

  it('HOCl is about three quarters of free chlorine at pH 7, 25 °C (the usual chart reading — common practice)', () => {
    const pKa = pKAt(25, KA_HOCL_MORRIS, CODATA_2018);
    // hand: 1 / (1 + 10^(7 − 7.537)) = 1 / (1 + 0.2904) = 0.775
    expect(monoproticFractions(7, pKa).alpha0).toBeCloseTo(0.775, 2);
  });

  it('mixed pKa: the fractions of concentrations shift by log γ(base) − log γ(acid)', () => {
    const A = daviesA(25, CODATA_2018).A;
    const g1 = daviesGamma(1, 0.01, A);
    const pKa = 7.537;
    const mixed = mixedPKa(pKa, 1, g1);
    // ratio of concentrations [OCl-]/[HOCl] times γ(OCl-) equals Ka/a(H+)
    const { alpha0, alpha1 } = monoproticFractions(7, mixed);
    expect((alpha1 * g1) / alpha0).toBeCloseTo(Math.pow(10, 7 - pKa), 12);
  });
});

describe('log K(T) forms', () => {
  // Harned & Owen / CRC Handbook "Ion product of water": pKw 14.94 (0 °C), 13.995 (25 °C), 13.26 (50 °C) — from memory.
  it.each([
    [0, 14.94],
    [25, 13.995],
    [50, 13.26],
  ])('pKw at %s °C is %s (Harned & Owen 1958 expression)', (t, pKw) => {
    const r = kwAt(t, KW_HARNED_OWEN, CODATA_2018);
    expect(r.pKw).toBeCloseTo(pKw, 2);
    expect(r.Kw).toBeCloseTo(Math.pow(10, -r.pKw), 20);
    expect(r.extrapolated).toBe(false);
  });

  // Morris (1966) Table: pKa(HOCl) 7.825 at 0 °C, 7.537 at 25 °C (from memory; verify).
  it.each([
    [0, 7.825],
    [25, 7.537],
  ])('pKa(HOCl) at %s °C is %s (Morris 1966)', (t, pKa) => {
    expect(pKAt(t, KA_HOCL_MORRIS, CODATA_2018)).toBeCloseTo(pKa, 3);
  });

  it('flags a temperature outside the fitted range as extrapolated (Morris: 0–35 °C)', () => {
    expect(log10KAt(40, KA_HOCL_MORRIS, CODATA_2018).extrapolated).toBe(true);
  });

  // Plummer & Busenberg (1982) Table: pK1 = 6.352, pK2 = 10.329 at 25 °C.
  it('carbonic acid pK1 and pK2 at 25 °C are 6.352 and 10.329 (Plummer & Busenberg 1982)', () => {
    expect(pKAt(25, K1_PLUMMER_BUSENBERG, CODATA_2018)).toBeCloseTo(6.352, 3);
    expect(pKAt(25, K2_PLUMMER_BUSENBERG, CODATA_2018)).toBeCloseTo(10.329, 3);
  });

  it("van 't Hoff with ΔH° = 52.21 kJ/mol reproduces Emerson et al. (1975) pKa(NH4+) = 0.09018 + 2729.92/T within 0.005, 0–35 °C", () => {
    // ΔH° of NH4+ = NH3 + H+: 52.21 kJ/mol (NBS tables / CRC, from memory; verify)
    const vh: EquilibriumSpec = { form: { kind: 'van-t-hoff', log10KRef: -9.2464, referenceTemperatureC: 25, deltaHkJPerMol: 52.21 }, source: 'test' };
    const emerson: EquilibriumSpec = { form: { kind: 'expression', coefficients: { a: -0.09018, c: -2729.92 } }, source: 'emerson-1975' };
    for (const t of [0, 5, 10, 20, 30, 35]) {
      expect(Math.abs(pKAt(t, vh, CODATA_2018) - pKAt(t, emerson, CODATA_2018))).toBeLessThan(0.005);
    }
  });

  it('a constant with no temperature dependence says so when used away from 25 °C', () => {
    const c: EquilibriumSpec = { form: { kind: 'constant', log10K: -7, referenceTemperatureC: 25 }, source: 'test' };
    expect(log10KAt(25, c, CODATA_2018).temperatureIgnored).toBe(false);
    expect(log10KAt(10, c, CODATA_2018).temperatureIgnored).toBe(true);
  });

  it('reads an equilibria-table row: pK expression, logK with ΔH in kcal/mol, plain logK', () => {
    const morrisRow = {
      id: 'morris-hocl',
      reaction: 'HOCl = H+ + OCl-',
      kind: 'acid',
      temperature: { form: 'A1 + A2*T + A3/T + A4*log10(T) + A5/T^2 + A6*T^2', quantity: 'pK', coefficients: { A1: '-10.0686', A2: '0.0253', A3: '3000.00' }, validFromC: 0, validToC: 35 },
      source: 'morris-1966',
      note: 'test row',
    } as EquilibriumRow;
    const spec = equilibriumSpecFromRow(morrisRow);
    expect(pKAt(25, spec, CODATA_2018)).toBeCloseTo(pKAt(25, KA_HOCL_MORRIS, CODATA_2018), 12);
    expect(spec.validRangeC).toEqual({ min: 0, max: 35 });

    const kcalRow = { id: 'x', reaction: 'NH4+ = NH3 + H+', kind: 'acid', pK: '9.2464', deltaH: { value: '12.478', unit: 'kcal/mol' }, source: 's', note: 'n' } as EquilibriumRow;
    const kj = equilibriumSpecFromRow(kcalRow);
    expect(kj.form.kind === 'van-t-hoff' && kj.form.deltaHkJPerMol).toBeCloseTo(52.21, 2); // 12.478 kcal × 4.184 J/cal (thermochemical calorie)

    const plain = equilibriumSpecFromRow({ id: 'y', reaction: 'HS- = H+ + S2-', kind: 'acid', logK: '-17.4', source: 's', note: 'n' } as EquilibriumRow);
    expect(log10KAt(10, plain, CODATA_2018)).toMatchObject({ log10K: -17.4, temperatureIgnored: true });
  });
});
