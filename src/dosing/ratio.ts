/**
 * Stoichiometric demand of an oxidant for a contaminant, derived — never typed in — from the
 * balanced redox reaction (exact BigInt rationals) and the published atomic weights:
 *
 *   ratio [mg basis / mg element] = (ν_oxidant / ν_contaminant) × (mol basis per mol active species)
 *                                   ÷ (atoms of the element per contaminant species)
 *                                   × M(basis) ÷ M(element)
 *
 * e.g. MnO4- + 3Fe2+ + 7H2O → MnO2 + 3Fe(OH)3 + 5H+: (1/3) × 1 × 158.034 / 55.845 = 0.9433 mg KMnO4 per mg Fe.
 */
import { Dec, roundSig, type Dec as DecT } from '../core/decimal.js';
import { DomainError } from '../core/errors.js';
import { Rational } from '../core/rational.js';
import { parseFormula, speciesKey, molarMass } from '../chemistry/formula/index.js';
import type { Species } from '../chemistry/formula/index.js';
import { balanceRedox, halfReaction, type Medium, type RedoxReaction } from '../chemistry/balance/index.js';
import type { ContaminantRow, ConversionRule, OxidantRow } from '../reference/dosing-schemas.js';

export interface RatioInput {
  readonly oxidant: OxidantRow;
  readonly contaminant: ContaminantRow;
  /** Product id from the contaminant row (default: the row's default product). */
  readonly productId?: string | undefined;
  readonly medium: Medium;
  /** Element symbol → published atomic weight text (tables/atomic-weights.json). */
  readonly atomicWeights: ReadonlyMap<string, string>;
  /** Source id of the atomic weights (for provenance), e.g. "ciaaw-2021". */
  readonly atomicWeightSource?: string;
}

export interface SolidProduct {
  readonly formula: string;
  /** mol of solid per mol of contaminant element. */
  readonly molPerMolElement: Rational;
  readonly molarMassGPerMol: DecT;
  /** mg of solid per mg of contaminant element. */
  readonly mgPerMgElement: DecT;
  readonly mgPerMgElementNumber: number;
}

export interface RatioResult {
  readonly oxidantId: string;
  readonly contaminantId: string;
  readonly productId: string;
  readonly medium: Medium;
  readonly reaction: RedoxReaction;
  readonly equation: string;
  readonly electrons: number;
  /** Coefficients of the oxidant's active species and of the contaminant in the balanced reaction. */
  readonly oxidantCoefficient: bigint;
  readonly contaminantCoefficient: bigint;
  /** mol of dose basis per mol of contaminant element, exact. */
  readonly molBasisPerMolElement: Rational;
  /** mg of dose basis per mg of contaminant element. */
  readonly ratio: DecT;
  readonly ratioNumber: number;
  readonly ratioRounded: string;
  /** "mg KMnO4 per mg Fe" */
  readonly unit: string;
  readonly basis: string;
  readonly elementBasis: string;
  /** mol of dose basis per mol of active species, with the rule that gave it. */
  readonly basisFactor: { readonly value: Rational; readonly rule: ConversionRule };
  readonly molarMasses: { readonly basis: { readonly formula: string; readonly gPerMol: string }; readonly element: { readonly symbol: string; readonly gPerMol: string } };
  readonly atomicWeights: readonly { readonly symbol: string; readonly valueText: string }[];
  readonly atomicWeightSource: string | null;
  /** Net H+ released per mol of contaminant element (negative: H+ consumed); OH- consumed counts as H+ released. */
  readonly hPlusPerMolElement: Rational;
  readonly solids: readonly SolidProduct[];
  /** Sentences saying how the ratio was derived. */
  readonly provenance: readonly string[];
}

const speciesCache = new Map<string, Species>();
/** Parse a table formula once. */
export function species(text: string): Species {
  let s = speciesCache.get(text);
  if (!s) {
    s = parseFormula(text);
    speciesCache.set(text, s);
  }
  return s;
}

const count = (s: Species, element: string): number => s.composition[element] ?? 0;

function isH(s: Species): boolean {
  return s.charge === 1 && count(s, 'H') === 1 && Object.keys(s.composition).length === 1;
}
function isOH(s: Species): boolean {
  return s.charge === -1 && count(s, 'H') === 1 && count(s, 'O') === 1 && Object.keys(s.composition).length === 2;
}

/** Electrons taken per mole of `form` in its reduction half-reaction (to `reduced`) in the medium. */
function electronsPerMol(form: Species, reduced: Species, medium: Medium): Rational {
  const h = halfReaction({ oxidised: form, reduced, medium });
  const key = speciesKey(form);
  const t = h.terms.find((x) => x.side === 'reactant' && speciesKey(x.species) === key);
  if (!t) throw new DomainError('TABLE_INVALID', { detail: `The half-reaction ${h.equation} does not consume ${form.text}.` });
  return Rational.of(BigInt(h.electrons), t.coefficient);
}

/**
 * mol of `target` per mol of `active`, by the rule: identity (same species), element (same count
 * of the key element) or electrons (same electrons as the target's couple).
 */
export function conversionFactor(rule: ConversionRule, active: Species, activeReduced: Species, target: Species, medium: Medium, where: string): Rational {
  switch (rule.kind) {
    case 'identity':
      if (speciesKey(active) !== speciesKey(target)) {
        throw new DomainError('TABLE_INVALID', { detail: `${where}: rule "identity" but ${active.text} is not ${target.text}.` });
      }
      return Rational.ONE;
    case 'element': {
      const a = count(active, rule.element);
      const b = count(target, rule.element);
      if (a === 0 || b === 0) {
        throw new DomainError('TABLE_INVALID', { detail: `${where}: rule "element ${rule.element}" but ${a === 0 ? active.text : target.text} has no ${rule.element}.` });
      }
      return Rational.of(a, b);
    }
    case 'electrons': {
      const nActive = electronsPerMol(active, activeReduced, medium);
      const nTarget = electronsPerMol(species(rule.basisCouple.from), species(rule.basisCouple.to), medium);
      if (speciesKey(species(rule.basisCouple.from)) !== speciesKey(target)) {
        throw new DomainError('TABLE_INVALID', { detail: `${where}: the basis couple starts from ${rule.basisCouple.from}, not ${target.text}.` });
      }
      return nActive.div(nTarget);
    }
  }
}

export function defaultProduct(contaminant: ContaminantRow, productId?: string) {
  const p = productId ? contaminant.products.find((x) => x.id === productId) : contaminant.products.find((x) => x.default) ?? contaminant.products[0];
  if (!p) {
    throw new DomainError('CONTAMINANT_UNKNOWN', {
      detail: `${contaminant.name} has no product "${productId}"; accepted: ${contaminant.products.map((x) => x.id).join(', ')}.`,
      fields: [{ pointer: '/options', message: `product of ${contaminant.id} must be one of: ${contaminant.products.map((x) => x.id).join(', ')}` }],
    });
  }
  return p;
}

const decOf = (r: Rational): DecT => new Dec(r.num.toString()).dividedBy(r.den.toString());

/** Derive the stoichiometric ratio for one oxidant × contaminant pair in a medium. */
export function stoichiometricRatio(input: RatioInput): RatioResult {
  const { oxidant: ox, contaminant: ct, medium, atomicWeights } = input;
  const product = defaultProduct(ct, input.productId);
  const active = species(ox.activeSpecies);
  const reduced = species(ox.reducedProduct);
  const reductant = species(ct.species);
  const oxidised = species(product.formula);
  const reaction = balanceRedox({ oxidant: { from: active, to: reduced }, reductant: { from: reductant, to: oxidised }, medium });

  const activeKey = speciesKey(active);
  const reductantKey = speciesKey(reductant);
  const aTerm = reaction.terms.find((t) => t.side === 'reactant' && speciesKey(t.species) === activeKey);
  const cTerm = reaction.terms.find((t) => t.side === 'reactant' && speciesKey(t.species) === reductantKey);
  if (!aTerm || !cTerm) {
    throw new DomainError('BALANCE_IMPOSSIBLE', { detail: `The balanced reaction ${reaction.equation} does not consume both ${ox.activeSpecies} and ${ct.species}.` });
  }
  const basis = species(ox.doseBasis);
  const basisFactor = conversionFactor(ox.basisRule, active, reduced, basis, medium, `oxidants.json row ${ox.id} basisRule`);
  const perElement = count(reductant, ct.elementBasis);
  if (perElement === 0) {
    throw new DomainError('TABLE_INVALID', { detail: `contaminants.json row ${ct.id}: ${ct.species} contains no ${ct.elementBasis}.` });
  }
  const molActivePerMolContaminant = Rational.of(aTerm.coefficient, cTerm.coefficient);
  const molBasisPerMolElement = molActivePerMolContaminant.mul(basisFactor).div(Rational.of(perElement));

  const mBasis = molarMass(basis, atomicWeights);
  const elementSpecies = species(ct.elementBasis);
  const mElement = molarMass(elementSpecies, atomicWeights);
  const ratio = decOf(molBasisPerMolElement).times(mBasis).dividedBy(mElement);

  // acid released per mol of element
  let netH = Rational.ZERO;
  for (const t of reaction.terms) {
    const nu = Rational.of(t.side === 'product' ? t.coefficient : -t.coefficient);
    if (isH(t.species)) netH = netH.add(nu);
    else if (isOH(t.species)) netH = netH.sub(nu);
  }
  const molElementInReaction = Rational.of(cTerm.coefficient * BigInt(perElement));
  const hPlusPerMolElement = netH.div(molElementInReaction);

  const solids: SolidProduct[] = reaction.terms
    .filter((t) => t.side === 'product' && t.species.phase === 's')
    .map((t) => {
      const m = molarMass(t.species, atomicWeights);
      const molPer = Rational.of(t.coefficient).div(molElementInReaction);
      const mgPer = decOf(molPer).times(m).dividedBy(mElement);
      return { formula: t.species.text, molPerMolElement: molPer, molarMassGPerMol: m, mgPerMgElement: mgPer, mgPerMgElementNumber: mgPer.toNumber() };
    });

  const elements = new Set<string>([...Object.keys(basis.composition), ct.elementBasis]);
  const weights = [...elements].sort().map((symbol) => ({ symbol, valueText: atomicWeights.get(symbol) ?? '' }));
  const unit = `mg ${ox.doseBasis} per mg ${ct.elementBasis}`;
  const provenance = [
    `Balanced in ${medium} medium (exact rational balance): ${reaction.equation} (${reaction.electrons} e- transferred).`,
    `${aTerm.coefficient} ${ox.activeSpecies} per ${cTerm.coefficient} ${ct.species}; ${ox.basisRule.text} (factor ${basisFactor.toString()})${perElement !== 1 ? `; ${perElement} ${ct.elementBasis} per ${ct.species}` : ''}.`,
    `M(${ox.doseBasis}) = ${mBasis.toString()} g/mol, M(${ct.elementBasis}) = ${mElement.toString()} g/mol from atomic weights ${weights.map((w) => `${w.symbol} ${w.valueText}`).join(', ')}${input.atomicWeightSource ? ` (${input.atomicWeightSource})` : ''}.`,
    `Ratio = ${molBasisPerMolElement.toString()} × ${mBasis.toString()} ÷ ${mElement.toString()} = ${ratio.toSignificantDigits(6).toString()} ${unit}.`,
  ];
  return {
    oxidantId: ox.id,
    contaminantId: ct.id,
    productId: product.id,
    medium,
    reaction,
    equation: reaction.equation,
    electrons: reaction.electrons,
    oxidantCoefficient: aTerm.coefficient,
    contaminantCoefficient: cTerm.coefficient,
    molBasisPerMolElement,
    ratio,
    ratioNumber: ratio.toNumber(),
    ratioRounded: roundSig(ratio, 3),
    unit,
    basis: ox.doseBasis,
    elementBasis: ct.elementBasis,
    basisFactor: { value: basisFactor, rule: ox.basisRule },
    molarMasses: { basis: { formula: ox.doseBasis, gPerMol: mBasis.toString() }, element: { symbol: ct.elementBasis, gPerMol: mElement.toString() } },
    atomicWeights: weights,
    atomicWeightSource: input.atomicWeightSource ?? null,
    hPlusPerMolElement,
    solids,
    provenance,
  };
}

/** g of product compound per g of dose basis, from the product rule (e.g. NaOCl per Cl2, NaMnO4 per KMnO4). */
export function productPerBasis(ox: OxidantRow, atomicWeights: ReadonlyMap<string, string>, medium: Medium = 'acid'): { factor: DecT; derivation: string } {
  const active = species(ox.activeSpecies);
  const reduced = species(ox.reducedProduct);
  const basis = species(ox.doseBasis);
  const prod = species(ox.productFormula);
  const basisPerActive = conversionFactor(ox.basisRule, active, reduced, basis, medium, `oxidants.json row ${ox.id} basisRule`);
  const productPerActive = conversionFactor(ox.productRule, active, reduced, prod, medium, `oxidants.json row ${ox.id} productRule`);
  const molProductPerMolBasis = productPerActive.div(basisPerActive);
  const mP = molarMass(prod, atomicWeights);
  const mB = molarMass(basis, atomicWeights);
  const factor = decOf(molProductPerMolBasis).times(mP).dividedBy(mB);
  return {
    factor,
    derivation: `${molProductPerMolBasis.toString()} mol ${ox.productFormula} per mol ${ox.doseBasis} (${ox.productRule.text}) × ${mP.toString()} ÷ ${mB.toString()} g/mol = ${factor.toSignificantDigits(6).toString()} g ${ox.productFormula} per g ${ox.doseBasis}`,
  };
}

/** The molar mass of a dose basis, once. */
export function basisMolarMass(ox: OxidantRow, atomicWeights: ReadonlyMap<string, string>): DecT {
  return molarMass(species(ox.doseBasis), atomicWeights);
}
