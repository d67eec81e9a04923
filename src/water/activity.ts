/**
 * Ionic strength and single-ion activity coefficients (Davies equation).
 *
 * The fitted coefficients below are part of the published relations (the way decimal.js keeps
 * its long constants as text). Each one names its source; the ones written from memory say so.
 * Concentrations are mol/L; for the dilute waters this service handles, mol/L and mol/kg differ
 * by less than 0.5 % (ρ ≥ 0.958 kg/L over 0–100 °C), which the caller may treat as equal.
 */
import { DomainError } from '../core/errors.js';
import type { Species } from '../chemistry/formula/types.js';
import { speciesKey } from '../chemistry/formula/index.js';
import { checkTemperatureC, kelvin, type PhysicalConstants } from './constants.js';

/** An empirical relation with its coefficient kept as published text and its citation. */
export interface EmpiricalRelation {
  readonly id: string;
  readonly equation: string;
  /** Published coefficients as text, by name. */
  readonly coefficients: Readonly<Record<string, string>>;
  readonly citation: string;
  readonly note: string;
}

export const IONIC_STRENGTH_FROM_TDS: EmpiricalRelation = {
  id: 'langelier-1936',
  equation: 'I ≈ 2.5×10⁻⁵ × TDS (TDS in mg/L, I in mol/L)',
  coefficients: { k: '2.5e-5' },
  citation: 'Langelier, W. F. (1936). The analytical control of anti-corrosion water treatment. J. Am. Water Works Assoc. 28(10), 1500–1521.',
  note: 'Coefficient as commonly quoted from Langelier 1936 (value from memory; verify). An estimate for natural fresh waters; give the ionic strength directly when a full analysis is available.',
};

export const IONIC_STRENGTH_FROM_CONDUCTANCE: EmpiricalRelation = {
  id: 'russell-1976',
  equation: 'I ≈ 1.6×10⁻⁵ × EC (specific conductance in µS/cm at 25 °C, I in mol/L)',
  coefficients: { k: '1.6e-5' },
  citation: 'Russell, L. L. (1976). Chemical aspects of groundwater recharge with wastewaters. PhD thesis, University of California, Berkeley; as quoted in Snoeyink, V. L. & Jenkins, D. (1980), Water Chemistry, Wiley, ch. 3.',
  note: 'Coefficient from memory of the relation as quoted in Snoeyink & Jenkins 1980; verify.',
};

export const DAVIES_EQUATION: EmpiricalRelation = {
  id: 'davies-1962',
  equation: 'log10 γ = −A z² (√I / (1 + √I) − 0.3 I)',
  coefficients: { b: '0.3' },
  citation: 'Davies, C. W. (1962). Ion Association. Butterworths, London, p. 41 (the 1938 form used 0.2).',
  note: 'Valid to I ≈ 0.5 mol/L; above that the service refuses (CONDITIONS_OUT_OF_RANGE). Citation from memory; verify page.',
};

export const DEBYE_HUCKEL_A: EmpiricalRelation = {
  id: 'debye-huckel-a',
  equation: 'A = 1.82483×10⁶ √ρ (ε T)^(−3/2)  (ρ in g/cm³, T in K; molal scale, kg^½ mol^−½); molar scale A/√ρ',
  coefficients: { k: '1.82483e6' },
  citation: 'Debye–Hückel limiting-law constant as written in Truesdell, A. H. & Jones, B. F. (1974), WATEQ, J. Res. U.S. Geol. Survey 2(2), 233–248; the coefficient follows from e, ε0, k and N_A (checked against CODATA 2018 in the tests).',
  note: 'Form and coefficient from memory of the geochemical literature; the test recomputes the coefficient from CODATA 2018 constants.',
};

export const WATER_DIELECTRIC: EmpiricalRelation = {
  id: 'malmberg-maryott-1956',
  equation: 'ε = 87.740 − 0.40008 t + 9.398×10⁻⁴ t² − 1.410×10⁻⁶ t³ (t in °C, 0–100 °C)',
  coefficients: { c0: '87.740', c1: '-0.40008', c2: '9.398e-4', c3: '-1.410e-6' },
  citation: 'Malmberg, C. G. & Maryott, A. A. (1956). Dielectric constant of water from 0° to 100 °C. J. Res. Natl. Bur. Stand. 56(1), 1–8, eq. (3).',
  note: 'Coefficients from memory of the paper; verify. Gives ε(25 °C) = 78.30.',
};

export const WATER_DENSITY: EmpiricalRelation = {
  id: 'tanaka-2001',
  equation: 'ρ = a5 [1 − (t + a1)² (t + a2) / (a3 (t + a4))], a1 = −3.983035 °C, a2 = 301.797 °C, a3 = 522528.9 °C², a4 = 69.34881 °C, a5 = 999.974950 kg/m³',
  coefficients: { a1: '-3.983035', a2: '301.797', a3: '522528.9', a4: '69.34881', a5: '999.974950' },
  citation: 'Tanaka, M., Girard, G., Davis, R., Peuto, A. & Bignell, N. (2001). Recommended table for the density of water between 0 °C and 40 °C based on recent experimental reports. Metrologia 38, 301–309, eq. (1).',
  note: 'Fitted for 0–40 °C; above 40 °C it is an extrapolation (0.03 % low at 100 °C), harmless here because A depends on √ρ. Coefficients from memory; verify.',
};

/** Every empirical relation the water layer uses; their ids appear in answers (GET /api/v1/tables/relations). */
export const EMPIRICAL_RELATIONS: readonly EmpiricalRelation[] = [
  IONIC_STRENGTH_FROM_TDS,
  IONIC_STRENGTH_FROM_CONDUCTANCE,
  DAVIES_EQUATION,
  DEBYE_HUCKEL_A,
  WATER_DIELECTRIC,
  WATER_DENSITY,
];

function coeff(r: EmpiricalRelation, name: string): number {
  const text = r.coefficients[name];
  if (text === undefined) throw new Error(`relation ${r.id} has no coefficient ${name}`);
  return Number(text);
}
const LANGELIER_COEFF = coeff(IONIC_STRENGTH_FROM_TDS, 'k');
const RUSSELL_COEFF = coeff(IONIC_STRENGTH_FROM_CONDUCTANCE, 'k');
const DAVIES_LINEAR = coeff(DAVIES_EQUATION, 'b');
const A_COEFF = coeff(DEBYE_HUCKEL_A, 'k');
const [EPS0, EPS1, EPS2, EPS3] = (['c0', 'c1', 'c2', 'c3'] as const).map((n) => coeff(WATER_DIELECTRIC, n)) as [number, number, number, number];
const [RHO_A1, RHO_A2, RHO_A3, RHO_A4, RHO_A5] = (['a1', 'a2', 'a3', 'a4', 'a5'] as const).map((n) => coeff(WATER_DENSITY, n)) as [number, number, number, number, number];

/** Highest ionic strength (mol/L) at which the Davies equation is used. */
export const DAVIES_MAX_IONIC_STRENGTH = 0.5;

function outOfRange(code: 'QUANTITY_OUT_OF_RANGE' | 'CONDITIONS_OUT_OF_RANGE', pointer: string, detail: string, params: Record<string, unknown> = {}): DomainError {
  return new DomainError(code, { detail, params, fields: [{ pointer, message: detail }] });
}

function nonNegative(x: number, pointer: string, what: string): void {
  if (!Number.isFinite(x) || x < 0) {
    throw outOfRange('QUANTITY_OUT_OF_RANGE', pointer, `${what} must be a finite number ≥ 0; got ${String(x)}.`, { value: x });
  }
}

// ---------------------------------------------------------------- ionic strength

export type IonicStrengthInput =
  | { readonly method: 'given'; readonly ionicStrengthMolPerL: number }
  | { readonly method: 'tds'; readonly tdsMgPerL: number }
  | { readonly method: 'conductance'; readonly conductanceUSPerCm: number }
  | { readonly method: 'composition'; readonly ions: readonly { readonly molPerL: number; readonly charge: number }[] };

export interface IonicStrengthResult {
  /** mol/L */
  readonly ionicStrengthMolPerL: number;
  readonly method: IonicStrengthInput['method'];
  /** The relation used, in words, with its citation (null when given or computed from the full composition). */
  readonly relation: EmpiricalRelation | null;
}

/**
 * Ionic strength, mol/L: given; estimated from TDS (Langelier 1936) or specific conductance
 * (Russell 1976); or I = ½ Σ cᵢ zᵢ² from a full composition.
 */
export function ionicStrength(input: IonicStrengthInput): IonicStrengthResult {
  switch (input.method) {
    case 'given':
      nonNegative(input.ionicStrengthMolPerL, '/ionicStrengthMolPerL', 'Ionic strength (mol/L)');
      return { ionicStrengthMolPerL: input.ionicStrengthMolPerL, method: 'given', relation: null };
    case 'tds':
      nonNegative(input.tdsMgPerL, '/tdsMgPerL', 'TDS (mg/L)');
      return { ionicStrengthMolPerL: LANGELIER_COEFF * input.tdsMgPerL, method: 'tds', relation: IONIC_STRENGTH_FROM_TDS };
    case 'conductance':
      nonNegative(input.conductanceUSPerCm, '/conductanceUSPerCm', 'Specific conductance (µS/cm)');
      return { ionicStrengthMolPerL: RUSSELL_COEFF * input.conductanceUSPerCm, method: 'conductance', relation: IONIC_STRENGTH_FROM_CONDUCTANCE };
    case 'composition': {
      let s = 0;
      input.ions.forEach((ion, i) => {
        nonNegative(ion.molPerL, `/ions/${i}/molPerL`, 'Concentration (mol/L)');
        if (!Number.isInteger(ion.charge)) {
          throw outOfRange('QUANTITY_OUT_OF_RANGE', `/ions/${i}/charge`, `An ion's charge must be a whole number; got ${String(ion.charge)}.`);
        }
        s += ion.molPerL * ion.charge * ion.charge;
      });
      return { ionicStrengthMolPerL: s / 2, method: 'composition', relation: null };
    }
  }
}

// ---------------------------------------------------------------- water properties and A(T)

/** Relative permittivity of water at temperatureC (Malmberg & Maryott 1956), dimensionless. */
export function waterDielectricConstant(temperatureC: number): number {
  checkTemperatureC(temperatureC);
  const t = temperatureC;
  return EPS0 + EPS1 * t + EPS2 * t * t + EPS3 * t * t * t;
}

/** Density of air-free water at 1 atm, kg/L (Tanaka et al. 2001). */
export function waterDensityKgPerL(temperatureC: number): number {
  checkTemperatureC(temperatureC);
  const t = temperatureC;
  // a5 is in kg/m³; 1 kg/L = 1000 kg/m³.
  return (RHO_A5 * (1 - ((t + RHO_A1) * (t + RHO_A1) * (t + RHO_A2)) / (RHO_A3 * (t + RHO_A4)))) / 1000;
}

export interface DaviesAResult {
  /** Debye–Hückel A, (kg/mol)^½ on the molal scale or (L/mol)^½ on the molar scale. */
  readonly A: number;
  readonly scale: 'molal' | 'molar';
  readonly temperatureC: number;
  readonly temperatureK: number;
  readonly dielectricConstant: number;
  readonly densityKgPerL: number;
  readonly relations: readonly EmpiricalRelation[];
}

/**
 * A(T) = 1.82483×10⁶ √ρ (εT)^(−3/2) (molal scale; the molar-scale value is A/√ρ),
 * ε(T) from Malmberg & Maryott 1956, ρ(T) from Tanaka et al. 2001 (0 °C = 273.15 K from `constants`).
 */
export function daviesA(temperatureC: number, constants: PhysicalConstants, options: { scale?: 'molal' | 'molar' } = {}): DaviesAResult {
  const scale = options.scale ?? 'molal';
  const eps = waterDielectricConstant(temperatureC);
  const rho = waterDensityKgPerL(temperatureC);
  const T = kelvin(temperatureC, constants);
  const Amolar = A_COEFF * Math.pow(eps * T, -1.5);
  const A = scale === 'molal' ? Amolar * Math.sqrt(rho) : Amolar;
  return { A, scale, temperatureC, temperatureK: T, dielectricConstant: eps, densityKgPerL: rho, relations: [DEBYE_HUCKEL_A, WATER_DIELECTRIC, WATER_DENSITY] };
}

// ---------------------------------------------------------------- Davies

function checkIonicStrength(I: number, pointer: string): void {
  if (!Number.isFinite(I) || I < 0) {
    throw outOfRange('QUANTITY_OUT_OF_RANGE', pointer, `Ionic strength must be a finite number ≥ 0 mol/L; got ${String(I)}.`, { ionicStrengthMolPerL: I });
  }
  if (I > DAVIES_MAX_IONIC_STRENGTH) {
    throw outOfRange(
      'CONDITIONS_OUT_OF_RANGE',
      pointer,
      `Ionic strength ${String(I)} mol/L is above ${DAVIES_MAX_IONIC_STRENGTH} mol/L, where the Davies equation no longer holds; this service covers fresh and brackish water only.`,
      { ionicStrengthMolPerL: I, max: DAVIES_MAX_IONIC_STRENGTH },
    );
  }
}

/** log10 γ of an ion of charge z at ionic strength I (mol/L) by the Davies equation, A from `daviesA`. */
export function daviesLog10Gamma(charge: number, ionicStrengthMolPerL: number, A: number): number {
  checkIonicStrength(ionicStrengthMolPerL, '/ionicStrengthMolPerL');
  const s = Math.sqrt(ionicStrengthMolPerL);
  return -A * charge * charge * (s / (1 + s) - DAVIES_LINEAR * ionicStrengthMolPerL);
}

/** Activity coefficient γ (dimensionless); 1 for neutral species. */
export function daviesGamma(charge: number, ionicStrengthMolPerL: number, A: number): number {
  return Math.pow(10, daviesLog10Gamma(charge, ionicStrengthMolPerL, A));
}

// ---------------------------------------------------------------- concentrations → activities

/** mg/L → mol/L, given the molar mass in g/mol. */
export function molPerLFromMgPerL(mgPerL: number, molarMassGPerMol: number): number {
  nonNegative(mgPerL, '/mgPerL', 'Concentration (mg/L)');
  if (!Number.isFinite(molarMassGPerMol) || molarMassGPerMol <= 0) {
    throw outOfRange('QUANTITY_OUT_OF_RANGE', '/molarMassGPerMol', `Molar mass must be a positive number of g/mol; got ${String(molarMassGPerMol)}.`);
  }
  return mgPerL / 1000 / molarMassGPerMol;
}

/** mol/L → mg/L, given the molar mass in g/mol. */
export function mgPerLFromMolPerL(molPerL: number, molarMassGPerMol: number): number {
  return molPerL * molarMassGPerMol * 1000;
}

export interface ActivityValue {
  readonly molPerL: number;
  readonly gamma: number;
  /** Dimensionless activity a = γ c / (1 mol/L). */
  readonly activity: number;
}

/** Activity of an ion from its molar concentration. */
export function activityFromMolPerL(molPerL: number, charge: number, ionicStrengthMolPerL: number, A: number): ActivityValue {
  nonNegative(molPerL, '/molPerL', 'Concentration (mol/L)');
  const gamma = daviesGamma(charge, ionicStrengthMolPerL, A);
  return { molPerL, gamma, activity: gamma * molPerL };
}

/** Activity of an ion from its concentration in mg/L (molar mass in g/mol of the species as written). */
export function activityFromMgPerL(mgPerL: number, molarMassGPerMol: number, charge: number, ionicStrengthMolPerL: number, A: number): ActivityValue {
  return activityFromMolPerL(molPerLFromMgPerL(mgPerL, molarMassGPerMol), charge, ionicStrengthMolPerL, A);
}

export interface ConcentrationItem {
  readonly species: Species;
  /** One of molPerL, or mgPerL with molarMassGPerMol. */
  readonly molPerL?: number;
  readonly mgPerL?: number;
  readonly molarMassGPerMol?: number;
}

export interface ActivityEntry extends ActivityValue {
  readonly key: string;
  readonly text: string;
  readonly charge: number;
}

export interface ActivitiesResult {
  /** speciesKey → activity, ready for `nernst` / `evaluateCell`. */
  readonly activities: ReadonlyMap<string, number>;
  readonly entries: readonly ActivityEntry[];
  readonly ionicStrengthMolPerL: number;
  readonly A: number;
}

/**
 * Activities of a list of dissolved species, keyed by speciesKey, from mol/L or mg/L.
 * Errors point at `/items/<i>/…`.
 */
export function activitiesFromConcentrations(input: {
  readonly items: readonly ConcentrationItem[];
  readonly ionicStrengthMolPerL: number;
  /** Davies A at the water's temperature (`daviesA(t, constants).A`). */
  readonly A: number;
}): ActivitiesResult {
  checkIonicStrength(input.ionicStrengthMolPerL, '/ionicStrengthMolPerL');
  const map = new Map<string, number>();
  const entries: ActivityEntry[] = input.items.map((item, i) => {
    let molPerL: number;
    if (item.molPerL !== undefined) {
      nonNegative(item.molPerL, `/items/${i}/molPerL`, `Concentration of ${item.species.text} (mol/L)`);
      molPerL = item.molPerL;
    } else if (item.mgPerL !== undefined) {
      nonNegative(item.mgPerL, `/items/${i}/mgPerL`, `Concentration of ${item.species.text} (mg/L)`);
      if (item.molarMassGPerMol === undefined || !Number.isFinite(item.molarMassGPerMol) || item.molarMassGPerMol <= 0) {
        throw outOfRange('QUANTITY_OUT_OF_RANGE', `/items/${i}/molarMassGPerMol`, `A concentration of ${item.species.text} in mg/L needs its molar mass (g/mol, positive).`);
      }
      molPerL = item.mgPerL / 1000 / item.molarMassGPerMol;
    } else {
      throw new DomainError('ACTIVITY_INVALID', {
        detail: `No concentration given for ${item.species.text}; give molPerL, or mgPerL with molarMassGPerMol.`,
        fields: [{ pointer: `/items/${i}`, message: 'give molPerL, or mgPerL with molarMassGPerMol' }],
      });
    }
    const gamma = daviesGamma(item.species.charge, input.ionicStrengthMolPerL, input.A);
    const key = speciesKey(item.species);
    map.set(key, gamma * molPerL);
    return { key, text: item.species.text, charge: item.species.charge, molPerL, gamma, activity: gamma * molPerL };
  });
  return { activities: map, entries, ionicStrengthMolPerL: input.ionicStrengthMolPerL, A: input.A };
}
