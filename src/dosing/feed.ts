/**
 * Feed arithmetic: from a dose (mg/L on the oxidant's basis) and a flow to the mass rate,
 * the product actually fed, the solution rate, the metering-pump setting, daily use, days of
 * supply and, for a solid made up as a batch solution, kg per batch against the solubility.
 *
 * Arithmetic is Decimal (src/core/decimal.ts), exact from the SI definitions: mg/L = g/m³, so
 * kg/d = dose × flow(m³/d) ÷ 1000; lb/d from the exact pound (0.45359237 kg). The pounds
 * formula of the trade, lb/d = mg/L × MGD × 8.34, is conventional; the exact factor is
 * 3.785411784 kg ÷ 0.45359237 kg/lb = 8.345404… lb per (mg/L · million gallons) (NIST SP 811).
 */
import { Dec, type Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import { DomainError } from '../core/errors.js';
import { UNIT_FACTORS, toBaseDec, fromBaseDec, type Quantity } from '../core/quantity.js';
import type { OxidantRow } from '../reference/dosing-schemas.js';
import { reported, type Flag, type Reported } from './types.js';
import { roundSigNumber } from './round.js';
import type { ProductInput } from './request.js';

const GALLON_L = new Dec(UNIT_FACTORS.volume.gal);
const POUND_KG = new Dec(UNIT_FACTORS.mass.lb);
/** 1 / 0.45359237 to the Decimal clone's 40 digits: multiplying by it is the exact-pound conversion without a division per request. */
const LB_PER_KG = new Dec(1).dividedBy(POUND_KG);
/**
 * lb per (mg/L · million US gallons), exact from the gallon and the pound: 10^6 gal × 3.785411784 L/gal
 * × 1 mg/L = 3.785411784 kg = 3.785411784 / 0.45359237 lb = 8.345404… lb.
 */
export const LB_PER_MG_L_MG_EXACT = GALLON_L.dividedBy(POUND_KG);
export const LB_PER_MG_L_MG_CONVENTIONAL = new Dec('8.34');
const MGD_M3_PER_D = Number(UNIT_FACTORS.flow.MGD);
const GALLON_L_NUM = Number(UNIT_FACTORS.volume.gal);
const POUND_KG_NUM = Number(UNIT_FACTORS.mass.lb);
const MILLI = new Dec('0.001');
const PER_DAY_HOURS = new Dec(1).dividedBy(24);

/** Below this share of rated capacity a metering pump's setting is imprecise (common practice). */
export const PUMP_LOW_SETTING_PERCENT = 5;

export interface FeedConversion {
  /** Formula of the dose basis (KMnO4, Cl2, …). */
  readonly basisFormula: string;
  /** Formula of the compound fed (NaMnO4, NaOCl, Ca(OCl)2, …). */
  readonly productFormula: string;
  /** g of product compound per g of basis, from the product rule and molar masses. */
  readonly productPerBasis: DecT;
  /** How that factor was derived (text). */
  readonly derivation: string;
}

export interface FeedInput {
  readonly oxidant: OxidantRow;
  readonly doseMgPerL: DecT;
  readonly flowM3PerD: DecT;
  readonly conversion: FeedConversion;
  readonly product?: ProductInput | undefined;
  readonly pump?: { readonly id?: string | undefined; readonly ratedCapacity: Quantity } | undefined;
  readonly stock?: Quantity | undefined;
  readonly batch?: { readonly volume: Quantity; readonly temperatureC?: number | undefined } | undefined;
  /** Water temperature, used for the solubility check when the batch has no temperature. */
  readonly temperatureC: number;
  /** The product (strength, density, purity) came from this plant profile, not the request. */
  readonly productFromPlant?: string | undefined;
}

export interface StrengthUsed {
  readonly given: { readonly value: number; readonly unit: string } | null;
  /** What the strength is of: the product compound (KMnO4, NaMnO4, H2O2) or the basis (available chlorine as Cl2). */
  readonly asFormula: string;
  readonly gramsPerL: Reported;
  readonly massFraction: Reported | null;
  readonly density: { readonly value: number; readonly unit: 'kg/L'; readonly from: 'request' | 'plant profile' | 'table' | 'water (assumed)'; readonly note: string } | null;
  readonly text: string;
}

export interface FeedResult {
  readonly basis: string;
  readonly productFormula: string;
  /** Mass rate on the dose basis (as KMnO4, as Cl2 …). */
  readonly massRate: Reported & { readonly basis: string };
  readonly massRateUS: Reported & { readonly basis: string };
  /** The trade's pounds formula with 8.34, shown beside the exact figure. */
  readonly poundsFormula: { readonly conventionalLbPerD: Reported; readonly exactFactor: string; readonly conventionalFactor: '8.34'; readonly note: string };
  /** Mass rate of the compound fed (NaOCl, NaMnO4, Ca(OCl)2 …). */
  readonly compoundMassRate: Reported & { readonly formula: string; readonly derivation: string };
  /** Mass of product as supplied per day (solution, or solid at its purity); null for gases and generated oxidants. */
  readonly productMassRate: (Reported & { readonly what: string }) | null;
  readonly solutionRate: Reported | null;
  readonly solutionRateMLPerMin: Reported | null;
  readonly solutionRateGalPerD: Reported | null;
  readonly strength: StrengthUsed | null;
  readonly pump: { readonly id: string | null; readonly ratedCapacity: Reported; readonly settingPercent: Reported } | null;
  readonly dailyUse: { readonly volume: Reported | null; readonly volumeUS: Reported | null; readonly mass: Reported | null; readonly massUS: Reported | null };
  readonly daysOfSupply: Reported | null;
  readonly batch: {
    readonly volume: Reported;
    readonly productKg: Reported;
    readonly productLb: Reported;
    readonly gramsPer100gWater: Reported;
    readonly solubilityGPer100gWater: Reported | null;
    readonly temperatureC: number;
    readonly withinSolubility: boolean | null;
    readonly lastsDays: Reported | null;
  } | null;
  readonly generator: { readonly label: string; readonly output: Reported; readonly outputGPerH: Reported; readonly note: string } | null;
  readonly notes: readonly string[];
  readonly flags: readonly Flag[];
}

const TEN = new Dec(10);
const THOUSAND = new Dec(1000);

function nominalDefault(ox: OxidantRow) {
  return ox.strength.nominal.find((n) => n.default) ?? ox.strength.nominal[0];
}

/** Linear interpolation in the solubility table; null outside it. */
export function solubilityAt(ox: OxidantRow, temperatureC: number): { value: DecT; clamped: boolean } | null {
  const pts = ox.solubility?.points;
  if (!pts || pts.length < 2) return null;
  const t = new Dec(temperatureC);
  const xs = pts.map((p) => ({ t: new Dec(p.temperatureC), v: new Dec(p.value) }));
  const first = xs[0]!;
  const last = xs[xs.length - 1]!;
  if (t.lessThanOrEqualTo(first.t)) return { value: first.v, clamped: t.lessThan(first.t) };
  if (t.greaterThanOrEqualTo(last.t)) return { value: last.v, clamped: t.greaterThan(last.t) };
  for (let i = 1; i < xs.length; i++) {
    const a = xs[i - 1]!;
    const b = xs[i]!;
    if (t.lessThanOrEqualTo(b.t)) {
      return { value: a.v.plus(b.v.minus(a.v).times(t.minus(a.t)).dividedBy(b.t.minus(a.t))), clamped: false };
    }
  }
  return { value: last.v, clamped: true };
}

/** One tabled density of a product (a strength row of tables/oxidants.json with a density), at both strength scales. */
export interface DensityPoint {
  readonly label: string;
  /** % w/w of the strength formula (product compound, or available chlorine as Cl2 for hypochlorite). */
  readonly massPercent: DecT;
  /** g/L of the strength formula. */
  readonly gramsPerL: DecT;
  readonly density: DecT;
  readonly source: string;
  readonly fromMemory: boolean;
}

/**
 * The product's strength rows that carry a density, as % w/w and g/L of the strength formula,
 * ordered by strength: % w/w = g/L ÷ (10 × density), g/L = % w/w × density × 10, % w/v = g/L ÷ 10.
 */
export function densitySeries(ox: OxidantRow): DensityPoint[] {
  const out: DensityPoint[] = [];
  for (const n of ox.strength.nominal) {
    if (n.densityKgPerL === undefined) continue;
    const rho = new Dec(n.densityKgPerL);
    const v = new Dec(n.value);
    const gramsPerL = n.unit === '% w/w' ? v.times(rho).times(TEN) : n.unit === '% w/v' ? v.times(TEN) : v;
    out.push({ label: n.label, massPercent: gramsPerL.dividedBy(rho.times(TEN)), gramsPerL, density: rho, source: n.source, fromMemory: /memory/i.test(n.note ?? '') });
  }
  return out.sort((a, b) => a.massPercent.comparedTo(b.massPercent));
}

/**
 * Density at a strength by straight-line interpolation between the two tabled rows around it
 * (a tabled strength gives its row's density); null outside the rows: never extrapolated.
 */
export function interpolateDensity(series: readonly DensityPoint[], by: 'massPercent' | 'gramsPerL', x: DecT): { density: DecT; text: string; note: string; source: string; exact: boolean } | null {
  if (series.length === 0) return null;
  const first = series[0]!;
  const last = series[series.length - 1]!;
  if (x.lessThan(first[by]) || x.greaterThan(last[by])) return null;
  const scale = by === 'massPercent' ? '% w/w' : 'g/L';
  const at = (p: DensityPoint) => `${p.label} at ${roundSigNumber(p[by].toNumber(), 4)} ${scale}, ${p.density.toString()} kg/L`;
  const memo = (ps: readonly DensityPoint[]) => (ps.some((p) => p.fromMemory) ? '; the rows are from memory of the source, verify' : '');
  for (let i = 0; i < series.length; i++) {
    const b = series[i]!;
    if (x.equals(b[by])) {
      return { density: b.density, text: `the tabled density of ${at(b)} (tables/oxidants.json, source ${b.source}${memo([b])}), was used`, note: `tabled density of ${b.label} (${b.density.toString()} kg/L)`, source: b.source, exact: true };
    }
    if (i > 0 && x.lessThan(b[by])) {
      const a = series[i - 1]!;
      const density = a.density.plus(b.density.minus(a.density).times(x.minus(a[by])).dividedBy(b[by].minus(a[by])));
      const d = roundSigNumber(density.toNumber(), 4);
      const sources = a.source === b.source ? `source ${a.source}` : `sources ${a.source} and ${b.source}`;
      return {
        density,
        text: `${d} kg/L was interpolated linearly by strength (${scale}) between the tabled ${at(a)}, and ${at(b)} (tables/oxidants.json, ${sources}${memo([a, b])}),`,
        note: `${d} kg/L interpolated by strength between ${a.label} (${a.density.toString()} kg/L) and ${b.label} (${b.density.toString()} kg/L)`,
        source: a.source,
        exact: false,
      };
    }
  }
  return null;
}

/** A % w/w strength outside the tabled densities: the density is needed and is not guessed. */
function densityOutOfTable(ox: OxidantRow, series: readonly DensityPoint[], value: number): DomainError {
  const lo = roundSigNumber(series[0]!.massPercent.toNumber(), 4);
  const hi = roundSigNumber(series[series.length - 1]!.massPercent.toNumber(), 4);
  const basis = ox.strength.basis === 'product' ? ox.productFormula : `available chlorine as ${ox.doseBasis}`;
  const range = series.length === 1 ? `${lo} % w/w ${basis} only (${series[0]!.label})` : `${lo} to ${hi} % w/w ${basis} only (${series[0]!.label} to ${series[series.length - 1]!.label})`;
  return new DomainError('DENSITY_NOT_TABLED', {
    detail: `${value} % w/w ${lowerName(ox.name)} needs its density to give g/L, and the table holds densities for ${range}; a density is not extrapolated outside them. Give product.density (kg/L, from the certificate of analysis or a hydrometer reading), or the strength in % w/v or g/L.`,
    fields: [
      { pointer: '/product/strength', message: `${value} % w/w is outside the ${series.length === 1 ? lo : `${lo} to ${hi}`} % w/w the table holds densities for: the density is not extrapolated` },
      { pointer: '/product/density', message: 'needed for this strength in % w/w (kg/L)' },
    ],
    params: { strength: value, unit: '% w/w', tabledMinPercent: series[0]!.massPercent.toNumber(), tabledMaxPercent: series[series.length - 1]!.massPercent.toNumber() },
  });
}

/** How far (fraction) a given density may sit from the tabled one at the same strength before it is questioned (common practice). */
export const DENSITY_TOLERANCE = 0.05;
/** A figure in a sentence: 4 significant digits, no trailing zeros (1.13, 150, 0.9). */
const plain = (x: number): string => String(Number(x.toPrecision(4)));

/**
 * A given density against physics and the table: every solution of these products is denser than
 * water, and within the tabled strengths the tabled density is known; a value far from it is more
 * likely a misread certificate (or the density of another grade) than the stock's. Warnings only:
 * the given value is used.
 */
export function densityCheck(ox: OxidantRow, strength: { value: number; unit: string }, density: DecT, who: string, flags: Flag[]): void {
  const rho = density.toNumber();
  const v = new Dec(strength.value);
  // the strength as g/L and as % w/w (with the given density), to place it against the tabled rows
  const gramsPerL = strength.unit === '% w/w' ? v.times(density).times(TEN) : strength.unit === '% w/v' ? v.times(TEN) : v;
  const massPercent = strength.unit === '% w/w' ? v : gramsPerL.dividedBy(density.times(TEN));
  // every solution of these products is denser than water: at 1 % or more the difference is beyond a reading's error
  if (rho < 0.99 || (rho <= 1 && massPercent.greaterThanOrEqualTo(1))) {
    flags.push({
      code: 'DENSITY_BELOW_WATER',
      severity: 'warning',
      message: `${who}, ${plain(rho)} kg/L, is ${rho < 1 ? 'below' : 'that of'} water, but ${lowerName(ox.name)} at ${plain(massPercent.toNumber())} % w/w is denser than water. Check the value and its unit (kg/L; a specific gravity reads the same).`,
      source: 'operator-practice',
    });
    return;
  }
  const series = densitySeries(ox);
  if (series.length === 0) return;
  const by = strength.unit === '% w/w' ? 'massPercent' : 'gramsPerL';
  const x = by === 'massPercent' ? v : gramsPerL;
  const first = series[0]!;
  const last = series[series.length - 1]!;
  // beyond the tabled rows no density is known, but a stronger solution is denser than the strongest row, a weaker one lighter than the weakest
  if (x.greaterThan(last[by]) || x.lessThan(first[by])) {
    const above = x.greaterThan(last[by]);
    const row = above ? last : first;
    const wrong = above ? rho < row.density.toNumber() : rho > row.density.toNumber();
    if (wrong) {
      flags.push({
        code: 'DENSITY_UNLIKE_TABLE',
        severity: 'warning',
        message: `${who}, ${plain(rho)} kg/L, is ${above ? 'below' : 'above'} the ${row.density.toString()} kg/L the table gives for ${row.label}, though ${strength.value} ${strength.unit} is ${above ? 'stronger' : 'weaker'}: a ${above ? 'stronger' : 'weaker'} solution is ${above ? 'denser' : 'lighter'}. The given value was used: check it.`,
        source: row.source,
      });
    }
    return;
  }
  const hit = interpolateDensity(series, by, x);
  if (!hit) return;
  const tabled = hit.density.toNumber();
  const off = (rho - tabled) / tabled;
  if (Math.abs(off) > DENSITY_TOLERANCE) {
    flags.push({
      code: 'DENSITY_UNLIKE_TABLE',
      severity: 'warning',
      message: `${who}, ${plain(rho)} kg/L, is ${String(Number((Math.abs(off) * 100).toPrecision(3)))} % ${off > 0 ? 'above' : 'below'} the ${plain(tabled)} kg/L the table gives for ${strength.value} ${strength.unit} (${hit.note}); more than ${DENSITY_TOLERANCE * 100} % apart (common practice) is more often a misread certificate than the stock. The given value was used: check it.`,
      source: hit.source,
    });
  }
}

/** Resolve the strength of the fed solution to g/L of its strength formula, saying where the density came from. */
export function resolveStrength(ox: OxidantRow, product: ProductInput | undefined, flags: Flag[], productFromPlant?: string): { gPerL: DecT; density: DecT | null; used: StrengthUsed } | null {
  const asFormula = ox.strength.basis === 'product' ? ox.productFormula : ox.doseBasis;
  const nominal = nominalDefault(ox);
  let strength: { value: number; unit: string } | null = product?.strength ?? null;
  let fromNominal = false;
  if (!strength && nominal) {
    strength = { value: Number(nominal.value), unit: nominal.unit };
    fromNominal = true;
    flags.push({
      code: 'STRENGTH_DEFAULT_USED',
      severity: 'warning',
      message: `No product strength was given; the table's nominal ${nominal.label} was used. Give product.strength as measured on your stock.`,
      source: nominal.source,
    });
  }
  if (!strength) return null;
  let density: DecT | null = null;
  let densityFrom: 'request' | 'plant profile' | 'table' | 'water (assumed)' | null = null;
  let densityNote = '';
  if (product?.density) {
    density = toBaseDec('density', product.density, '/product/density');
    densityFrom = productFromPlant !== undefined ? 'plant profile' : 'request';
    densityNote = productFromPlant !== undefined ? `density from the plant profile "${productFromPlant}"` : 'density given with the request';
    densityCheck(ox, strength, density, densityFrom === 'plant profile' ? `The density in the plant profile "${productFromPlant}"` : 'The density given', flags);
  } else {
    const same = ox.strength.nominal.find((n) => n.densityKgPerL !== undefined && n.unit === strength!.unit && Number(n.value) === strength!.value);
    if (same?.densityKgPerL) {
      density = new Dec(same.densityKgPerL);
      densityFrom = 'table';
      densityNote = `table density of ${same.label} (${same.densityKgPerL} kg/L)`;
      if (!fromNominal) {
        flags.push({
          code: 'DENSITY_DEFAULT_USED',
          severity: 'info',
          message: `No density was given; the table density of ${same.label}, ${same.densityKgPerL} kg/L, was used. Give product.density from the certificate of analysis to refine.`,
          source: same.source,
        });
      }
    } else if (strength.unit === '% w/w') {
      const series = densitySeries(ox);
      if (series.length > 0) {
        const hit = interpolateDensity(series, 'massPercent', new Dec(strength.value));
        if (!hit) throw densityOutOfTable(ox, series, strength.value);
        density = hit.density;
        densityFrom = 'table';
        densityNote = hit.note;
        flags.push({
          code: 'DENSITY_INTERPOLATED',
          severity: 'warning',
          message: `A strength in % w/w needs the solution's density; none was given, so ${hit.text} for ${strength.value} % w/w. The density also moves with the temperature${ox.doseBasis === 'Cl2' ? ' and the excess caustic' : ''}: give product.density from the certificate of analysis for an exact solution rate.`,
          source: hit.source,
        });
      } else {
        density = new Dec(1);
        densityFrom = 'water (assumed)';
        densityNote = 'dilute batch solution: density taken as 1.00 kg/L (water)';
        flags.push({
          code: 'DENSITY_ASSUMED_WATER',
          severity: 'warning',
          message: `A strength in % w/w needs the solution's density; none was given or tabled, so 1.00 kg/L (water) was assumed for this dilute solution. Give product.density to refine.`,
          source: 'input',
        });
      }
    } else {
      // % w/v or g/L: the solution rate needs no density; within the tabled rows the product mass can still be given
      const gL = strength.unit === '% w/v' ? new Dec(strength.value).times(TEN) : new Dec(strength.value);
      const series = densitySeries(ox);
      const hit = interpolateDensity(series, 'gramsPerL', gL);
      if (hit) {
        density = hit.density;
        densityFrom = 'table';
        densityNote = hit.note;
        flags.push({
          code: hit.exact ? 'DENSITY_DEFAULT_USED' : 'DENSITY_INTERPOLATED',
          severity: 'info',
          message: `No density was given; ${hit.text} for ${strength.value} ${strength.unit} (${roundSigNumber(gL.toNumber(), 4)} g/L), used only for the mass of solution fed and the % w/w. Give product.density from the certificate of analysis to refine.`,
          source: hit.source,
        });
      } else if (series.length > 0) {
        const lo = plain(series[0]!.gramsPerL.toNumber());
        const hi = plain(series[series.length - 1]!.gramsPerL.toNumber());
        flags.push({
          code: 'DENSITY_UNKNOWN',
          severity: 'info',
          message: `${strength.value} ${strength.unit}${strength.unit === 'g/L' ? '' : ` (${plain(gL.toNumber())} g/L)`} is outside the ${lo} to ${hi} g/L the table holds densities for, and a density is not extrapolated: the solution rate needs none and is given, but the mass of solution fed, the % w/w and a stock in kg are not. Give product.density (kg/L) for them.`,
          source: series[0]!.source,
        });
      }
    }
  }
  let gPerL: DecT;
  let massFraction: number | null = null;
  const v = new Dec(strength.value);
  switch (strength.unit) {
    case '% w/w':
      gPerL = v.times(density!).times(TEN);
      massFraction = strength.value / 100;
      break;
    case '% w/v':
      gPerL = v.times(TEN);
      if (density) massFraction = (strength.value * 10) / (density.toNumber() * 1000);
      break;
    case 'g/L':
      gPerL = v;
      if (density) massFraction = strength.value / (density.toNumber() * 1000);
      break;
    default:
      throw new DomainError('UNIT_UNKNOWN', {
        detail: `"${strength.unit}" is not a strength unit; accepted: % w/w, % w/v, g/L.`,
        fields: [{ pointer: '/product/strength/unit', message: 'accepted: % w/w, % w/v, g/L' }],
      });
  }
  const gText = roundSigNumber(gPerL.toNumber(), 4);
  const hypo = ox.strength.basis === 'basis' && ox.doseBasis === 'Cl2';
  const text = hypo
    ? `${strength.value} ${strength.unit} read as available chlorine (as Cl2)${strength.unit === '% w/v' ? ' — trade percent: g/L available chlorine ÷ 10' : ''} = ${gText} g/L as Cl2`
    : `${strength.value} ${strength.unit} as ${asFormula} = ${gText} g/L ${asFormula}`;
  return {
    gPerL,
    density,
    used: {
      given: fromNominal ? null : { value: strength.value, unit: strength.unit },
      asFormula,
      gramsPerL: reported(gPerL, `g/L as ${asFormula}`),
      massFraction: massFraction !== null ? reported(massFraction * 100, `% w/w as ${asFormula}`) : null,
      density: density && densityFrom ? { value: density.toNumber(), unit: 'kg/L', from: densityFrom, note: densityNote } : null,
      text,
    },
  };
}

/** Purity of a solid as a fraction of the strength formula (product compound or available chlorine). */
function purityFraction(ox: OxidantRow, product: ProductInput | undefined, flags: Flag[]): number {
  if (product?.purity) {
    // below the grade the standard names (KMnO4 at least 97 %, Ca(OCl)2 65 to 70 %): a slip, an aged or
    // a wrong product; the figure is used as given (it is what the certificate or a test says), with a warning
    if (ox.purity && product.purity.value < Number(ox.purity.defaultPercent)) {
      flags.push({
        code: 'PURITY_BELOW_GRADE',
        severity: 'warning',
        message: `The purity given, ${product.purity.value} %, is below the ${ox.purity.defaultPercent} % of the usual grade (${ox.purity.text.replace(/\.$/, '')}); it was used as given, so the product feed is ${roundSigNumber(Number(ox.purity.defaultPercent) / product.purity.value, 3)} times what the usual grade needs. Check the certificate of analysis, the product delivered and its age (calcium hypochlorite loses strength in storage).`,
        source: ox.purity.source,
      });
    }
    return product.purity.value / 100;
  }
  if (ox.purity) {
    flags.push({
      code: 'PURITY_DEFAULT_USED',
      severity: 'info',
      message: `No purity was given, so the default ${ox.purity.defaultPercent} % was used: ${ox.purity.text} Give product.purity from the certificate of analysis.`,
      source: ox.purity.source,
    });
    return Number(ox.purity.defaultPercent) / 100;
  }
  return 1;
}

export function computeFeed(input: FeedInput): FeedResult {
  const { oxidant: ox, doseMgPerL, flowM3PerD, conversion } = input;
  const flags: Flag[] = [];
  const notes: string[] = [];
  const basis = ox.doseBasis;
  // Decimal for the reported chain: mg/L = g/m³ → g/d = dose × m³/d → kg/d × 0.001
  const basisKgPerD = doseMgPerL.times(flowM3PerD).times(MILLI);
  const basisLbPerD = basisKgPerD.times(LB_PER_KG);
  const compoundKgPerD = basisKgPerD.times(conversion.productPerBasis);
  const strengthKgPerD = ox.strength.basis === 'product' ? compoundKgPerD : basisKgPerD;
  const strengthFormula = ox.strength.basis === 'product' ? ox.productFormula : basis;
  // the trade's pounds formula, for comparison only
  const conventional = doseMgPerL.toNumber() * (flowM3PerD.toNumber() / MGD_M3_PER_D) * 8.34;

  let solution: DecT | null = null;
  let productMassKgPerD: number | null = null;
  let productWhat = '';
  let strength: StrengthUsed | null = null;
  let batch: FeedResult['batch'] = null;
  let generator: FeedResult['generator'] = null;

  const isGas = ox.form === 'gas';
  const isSolid = ox.form === 'solid';
  if (isGas) {
    notes.push(`${ox.name} is fed as a gas: no solution rate; the mass rate is what the feeder must deliver.`);
    if (ox.id === 'oxygen') {
      notes.push("Aeration: air is about 21 % oxygen by volume; the air needed depends on the aerator's transfer efficiency, and dissolved oxygen cannot exceed saturation at the water's temperature.");
    }
    if (ox.id === 'chlorine-gas') notes.push('Chlorinators are rated in lb/d (or kg/h) of Cl2: set the rotameter to the mass rate.');
  } else if (ox.form === 'generated' && input.product?.strength === undefined) {
    notes.push(
      ox.id === 'ozone'
        ? 'Ozone is generated on site and transferred to the water as a gas: the mass rate is the ozone the contactor must transfer; the generator output is that divided by the transfer efficiency.'
        : `${ox.name} is generated on site: the mass rate is the generator output needed; give product.strength (the generator solution, g/L) for a solution rate.`,
    );
  } else {
    const res = resolveStrength(ox, input.product, flags, input.productFromPlant);
    if (res) {
      strength = res.used;
      // L/h = (kg/d × 1000 g/kg) ÷ (g/L) ÷ 24 h/d
      solution = strengthKgPerD.times(1000).dividedBy(res.gPerL).times(PER_DAY_HOURS);
      const lPerH = solution.toNumber();
      const density = res.density ? res.density.toNumber() : null;
      if (!isSolid && density !== null) {
        productMassKgPerD = lPerH * 24 * density;
        productWhat = `${ox.name} as supplied (solution)`;
      }
      if (isSolid) {
        const purity = purityFraction(ox, input.product, flags);
        productMassKgPerD = strengthKgPerD.toNumber() / purity;
        productWhat = `${ox.name} as supplied (solid at ${roundSigNumber(purity * 100, 4)} % ${ox.purity?.basis === 'basis' ? `as ${basis}` : ox.productFormula})`;
        if (input.batch) {
          const volumeL = toBaseDec('volume', input.batch.volume, '/batch/volume').toNumber();
          const gPerL = res.gPerL.toNumber();
          const gStrength = gPerL * volumeL;
          const productKg = gStrength / 1000 / purity;
          const solutionG = volumeL * (density ?? 1) * 1000;
          if (solutionG <= gStrength) {
            throw new DomainError('QUANTITY_OUT_OF_RANGE', {
              detail: `A batch solution of ${roundSigNumber(gPerL, 4)} g/L ${strengthFormula} at ${roundSigNumber(density ?? 1, 4)} kg/L would hold more ${strengthFormula} than solution: check product.strength and product.density.`,
              fields: [{ pointer: '/product/strength/value', message: `${roundSigNumber(gPerL, 4)} g/L is more than the ${roundSigNumber((density ?? 1) * 1000, 4)} g a litre of the solution weighs` }],
            });
          }
          const per100 = (gStrength * 100) / (solutionG - gStrength);
          const batchT = input.batch.temperatureC ?? input.temperatureC;
          const sol = solubilityAt(ox, batchT);
          const solValue = sol ? sol.value.toNumber() : null;
          const within = solValue !== null ? per100 <= solValue : null;
          if (solValue !== null && !within) {
            flags.push({
              code: 'BATCH_ABOVE_SOLUBILITY',
              severity: 'danger',
              message: `The batch strength needs ${roundSigNumber(per100)} g ${strengthFormula} per 100 g water, above the solubility at ${batchT} °C (${roundSigNumber(solValue)} g per 100 g water): it will not all dissolve. Make a weaker batch or warm the make-up water.`,
              source: ox.solubility!.source,
            });
          } else if (solValue !== null && per100 > solValue * 0.8) {
            flags.push({
              code: 'BATCH_NEAR_SOLUBILITY',
              severity: 'warning',
              message: `The batch is within 20 % of the solubility at ${batchT} °C; crystals may settle when the room cools.`,
              source: ox.solubility!.source,
            });
          }
          if (sol?.clamped) {
            flags.push({ code: 'SOLUBILITY_EXTRAPOLATED', severity: 'info', message: `${batchT} °C is outside the solubility table; the nearest tabled value was used.`, source: ox.solubility!.source });
          }
          batch = {
            volume: reported(volumeL, 'L'),
            productKg: reported(productKg, 'kg'),
            productLb: reported(productKg / POUND_KG_NUM, 'lb'),
            gramsPer100gWater: reported(per100, `g ${strengthFormula} per 100 g water`),
            solubilityGPer100gWater: solValue !== null ? reported(solValue, `g ${strengthFormula} per 100 g water`) : null,
            temperatureC: batchT,
            withinSolubility: within,
            lastsDays: lPerH > 0 && Number.isFinite(volumeL / (lPerH * 24)) ? reported(volumeL / (lPerH * 24), 'd') : null,
          };
        }
      }
    } else {
      flags.push({
        code: 'STRENGTH_NEEDED',
        severity: 'info',
        message: `Give product.strength (% w/w with density, % w/v or g/L) for a solution rate and pump setting${isSolid ? '; the mass of solid product to feed (a dry or tablet feeder, or to make up a batch) is given without it' : ''}.`,
        source: 'input',
      });
      if (isSolid) {
        const purity = purityFraction(ox, input.product, flags);
        productMassKgPerD = strengthKgPerD.toNumber() / purity;
        productWhat = `${ox.name} as supplied (solid at ${roundSigNumber(purity * 100, 4)} % ${ox.purity?.basis === 'basis' ? `as ${basis}` : ox.productFormula}), fed dry or made up into solution`;
      }
    }
  }
  const basisKg = basisKgPerD.toNumber();
  if (ox.form === 'generated') {
    generator = {
      output: reported(basisKg, 'kg/d'),
      outputGPerH: reported((basisKg * 1000) / 24, 'g/h'),
      label: ox.id === 'ozone' ? 'Ozone to transfer (not the generator setting)' : 'Generator output',
      note: ox.id === 'ozone'
        ? "This is the ozone the contactor must transfer into the water at the dose, not the generator setting: set the generator to this divided by the contactor's measured transfer efficiency (as a fraction), which is always more."
        : 'Generator production of chlorine dioxide at the dose.',
    };
  }

  if (input.batch && batch === null && (ox.form === 'solid' || ox.form === 'solution')) {
    // a batch is made up from a solid at the strength given; otherwise there is nothing to weigh out
    flags.push({
      code: 'BATCH_NOT_USED',
      severity: 'info',
      message: isSolid
        ? `The batch (${input.batch.volume.value} ${input.batch.volume.unit}) was not computed: give product.strength, the strength the batch is made up to, for the mass of ${lowerName(ox.name)} to weigh out per batch.`
        : `The batch (${input.batch.volume.value} ${input.batch.volume.unit}) was not computed: ${lowerName(ox.name)} is delivered as a solution, so no solid is weighed out; the stock on hand goes in stock.`,
      source: 'input',
    });
  }
  const lPerH = solution ? solution.toNumber() : null;
  let pump: FeedResult['pump'] = null;
  if (input.pump && lPerH !== null) {
    const rated = toBaseDec('solutionRate', input.pump.ratedCapacity, '/pump/ratedCapacity').toNumber();
    const setting = (lPerH / rated) * 100;
    pump = { id: input.pump.id ?? null, ratedCapacity: reported(rated, 'L/h'), settingPercent: reported(setting, '%') };
    if (setting > 100) {
      flags.push({
        code: 'PUMP_OVER_CAPACITY',
        severity: 'danger',
        message: `The solution rate needs ${roundSigNumber(setting)} % of the pump's rated capacity: the pump cannot deliver it. Use a stronger solution, a larger pump or a second pump.`,
        source: 'input',
      });
    } else if (setting < PUMP_LOW_SETTING_PERCENT) {
      flags.push({
        code: 'PUMP_SETTING_LOW',
        severity: 'warning',
        message: `The pump setting is ${roundSigNumber(setting)} % of rated capacity; below about ${PUMP_LOW_SETTING_PERCENT} % metering is imprecise (common practice). Dilute the solution or use a smaller pump.`,
        source: 'operator-practice',
      });
    }
  } else if (input.pump && lPerH === null && (isGas || ox.form === 'generated')) {
    notes.push('A metering pump capacity was given but this oxidant has no solution rate.');
  }

  const dailyVolumeL = lPerH !== null ? lPerH * 24 : null;
  const dailyMassKg = productMassKgPerD ?? (isGas || ox.form === 'generated' ? basisKg : null);
  let daysOfSupply: number | null = null;
  if (input.stock) {
    if (input.stock.unit in UNIT_FACTORS.volume) {
      const stockL = toBaseDec('volume', input.stock, '/stock').toNumber();
      if (dailyVolumeL) daysOfSupply = stockL / dailyVolumeL;
      else notes.push('Stock was given as a volume but there is no solution rate to divide it by.');
    } else {
      const stockKg = toBaseDec('mass', input.stock, '/stock').toNumber();
      if (dailyMassKg) daysOfSupply = stockKg / dailyMassKg;
      else notes.push('Stock was given as a mass but the daily product mass is unknown (give the solution density).');
    }
    if (daysOfSupply !== null && !Number.isFinite(daysOfSupply)) {
      // a dose of practically nothing: the quotient is beyond a number; said, not printed as Infinity
      notes.push('The stock lasts longer than can be stated: the daily use at this dose is practically nil.');
      daysOfSupply = null;
    }
    if (daysOfSupply !== null && daysOfSupply < 7) {
      flags.push({ code: 'STOCK_LOW', severity: 'warning', message: `Stock on hand lasts ${roundSigNumber(daysOfSupply, 2)} days at this feed; order more.`, source: 'input' });
    }
  }

  return {
    basis,
    productFormula: ox.productFormula,
    massRate: { ...reported(basisKgPerD, 'kg/d'), basis: `as ${basis}` },
    massRateUS: { ...reported(basisLbPerD, 'lb/d'), basis: `as ${basis}` },
    poundsFormula: {
      conventionalLbPerD: reported(conventional, 'lb/d'),
      exactFactor: EXACT_FACTOR_TEXT,
      conventionalFactor: '8.34',
      note: 'lb/d = mg/L × MGD × 8.34 is the conventional pounds formula; the exact factor is 8.3454 (US gallon 3.785411784 L, pound 0.45359237 kg, NIST SP 811). The mass rate above is computed exactly from SI.',
    },
    compoundMassRate: { ...reported(compoundKgPerD, 'kg/d'), formula: conversion.productFormula, derivation: conversion.derivation },
    productMassRate: productMassKgPerD !== null ? { ...reported(productMassKgPerD, 'kg/d'), what: productWhat } : null,
    solutionRate: solution ? reported(solution, 'L/h') : null,
    solutionRateMLPerMin: lPerH !== null ? reported((lPerH * 1000) / 60, 'mL/min') : null,
    solutionRateGalPerD: lPerH !== null ? reported((lPerH * 24) / GALLON_L_NUM, 'gal/d') : null,
    strength,
    pump,
    dailyUse: {
      volume: dailyVolumeL !== null ? reported(dailyVolumeL, 'L/d') : null,
      volumeUS: dailyVolumeL !== null ? reported(dailyVolumeL / GALLON_L_NUM, 'gal/d') : null,
      mass: dailyMassKg !== null ? reported(dailyMassKg, 'kg/d') : null,
      massUS: dailyMassKg !== null ? reported(dailyMassKg / POUND_KG_NUM, 'lb/d') : null,
    },
    daysOfSupply: daysOfSupply !== null ? reported(daysOfSupply, 'd') : null,
    batch,
    generator,
    notes,
    flags,
  };
}

const EXACT_FACTOR_TEXT = LB_PER_MG_L_MG_EXACT.toSignificantDigits(10).toString();
