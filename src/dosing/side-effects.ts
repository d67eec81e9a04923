/**
 * Side effects of a dose: alkalinity consumed (from the H+ each balanced reaction releases in
 * the water's medium, plus the hydrolysis of chlorine gas and the acid–base split of free
 * chlorine for the residual), the pH after dosing from the closed carbonate system at the given
 * alkalinity (src/water/carbonate.ts), solids produced (Fe(OH)3, MnO2, S from the balanced
 * reactions), byproducts (chlorite from chlorine dioxide, bromate risk from ozone with bromide,
 * disinfection by-product caution for chlorine with high TOC) and excess oxidant.
 */
import type { Dec as DecT } from '../core/decimal.js';
import { roundSigNumber } from './round.js';
import type { LimitRow, OxidantRow } from '../reference/dosing-schemas.js';
import { acidAddition, type AcidAdditionResult, type CarbonateConstants } from '../water/carbonate.js';
import type { DemandWork } from './demand.js';
import { reported, type Flag, type Reported } from './types.js';

/** Bromide above which ozonation is screened for bromate (common practice screening level, mg/L). */
export const BROMIDE_SCREENING_MG_PER_L = 0.05;
/** TOC above which chlorine-based oxidation gets a DBP caution: the 2.0 mg/L trigger of enhanced coagulation (40 CFR 141.135), used here as a screening level (common practice). */
export const TOC_DBP_SCREENING_MG_PER_L = 2.0;

export interface SolidEntry {
  readonly formula: string;
  readonly amount: Reported;
  readonly from: readonly string[];
}

export interface SideEffects {
  readonly alkalinityConsumed: Reported & { readonly basis: 'as CaCO3' };
  readonly acidReleasedMeqPerL: number;
  readonly alkalinityTerms: readonly { readonly what: string; readonly meqPerL: number; readonly how: string }[];
  readonly pH: {
    readonly before: number;
    readonly after: number | null;
    readonly drop: number | null;
    readonly alkalinityAfter: Reported | null;
    readonly alkalinityExhausted: boolean | null;
    readonly method: string;
  };
  readonly solids: readonly SolidEntry[];
  readonly solidsTotal: Reported;
  readonly byproducts: readonly { readonly id: string; readonly estimate: Reported | null; readonly limit: { readonly id: string; readonly value: string; readonly citation: string } | null; readonly text: string; readonly source: string }[];
  readonly excessOxidant: readonly string[];
  readonly notes: readonly string[];
}

export interface SideEffectInput {
  readonly oxidant: OxidantRow;
  readonly demands: readonly DemandWork[];
  readonly doseMgPerL: DecT;
  readonly residualMgPerL: DecT;
  readonly backgroundMgPerL: DecT;
  readonly pH: number;
  readonly temperatureC: number;
  readonly alkalinityMgPerLAsCaCO3: number | null;
  readonly bromideMgPerL: number | null;
  readonly tocMgPerL: number | null;
  readonly chloriteFraction: number | null;
  readonly limits: readonly LimitRow[];
  readonly deps: {
    readonly caco3MgPerMeq: number;
    readonly basisMolarMass: (ox: OxidantRow) => DecT;
    readonly molarMass: (formula: string) => DecT;
    /** mol of active species per mol of basis (inverse of the basis rule). */
    readonly activePerBasis: (ox: OxidantRow) => number;
    /** H+ released per mol of active species by the product's hydrolysis (Cl2 + H2O → HOCl + H+ + Cl-: 1). */
    readonly hydrolysisHPerMol: (ox: OxidantRow) => number;
    /** Fraction of free chlorine present as HOCl at a pH and temperature. */
    readonly hoclFraction: (ox: OxidantRow, pH: number, temperatureC: number) => number | null;
    /** mol of reduced product (a solid) per mol of active species, or null when the reduced product is dissolved. */
    readonly solidReducedPerActive: (ox: OxidantRow) => { formula: string; mol: number } | null;
    readonly carbonateConstantsAt: (temperatureC: number) => CarbonateConstants;
    /** Memo of the carbonate solve (a pure function of its inputs), owned by the dosing context. */
    readonly carbonateMemo: Map<string, AcidAdditionResult>;
  };
  readonly flags: Flag[];
}

function limitOf(limits: readonly LimitRow[], id: string): LimitRow | undefined {
  return limits.find((l) => l.id === id);
}

export function sideEffects(input: SideEffectInput): SideEffects {
  const { oxidant: ox, deps, flags } = input;
  const notes: string[] = [];
  const terms: { what: string; meqPerL: number; how: string }[] = [];
  // contaminant reactions: mol element/L × H+ per mol element
  for (const d of input.demands) {
    const el = d.contaminantRow.elementBasis;
    const molPerL = d.concentrationMgPerL.toNumber() / deps.molarMass(el).toNumber() / 1000;
    const h = d.ratio.hPlusPerMolElement.toNumber();
    terms.push({ what: d.entry.contaminant, meqPerL: molPerL * h * 1000, how: `${d.ratio.hPlusPerMolElement.toString()} H+ per ${el} in ${d.ratio.equation}` });
  }
  // residual and background: hydrolysis of the product and the HOCl/OCl- split; and the chlorine a
  // practical breakpoint ratio adds beyond the balanced reaction's (its own reactions, to nitrate
  // and trichloramine, are not known), counted the same way
  const practicalExcess = input.demands.reduce(
    (a, d) => (d.entry.ratioKind === 'practical' ? a + (d.entry.ratio - d.entry.stoichiometricRatio) * d.concentrationMgPerL.toNumber() : a),
    0,
  );
  const unconsumed = input.residualMgPerL.toNumber() + input.backgroundMgPerL.toNumber() + Math.max(0, practicalExcess);
  if (unconsumed !== 0) {
    const molActive = (unconsumed / deps.basisMolarMass(ox).toNumber() / 1000) * deps.activePerBasis(ox);
    const hyd = deps.hydrolysisHPerMol(ox);
    const forWhat =
      practicalExcess > 0
        ? 'the residual, the background demand and the practical breakpoint excess (a lower bound for the excess: its own reactions, to nitrate or trichloramine, release more acid than the hydrolysis counted here)'
        : 'the residual and background demand';
    if (hyd !== 0) terms.push({ what: 'hydrolysis', meqPerL: molActive * hyd * 1000, how: `${ox.hydrolysis?.equation ?? ''}: ${hyd} H+ per ${ox.activeSpecies} for ${forWhat}` });
    const f = deps.hoclFraction(ox, input.pH, input.temperatureC);
    if (f !== null) {
      // Cl2 gives HOCl, which dissociates by (1 − f); OCl- fed takes up H+ for the fraction f that is HOCl
      const fedAsOCl = ox.activeSpecies === 'OCl-';
      const h = fedAsOCl ? -f : 1 - f;
      terms.push({
        what: 'free-chlorine-split',
        meqPerL: molActive * h * 1000,
        how: fedAsOCl
          ? `OCl- fed takes up H+ for the ${(f * 100).toFixed(0)} % present as HOCl at pH ${input.pH}`
          : `HOCl formed releases H+ for the ${((1 - f) * 100).toFixed(0)} % dissociated to OCl- at pH ${input.pH}`,
      });
    }
    notes.push('The acid or base of the background demand reactions themselves (organic matter) is not known and not counted.');
  }
  const acidMeqPerL = terms.reduce((a, t) => a + t.meqPerL, 0);
  const alkConsumed = acidMeqPerL * deps.caco3MgPerMeq;

  let after: number | null = null;
  let drop: number | null = null;
  let alkAfter: Reported | null = null;
  let exhausted: boolean | null = null;
  let method = 'Give sample.alkalinity (mg/L as CaCO3) for the pH after dosing.';
  if (input.alkalinityMgPerLAsCaCO3 !== null) {
    const k = deps.carbonateConstantsAt(input.temperatureC);
    try {
      const key = `${input.alkalinityMgPerLAsCaCO3}|${input.pH}|${input.temperatureC}|${acidMeqPerL}`;
      const carbonateMemo = deps.carbonateMemo;
      let r = carbonateMemo.get(key);
      if (!r) {
        r = acidAddition({ alkalinityMgPerLAsCaCO3: input.alkalinityMgPerLAsCaCO3, pH: input.pH, constants: k, equivalentWeightMgPerMeq: deps.caco3MgPerMeq, acidMeqPerL });
        if (carbonateMemo.size >= 512) carbonateMemo.delete(carbonateMemo.keys().next().value as string);
        carbonateMemo.set(key, r);
      }
      after = r.finalPH;
      drop = r.pHDrop;
      alkAfter = reported(r.finalAlkalinityMgPerLAsCaCO3, 'mg/L as CaCO3');
      exhausted = r.alkalinityExhausted;
      method = 'Closed carbonate system at constant total carbonate (no CO2 exchange during the reaction), K1, K2, Kw at the water temperature (Plummer & Busenberg 1982; Kw from the equilibria table).';
      if (r.alkalinityExhausted) {
        flags.push({ code: 'ALKALINITY_EXHAUSTED', severity: 'danger', message: `The dose consumes ${alkConsumed.toFixed(1)} mg/L as CaCO3, more than the ${input.alkalinityMgPerLAsCaCO3} mg/L alkalinity: the pH collapses (to ${r.finalPH.toFixed(2)}). Add alkalinity (lime, soda ash, caustic) before the oxidant.`, source: 'plummer-busenberg-1982' });
      } else if (r.pHDrop > 0.5) {
        flags.push({ code: 'PH_DROP_LARGE', severity: 'warning', message: `The dose lowers the pH by ${r.pHDrop.toFixed(2)} (to ${r.finalPH.toFixed(2)}); check the pH the reactions need and the corrosion control target.`, source: 'plummer-busenberg-1982' });
      }
    } catch (e) {
      method = `pH after dosing not computed: ${(e as Error).message}`;
    }
  }

  // solids
  const solids = new Map<string, { mg: number; from: string[] }>();
  const addSolid = (formula: string, mg: number, from: string): void => {
    const cur = solids.get(formula);
    if (cur) {
      cur.mg += mg;
      if (!cur.from.includes(from)) cur.from.push(from);
    } else solids.set(formula, { mg, from: [from] });
  };
  for (const d of input.demands) for (const s of d.ratio.solids) addSolid(s.formula, s.mgPerMgElementNumber * d.concentrationMgPerL.toNumber(), d.entry.contaminant);
  const red = deps.solidReducedPerActive(ox);
  const bgMg = input.backgroundMgPerL.toNumber();
  if (red && bgMg !== 0) {
    const mmolActive = (bgMg / deps.basisMolarMass(ox).toNumber()) * deps.activePerBasis(ox);
    addSolid(red.formula, mmolActive * red.mol * deps.molarMass(red.formula).toNumber(), 'background');
  }
  const solidList: SolidEntry[] = [...solids.entries()].map(([formula, v]) => ({ formula, amount: reported(v.mg, `mg/L ${formula}`), from: v.from }));
  const solidsTotal = [...solids.values()].reduce((a, v) => a + v.mg, 0);

  // byproducts
  const byproducts: SideEffects['byproducts'][number][] = [];
  if (ox.chloriteFraction) {
    const fraction = input.chloriteFraction ?? Number(ox.chloriteFraction.default);
    const perClO2 = deps.molarMass('ClO2-').toNumber() / deps.molarMass('ClO2').toNumber();
    const byFraction = input.doseMgPerL.toNumber() * fraction * perClO2;
    // The balanced reactions take all the ClO2 that iron, manganese … consume to chlorite (1 e-);
    // the rule-of-thumb fraction is over the whole dose. The larger is reported, so that a sample
    // heavy in iron or manganese is not estimated below what its own reactions form.
    const reacting = input.demands.filter((d) => /(^|\s)\d*ClO2-(\s|$)/.test(d.ratio.equation.split(/->|=/)[1] ?? ''));
    // plus the usual share of what the background demand (organic matter) consumes
    const byReactions = (reacting.reduce((a, d) => a + d.demandMgPerL.toNumber(), 0) + fraction * input.backgroundMgPerL.toNumber()) * perClO2;
    const chlorite = Math.max(byFraction, byReactions);
    const pct = (fraction * 100).toFixed(0);
    const usual = `usually ${(Number(ox.chloriteFraction.low) * 100).toFixed(0)} to ${(Number(ox.chloriteFraction.high) * 100).toFixed(0)} %${fraction === Number(ox.chloriteFraction.high) ? ', the high end taken here' : ''}`;
    const fractionWhat = input.chloriteFraction !== null ? `the ${pct} % of the dose given in options.chloriteFraction` : `${pct} % of the dose (${usual})`;
    const us = limitOf(input.limits, 'us-mcl-chlorite');
    const who = limitOf(input.limits, 'who-chlorite');
    byproducts.push({
      id: 'chlorite',
      estimate: reported(chlorite, 'mg/L as ClO2-'),
      limit: us ? { id: us.id, value: us.valueText, citation: us.citation } : null,
      text:
        byReactions > byFraction
          ? `The balanced reactions with ${reacting.map((d) => d.entry.name.charAt(0).toLowerCase() + d.entry.name.slice(1)).join(' and ')} reduce all the chlorine dioxide they consume to chlorite (ClO2 + e- → ClO2-)${input.backgroundMgPerL.isZero() ? '' : `, and ${pct} % of the background demand's share is added`}: ${roundSigNumber(byReactions)} mg/L, more than ${fractionWhat}; the larger is reported`
          : `${input.chloriteFraction !== null ? `${pct} % of the chlorine dioxide dose (options.chloriteFraction) is taken to end as chlorite` : `About ${pct} % of the chlorine dioxide dose ends as chlorite (${usual})`}${byReactions > 0 ? `; the balanced reactions alone form ${roundSigNumber(byReactions)} mg/L` : ''}`,
      source: ox.chloriteFraction.source,
    });
    if (us && chlorite > Number(us.valueText)) {
      flags.push({ code: 'CHLORITE_ABOVE_MCL', severity: 'danger', message: `Estimated chlorite ${roundSigNumber(chlorite)} mg/L exceeds the US MCL ${us.valueText} mg/L (${us.citation}); lower the chlorine dioxide dose, or remove chlorite (e.g. with ferrous iron or activated carbon). Local regulations govern.`, source: us.source });
    } else if (who && chlorite > Number(who.valueText)) {
      flags.push({ code: 'CHLORITE_ABOVE_WHO', severity: 'warning', message: `Estimated chlorite ${roundSigNumber(chlorite)} mg/L exceeds the WHO provisional guideline value ${who.valueText} mg/L (${who.edition ?? who.citation}). Local regulations govern.`, source: who.source });
    }
  }
  if (ox.chlorate && input.doseMgPerL.greaterThan(0)) {
    // No estimate: the chlorate a dose carries depends on the stock's age and storage or on the
    // generator's operation, which the request does not state. The limits are named instead.
    const who = limitOf(input.limits, 'who-chlorate');
    const eu = limitOf(input.limits, 'eu-chlorate');
    const euAlso = eu?.note?.replace(/\s*Value from memory; verify\.$/, '').replace(/\.$/, '') ?? '';
    const limitsText = [who ? `WHO provisional guideline value ${who.valueText} mg/L` : null, eu ? `EU parametric value ${eu.valueText} mg/L${euAlso ? `, or ${euAlso}` : ''} (${eu.citation})` : null].filter(Boolean).join('; ');
    byproducts.push({
      id: 'chlorate',
      estimate: null,
      limit: who ? { id: who.id, value: who.valueText, citation: who.citation } : null,
      text: ox.chlorate.text,
      source: ox.chlorate.source,
    });
    flags.push({
      code: 'CHLORATE_CHECK',
      severity: 'info',
      message: `Chlorate: ${ox.chlorate.text}${limitsText ? ` Limits: ${limitsText}.` : ''} Local regulations govern.`,
      source: ox.chlorate.source,
    });
  }
  if (ox.id === 'ozone') {
    const us = limitOf(input.limits, 'us-mcl-bromate');
    if (input.bromideMgPerL !== null && input.bromideMgPerL > BROMIDE_SCREENING_MG_PER_L) {
      byproducts.push({ id: 'bromate', estimate: null, limit: us ? { id: us.id, value: us.valueText, citation: us.citation } : null, text: `Bromide ${input.bromideMgPerL} mg/L is above ${BROMIDE_SCREENING_MG_PER_L} mg/L (common-practice screening level): bromate may exceed its limit.`, source: ox.byproduct?.source ?? 'usepa-1999-adogm' });
      flags.push({ code: 'BROMATE_RISK', severity: 'warning', message: `Ozone with ${input.bromideMgPerL} mg/L bromide can form bromate above the MCL ${us?.valueText ?? '0.010'} mg/L (${us?.citation ?? '40 CFR 141.64'}); the screening level ${BROMIDE_SCREENING_MG_PER_L} mg/L bromide is common practice. Measure bromate; lower pH or add ammonia to limit it. Local regulations govern.`, source: us?.source ?? 'cfr-40-141-64' });
    } else if (input.bromideMgPerL === null) {
      flags.push({ code: 'BROMIDE_NOT_GIVEN', severity: 'info', message: 'Ozone forms bromate from bromide; give sample.bromide to check the bromate risk.', source: ox.byproduct?.source ?? 'usepa-1999-adogm' });
    }
  }
  const chlorineBased = ox.doseBasis === 'Cl2';
  if (chlorineBased && input.tocMgPerL !== null && input.tocMgPerL > TOC_DBP_SCREENING_MG_PER_L) {
    byproducts.push({ id: 'dbp', estimate: null, limit: null, text: `TOC ${input.tocMgPerL} mg/L above ${TOC_DBP_SCREENING_MG_PER_L} mg/L: free chlorine forms trihalomethanes and haloacetic acids.`, source: 'cfr-40-141-135' });
    flags.push({ code: 'DBP_CAUTION', severity: 'warning', message: `Free chlorine with TOC ${input.tocMgPerL} mg/L (above ${TOC_DBP_SCREENING_MG_PER_L} mg/L, the enhanced-coagulation trigger of 40 CFR 141.135, used here as a screening level — common practice) forms disinfection by-products; consider removing organics first or a non-chlorine pre-oxidant. Local regulations govern.`, source: 'cfr-40-141-135' });
  }

  const excess: string[] = [];
  if (ox.doseBasis === 'KMnO4' && input.residualMgPerL.greaterThan(0)) {
    excess.push('Any permanganate residual colours the water pink; permanganate is normally dosed to leave none after the filters.');
    flags.push({ code: 'PERMANGANATE_RESIDUAL', severity: 'warning', message: `A permanganate residual of ${input.residualMgPerL.toString()} mg/L will show as pink water and later as brown MnO2 deposits; dose to zero residual after contact unless a filter needs it.`, source: 'usepa-1999-adogm' });
  }
  return {
    alkalinityConsumed: { ...reported(alkConsumed, 'mg/L as CaCO3'), basis: 'as CaCO3' },
    acidReleasedMeqPerL: acidMeqPerL,
    alkalinityTerms: terms,
    pH: { before: input.pH, after, drop, alkalinityAfter: alkAfter, alkalinityExhausted: exhausted, method },
    solids: solidList,
    solidsTotal: reported(solidsTotal, 'mg/L'),
    byproducts,
    excessOxidant: excess,
    notes,
  };
}
