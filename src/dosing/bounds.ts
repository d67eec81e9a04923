/**
 * Plausibility bounds of a dose request, after conversion to base units (so they read the same
 * whichever unit the operator chose):
 *
 * - raw-water readings: above `warnAbove` a reading is unusual and gets a "check the lab
 *   reading" warning; above `refuseAbove` it cannot be a raw drinking-water source (it is a unit
 *   slip or a miscopied reading, µg/L entered as mg/L) and the request is refused naming the field,
 *   the value, the bound and why;
 * - flow, contact time and volume, strengths, purity, pump capacity, stock, batch volume,
 *   residual and demand: ranges beyond which the figure is not a treatment plant's, so that no
 *   answer can carry an infinite or meaningless number.
 *
 * Every bound is a rule of thumb of operating practice and is said to be one ("common
 * practice", source `operator-practice`), except where a table row is named.
 */
import { Dec, roundSig, type Dec as DecT } from '../core/decimal.js';
import type { FieldProblem } from '../core/errors.js';
import { UNIT_FACTORS, toBaseDec, type Quantity } from '../core/quantity.js';
import type { Flag } from './types.js';
import { roundSigNumber } from './round.js';

/** Sample fields with a plausibility band (request field under /sample). */
export type BoundedReading = 'iron' | 'manganese' | 'sulfide' | 'arsenite' | 'nitrite' | 'ammoniaN' | 'alkalinity' | 'tds' | 'bromide' | 'toc' | 'dissolvedOxygen';

export interface ReadingBound {
  readonly field: BoundedReading;
  /** As the operator says it: "iron", "ammonia-nitrogen". */
  readonly name: string;
  /** What the mg/L is of: "as Fe", "as N", "as CaCO3". */
  readonly basis: string;
  /** Above this (mg/L) the reading gets a warning: unusual, check the lab reading. */
  readonly warnAbove: number;
  /** Above this (mg/L) the request is refused. */
  readonly refuseAbove: number;
  /** Why the warning band starts where it does. */
  readonly warnWhy: string;
  /** Why a reading above `refuseAbove` cannot be taken as a raw-water reading. */
  readonly refuseWhy: string;
  readonly flagCode: string;
  readonly source: string;
}

/**
 * The bands, mg/L. Common practice: typical ranges of raw drinking-water sources as operators
 * meet them; the refusal bounds sit well above the highest waters treated for drinking, so
 * only an impossible figure or a unit slip is refused.
 */
export const READING_BOUNDS: readonly ReadingBound[] = [
  {
    field: 'iron', name: 'iron', basis: 'as Fe', warnAbove: 20, refuseAbove: 100, flagCode: 'IRON_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual for a drinking-water source (common practice)',
    refuseWhy: 'groundwater iron is usually below 10 mg/L and tens of mg/L are already extreme (common practice)',
  },
  {
    field: 'manganese', name: 'manganese', basis: 'as Mn', warnAbove: 5, refuseAbove: 50, flagCode: 'MANGANESE_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual for a drinking-water source, where manganese is usually below 2 mg/L (common practice)',
    refuseWhy: 'groundwater manganese is usually below 2 mg/L and 10 mg/L is already extreme (common practice)',
  },
  {
    field: 'sulfide', name: 'sulfide', basis: 'as S', warnAbove: 10, refuseAbove: 100, flagCode: 'SULFIDE_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual for a drinking-water well, where hydrogen sulfide is usually a few mg/L (common practice)',
    refuseWhy: 'sulfide wells treated for drinking carry a few mg/L and tens of mg/L are already extreme (common practice)',
  },
  {
    field: 'arsenite', name: 'arsenic(III)', basis: 'as As', warnAbove: 0.5, refuseAbove: 10, flagCode: 'ARSENITE_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'fifty times the 0.010 mg/L limit, unusual even for arsenic-rich groundwater (common practice)',
    refuseWhy: 'the most arsenic-rich groundwaters hold a few mg/L (common practice)',
  },
  {
    field: 'nitrite', name: 'nitrite', basis: 'as N', warnAbove: 1, refuseAbove: 100, flagCode: 'NITRITE_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual in a raw water, which holds at most a few tenths of a mg/L as N (common practice); the drinking-water limits are flagged apart (RAW_NITRITE_ABOVE_LIMIT)',
    refuseWhy: 'raw waters hold tenths of a mg/L of nitrite and even nitrifying systems a few mg/L (common practice)',
  },
  {
    field: 'ammoniaN', name: 'ammonia-nitrogen', basis: 'as N', warnAbove: 10, refuseAbove: 100, flagCode: 'AMMONIA_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual for a drinking-water source, where ammonia is usually below a few mg/L as N (common practice)',
    refuseWhy: 'the most ammonia-rich groundwaters treated for drinking hold tens of mg/L as N (common practice)',
  },
  {
    field: 'alkalinity', name: 'alkalinity', basis: 'as CaCO3', warnAbove: 1000, refuseAbove: 10000, flagCode: 'ALKALINITY_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual for a drinking-water source, where alkalinity is usually tens to a few hundred mg/L as CaCO3 (common practice)',
    refuseWhy: 'even sodium bicarbonate groundwaters stay within a few thousand mg/L as CaCO3 (common practice)',
  },
  {
    field: 'tds', name: 'total dissolved solids', basis: '', warnAbove: 3000, refuseAbove: 70000, flagCode: 'TDS_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'brackish water, where the TDS-to-ionic-strength rule and the activity model are only rough (common practice)',
    refuseWhy: 'seawater holds about 35 000 mg/L; twice that is a brine, not a drinking-water source (common practice)',
  },
  {
    field: 'bromide', name: 'bromide', basis: 'as Br', warnAbove: 2, refuseAbove: 100, flagCode: 'BROMIDE_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual outside seawater intrusion; fresh waters usually hold below 0.5 mg/L (common practice)',
    refuseWhy: 'seawater holds about 65 mg/L of bromide (common practice)',
  },
  {
    field: 'toc', name: 'TOC', basis: 'as C', warnAbove: 30, refuseAbove: 200, flagCode: 'TOC_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'unusual even for highly coloured surface water (common practice)',
    refuseWhy: 'that is more organic carbon than raw sewage carries (common practice)',
  },
  {
    field: 'dissolvedOxygen', name: 'dissolved oxygen', basis: 'as O2', warnAbove: 20, refuseAbove: 70, flagCode: 'DISSOLVED_OXYGEN_UNUSUALLY_HIGH', source: 'operator-practice',
    warnWhy: 'above air saturation at any water temperature (14.621 mg/L at 0 °C, Standard Methods 4500-O): supersaturated, check the meter',
    refuseWhy: 'water under pure oxygen at 1 atm holds at most about 70 mg/L (air saturation 14.621 mg/L at 0 °C ÷ the 0.21 oxygen fraction of air)',
  },
];

const BOUND_OF = new Map(READING_BOUNDS.map((b) => [b.field, b]));

export function readingBound(field: BoundedReading): ReadingBound {
  return BOUND_OF.get(field)!;
}

const fmt = (x: number): string => roundSigNumber(x, 3);
/** A converted figure, which may be beyond a JSON number (1e308 g/L), said to 3 significant figures. */
const fmtDec = (x: DecT): string => roundSig(x, 3);
const withBasis = (b: ReadingBound) => (b.basis ? ` ${b.basis}` : '');
const givenAs = (q: Quantity) => (q.unit === 'mg/L' || q.unit === 'ppm' ? '' : ` (given as ${q.value} ${q.unit})`);

type SampleLike = Partial<Record<BoundedReading, Quantity | undefined>>;

/** A reading above its refusal bound: the field problem, and the figures for the problem's params. */
export interface ReadingProblem extends FieldProblem {
  readonly field: BoundedReading;
  /** The reading in mg/L, as decimal text (it may be beyond a JSON number). */
  readonly mgPerL: string;
  readonly boundMgPerL: number;
}

/** Readings above their refusal bound, as field problems under `prefix` (default /sample). */
export function readingBoundProblems(sample: SampleLike, prefix = '/sample'): ReadingProblem[] {
  const out: ReadingProblem[] = [];
  for (const b of READING_BOUNDS) {
    const q = sample[b.field];
    if (!q) continue;
    const mg = toBaseDec('concentration', q, `${prefix}/${b.field}`);
    if (mg.greaterThan(b.refuseAbove)) {
      out.push({
        field: b.field,
        mgPerL: mg.toString(),
        boundMgPerL: b.refuseAbove,
        pointer: `${prefix}/${b.field}/value`,
        message: `${b.name} ${fmtDec(mg)} mg/L${withBasis(b)}${givenAs(q)} is above ${b.refuseAbove} mg/L, the most this service takes as a raw-water reading: ${b.refuseWhy}. Check the lab reading and its unit (µg/L entered as mg/L?)`,
      });
    }
  }
  return out;
}

/** Readings in the warning band: "unusually high, check the lab reading". */
export function readingFlags(sample: SampleLike): Flag[] {
  const flags: Flag[] = [];
  for (const b of READING_BOUNDS) {
    const q = sample[b.field];
    if (!q) continue;
    const mg = toBaseDec('concentration', q);
    if (mg.greaterThan(b.warnAbove)) {
      const name = b.name.charAt(0).toUpperCase() + b.name.slice(1);
      flags.push({
        code: b.flagCode,
        severity: 'warning',
        message: `${name} ${fmt(mg.toNumber())} mg/L${withBasis(b)} is above ${b.warnAbove} mg/L, ${b.warnWhy}: check the lab reading and the sample; the dose${SOLIDS_FORMING.has(b.field) ? ' and the solids load scale' : ' scales'} with it.`,
        source: b.source,
      });
    }
  }
  return flags;
}

/** Background demand above this (mg/L) is unusual for drinking water: a warning, not a refusal (common practice). */
export const DEMAND_WARN_MG_PER_L = 20;
/** A target residual above this (mg/L) is unusual after contact: routine residuals are a few mg/L at most (common practice). */
export const RESIDUAL_WARN_MG_PER_L = 10;

/**
 * Warnings for a background demand or target residual that is possible but unusual (above the
 * refusal bounds the request is refused instead). Oxygen's residual is the dissolved oxygen left,
 * judged against saturation elsewhere, so it has no band here.
 */
export function demandResidualFlags(input: { readonly backgroundMgPerL: number; readonly residualMgPerL: number; readonly oxidantId: string; readonly basis: string }): Flag[] {
  const flags: Flag[] = [];
  if (input.backgroundMgPerL > DEMAND_WARN_MG_PER_L) {
    flags.push({
      code: 'BACKGROUND_DEMAND_UNUSUALLY_HIGH',
      severity: 'warning',
      message: `A background demand of ${fmt(input.backgroundMgPerL)} mg/L as ${input.basis} is above ${DEMAND_WARN_MG_PER_L} mg/L, unusual for a drinking-water source (common practice): check the demand test, its unit and its dilution; the dose scales with it.`,
      source: 'operator-practice',
    });
  }
  if (input.oxidantId !== 'oxygen' && input.residualMgPerL > RESIDUAL_WARN_MG_PER_L) {
    flags.push({
      code: 'TARGET_RESIDUAL_UNUSUALLY_HIGH',
      severity: 'warning',
      message: `A target residual of ${fmt(input.residualMgPerL)} mg/L as ${input.basis} is above ${RESIDUAL_WARN_MG_PER_L} mg/L; residuals after contact are a few mg/L at most (common practice): check the value and its unit.`,
      source: 'operator-practice',
    });
  }
  return flags;
}

// ---------------------------------------------------------------- plant quantities

/** Flow, m3/d: from 1 L/d (below any treatment flow) to 10 million m3/d (about 2 600 MGD, about twice the largest plants; common practice). */
export const FLOW_MIN_M3_PER_D = new Dec('0.001');
export const FLOW_MAX_M3_PER_D = new Dec('10000000');
/** Contact time, min: 30 days, longer than any contact basin or clearwell detention (common practice). */
export const CONTACT_MAX_MINUTES = new Dec(30 * 1440);
/** Pump capacity, L/h: from 1 mL/h to 100 m3/h (common practice: metering pumps run from a few mL/h to a few m3/h). */
export const PUMP_MIN_L_PER_H = new Dec('0.001');
export const PUMP_MAX_L_PER_H = new Dec('100000');
/** Stock on hand: 10 000 m3 or 10 000 t, more than any plant's chemical store (common practice). */
export const STOCK_MAX_L = new Dec('10000000');
export const STOCK_MAX_KG = new Dec('10000000');
/** Batch tank: 1 000 m3, far above the few m3 of a permanganate or hypochlorite batch tank (common practice). */
export const BATCH_MAX_L = new Dec('1000000');
/**
 * Product strength: a feed solution weaker than 0.1 g/L (0.01 %) is not one (common practice). The upper end depends on
 * the product (its solubility or strongest grade): tables/strength-limits.json.
 */
export const STRENGTH_MIN_G_PER_L = new Dec('0.1');
export const STRENGTH_MIN_PERCENT = new Dec('0.01');
/** Readings whose oxidation makes solids to remove (iron and manganese oxides, colloidal sulfur). */
const SOLIDS_FORMING = new Set(['iron', 'manganese', 'sulfide']);

/** Purity of a solid product: below 10 % it is not a commercial product (common practice; commercial grades are 65 to 99 %). */
export const PURITY_MIN_PERCENT = 10;
/** Target residual and background demand, mg/L: 1000, ten times the strongest chlorination of new mains (common practice). */
export const RESIDUAL_MAX_MG_PER_L = new Dec(1000);
export const DEMAND_MAX_MG_PER_L = new Dec(1000);

const n = (d: DecT) => d.toNumber().toLocaleString('en-US', { maximumFractionDigits: 3 });

/** The quantities of a dose request (or of a plant merged into one), checked against the bounds above. */
export interface BoundedQuantities {
  readonly flow?: Quantity | undefined;
  readonly contactTime?: Quantity | undefined;
  readonly contactVolume?: Quantity | undefined;
  readonly targetResidual?: Quantity | undefined;
  readonly backgroundDemand?: Quantity | { readonly tocFactor: number } | undefined;
  readonly product?: { readonly strength?: Quantity | undefined; readonly purity?: Quantity | undefined } | undefined;
  readonly pump?: { readonly ratedCapacity: Quantity } | undefined;
  readonly stock?: Quantity | undefined;
  readonly batch?: { readonly volume: Quantity } | undefined;
}

/**
 * Problems with the plant quantities, as field problems at the given pointers (request pointers
 * by default). Contact volume ÷ flow is checked against the contact time bound naming both
 * fields, so an impossible pair is refused before any arithmetic overflows.
 */
export function quantityBoundProblems(q: BoundedQuantities, at: Partial<Record<keyof BoundedQuantities, string>> = {}): FieldProblem[] {
  const p = (k: keyof BoundedQuantities) => at[k] ?? `/${k}`;
  const out: FieldProblem[] = [];
  let flow: DecT | null = null;
  if (q.flow) {
    flow = toBaseDec('flow', q.flow, p('flow'));
    if (flow.lessThan(FLOW_MIN_M3_PER_D) || flow.greaterThan(FLOW_MAX_M3_PER_D)) {
      out.push({
        pointer: `${p('flow')}/value`,
        message: `flow ${q.flow.value} ${q.flow.unit}${q.flow.unit === 'm3/d' ? '' : ` is ${fmtDec(flow)} m3/d,`} outside ${n(FLOW_MIN_M3_PER_D)} to ${n(FLOW_MAX_M3_PER_D)} m3/d (1 L/d to about 2 600 MGD: from below any treatment flow to twice the largest plants; common practice): check the value and its unit`,
      });
      flow = null;
    }
  }
  if (q.contactTime) {
    const min = toBaseDec('time', q.contactTime, p('contactTime'));
    if (min.greaterThan(CONTACT_MAX_MINUTES)) {
      out.push({ pointer: `${p('contactTime')}/value`, message: `contact time ${q.contactTime.value} ${q.contactTime.unit} is more than 30 days (${n(CONTACT_MAX_MINUTES)} min), longer than any contact basin or clearwell detention (common practice)` });
    }
  }
  if (q.contactVolume && flow && !q.contactTime) {
    const m3 = toBaseDec('volume', q.contactVolume, p('contactVolume')).dividedBy(1000);
    const minutes = m3.dividedBy(flow).times(1440);
    if (minutes.greaterThan(CONTACT_MAX_MINUTES)) {
      const days = fmtDec(minutes.dividedBy(1440));
      const msg = `contact volume ${q.contactVolume.value} ${q.contactVolume.unit} ÷ flow ${q.flow!.value} ${q.flow!.unit} is ${days} days of contact, more than 30 days (longer than any contact basin or clearwell detention; common practice): check both values and their units`;
      out.push({ pointer: `${p('contactVolume')}/value`, message: msg }, { pointer: `${p('flow')}/value`, message: msg });
    }
  }
  if (q.targetResidual && toBaseDec('concentration', q.targetResidual, p('targetResidual')).greaterThan(RESIDUAL_MAX_MG_PER_L)) {
    out.push({ pointer: `${p('targetResidual')}/value`, message: `a target residual above ${n(RESIDUAL_MAX_MG_PER_L)} mg/L is ten times the strongest chlorination of new mains (common practice): check the value and its unit` });
  }
  const bg = q.backgroundDemand;
  if (bg && 'unit' in bg && toBaseDec('concentration', bg, p('backgroundDemand')).greaterThan(DEMAND_MAX_MG_PER_L)) {
    out.push({ pointer: `${p('backgroundDemand')}/value`, message: `a background demand above ${n(DEMAND_MAX_MG_PER_L)} mg/L is not a drinking-water demand (common practice): check the demand test and its unit` });
  }
  const st = q.product?.strength;
  if (st) {
    const v = new Dec(st.value);
    const low = st.unit === 'g/L' ? v.lessThan(STRENGTH_MIN_G_PER_L) : v.lessThan(STRENGTH_MIN_PERCENT);
    if (low) {
      out.push({ pointer: `${p('product')}/strength/value`, message: `a feed solution weaker than ${n(STRENGTH_MIN_G_PER_L)} g/L (${n(STRENGTH_MIN_PERCENT)} %) is not one (common practice): check the value and its unit` });
    }
  }
  const pu = q.product?.purity;
  if (pu && pu.value < PURITY_MIN_PERCENT) {
    out.push({ pointer: `${p('product')}/purity/value`, message: `purity below ${PURITY_MIN_PERCENT} % is not a commercial product (grades are 65 to 99 %; common practice): give the assay from the certificate of analysis` });
  }
  if (q.pump) {
    const lh = toBaseDec('solutionRate', q.pump.ratedCapacity, `${p('pump')}/ratedCapacity`);
    if (lh.lessThan(PUMP_MIN_L_PER_H) || lh.greaterThan(PUMP_MAX_L_PER_H)) {
      out.push({ pointer: `${p('pump')}/ratedCapacity/value`, message: `a metering pump capacity of ${fmtDec(lh)} L/h is outside ${n(PUMP_MIN_L_PER_H)} to ${n(PUMP_MAX_L_PER_H)} L/h (1 mL/h to 100 m3/h; common practice): check the value and its unit` });
    }
  }
  if (q.stock) {
    const isVolume = q.stock.unit in UNIT_FACTORS.volume;
    const base = toBaseDec(isVolume ? 'volume' : 'mass', q.stock, p('stock'));
    if (base.greaterThan(isVolume ? STOCK_MAX_L : STOCK_MAX_KG)) {
      out.push({ pointer: `${p('stock')}/value`, message: `stock above ${isVolume ? '10 000 m3' : '10 000 t'} is more than any plant's chemical store (common practice): check the value and its unit` });
    }
  }
  if (q.batch && toBaseDec('volume', q.batch.volume, `${p('batch')}/volume`).greaterThan(BATCH_MAX_L)) {
    out.push({ pointer: `${p('batch')}/volume/value`, message: 'a batch tank above 1 000 m3 is far above any batch tank for a solid oxidant (a few m3; common practice): check the value and its unit' });
  }
  return out;
}
