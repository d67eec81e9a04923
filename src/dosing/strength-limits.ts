/**
 * The strongest solution each oxidant product can be fed as, and the check of a product strength
 * against it, shared by POST /api/v1/doses and plant profiles:
 *
 * - a solid made up on site (potassium permanganate, calcium hypochlorite) cannot be fed stronger
 *   than it dissolves: above its solubility at the warmest tank temperature its row covers, the
 *   strength is refused; above the solubility at today's tank temperature but below that, the
 *   dose gets a warning (it dissolves only in a warm tank);
 * - a liquid concentrate (sodium hypochlorite, sodium permanganate, hydrogen peroxide) is bought
 *   at a trade grade: above the strongest grade the tables hold the dose gets a warning, and
 *   above it by a clear margin (common practice) the strength is refused as a slip (g/L entered
 *   as trade %, the purity of a solid entered as a solution strength);
 * - gases (chlorine gas, ozone, oxygen) have no product strength at all (refused where given).
 *
 * The rows are tables/strength-limits.json, read and validated with zod (as every table) when this
 * module loads, because a plant profile is checked when it is stored, by `parsePlantProfile`,
 * which is given the profile only. `checkStrengthLimits` (run by `buildDosingContext` at start-up)
 * checks them against the other loaded tables: every source id
 * resolves in tables/sources.json, the strongest grade is the strongest strength row of
 * tables/oxidants.json (same value, unit, density and source), a solubility taken from the
 * table is the table's warmest point, no tabled strength is refused, and every oxidant of the
 * table is either fed as a gas or has a row in tables/strength-limits.json. A change to either side that breaks this stops
 * the service at start-up with TABLE_INVALID naming both.
 *
 * Arithmetic is Decimal: g/L = % w/w × density (kg/L) × 10; % w/v = g/L ÷ 10 (for hypochlorite,
 * trade percent); g per 100 g water = 100 × w ÷ (100 − w) for a mass percent w, or 100 × c ÷
 * (1000 × density − c) for c g/L.
 */
import { Dec, type Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import type { FieldProblem } from '../core/errors.js';
import { toBaseDec, type Quantity } from '../core/quantity.js';
import { type GradeLimit, type OxidantRow, type SolubilityLimit, type StrengthLimit } from '../reference/dosing-schemas.js';
import { loadTables } from '../reference/load.js';
import { solubilityAt } from './feed.js';
import { roundSigNumber } from './round.js';
import type { Flag } from './types.js';

/** Oxidants fed to the water as a gas: no product strength, density or solution rate, no metering pump. */
export const FED_AS_GAS_IDS: ReadonlySet<string> = new Set(['chlorine-gas', 'ozone', 'oxygen']);
/** Supplied as a solid (a purity applies); checked against tables/oxidants.json (form "solid") at start-up like FED_AS_GAS_IDS. */
export const SOLID_PRODUCT_IDS: ReadonlySet<string> = new Set(['potassium-permanganate', 'calcium-hypochlorite']);

/** How an operator says an oxidant fed as a gas is metered (for the plant-profile refusals). */
export const GAS_FEEDER_TEXT: Readonly<Record<string, string>> = {
  'chlorine-gas': 'chlorine gas is fed by a chlorinator rated in mass per time (lb/d or kg/h of Cl2)',
  ozone: 'ozone is generated on site and transferred to the water as a gas; the generator is rated in g/h or kg/d of O3',
  oxygen: 'oxygen is supplied by aeration; the aerator transfers a mass of O2, not a solution volume',
};

/** The rows of tables/strength-limits.json (validated with zod as the tables are; see src/reference/dosing-schemas.ts). */
export type { StrengthLimit };
let defaultLimits: readonly StrengthLimit[] | undefined;
/**
 * The rows of the project's own tables/strength-limits.json, read on first use: for callers that
 * hold no loaded tables (the CLI parsing a request). The service passes the rows of the tables it
 * loaded (DosingContext.strengthLimits), so a custom tables folder is used throughout.
 */
export function defaultStrengthLimits(): readonly StrengthLimit[] {
  return (defaultLimits ??= loadTables(['strengthLimits']).strengthLimits);
}

/** The row for an oxidant, or undefined (gases have none). */
/** A JSON pointer as the dotted field name a message uses ("/products/0" → "products[0]"). */
function fieldOf(pointer: string): string {
  return pointer.replace(/^\//, '').split('/').map((p, i) => (/^\d+$/.test(p) ? `[${p}]` : `${i > 0 ? '.' : ''}${p}`)).join('');
}

export function strengthLimitFor(oxidantId: string, limits: readonly StrengthLimit[] = defaultStrengthLimits()): StrengthLimit | undefined {
  return limits.find((l) => l.oxidant === oxidantId);
}

// ---------------------------------------------------------------- arithmetic

const TEN = new Dec(10);
const HUNDRED = new Dec(100);
const THOUSAND = new Dec(1000);
const f3 = (x: DecT | number) => roundSigNumber(typeof x === 'number' ? x : x.toNumber(), 3);
/** A converted figure to 4 significant figures, without trailing zeros ("300", "12.4"). */
const f4 = (x: DecT) => x.toSignificantDigits(4).toString();

export interface ProductStrengthInput {
  readonly strength: { readonly value: number; readonly unit: string };
  readonly density?: Quantity | undefined;
}

/** The given strength on both scales, where the data allow: g/L of the strength formula and % w/w. */
interface Scales {
  readonly gPerL: DecT | null;
  readonly massPercent: DecT | null;
  readonly density: DecT | null;
}

function scalesOf(p: ProductStrengthInput, densityPointer: string): Scales {
  const v = new Dec(p.strength.value);
  const density = p.density ? toBaseDec('density', p.density, densityPointer) : null;
  switch (p.strength.unit) {
    case '% w/w':
      return { massPercent: v, gPerL: density ? v.times(density).times(TEN) : null, density };
    case '% w/v': {
      const g = v.times(TEN);
      return { gPerL: g, massPercent: density ? g.dividedBy(density.times(TEN)) : null, density };
    }
    default:
      return { gPerL: v, massPercent: density ? v.dividedBy(density.times(TEN)) : null, density };
  }
}

/** g of the strength formula per 100 g water; null when the solution would hold no water at all. */
function per100gWater(s: Scales): { value: DecT | null; densityAssumed: boolean } {
  if (s.massPercent) {
    const water = HUNDRED.minus(s.massPercent);
    return { value: water.greaterThan(0) ? s.massPercent.times(HUNDRED).dividedBy(water) : null, densityAssumed: false };
  }
  // g/L without a density: water (1.00 kg/L), as the batch check of src/dosing/feed.ts does for a dilute solution
  const c = s.gPerL!;
  const water = THOUSAND.minus(c);
  return { value: water.greaterThan(0) ? c.times(HUNDRED).dividedBy(water) : null, densityAssumed: true };
}

/** The grade's strongest strength and refusal bound on both scales (the other scale through the grade's density). */
function gradeScales(l: GradeLimit): { strongestGPerL: DecT; strongestPercent: DecT; refuseGPerL: DecT; refusePercent: DecT; rho: DecT } {
  const rho = new Dec(l.strongest.densityKgPerL);
  const sv = new Dec(l.strongest.value);
  const strongestGPerL = l.strongest.unit === '% w/w' ? sv.times(rho).times(TEN) : l.strongest.unit === '% w/v' ? sv.times(TEN) : sv;
  const strongestPercent = strongestGPerL.dividedBy(rho.times(TEN));
  const rv = new Dec(l.refuseAbove.value);
  const refuseGPerL = l.refuseAbove.unit === 'g/L' ? rv : rv.times(rho).times(TEN);
  const refusePercent = l.refuseAbove.unit === '% w/w' ? rv : rv.dividedBy(rho.times(TEN));
  return { strongestGPerL, strongestPercent, refuseGPerL, refusePercent, rho };
}

/** Compare a given strength with a grade row on the row's own scale when the data allow, else on the other. */
function onGradeScale(l: GradeLimit, s: Scales): { given: DecT; strongest: DecT; refuse: DecT; scale: 'g/L' | '% w/w' } {
  const g = gradeScales(l);
  const preferGrams = l.refuseAbove.unit === 'g/L';
  if ((preferGrams && s.gPerL) || !s.massPercent) return { given: s.gPerL!, strongest: g.strongestGPerL, refuse: g.refuseGPerL, scale: 'g/L' };
  return { given: s.massPercent, strongest: g.strongestPercent, refuse: g.refusePercent, scale: '% w/w' };
}

const memoText = (fromMemory: boolean) => (fromMemory ? ', from memory; verify' : '');
const givenText = (p: ProductStrengthInput) => `${p.strength.value} ${p.strength.unit}`;
const densityText = (s: Scales) => (s.density ? ` at the given density ${f4(s.density)} kg/L` : '');

// ---------------------------------------------------------------- refusal

export interface StrengthLimitProblem extends FieldProblem {
  readonly params: Readonly<Record<string, unknown>>;
}

/**
 * A strength no solution of this product can have: the field problem at `${at}/strength/value`
 * (at is the pointer of the product: /product in a dose request, /products/0 in a plant profile),
 * naming the limit and its source; null when the strength is possible (or the product has no row).
 */
export function strengthLimitProblem(oxidantId: string, product: ProductStrengthInput, at = '/product', limits: readonly StrengthLimit[] = defaultStrengthLimits()): StrengthLimitProblem | null {
  const l = strengthLimitFor(oxidantId, limits);
  if (!l || l.kind === 'none') return null;
  const s = scalesOf(product, `${at}/density`);
  const pointer = `${at}/strength/value`;
  if (l.kind === 'solubility') {
    const w = per100gWater(s);
    const limit = new Dec(l.gramsPer100gWater);
    if (w.value !== null && !w.value.greaterThan(limit)) return null;
    const needs = w.value === null ? `more ${l.strengthOf} than solution` : `${f4(w.value)} g ${l.strengthOf} per 100 g water${w.densityAssumed ? ' (taking the solution as 1.00 kg/L, water, since no density was given)' : densityText(s)}`;
    const solid = l.oxidant === 'calcium-hypochlorite' || l.oxidant === 'potassium-permanganate';
    return {
      pointer,
      message:
        `${givenText(product)} ${l.strengthOf} would be ${needs}, above the ${l.gramsPer100gWater} g ${l.of} per 100 g water that dissolve at ${l.temperatureC} °C (${l.why}; source ${l.source}${memoText(l.fromMemory)}): no solution that strong can be made up` +
        (solid ? `. ${fieldOf(at)}.strength is the strength of the solution made up from the solid; the assay of the solid itself goes in ${fieldOf(at)}.purity` : ''),
      params: {
        oxidant: l.oxidant,
        strength: { value: product.strength.value, unit: product.strength.unit },
        limit: { kind: 'solubility', gramsPer100gWater: l.gramsPer100gWater, of: l.of, temperatureC: l.temperatureC },
        source: l.source,
        fromMemory: l.fromMemory,
      },
    };
  }
  const c = onGradeScale(l, s);
  if (!c.given.greaterThan(c.refuse)) return null;
  const hypo = l.oxidant === 'sodium-hypochlorite';
  const limitText = c.scale === l.refuseAbove.unit ? `${l.refuseAbove.value} ${l.refuseAbove.unit}` : `${f3(c.refuse)} ${c.scale} (${l.refuseAbove.value} ${l.refuseAbove.unit} through the ${l.strongest.densityKgPerL} kg/L of ${l.strongest.label})`;
  const givenOnScale = `${givenText(product)}${product.strength.unit === c.scale ? '' : ` (${f4(c.given)} ${c.scale}${densityText(s)})`}`;
  return {
    pointer,
    message:
      `${givenOnScale} ${l.strengthOf} is above ${limitText}, the most this service takes for this product: ${l.refuseAbove.why} (source ${l.refuseAbove.source}); the strongest grade tabled is ${l.strongest.label} (tables/oxidants.json, source ${l.strongest.source}${memoText(l.strongest.fromMemory)}). Check the value and its unit` +
      (hypo ? ' (trade % is % w/v: g/L available chlorine ÷ 10)' : ''),
    params: {
      oxidant: l.oxidant,
      strength: { value: product.strength.value, unit: product.strength.unit },
      limit: { kind: 'grade', refuseAbove: { value: l.refuseAbove.value, unit: l.refuseAbove.unit }, comparedOn: c.scale, comparedWith: c.refuse.toNumber(), strongestGrade: l.strongest.label },
      source: l.refuseAbove.source,
      gradeSource: l.strongest.source,
    },
  };
}

// ---------------------------------------------------------------- warnings (dose route)

/** The lowest tabled temperature at which the solubility reaches `per100` (linear between points); null above the table. */
function temperatureDissolving(ox: OxidantRow, per100: DecT): DecT | null {
  const pts = (ox.solubility?.points ?? []).map((p) => ({ t: new Dec(p.temperatureC), v: new Dec(p.value) }));
  for (let i = 0; i < pts.length; i++) {
    const b = pts[i]!;
    if (per100.lessThanOrEqualTo(b.v)) {
      if (i === 0) return b.t;
      const a = pts[i - 1]!;
      return a.t.plus(b.t.minus(a.t).times(per100.minus(a.v)).dividedBy(b.v.minus(a.v)));
    }
  }
  return null;
}

/**
 * Warnings about a possible but unusual strength, for a dose: above the strongest grade tabled
 * (but not by the refusal margin), or above the solubility at today's tank temperature (but not
 * at the warmest temperature the table covers). Call after `strengthLimitProblem` found nothing.
 * `checkSolubility` is false when the dose's batch check (BATCH_ABOVE_SOLUBILITY) covers it.
 */
export function strengthLimitFlags(ox: OxidantRow, product: ProductStrengthInput, tankTemperatureC: number, tankFrom: string, checkSolubility = true, limits: readonly StrengthLimit[] = defaultStrengthLimits()): Flag[] {
  const l = strengthLimitFor(ox.id, limits);
  if (!l || l.kind === 'none') return [];
  const s = scalesOf(product, '/product/density');
  if (l.kind === 'grade') {
    const c = onGradeScale(l, s);
    if (!c.given.greaterThan(c.strongest)) return [];
    const givenOnScale = `${givenText(product)}${product.strength.unit === c.scale ? '' : ` (${f4(c.given)} ${c.scale}${densityText(s)})`}`;
    return [
      {
        code: 'STRENGTH_ABOVE_TRADE_GRADE',
        severity: 'warning',
        message: `The product strength, ${givenOnScale} ${l.strengthOf}, is above ${l.strongest.label}, the strongest grade tables/oxidants.json holds for ${lowerName(ox.name)} (source ${l.strongest.source}${memoText(l.strongest.fromMemory)}); it is refused above ${l.refuseAbove.value} ${l.refuseAbove.unit} (common practice). Check the strength on the certificate of analysis or measure it: the solution rate is computed for the strength given.`,
        source: l.strongest.source,
      },
    ];
  }
  if (!checkSolubility || !l.fromSolubilityTable || !ox.solubility) return [];
  const sol = solubilityAt(ox, tankTemperatureC);
  const w = per100gWater(s);
  if (!sol || w.value === null || !w.value.greaterThan(sol.value)) return [];
  const warmAt = temperatureDissolving(ox, w.value);
  return [
    {
      code: 'STRENGTH_ABOVE_SOLUBILITY',
      severity: 'warning',
      message:
        `The product strength, ${givenText(product)} ${l.strengthOf} (${f3(w.value)} g per 100 g water${w.densityAssumed ? ', taking the solution as 1.00 kg/L, water' : densityText(s)}), is above the solubility of ${l.of} at the tank temperature of ${tankTemperatureC} °C, ${tankFrom}: ${f3(sol.value)} g per 100 g water (tables/oxidants.json, source ${ox.solubility.source}${memoText(l.fromMemory)})` +
        `${warmAt ? `; it dissolves only in a tank at ${f3(warmAt)} °C or warmer, and crystals settle when it cools` : ''}. Make up a weaker solution, or give the batch (volume and tank temperature) for the batch check.`,
      source: ox.solubility.source,
    },
  ];
}

// ---------------------------------------------------------------- start-up check against the tables

/** Fed as a gas, by the oxidant row (chlorine gas, oxygen; ozone, generated on site as a gas). */
export function oxidantFedAsGas(ox: OxidantRow): boolean {
  return ox.form === 'gas' || (ox.form === 'generated' && ox.activeSpecies === 'O3');
}

/**
 * The rows above against the loaded tables; problems as sentences naming both sides (empty when
 * consistent). buildDosingContext throws TABLE_INVALID with them.
 */
export function checkStrengthLimits(t: { readonly oxidants: readonly OxidantRow[]; readonly sourceIds: ReadonlySet<string>; readonly limits?: readonly StrengthLimit[] }): string[] {
  const problems: string[] = [];
  const limits = t.limits ?? defaultStrengthLimits();
  const LIMIT_OF = new Map(limits.map((l) => [l.oxidant, l]));
  const here = 'tables/strength-limits.json';
  const byId = new Map(t.oxidants.map((o) => [o.id, o]));
  for (const ox of t.oxidants) {
    const gas = oxidantFedAsGas(ox);
    if (gas !== FED_AS_GAS_IDS.has(ox.id)) problems.push(`tables/oxidants.json row ${ox.id} is ${gas ? '' : 'not '}fed as a gas, but src/dosing/strength-limits.ts FED_AS_GAS_IDS says ${gas ? 'not' : 'so'}`);
    const solid = ox.form === 'solid';
    if (solid !== SOLID_PRODUCT_IDS.has(ox.id)) problems.push(`tables/oxidants.json row ${ox.id} is ${solid ? '' : 'not '}a solid product, but src/dosing/strength-limits.ts SOLID_PRODUCT_IDS says ${solid ? 'not' : 'so'}`);
    if (!gas && !LIMIT_OF.has(ox.id)) problems.push(`tables/oxidants.json row ${ox.id} is fed as a solution but has no row in ${here} (give its solubility, its strongest grade, or kind "none" with why)`);
  }
  for (const l of limits) {
    const ox = byId.get(l.oxidant);
    const row = `${here} row ${l.oxidant}`;
    if (!ox) {
      problems.push(`${row}: no such row in tables/oxidants.json`);
      continue;
    }
    if (FED_AS_GAS_IDS.has(l.oxidant)) problems.push(`${row}: ${l.oxidant} is fed as a gas and has no product strength`);
    if (l.kind === 'none') continue;
    for (const src of l.kind === 'grade' ? [l.strongest.source, l.refuseAbove.source] : [l.source]) {
      if (!t.sourceIds.has(src)) problems.push(`${row}: source "${src}" is not an id in tables/sources.json`);
    }
    if (l.kind === 'solubility') {
      const pts = ox.solubility?.points ?? [];
      if (l.fromSolubilityTable) {
        const warmest = pts.reduce<(typeof pts)[number] | undefined>((m, p) => (m === undefined || new Dec(p.temperatureC).greaterThan(m.temperatureC) ? p : m), undefined);
        if (!warmest) problems.push(`${row}: fromSolubilityTable, but tables/oxidants.json row ${l.oxidant} has no solubility table`);
        else if (!new Dec(warmest.value).equals(l.gramsPer100gWater) || !new Dec(warmest.temperatureC).equals(l.temperatureC) || ox.solubility!.source !== l.source) {
          problems.push(`${row}: ${l.gramsPer100gWater} g per 100 g water at ${l.temperatureC} °C (source ${l.source}) is not the warmest point of the solubility table of tables/oxidants.json row ${l.oxidant} (${warmest.value} at ${warmest.temperatureC} °C, source ${ox.solubility!.source})`);
        }
        if (ox.solubility && !ox.solubility.unit.startsWith(`g ${l.of} `)) problems.push(`${row}: the solubility table of tables/oxidants.json row ${l.oxidant} is in "${ox.solubility.unit}", not g ${l.of}`);
      } else if (pts.length > 0) {
        problems.push(`${row}: tables/oxidants.json row ${l.oxidant} now has a solubility table; take the limit from it (fromSolubilityTable)`);
      }
    } else {
      const same = ox.strength.nominal.find((n) => n.value === l.strongest.value && n.unit === l.strongest.unit);
      if (!same || same.densityKgPerL === undefined || !new Dec(same.densityKgPerL).equals(l.strongest.densityKgPerL) || same.source !== l.strongest.source) {
        problems.push(`${row}: the strongest grade ${l.strongest.label} (${l.strongest.value} ${l.strongest.unit}, ${l.strongest.densityKgPerL} kg/L, source ${l.strongest.source}) is not a strength row of tables/oxidants.json row ${l.oxidant}`);
      }
      const g = gradeScales(l);
      if (!g.refuseGPerL.greaterThan(g.strongestGPerL)) problems.push(`${row}: the refusal bound is not above the strongest grade`);
      for (const n of ox.strength.nominal) {
        const ns = scalesOf({ strength: { value: Number(n.value), unit: n.unit }, ...(n.densityKgPerL ? { density: { value: Number(n.densityKgPerL), unit: 'kg/L' } } : {}) }, '');
        const c = onGradeScale(l, ns);
        if (c.given.greaterThan(c.strongest)) problems.push(`${row}: tables/oxidants.json row ${l.oxidant} holds ${n.label}, stronger than the strongest grade named here (${l.strongest.label})`);
      }
    }
    // no tabled strength may be refused
    for (const n of ox.strength.nominal) {
      const p = strengthLimitProblem(l.oxidant, { strength: { value: Number(n.value), unit: n.unit }, ...(n.densityKgPerL ? { density: { value: Number(n.densityKgPerL), unit: 'kg/L' } } : {}) });
      if (p) problems.push(`${row}: the tabled strength ${n.label} of tables/oxidants.json would be refused: ${p.message}`);
    }
  }
  return problems;
}
