/**
 * Adapters from the reference tables to the jar-test inputs, for the HTTP layer:
 * an oxidant products row (tables/oxidants.json) to JarProductFacts, and the limits rows
 * (tables/limits.json) to the default Fe and Mn targets of the evaluation. Pure: rows in,
 * facts out.
 */
import { DomainError } from '../core/errors.js';
import type { LimitRow, OxidantRow } from '../reference/dosing-schemas.js';
import { densitySeries, interpolateDensity, solubilityAt } from '../dosing/feed.js';
import { Dec } from '../core/decimal.js';
import { fmt } from './common.js';
import type { LimitTarget } from './evaluate.js';
import { defaultResidualMethod, type JarProductFacts, type Solubility } from './product.js';

export interface JarProductOptions {
  /** Temperature for the solubility of a solid (default 20 °C). */
  readonly temperatureC?: number;
  /**
   * g of the product compound per g of dose basis (e.g. NaMnO4 per KMnO4, from the dosing module's
   * productPerBasis). Needed when the row gives strength or purity on the product and the product
   * formula differs from the dose basis; 1 when they are the same formula.
   */
  readonly productPerBasis?: number;
  /** Purity (%) on the row's purity basis, overriding the row's default (the certificate of analysis). */
  readonly purityPercent?: number;
  /** Strength of the trade solution on hand, on the row's strength basis, overriding the row's nominal default. */
  readonly tradeStrength?: { readonly value: number; readonly unit: '% w/w' | '% w/v' | 'g/L'; readonly densityKgPerL?: number; readonly measured?: boolean };
  /**
   * For a solid whose oxidants row has no solubility table (calcium hypochlorite): the solubility row of
   * tables/strength-limits.json, the limit POST /api/v1/doses refuses a product strength above.
   */
  readonly solubilityLimit?: { readonly gramsPer100gWater: number; readonly temperatureC: number; readonly source: string; readonly of: string; readonly fromMemory: boolean };
}

const DEFAULT_SOLUBILITY_T_C = 20;

function wiring(detail: string, pointer: string): DomainError {
  return new DomainError('JAR_TEST_INVALID', { detail, fields: [{ pointer, message: detail }] });
}

function measureMethodFor(row: OxidantRow): string {
  if (row.doseBasis === 'Cl2') return 'iodometric titration (or DPD–FAS titration)';
  return defaultResidualMethod(row.doseBasis);
}

/** g of basis per g of product compound (the inverse of productPerBasis). */
function basisPerProduct(row: OxidantRow, options: JarProductOptions, what: string): number {
  if (options.productPerBasis !== undefined) {
    if (!(options.productPerBasis > 0)) throw wiring('productPerBasis must be greater than 0', '/productPerBasis');
    return 1 / options.productPerBasis;
  }
  if (row.productFormula === row.doseBasis) return 1;
  throw wiring(
    `The ${what} of ${row.name} is given as ${row.productFormula} but doses are as ${row.doseBasis}; pass productPerBasis (g ${row.productFormula} per g ${row.doseBasis}).`,
    '/productPerBasis',
  );
}

function decaysFor(row: OxidantRow): JarProductFacts['decays'] {
  if (row.storage !== undefined) return { note: row.storage.text, measureBy: measureMethodFor(row) };
  if (row.activeSpecies === 'OCl-') {
    return { note: 'hypochlorite products lose available chlorine in storage, faster when warm or damp', measureBy: measureMethodFor(row) };
  }
  return undefined;
}

/** Product facts for planning a jar test with this product. Throws JAR_TEST_INVALID when a needed fact is missing. */
export function jarProductFacts(row: OxidantRow, options: JarProductOptions = {}): JarProductFacts {
  const notes: string[] = [];
  const decays = decaysFor(row);
  const common = {
    name: row.name,
    basis: row.doseBasis,
    activeSpecies: row.activeSpecies,
    productFormula: row.productFormula,
    residualMethod: defaultResidualMethod(row.doseBasis),
    sources: [row.source],
    ...(decays !== undefined ? { decays } : {}),
  };

  if (row.form === 'solid') {
    const pct = options.purityPercent ?? (row.purity !== undefined ? Number(row.purity.defaultPercent) : undefined);
    let purityFraction: number | undefined;
    if (pct !== undefined) {
      if (!(pct > 0 && pct <= 100)) throw wiring(`purity must be from 0 to 100 % (got ${pct})`, '/purityPercent');
      const onBasis = row.purity?.basis === 'basis';
      purityFraction = onBasis ? pct / 100 : (pct / 100) * basisPerProduct(row, options, 'purity');
      if (options.purityPercent === undefined) {
        notes.push(`Purity ${fmt(pct)} % ${onBasis ? `as ${row.doseBasis}` : row.productFormula} is the table default (${row.purity!.source}); use the assay on the certificate of analysis.`);
      }
    }
    let solubility: Solubility | undefined;
    const T = options.temperatureC ?? DEFAULT_SOLUBILITY_T_C;
    const sol = row.solubility !== undefined ? solubilityAt(row, T) : null;
    if (sol !== null && row.solubility !== undefined) {
      // g per 100 g water → g per kg of solution = 1000·s/(100 + s); taken as g/L with a density of 1,
      // which understates the g/L of a denser solution, so the check errs on the safe side.
      const s = sol.value.toNumber();
      const gPerL = ((1000 * s) / (100 + s)) * basisPerProduct(row, options, 'solubility');
      solubility = {
        gPerL,
        temperatureC: T,
        source: row.solubility.source,
        note: `${fmt(s)} ${row.solubility.unit} at ${fmt(T)} °C${sol.clamped ? ' (outside the table; nearest end used)' : ''}, as about ${fmt(gPerL, 3)} g/L of solution`,
      };
    } else if (options.solubilityLimit !== undefined) {
      // g per 100 g water → g per L of solution taken as 1.00 kg/L: 1000·s/(100 + s), the same conversion as
      // the dose route's check (c·100/(1000 − c) ≤ s), compared on the dose basis as that row is
      const l = options.solubilityLimit;
      const gPerL = (1000 * l.gramsPer100gWater) / (100 + l.gramsPer100gWater);
      solubility = {
        gPerL,
        temperatureC: l.temperatureC,
        source: l.source,
        note: `about ${fmt(l.gramsPer100gWater)} g ${l.of} per 100 g water at ${fmt(l.temperatureC)} °C (tables/strength-limits.json${l.fromMemory ? ', from memory; verify' : ''}), as about ${fmt(gPerL, 3)} g/L of solution`,
      };
    }
    return { ...common, stock: { kind: 'solid', ...(purityFraction !== undefined ? { purityFraction } : {}), ...(solubility !== undefined ? { solubility } : {}) }, ...(notes.length ? { notes } : {}) };
  }

  if (row.form === 'solution') {
    const nominal = row.strength.nominal.find((n) => n.default) ?? row.strength.nominal[0];
    const given = options.tradeStrength;
    const value = given?.value ?? (nominal !== undefined ? Number(nominal.value) : undefined);
    const unit = given?.unit ?? nominal?.unit;
    if (value === undefined || unit === undefined) throw wiring(`Give the strength of the ${row.name} on hand (% w/w, % w/v or g/L).`, '/product/strength');
    let gPerL: number;
    if (unit === 'g/L') gPerL = value;
    else if (unit === '% w/v') gPerL = value * 10;
    else {
      let density = given?.densityKgPerL ?? (given === undefined && nominal?.densityKgPerL !== undefined ? Number(nominal.densityKgPerL) : undefined);
      if (density === undefined) {
        // as POST /api/v1/doses does: the tabled density of that strength, else interpolated between the
        // tabled strengths around it (tables/oxidants.json); never extrapolated beyond them
        const series = densitySeries(row);
        const same = row.strength.nominal.find((n) => n.densityKgPerL !== undefined && n.unit === '% w/w' && Number(n.value) === value);
        const hit = same ? null : interpolateDensity(series, 'massPercent', new Dec(value));
        if (same?.densityKgPerL !== undefined) {
          density = Number(same.densityKgPerL);
          notes.push(`No density was given for ${fmt(value)} % w/w: the tabled density of ${same.label}, ${same.densityKgPerL} kg/L (tables/oxidants.json, source ${same.source}), was used. Give product.density from the certificate of analysis to refine.`);
        } else if (hit !== null) {
          density = hit.density.toNumber();
          notes.push(
            `No density was given for ${fmt(value)} % w/w: ${hit.note} (tables/oxidants.json, source ${hit.source}), ${fmt(value * 10 * density, 4)} g/L as ${row.strength.basis === 'product' ? row.productFormula : row.doseBasis}. ` +
              `The density also moves with temperature${row.doseBasis === 'Cl2' ? ' and excess caustic' : ''}; give product.density from the certificate of analysis for the exact strength.`,
          );
        } else {
          const range = series.length > 0 ? ` the table holds densities from ${fmt(series[0]!.massPercent.toNumber(), 4)} to ${fmt(series[series.length - 1]!.massPercent.toNumber(), 4)} % w/w, and` : '';
          throw wiring(`A strength of ${fmt(value)} % w/w needs the solution's density (kg/L) to give g/L:${range} a density is not extrapolated; give product.density, or the strength in % w/v or g/L.`, '/product/density');
        }
      }
      gPerL = value * 10 * density;
    }
    const onProduct = row.strength.basis === 'product';
    const tradeStrengthGPerL = onProduct ? gPerL * basisPerProduct(row, options, 'strength') : gPerL;
    if (given === undefined && nominal !== undefined) {
      notes.push(`Trade strength is the table's nominal ${nominal.label} (${nominal.source}), ${fmt(tradeStrengthGPerL, 4)} g/L as ${row.doseBasis}; give the strength of the product on hand.`);
    }
    return {
      ...common,
      stock: { kind: 'trade-solution', tradeStrengthGPerL, ...(given?.measured !== undefined ? { strengthMeasured: given.measured } : {}) },
      ...(notes.length ? { notes } : {}),
    };
  }

  // gas or generated: the stock is a solution made from the generator or the gas and measured; oxygen is aeration.
  if (row.id === 'chlorine-gas' || (row.form === 'gas' && row.doseBasis === 'Cl2')) {
    notes.push('For chlorine gas the jar stock is chlorine water (chlorine bubbled into chilled reagent water, measured before dosing), or a sodium hypochlorite stock in its place (same basis, as Cl2).');
  }
  if (row.doseBasis === 'O2') {
    // Oxygen (from air) is dosed by aerating the water; there is no stock to pipette into a jar.
    return { ...common, stock: { kind: 'aeration' } };
  }
  return { ...common, stock: { kind: 'generated', measureBy: measureMethodFor(row) }, ...(notes.length ? { notes } : {}) };
}

/** The default Fe and Mn targets of an evaluation: the secondary levels (SMCL rows) of the limits table. */
export function secondaryLimitTargets(rows: readonly LimitRow[], authority: LimitRow['authority'] = 'US EPA'): { iron?: LimitTarget; manganese?: LimitTarget } {
  const pick = (parameter: string): LimitTarget | undefined => {
    const r = rows.find((x) => x.parameter === parameter && x.authority === authority && (x.kind === 'SMCL' || authority !== 'US EPA'));
    if (r === undefined) return undefined;
    return { valueMgPerL: Number(r.valueText), source: r.source, name: `${r.authority} ${r.kind === 'SMCL' ? 'secondary level' : r.kind}, ${r.citation}, ${r.valueText} mg/L ${r.basis}` };
  };
  const iron = pick('iron');
  const manganese = pick('manganese');
  return { ...(iron !== undefined ? { iron } : {}), ...(manganese !== undefined ? { manganese } : {}) };
}
