import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  activitiesFromConcentrations,
  activityFromMgPerL,
  DAVIES_MAX_IONIC_STRENGTH,
  daviesA,
  daviesGamma,
  daviesLog10Gamma,
  DEBYE_HUCKEL_A,
  ionicStrength,
  molPerLFromMgPerL,
  waterDensityKgPerL,
  waterDielectricConstant,
} from '../../src/water/activity.js';
import { DomainError } from '../../src/core/errors.js';
import { parseFormula, speciesKey } from '../../src/chemistry/formula/index.js';
import { CODATA_2018 } from './helpers.js';

const A25 = daviesA(25, CODATA_2018).A;

function codeOf(f: () => unknown): { code: string; pointer: string | undefined } {
  try {
    f();
  } catch (e) {
    if (e instanceof DomainError) return { code: e.code, pointer: e.fields[0]?.pointer };
    throw e;
  }
  throw new Error('did not throw');
}

describe('ionic strength (edge cases first)', () => {
  it.each([
    [{ method: 'tds', tdsMgPerL: -1 } as const, '/tdsMgPerL'],
    [{ method: 'conductance', conductanceUSPerCm: Number.NaN } as const, '/conductanceUSPerCm'],
    [{ method: 'given', ionicStrengthMolPerL: -0.001 } as const, '/ionicStrengthMolPerL'],
    [{ method: 'composition', ions: [{ molPerL: 0.01, charge: 1 }, { molPerL: -1, charge: -1 }] } as const, '/ions/1/molPerL'],
  ])('a negative or non-number input is refused naming the field (%j)', (input, pointer) => {
    expect(codeOf(() => ionicStrength(input))).toEqual({ code: 'QUANTITY_OUT_OF_RANGE', pointer });
  });

  it('zero TDS gives zero ionic strength', () => {
    expect(ionicStrength({ method: 'tds', tdsMgPerL: 0 }).ionicStrengthMolPerL).toBe(0);
  });

  it('I = ½ Σ c z² from a composition (definition; Lewis & Randall 1921)', () => {
    // 0.001 M CaCl2 + 0.002 M Na2SO4: ½(0.001·4 + 0.002·1 + 0.004·1 + 0.002·4) = 0.009
    const r = ionicStrength({
      method: 'composition',
      ions: [
        { molPerL: 0.001, charge: 2 },
        { molPerL: 0.002, charge: -1 },
        { molPerL: 0.004, charge: 1 },
        { molPerL: 0.002, charge: -2 },
      ],
    });
    expect(r.ionicStrengthMolPerL).toBeCloseTo(0.009, 12);
  });

  it('the TDS (Langelier 1936) and conductance (Russell 1976) estimates agree for a typical fresh water', () => {
    // A water of 400 mg/L TDS has a specific conductance of roughly 600–650 µS/cm
    // (TDS/EC ≈ 0.55–0.7 is common practice, e.g. Standard Methods 1030 E / 2510); both estimates give I ≈ 0.01 M.
    const fromTds = ionicStrength({ method: 'tds', tdsMgPerL: 400 });
    const fromEc = ionicStrength({ method: 'conductance', conductanceUSPerCm: 625 });
    expect(fromTds.relation?.id).toBe('langelier-1936');
    expect(fromEc.relation?.id).toBe('russell-1976');
    expect(fromTds.ionicStrengthMolPerL / fromEc.ionicStrengthMolPerL).toBeCloseTo(1, 1);
  });
});

describe('water properties behind A(T)', () => {
  // Malmberg & Maryott (1956) Table: ε = 87.74 at 0 °C, 78.30 at 25 °C, 55.72 at 100 °C (from memory; verify).
  it.each([
    [0, 87.74],
    [25, 78.3],
    [100, 55.72],
  ])('dielectric constant at %s °C is %s (Malmberg & Maryott 1956)', (t, eps) => {
    expect(waterDielectricConstant(t)).toBeCloseTo(eps, 2);
  });
  // CRC Handbook "Properties of water" / Kell (1975): 0.999975 at 4 °C, 0.998207 at 20 °C, 0.997047 at 25 °C, 0.958365 at 100 °C (from memory).
  it.each([
    [4, 0.999975, 2e-6],
    [20, 0.998207, 2e-6],
    [25, 0.997047, 2e-6],
    [100, 0.958365, 5e-4], // Tanaka et al. 2001 is fitted to 40 °C; at 100 °C it is extrapolated
  ])('density at %s °C is %s kg/L (Kell 1975 / CRC)', (t, rho, tol) => {
    expect(Math.abs(waterDensityKgPerL(t) - rho)).toBeLessThan(tol);
  });
});

describe('Debye–Hückel A(T)', () => {
  it('the coefficient 1.82483e6 follows from CODATA 2018 e, ε0, k and N_A', () => {
    // A·(εT)^{3/2}/√ρ = (1/ln10)·(2π N_A·1000 kg/m³)^{1/2}·(e²/(4π ε0 k))^{3/2}
    const e = 1.602176634e-19, eps0 = 8.8541878128e-12, k = 1.380649e-23, NA = 6.02214076e23;
    const lB = (e * e) / (4 * Math.PI * eps0 * k);
    const coeff = (Math.sqrt(2 * Math.PI * NA * 1000) * Math.pow(lB, 1.5)) / Math.LN10;
    expect(Math.abs(coeff / Number(DEBYE_HUCKEL_A.coefficients['k']) - 1)).toBeLessThan(5e-5);
  });

  // Robinson & Stokes, Electrolyte Solutions, 2nd ed. (1959), Appendix 7.1, A on the molar scale
  // (values from memory; verify): 0.4918 (0 °C), 0.4989 (10), 0.5070 (20), 0.5115 (25), 0.5161 (30), 0.5262 (40), 0.5373 (50).
  it.each([
    [0, 0.4918],
    [10, 0.4989],
    [20, 0.507],
    [25, 0.5115],
    [30, 0.5161],
    [40, 0.5262],
    [50, 0.5373],
  ])('A at %s °C (molar scale) is %s (Robinson & Stokes 1959)', (t, a) => {
    expect(Math.abs(daviesA(t, CODATA_2018, { scale: 'molar' }).A - a)).toBeLessThan(3e-4);
  });

  it('the molal-scale A is the molar one times √ρ (0.5108 at 25 °C)', () => {
    const molal = daviesA(25, CODATA_2018);
    const molar = daviesA(25, CODATA_2018, { scale: 'molar' });
    expect(molal.A / molar.A).toBeCloseTo(Math.sqrt(molal.densityKgPerL), 12);
    expect(molal.A).toBeCloseTo(0.5108, 4);
  });
});

describe('Davies equation', () => {
  it('gives γ = 1 at zero ionic strength and for neutral species', () => {
    expect(daviesGamma(2, 0, A25)).toBe(1);
    expect(daviesGamma(0, 0.1, A25)).toBe(1);
  });

  it(`refuses I above ${DAVIES_MAX_IONIC_STRENGTH} mol/L (CONDITIONS_OUT_OF_RANGE) and accepts 0.5`, () => {
    expect(codeOf(() => daviesGamma(1, 0.51, A25))).toEqual({ code: 'CONDITIONS_OUT_OF_RANGE', pointer: '/ionicStrengthMolPerL' });
    expect(daviesGamma(1, 0.5, A25)).toBeGreaterThan(0.7);
  });

  it('tends to the Debye–Hückel limiting law at low I', () => {
    const I = 1e-6;
    expect(daviesLog10Gamma(2, I, A25) / (-A25 * 4 * Math.sqrt(I))).toBeCloseTo(1, 2);
  });

  // Harris, Quantitative Chemical Analysis, 8th ed. (2010), Table 8-1 (after Kielland 1937, J. Am. Chem. Soc. 59, 1675),
  // 25 °C: the extended Debye–Hückel γ for each ion size. Values from memory; verify. Davies has no ion size, so its γ
  // must fall within the band spanned by the ion sizes of that charge (±0.005):
  //   z = 1: 300 pm (K+, Cl-) … 900 pm (H+);  z = 2: 400 pm (SO4 2-, CO3 2-) … 800 pm (Mg2+)
  it.each([
    // I,     z, low (small ion), high (large ion)
    [0.001, 1, 0.964, 0.967],
    [0.005, 1, 0.925, 0.933],
    [0.01, 1, 0.899, 0.914],
    [0.05, 1, 0.805, 0.86],
    [0.1, 1, 0.755, 0.83],
    [0.001, 2, 0.867, 0.872],
    [0.005, 2, 0.74, 0.755],
    [0.01, 2, 0.66, 0.69],
    [0.05, 2, 0.445, 0.52],
    [0.1, 2, 0.355, 0.45],
  ])('at I = %s, z = %s, Davies γ lies in the Kielland band %s–%s', (I, z, low, high) => {
    const g = daviesGamma(z, I, A25);
    expect(g).toBeGreaterThanOrEqual(low - 0.005);
    expect(g).toBeLessThanOrEqual(high + 0.005);
  });

  it('γ falls monotonically with I up to about 0.3 for any charge (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 3 }), fc.double({ min: 0, max: 0.25, noNaN: true }), (z, I) => {
        expect(daviesGamma(z, I + 0.01, A25)).toBeLessThanOrEqual(daviesGamma(z, I, A25));
      }),
    );
  });
});

describe('concentrations to activities', () => {
  it('mg/L needs a positive molar mass', () => {
    expect(codeOf(() => molPerLFromMgPerL(1, 0))).toEqual({ code: 'QUANTITY_OUT_OF_RANGE', pointer: '/molarMassGPerMol' });
  });

  it('1 mg/L Fe2+ (55.845 g/mol, CIAAW 2021) is 1.7907e-5 mol/L; at I = 0.01 its activity is γ₂·c', () => {
    const a = activityFromMgPerL(1, 55.845, 2, 0.01, A25);
    expect(a.molPerL).toBeCloseTo(1 / 55845, 12);
    expect(a.activity).toBeCloseTo(a.molPerL * daviesGamma(2, 0.01, A25), 15);
  });

  it('keys activities by speciesKey and points at the bad item', () => {
    const fe = parseFormula('Fe2+');
    const cl = parseFormula('Cl-');
    const r = activitiesFromConcentrations({ items: [{ species: fe, mgPerL: 1, molarMassGPerMol: 55.845 }, { species: cl, molPerL: 1e-3 }], ionicStrengthMolPerL: 0.005, A: A25 });
    expect(r.activities.get(speciesKey(fe))).toBeCloseTo((1 / 55845) * daviesGamma(2, 0.005, A25), 15);
    expect(r.activities.get(speciesKey(cl))).toBeCloseTo(1e-3 * daviesGamma(1, 0.005, A25), 15);
    expect(codeOf(() => activitiesFromConcentrations({ items: [{ species: fe, mgPerL: 1 }], ionicStrengthMolPerL: 0.005, A: A25 }))).toEqual({
      code: 'QUANTITY_OUT_OF_RANGE',
      pointer: '/items/0/molarMassGPerMol',
    });
    expect(codeOf(() => activitiesFromConcentrations({ items: [{ species: fe }], ionicStrengthMolPerL: 0.005, A: A25 }))).toEqual({
      code: 'ACTIVITY_INVALID',
      pointer: '/items/0',
    });
  });
});
