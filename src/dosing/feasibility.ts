/**
 * Feasibility of each dosing reaction at the sample's pH and temperature: E of the oxidant
 * couple minus E of the contaminant couple, both by Nernst at the actual activities
 * (src/water/cell.ts), with E° from the thermodynamic ledger (src/chemistry/thermo) at the
 * temperature, the margin and the pH at which the cell stops being feasible.
 *
 * Concentrations used (the state as dosing starts, products at what complete reaction forms):
 *   oxidant's oxidised form   the dose, mol/L of active species (free chlorine split HOCl/OCl- by its pKa at T)
 *   oxidant's reduced form    what the dose forms (Cl-, ClO2-) — background chloride is not known
 *   contaminant               the sample's concentration (split by its pKa where it has acid–base forms)
 *   contaminant's product     what complete oxidation forms (SO4^2-, H3AsO4, NO3-); solids at unit activity
 *   gases                     O2(g) from dissolved oxygen at saturation (Henry constant at T); O3(g), N2(g) at 1 atm by convention
 * Activity coefficients by Davies from the ionic strength estimated from TDS (Langelier); without TDS, γ = 1.
 */
import type { Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import { DomainError, isDomainError } from '../core/errors.js';
import { parseEquation, speciesKey } from '../chemistry/formula/index.js';
import { halfReaction, type HalfReaction, type Medium } from '../chemistry/balance/index.js';
import { standardPotential, type PotentialResult } from '../chemistry/thermo/derive.js';
import type { Ledger } from '../chemistry/thermo/ledger.js';
import { evaluateCell, type CellResult } from '../water/cell.js';
import type { SpeciationGroup } from '../water/conditions.js';
import type { PhysicalConstants } from '../water/constants.js';
import { daviesGamma } from '../water/activity.js';
import type { ContaminantRow, OxidantRow } from '../reference/dosing-schemas.js';
import { species } from './ratio.js';
import type { Flag } from './types.js';

export interface CoupleReport {
  readonly halfReaction: string;
  readonly electrons: number;
  /** E° at 25 °C used (tabled, derived or a site override). */
  readonly standardPotentialV: number;
  readonly temperatureCorrectionV: number;
  readonly standardPotentialAtTemperatureV: number;
  /** E at the sample's pH, temperature and activities. */
  readonly potentialV: number;
  readonly usedValue: PotentialResult['usedValue'];
  readonly derivation: PotentialResult['derivation'];
  readonly tabledCheck: PotentialResult['tabledCheck'] | null;
  /** The site value used, the form of the couple it was given for, and the value carried to this form (null when it is for this form). */
  readonly siteValue: { readonly valueV: number; readonly source: string; readonly medium: 'acid' | 'base'; readonly carriedV: number | null } | null;
  readonly notes: readonly string[];
}

export interface FeasibilityEntry {
  readonly contaminant: string;
  /** The balanced dosing reaction. */
  readonly reaction: string;
  /** The cell as evaluated (oxidant couple vs contaminant couple). */
  readonly cell: string;
  readonly cellPotentialV: number;
  /** E°(oxidant) − E°(contaminant couple) at 25 °C. */
  readonly standardCellPotentialV: number;
  /** The same at the sample temperature (with the tables' dE°/dT). */
  readonly standardCellPotentialAtTemperatureV: number;
  readonly feasible: boolean;
  readonly marginV: number;
  readonly feasibilityLimitPH: number | null;
  readonly feasibleSide: CellResult['feasibleSide'];
  readonly deltaGkJPerMol: number;
  readonly log10K: number;
  readonly equilibriumResidual: { readonly mgPerL: number | null; readonly molPerL: number; readonly species: string } | null;
  readonly oxidantCouple: CoupleReport;
  readonly contaminantCouple: CoupleReport;
  readonly conditions: {
    readonly pH: number;
    readonly temperatureC: number;
    readonly ionicStrengthMolPerL: number;
    readonly ionicStrengthFrom: string;
    readonly activities: readonly { readonly species: string; readonly activity: number; readonly origin: string }[];
  };
  readonly notes: readonly string[];
}

export interface FeasibilityDeps {
  readonly ledger: Ledger;
  readonly constants: PhysicalConstants;
  /** pKa of an equilibria row at a temperature (oriented as acid dissociation). */
  readonly pKaAt: (equilibriumId: string, temperatureC: number) => number;
  readonly kwAt: (temperatureC: number) => number;
  /** O2(g) partial pressure in equilibrium with air-saturated water at T, atm. */
  readonly pO2AirAtm: (temperatureC: number) => number;
  readonly daviesAAt: (temperatureC: number) => number;
  readonly molarMass: (formula: string) => DecT;
  /** Memo of standard potentials and cells (owned by the dosing context). */
  readonly potentialMemo: Map<string, PotentialResult>;
  readonly cellMemo: Map<string, FeasibilityEntry>;
  readonly cellMemoLimit: number;
}

export interface PotentialOverride {
  readonly from: string;
  readonly to: string;
  readonly standardPotentialV: number;
  readonly source: string;
  readonly medium?: 'acid' | 'base' | undefined;
}

/** A site value applies to a half-reaction with the same oxidised and reduced forms. */
function overrideMatches(o: PotentialOverride, h: HalfReaction): boolean {
  return speciesKey(species(o.from)) === speciesKey(h.oxidised) && speciesKey(species(o.to)) === speciesKey(h.reduced);
}

/**
 * Each site value's formulas must read (a 400 naming the field otherwise): a value that cannot
 * be matched to a couple must not be dropped silently.
 */
export function checkPotentialOverrides(overrides: readonly PotentialOverride[] | undefined, pointer = '/options/potentialOverrides'): void {
  (overrides ?? []).forEach((o, i) => {
    for (const field of ['from', 'to'] as const) {
      try {
        species(o[field]);
      } catch (e) {
        if (!(e instanceof DomainError)) throw e;
        throw e.withFields(() => [{ pointer: `${pointer}/${i}/${field}`, message: `${JSON.stringify(o[field])} is not a formula this service reads: ${e.detail}` }]);
      }
    }
  });
}

/**
 * The site values that no couple of these oxidant × contaminant cells uses (by index), so the
 * answer can say so: a value for HOCl/Cl- does not apply where the pH calls for OCl-/Cl-.
 */
export function unusedPotentialOverrides(
  overrides: readonly PotentialOverride[] | undefined,
  cells: readonly { oxidant: OxidantRow; productFormula: string; contaminantSpecies: string; medium: Medium }[],
): { index: number; override: PotentialOverride; couples: string[] }[] {
  if (!overrides?.length) return [];
  const halves = cells.flatMap((c) => {
    const couple = c.oxidant.feasibilityCouple[c.medium];
    return [half(couple.from, couple.to, c.medium), half(c.productFormula, c.contaminantSpecies, c.medium)];
  });
  const couples = [...new Set(halves.map((h) => `${h.oxidised.text}/${h.reduced.text}`))];
  return overrides.flatMap((o, index) => (halves.some((h) => overrideMatches(o, h)) ? [] : [{ index, override: o, couples }]));
}

function potentialOf(half: HalfReaction, temperatureC: number, deps: FeasibilityDeps, overrides: readonly PotentialOverride[] | undefined): PotentialResult {
  const index = overrides?.findIndex((o) => overrideMatches(o, half)) ?? -1;
  const ov = index >= 0 ? overrides![index] : undefined;
  // a site value without a medium is checked for which form it reads as (see derive.ts): not the same key as "acid"
  const key = `${half.equation}|${temperatureC}|${ov ? `${ov.standardPotentialV}|${ov.source}|${ov.medium ?? 'unstated'}` : ''}`;
  let r = deps.potentialMemo.get(key);
  if (!r) {
    try {
      r = standardPotential(half, deps.ledger, { basis: 'acid', temperatureC, ...(ov ? { override: { valueV: ov.standardPotentialV, source: ov.source, ...(ov.medium ? { medium: ov.medium } : {}) } } : {}) });
    } catch (e) {
      if (isDomainError(e) && e.fields.some((f) => f.pointer === '/override/medium')) {
        const at = `/options/potentialOverrides/${index}/medium`;
        throw e.withFields((fields) => fields.map((f) => (f.pointer === '/override/medium' ? { pointer: at, message: f.message } : f)), e.detail);
      }
      throw e;
    }
    deps.potentialMemo.set(key, r);
  }
  return r;
}

/** Mol of `product` per mol of oxidant its hydrolysis equation releases (0 without one, or when it does not form it). */
function hydrolysisYield(ox: OxidantRow, product: { readonly text: string }): number {
  const eq = ox.hydrolysis?.equation;
  if (!eq) return 0;
  const r = parseEquation(eq);
  const key = speciesKey(species(product.text));
  const made = r.products.find((t) => speciesKey(t.species) === key);
  const from = r.reactants.find((t) => speciesKey(t.species) === speciesKey(species(ox.activeSpecies)));
  return made && from ? made.coefficient.toNumber() / from.coefficient.toNumber() : 0;
}

function coupleReport(half: HalfReaction, p: PotentialResult, potentialV: number): CoupleReport {
  return {
    halfReaction: half.equation,
    electrons: half.electrons,
    standardPotentialV: p.standardPotentialV,
    temperatureCorrectionV: p.temperatureCorrectionV,
    standardPotentialAtTemperatureV: p.standardPotentialAtTemperatureV,
    potentialV,
    usedValue: p.usedValue,
    derivation: p.derivation,
    tabledCheck: p.tabledCheck ?? null,
    siteValue: p.override ? { valueV: p.override.valueV, source: p.override.source, medium: p.override.medium ?? 'acid', carriedV: p.override.carriedV ?? null } : null,
    notes: p.notes,
  };
}

const halfMemo = new Map<string, HalfReaction>();
function half(from: string, to: string, medium: Medium): HalfReaction {
  const k = `${from}|${to}|${medium}`;
  let h = halfMemo.get(k);
  if (!h) {
    h = halfReaction({ oxidised: species(from), reduced: species(to), medium });
    halfMemo.set(k, h);
  }
  return h;
}

export interface FeasibilityInput {
  readonly oxidant: OxidantRow;
  readonly contaminant: ContaminantRow;
  readonly productFormula: string;
  readonly reaction: string;
  readonly medium: Medium;
  readonly pH: number;
  readonly temperatureC: number;
  /** mol/L of the oxidant's active species at the dose. */
  readonly oxidantMolPerL: number;
  /** mol/L of the contaminant (as its species). */
  readonly contaminantMolPerL: number;
  readonly ionicStrengthMolPerL: number;
  readonly ionicStrengthFrom: string;
  readonly overrides?: readonly PotentialOverride[] | undefined;
}

/** Evaluate one oxidant × contaminant cell at the sample's conditions (memoised on its inputs). */
export function evaluateFeasibility(input: FeasibilityInput, deps: FeasibilityDeps, flags: Flag[]): FeasibilityEntry {
  const memoKey = JSON.stringify([
    input.oxidant.id, input.contaminant.id, input.productFormula, input.medium, input.pH, input.temperatureC,
    input.oxidantMolPerL, input.contaminantMolPerL, input.ionicStrengthMolPerL, input.overrides ?? null,
  ]);
  const hit = deps.cellMemo.get(memoKey);
  if (hit) {
    pushFlags(hit, input, flags);
    return hit;
  }
  const { oxidant: ox, contaminant: ct, pH, temperatureC: T } = input;
  const couple = ox.feasibilityCouple[input.medium];
  const oxHalf = half(couple.from, couple.to, input.medium);
  const ctHalf = half(input.productFormula, ct.species, input.medium);
  const oxP = potentialOf(oxHalf, T, deps, input.overrides);
  const ctP = potentialOf(ctHalf, T, deps, input.overrides);
  const I = input.ionicStrengthMolPerL;
  const A = I > 0 ? deps.daviesAAt(T) : 0;
  const gamma = (text: string): number => (I > 0 ? daviesGamma(species(text).charge, I, A) : 1);
  const activities = new Map<string, number>();
  const pressures = new Map<string, number>();
  const speciation: SpeciationGroup[] = [];
  const notes: string[] = [];
  const setDissolved = (text: string, molPerL: number): void => {
    const s = species(text);
    if (s.phase === 's') return;
    if (s.phase === 'g') return;
    activities.set(speciesKey(s), Math.max(molPerL, 1e-30) * gamma(text));
  };
  const setGroup = (forms: readonly string[], equilibria: string | readonly string[], totalMolPerL: number): void => {
    speciation.push({
      totalMolPerL: Math.max(totalMolPerL, 1e-30),
      speciesKeys: forms.map((f) => speciesKey(species(f))),
      pKas: (typeof equilibria === 'string' ? [equilibria] : equilibria).map((id) => deps.pKaAt(id, T)),
      activityCoefficients: forms.map((f) => gamma(f)),
    });
  };
  // oxidant side
  if (ox.speciation && ox.speciation.forms.some((f) => speciesKey(species(f)) === speciesKey(oxHalf.oxidised))) {
    setGroup(ox.speciation.forms, ox.speciation.equilibrium, input.oxidantMolPerL);
  } else if (oxHalf.oxidised.phase === 'g') {
    if (speciesKey(oxHalf.oxidised) === speciesKey(species('O2(g)'))) pressures.set(speciesKey(oxHalf.oxidised), deps.pO2AirAtm(T));
    else notes.push(`${oxHalf.oxidised.text} taken at 1 atm by convention (its partial pressure in the contactor is not known).`);
  } else setDissolved(oxHalf.oxidised.text, input.oxidantMolPerL);
  const red = oxHalf.reduced;
  if (red.phase === 'g') {
    if (speciesKey(red) === speciesKey(species('O2(g)'))) pressures.set(speciesKey(red), deps.pO2AirAtm(T));
  } else if (speciesKey(red) !== speciesKey(species('H2O'))) {
    // mol of the reduced form per mol of oxidant, from the half-reaction (HOCl + H+ + 2e- → Cl- + H2O: one)
    const coef = (sp: typeof red) => Number(oxHalf.terms.find((t) => speciesKey(t.species) === speciesKey(sp))?.coefficient ?? 1n);
    // and what the product's own hydrolysis releases (Cl2 + H2O = HOCl + H+ + Cl-: one more Cl-)
    const hydrolysed = hydrolysisYield(ox, red);
    const formed = (input.oxidantMolPerL * coef(red)) / coef(oxHalf.oxidised) + input.oxidantMolPerL * hydrolysed;
    setDissolved(red.text, formed);
    if (red.phase !== 's') notes.push(`${red.text} taken at the ${formed.toExponential(2)} mol/L the dose forms (background ${red.text} not known).`);
  }
  // contaminant side
  if (ct.speciation && ct.speciation.forms.some((f) => speciesKey(species(f)) === speciesKey(species(ct.species)))) {
    setGroup(ct.speciation.forms, ct.speciation.equilibrium, input.contaminantMolPerL);
  } else setDissolved(ct.species, input.contaminantMolPerL);
  const prod = species(input.productFormula);
  // a product with acid–base forms (arsenate) is split by the pH, as the contaminant is
  const prodSpeciation = ct.products.find((p) => speciesKey(species(p.formula)) === speciesKey(prod))?.speciation;
  if (prod.phase === 'g') notes.push(`${prod.text} taken at 1 atm by convention.`);
  else if (prodSpeciation && prodSpeciation.forms.some((f) => speciesKey(species(f)) === speciesKey(prod))) {
    setGroup(prodSpeciation.forms, prodSpeciation.equilibria, input.contaminantMolPerL);
  } else if (prod.phase !== 's') setDissolved(prod.text, input.contaminantMolPerL);

  const molarMassGPerMol = deps.molarMass(ct.species).toNumber();
  const cell = evaluateCell({
    oxidantHalf: oxHalf,
    reductantHalf: ctHalf,
    oxidantE0V: oxP.standardPotentialAtTemperatureV,
    reductantE0V: ctP.standardPotentialAtTemperatureV,
    pH,
    temperatureC: T,
    activities,
    partialPressuresAtm: pressures,
    kw: deps.kwAt(T),
    speciation,
    constants: deps.constants,
    reductantResidual: { activityCoefficient: gamma(ct.species), molarMassGPerMol },
  });
  const used = [...cell.oxidant.activities, ...cell.reductant.activities];
  const seen = new Set<string>();
  const entry: FeasibilityEntry = {
    contaminant: ct.id,
    reaction: input.reaction,
    cell: `${oxHalf.equation}  vs  ${ctHalf.equation}`,
    cellPotentialV: cell.cellPotentialV,
    standardCellPotentialV: oxP.standardPotentialV - ctP.standardPotentialV,
    standardCellPotentialAtTemperatureV: cell.standardCellPotentialV,
    feasible: cell.feasible,
    marginV: cell.marginV,
    feasibilityLimitPH: cell.feasibilityLimitPH,
    feasibleSide: cell.feasibleSide,
    deltaGkJPerMol: cell.deltaGkJPerMol,
    log10K: cell.log10K,
    equilibriumResidual: cell.reductantResidual ? { mgPerL: cell.reductantResidual.mgPerL, molPerL: cell.reductantResidual.molPerL, species: cell.reductantResidual.species } : null,
    oxidantCouple: coupleReport(oxHalf, oxP, cell.oxidant.potentialV),
    contaminantCouple: coupleReport(ctHalf, ctP, cell.reductant.potentialV),
    conditions: {
      pH,
      temperatureC: T,
      ionicStrengthMolPerL: I,
      ionicStrengthFrom: input.ionicStrengthFrom,
      activities: used
        .filter((a) => (seen.has(a.key) ? false : (seen.add(a.key), true)))
        .map((a) => ({ species: a.text, activity: a.activity, origin: a.origin })),
    },
    notes,
  };
  if (deps.cellMemo.size >= deps.cellMemoLimit) deps.cellMemo.delete(deps.cellMemo.keys().next().value as string);
  deps.cellMemo.set(memoKey, entry);
  pushFlags(entry, input, flags);
  return entry;
}

function pushFlags(e: FeasibilityEntry, input: FeasibilityInput, flags: Flag[]): void {
  const ox = input.oxidant;
  const ct = input.contaminant;
  if (!e.feasible) {
    flags.push({
      code: 'REACTION_NOT_FEASIBLE',
      severity: 'danger',
      message: `${ox.name} cannot oxidise ${lowerName(ct.name)} at pH ${input.pH} and ${input.temperatureC} °C: the cell potential is ${e.cellPotentialV.toFixed(3)} V (≤ 0)${e.feasibilityLimitPH !== null ? `; it becomes feasible ${e.feasibleSide === 'above' ? 'above' : 'below'} pH ${e.feasibilityLimitPH.toFixed(2)}` : ''}. Change the oxidant or the pH.`,
      source: e.oxidantCouple.derivation[0]?.source ?? ox.source,
    });
  } else if (e.marginV < 0.1) {
    flags.push({
      code: 'REACTION_MARGIN_SMALL',
      severity: 'warning',
      message: `${ox.name} with ${lowerName(ct.name)}: the cell potential is only ${e.cellPotentialV.toFixed(3)} V at pH ${input.pH}; the reaction may stop short of completion${e.feasibilityLimitPH !== null ? ` (limit pH ${e.feasibilityLimitPH.toFixed(2)})` : ''}.`,
      source: e.contaminantCouple.derivation[0]?.source ?? ox.source,
    });
  }
  for (const c of [e.oxidantCouple, e.contaminantCouple]) {
    const sv = c.siteValue;
    if (sv && sv.carriedV !== null) {
      flags.push({
        code: 'POTENTIAL_OVERRIDE_CARRIED',
        severity: 'info',
        message: `The site value ${sv.valueV} V is for the couple written ${sv.medium === 'base' ? 'with OH- (base)' : 'with H+ (acid)'}; at pH ${input.pH} the reaction is written ${sv.medium === 'base' ? 'with H+' : 'with OH-'}, so it was carried through the ionisation of water to ${sv.carriedV.toFixed(4)} V for ${c.halfReaction}. Give medium: "${sv.medium === 'base' ? 'acid' : 'base'}" with the value if it is for that form.`,
        source: sv.source,
      });
    }
    if (c.tabledCheck?.flagged) {
      flags.push({
        code: 'POTENTIAL_TABLES_DISAGREE',
        severity: 'info',
        message:
          c.usedValue === 'override'
            ? `The tables disagree on ${c.halfReaction} by ${(c.tabledCheck.discrepancyV * 1000).toFixed(1)} mV (a tabled row against its derivation from other rows); the site value from options.potentialOverrides was used instead of either.`
            : c.usedValue === 'derived'
            ? `The tables' base-medium E° of ${c.halfReaction} differs by ${(c.tabledCheck.discrepancyV * 1000).toFixed(1)} mV from the value carried from its acid form through Kw; the carried value was used, so the potential is the same whichever medium the reaction is written in. A site value can be given in options.potentialOverrides.`
            : `The tabled E° of ${c.halfReaction} differs by ${(c.tabledCheck.discrepancyV * 1000).toFixed(1)} mV from its derivation from other rows; the tabled value was used. A site value can be given in options.potentialOverrides.`,
        source: c.derivation[0]?.source ?? ox.source,
      });
    }
  }
}
