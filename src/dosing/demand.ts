/**
 * Demand terms: each contaminant's stoichiometric demand (ratio × concentration, on the
 * oxidant's basis), and the background demand (a measured demand test, or TOC × a factor the
 * plant measured — never a default factor).
 */
import { Dec, type Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import { DomainError } from '../core/errors.js';
import { toBaseDec } from '../core/quantity.js';
import type { ContaminantRow, OxidantRow } from '../reference/dosing-schemas.js';
import type { Medium } from '../chemistry/balance/index.js';
import type { RatioResult } from './ratio.js';
import { reported, type Flag, type Reported } from './types.js';
import { roundSigNumber } from './round.js';
import type { BackgroundDemandInput, ConcentrationInput, DoseOptions, SampleInput } from './request.js';

export interface DemandEntry {
  /** Contaminant id (tables/contaminants.json). */
  readonly contaminant: string;
  /** The request field it came from (iron, ammoniaN, …). */
  readonly field: string;
  readonly name: string;
  readonly reportedAs: string;
  readonly concentration: Reported;
  /** mg oxidant (on its basis) per mg contaminant (on its element basis); full value. */
  readonly ratio: number;
  readonly ratioRounded: string;
  readonly ratioUnit: string;
  /** 'stoichiometric' (from the balanced reaction) or 'practical' (a named design ratio, ammonia only). */
  readonly ratioKind: 'stoichiometric' | 'practical';
  /** The stoichiometric ratio, shown beside a practical one. */
  readonly stoichiometricRatio: number;
  readonly demand: Reported;
  /** The balanced equation. */
  readonly reaction: string;
  readonly electrons: number;
  readonly medium: Medium;
  readonly product: { readonly id: string; readonly formula: string; readonly why: string };
  readonly provenance: readonly string[];
  readonly source: string;
}

export interface DemandWork {
  readonly entry: DemandEntry;
  readonly ratio: RatioResult;
  readonly concentrationMgPerL: DecT;
  readonly demandMgPerL: DecT;
  readonly contaminantRow: ContaminantRow;
}

export interface RatioLookup {
  (oxidantId: string, contaminantId: string, productId: string, medium: Medium): RatioResult;
}

/** mg/L from a concentration quantity, with the pointer for errors. */
export function mgPerL(q: ConcentrationInput, pointer: string): DecT {
  return toBaseDec('concentration', q, pointer);
}

export function productChoice(ct: ContaminantRow, options: DoseOptions | undefined): string {
  if (ct.id === 'sulfide' && options?.sulfideProduct) return options.sulfideProduct;
  return (ct.products.find((p) => p.default) ?? ct.products[0]!).id;
}

/**
 * One demand entry per contaminant present in the sample (value > 0). Contaminants to which the
 * oxidant does not apply (ammonia with a non-chlorine oxidant) get an info flag and no demand;
 * unusual pairs get the stoichiometric demand and a warning.
 */
export function contaminantDemands(input: {
  readonly oxidant: OxidantRow;
  readonly sample: SampleInput;
  readonly contaminants: readonly ContaminantRow[];
  readonly medium: Medium;
  readonly options: DoseOptions | undefined;
  readonly ratio: RatioLookup;
  readonly flags: Flag[];
}): DemandWork[] {
  const { oxidant: ox, sample, medium, options, flags } = input;
  const out: DemandWork[] = [];
  for (const ct of input.contaminants) {
    const q = (sample as unknown as Record<string, ConcentrationInput | undefined>)[ct.requestField];
    if (q === undefined) continue;
    const pointer = `/sample/${ct.requestField}`;
    const c = mgPerL(q, pointer);
    if (c.isZero()) continue;
    if (ct.notApplicable?.oxidants.includes(ox.id)) {
      flags.push({
        code: ct.id === 'ammonia' ? 'AMMONIA_BREAKPOINT_NOT_APPLICABLE' : 'CONTAMINANT_NOT_APPLICABLE',
        severity: 'info',
        message: `${ct.name} (${roundSigNumber(c.toNumber())} mg/L ${ct.reportedAs}): ${ct.notApplicable.text} (${ox.name}).`,
        source: ct.notApplicable.source,
      });
      continue;
    }
    const productId = productChoice(ct, options);
    const r = input.ratio(ox.id, ct.id, productId, medium);
    const product = ct.products.find((p) => p.id === productId)!;
    let ratio = r.ratio;
    let ratioKind: DemandEntry['ratioKind'] = 'stoichiometric';
    let source = ct.source;
    const provenance = [...r.provenance];
    if (ct.ratioOptions && (options?.ammoniaRatio ?? ct.ratioOptions.default) === 'practical') {
      ratio = new Dec(ct.ratioOptions.practical.valueText);
      ratioKind = 'practical';
      source = ct.ratioOptions.practical.source;
      provenance.push(
        `Practical design ratio used (common practice): ${ct.ratioOptions.practical.valueText} ${ct.ratioOptions.practical.unit} (range ${ct.ratioOptions.practical.rangeText}); the stoichiometric ratio is ${r.ratioRounded}.`,
      );
      if (ox.doseBasis !== 'Cl2') {
        throw new DomainError('TABLE_INVALID', { detail: `The practical ratio of ${ct.id} is on the Cl2 basis but ${ox.id} doses as ${ox.doseBasis}.` });
      }
    }
    if (!ct.oxidants.includes(ox.id)) {
      flags.push({
        code: 'OXIDANT_UNUSUAL_FOR_CONTAMINANT',
        severity: 'warning',
        message: `${ox.name} is not a usual oxidant for ${lowerName(ct.name)} in drinking water${ct.practiceNote ? `: ${ct.practiceNote}` : ''} The stoichiometric demand is shown; confirm with a jar test.`,
        source: ct.practiceSource ?? ct.source,
      });
    }
    const demand = ratio.times(c);
    out.push({
      entry: {
        contaminant: ct.id,
        field: ct.requestField,
        name: ct.name,
        reportedAs: ct.reportedAs,
        concentration: reported(c, `mg/L ${ct.reportedAs}`),
        ratio: ratioKind === 'practical' ? ratio.toNumber() : r.ratioNumber,
        ratioRounded: ratioKind === 'practical' ? ratio.toString() : r.ratioRounded,
        ratioUnit: r.unit,
        ratioKind,
        stoichiometricRatio: r.ratioNumber,
        demand: reported(demand, `mg/L as ${ox.doseBasis}`),
        reaction: r.equation,
        electrons: r.electrons,
        medium,
        product: { id: product.id, formula: product.formula, why: product.text },
        provenance,
        source,
      },
      ratio: r,
      concentrationMgPerL: c,
      demandMgPerL: demand,
      contaminantRow: ct,
    });
  }
  return out;
}

export interface BackgroundTerm {
  readonly mgPerL: DecT;
  readonly method: 'measured' | 'toc-factor' | 'none';
  readonly reason: string;
  readonly source: string;
}

/** The background demand from a demand test or TOC × a plant factor; zero (and said) when neither is given. */
export function backgroundDemand(input: { readonly background: BackgroundDemandInput | undefined; readonly sample: SampleInput; readonly oxidant: OxidantRow; readonly flags: Flag[] }): BackgroundTerm {
  const { background: bg, sample, oxidant: ox } = input;
  if (bg === undefined) {
    input.flags.push({
      code: 'BACKGROUND_DEMAND_NOT_GIVEN',
      severity: 'info',
      message: `No background demand was given, so none is counted: organic matter and other reductants also consume ${ox.doseBasis}. Give backgroundDemand from a demand test (mg/L) or as TOC × your plant's factor.`,
      source: 'input',
    });
    return { mgPerL: new Dec(0), method: 'none', reason: 'No background demand given: not counted (give a measured demand test, or TOC and a plant-specific factor).', source: 'input' };
  }
  if ('tocFactor' in bg) {
    if (!sample.toc) {
      throw new DomainError('DOSE_INPUT_MISSING', {
        detail: 'A background demand by TOC factor needs the sample TOC: give sample.toc {value, unit}.',
        fields: [{ pointer: '/sample/toc', message: 'TOC is required when backgroundDemand.tocFactor is given' }],
      });
    }
    const toc = mgPerL(sample.toc, '/sample/toc');
    const v = toc.times(bg.tocFactor);
    return {
      mgPerL: v,
      method: 'toc-factor',
      reason: `TOC ${toc.toString()} mg/L × the plant's factor ${bg.tocFactor} mg ${ox.doseBasis} per mg TOC${bg.note ? ` (${bg.note})` : ''}.`,
      source: 'input',
    };
  }
  const v = mgPerL(bg, '/backgroundDemand');
  return { mgPerL: v, method: 'measured', reason: `Measured demand (demand test) of ${v.toString()} mg/L as ${ox.doseBasis}, given with the request.`, source: 'input' };
}
