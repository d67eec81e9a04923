/** Shared fixtures of the water tests: CODATA 2018 constants and half-reactions written out by hand. */
import { parseFormula } from '../../src/chemistry/formula/index.js';
import type { HalfReaction, Medium, Term } from '../../src/chemistry/balance/types.js';
import type { PhysicalConstants } from '../../src/water/constants.js';

/** CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010): R and F exact in the 2019 SI; 273.15 K by definition. */
export const CODATA_2018: PhysicalConstants = {
  gasConstant: { value: 8.314462618, source: 'codata-2018' },
  faraday: { value: 96485.33212, source: 'codata-2018' },
  zeroCelsiusK: { value: 273.15, source: 'si-brochure-2019' },
};

/**
 * A half-reaction (reduction) from explicit stoichiometry, independent of the balancer:
 * the first reactant is the oxidised form, the first product the reduced form.
 */
export function explicitHalf(reactants: readonly [number, string][], products: readonly [number, string][], medium: Medium = 'acid'): HalfReaction {
  const term = (side: 'reactant' | 'product') => ([n, f]: [number, string]): Term => ({ species: parseFormula(f), coefficient: BigInt(n), side });
  const terms = [...reactants.map(term('reactant')), ...products.map(term('product'))];
  const text = (xs: readonly [number, string][]) => xs.map(([n, f]) => (n === 1 ? f : `${n}${f}`)).join(' + ');
  const electrons = reactants.filter(([, f]) => f === 'e-').reduce((s, [n]) => s + n, 0);
  return {
    terms,
    equation: `${text(reactants)} → ${text(products)}`,
    electrons,
    oxidised: parseFormula(reactants[0]![1]),
    reduced: parseFormula(products[0]![1]),
    medium,
  };
}

/** Harned & Owen (1958) pKw = 4470.99/T − 6.0875 + 0.01706·T, written as log10 Kw (coefficients from memory; verify). */
export const KW_HARNED_OWEN = {
  form: { kind: 'expression', coefficients: { a: 6.0875, b: -0.01706, c: -4470.99 } },
  source: 'harned-owen-1958',
  validRangeC: { min: 0, max: 60 },
  label: 'H2O = H+ + OH-',
} as const;

/** Morris (1966) pKa(HOCl) = 3000.00/T − 10.0686 + 0.0253·T, as log10 Ka (from memory; verify). */
export const KA_HOCL_MORRIS = {
  form: { kind: 'expression', coefficients: { a: 10.0686, b: -0.0253, c: -3000.0 } },
  source: 'morris-1966',
  validRangeC: { min: 0, max: 35 },
  label: 'HOCl = H+ + OCl-',
} as const;

/** Plummer & Busenberg (1982) log K1 and log K2 of carbonic acid (T in K; coefficients from memory; verify). */
export const K1_PLUMMER_BUSENBERG = {
  form: { kind: 'expression', coefficients: { a: -356.3094, b: -0.06091964, c: 21834.37, d: 126.8339, e: -1684915 } },
  source: 'plummer-busenberg-1982',
  validRangeC: { min: 0, max: 90 },
} as const;
export const K2_PLUMMER_BUSENBERG = {
  form: { kind: 'expression', coefficients: { a: -107.8871, b: -0.03252849, c: 5151.79, d: 38.92561, e: -563713.9 } },
  source: 'plummer-busenberg-1982',
  validRangeC: { min: 0, max: 90 },
} as const;
