/**
 * A half-reaction from a couple (oxidised form, reduced form), completed with water,
 * H+ (acid) or OH- (base) and electrons, written as a reduction (electrons on the
 * reactant side). The auxiliary species are columns of the same element-and-charge
 * matrix whose sign is free, so the exact null space decides which side each falls on.
 */
import { DomainError, type FieldProblem } from '../../core/errors.js';
import { Rational, toSmallestIntegers } from '../../core/rational.js';
import { formatFormula, isElectron, speciesKey } from '../formula/format.js';
import { parseFormula } from '../formula/parse.js';
import type { Species } from '../formula/types.js';
import { nullSpace } from './matrix.js';
import { balanceMatrix, equationText, subReactions, type Column } from './reaction.js';
import type { HalfReaction, Medium, Term } from './types.js';

export const WATER: Species = parseFormula('H2O');
export const PROTON: Species = parseFormula('H+');
export const HYDROXIDE: Species = parseFormula('OH-');
export const ELECTRON: Species = parseFormula('e-');

const KEYS = { water: speciesKey(WATER), proton: speciesKey(PROTON), hydroxide: speciesKey(HYDROXIDE) };

function fields(ox: string, red: string, message: string): FieldProblem[] {
  return [
    { pointer: '/oxidised', message: message.replace('%s', ox) },
    { pointer: '/reduced', message: message.replace('%s', red) },
  ];
}

function keyElements(s: Species): string[] {
  return Object.keys(s.composition).filter((e) => e !== 'H' && e !== 'O' && (s.composition[e] ?? 0) !== 0);
}

/**
 * Complete the couple oxidised/reduced as a reduction in the given medium.
 * Errors: BALANCE_NOT_REDOX (no electrons move), BALANCE_COUPLE_DIRECTION (electrons come out:
 * the couple is written backwards), BALANCE_IMPOSSIBLE, BALANCE_NOT_UNIQUE.
 * When the forms contain only H and O (O3/O2) the balance is not unique; by convention one
 * oxidised unit is taken to one reduced unit, and `convention` says so.
 */
export function halfReaction(input: { readonly oxidised: Species; readonly reduced: Species; readonly medium: Medium }): HalfReaction {
  const { oxidised, reduced, medium } = input;
  const ox = formatFormula(oxidised);
  const red = formatFormula(reduced);
  const couple = `${ox}/${red}`;

  for (const [s, pointer] of [[oxidised, '/oxidised'], [reduced, '/reduced']] as const) {
    if (isElectron(s)) {
      const detail = `The electron is not a form of a couple; give the oxidised and the reduced form of the same element (e.g. "Fe3+" and "Fe2+")`;
      throw new DomainError('BALANCE_IMPOSSIBLE', { detail, params: { couple }, fields: [{ pointer, message: detail }] });
    }
  }
  if (speciesKey(oxidised) === speciesKey(reduced)) {
    const detail = `The couple ${couple} names the same species twice, so no electrons move; give two forms of the element in different oxidation states (e.g. "HOCl" and "Cl-")`;
    throw new DomainError('BALANCE_NOT_REDOX', { detail, params: { couple }, fields: fields(ox, red, detail) });
  }
  const oxKeys = keyElements(oxidised);
  const redKeys = keyElements(reduced);
  const onlyOx = oxKeys.filter((e) => !redKeys.includes(e));
  const onlyRed = redKeys.filter((e) => !oxKeys.includes(e));
  if (onlyOx.length > 0 || onlyRed.length > 0) {
    const [el, inS, notS] = onlyOx.length > 0 ? [onlyOx[0], ox, red] : [onlyRed[0], red, ox];
    const detail = `${el} is in "${inS}" but not in "${notS}"; a half-reaction is completed only with water, ${medium === 'acid' ? 'H+' : 'OH-'} and electrons, so every other element must be in both forms of the couple`;
    throw new DomainError('BALANCE_IMPOSSIBLE', { detail, params: { couple, element: el }, fields: fields(ox, red, detail) });
  }

  // Auxiliaries, left out when the couple itself is one of them (H2O2/H2O, O2/OH-): such a form is
  // then free to fall on either side like any auxiliary (O2/H2O in base: O2 + 2H2O + 4e- → 4OH-).
  // A form that is the ion of the other medium is written as water (H+ in base, OH- in acid).
  const ion = medium === 'acid' ? PROTON : HYDROXIDE;
  const foreign = medium === 'acid' ? KEYS.hydroxide : KEYS.proton;
  const auxKeys = [KEYS.water, speciesKey(ion)];
  const notes: string[] = [];
  const formColumn = (s: Species, side: 'reactant' | 'product', pointer: string): Column => {
    const k = speciesKey(s);
    if (k === foreign) {
      notes.push(`In ${medium === 'acid' ? 'an acidic' : 'a basic'} medium "${formatFormula(s)}" is written as water.`);
      return { species: WATER, side: 'free', pointer };
    }
    return { species: s, side: auxKeys.includes(k) ? 'free' : side, pointer };
  };
  const oxCol = formColumn(oxidised, 'reactant', '/oxidised');
  const redCol = formColumn(reduced, 'product', '/reduced');
  const taken = new Set([speciesKey(oxCol.species), speciesKey(redCol.species)]);
  const auxiliaries = [WATER, ion].filter((s) => !taken.has(speciesKey(s)));
  if (oxCol.side === 'free' && redCol.side === 'free') {
    const detail = `The couple ${couple} has only water, H+ or OH- as its forms; give a couple of an element in two oxidation states (e.g. "O2" and "H2O")`;
    throw new DomainError('BALANCE_NOT_REDOX', { detail, params: { couple }, fields: fields(ox, red, detail) });
  }
  const columns: Column[] = [
    oxCol,
    ...(speciesKey(redCol.species) === speciesKey(oxCol.species) ? [] : [redCol]),
    ...auxiliaries.map((species) => ({ species, side: 'free' as const, pointer: '' })),
    { species: ELECTRON, side: 'free', pointer: '' },
  ];
  const eIndex = columns.length - 1;

  const { matrix } = balanceMatrix(columns);
  let basis = nullSpace(matrix, columns.length);
  let convention: string | undefined;
  if (basis.length > 1) {
    const subs = subReactions(columns, basis);
    // one oxidised unit to one reduced unit: v_ox − v_red = 0
    // reactant-side amount of the oxidised form minus product-side amount of the reduced form
    const tie = columns.map((_, j) => Rational.of(j === 0 ? (oxCol.side === 'free' ? -1 : 1) : j === 1 ? -1 : 0));
    const tied = nullSpace([...matrix, tie], columns.length);
    if (tied.length !== 1) {
      const detail = `The couple ${couple} can be completed in more than one way (${subs.join('; ')}); give a couple whose forms share an element other than hydrogen and oxygen`;
      throw new DomainError('BALANCE_NOT_UNIQUE', { detail, params: { couple, subReactions: subs }, fields: fields(ox, red, detail) });
    }
    basis = tied;
    const why = oxKeys.length === 0
      ? `its forms contain only ${[...new Set([...Object.keys(oxidised.composition), ...Object.keys(reduced.composition)])].sort().join(' and ')}, which water and ${ion.text} also carry`
      : 'the elements do not fix the ratio of the two forms';
    convention = `The couple ${couple} does not fix how many ${ox} give one ${red} (${why}); by convention one ${ox} is reduced to one ${red}.`;
  }
  if (basis.length === 0) {
    const detail = `The couple ${couple} cannot be completed with water, ${ion.text} and electrons; check the two formulas`;
    throw new DomainError('BALANCE_IMPOSSIBLE', { detail, params: { couple }, fields: fields(ox, red, detail) });
  }

  let v = toSmallestIntegers(basis[0] as Rational[]);
  // orient so that the fixed form of the couple is on its own side
  const anchor = oxCol.side !== 'free' ? 0 : 1;
  if ((v[anchor] as bigint) < 0n) v = v.map((x) => -x);
  const bad = columns.slice(0, 2).some((c, j) => c.side !== 'free' && (v[j] as bigint) <= 0n);
  if (bad) {
    const detail = `${ox} and ${red} are not two forms of one element that water, ${ion.text} and electrons can connect; check the couple`;
    throw new DomainError('BALANCE_IMPOSSIBLE', { detail, params: { couple }, fields: fields(ox, red, detail) });
  }
  const e = v[eIndex] as bigint;
  const terms = orderTerms(columns, v);
  const equation = equationText(terms);
  if (e === 0n) {
    const detail = `The couple ${couple} transfers no electrons (${equation}): both forms have the same oxidation state, as in an acid–base or precipitation step. A redox couple changes the oxidation state, e.g. "HOCl" to "Cl-"`;
    throw new DomainError('BALANCE_NOT_REDOX', { detail, params: { couple, equation }, fields: fields(ox, red, detail) });
  }
  if (e > 0n) {
    const detail = `The couple from "${ox}" to "${red}" releases electrons (${equation}), so it is an oxidation; a half-reaction is written as a reduction: put the oxidised form first (oxidised "${red}", reduced "${ox}")`;
    throw new DomainError('BALANCE_COUPLE_DIRECTION', {
      detail,
      params: { couple, equation, suggested: { oxidised: red, reduced: ox } },
      fields: [
        { pointer: '/oxidised', message: `"${ox}" is the reduced form of this couple` },
        { pointer: '/reduced', message: `"${red}" is the oxidised form of this couple` },
      ],
    });
  }
  if (notes.length === 0 && !terms.some((t) => t.species === oxidised && t.side === 'reactant') || !terms.some((t) => t.species === reduced && t.side === 'product')) {
    notes.push(`In ${medium === 'acid' ? 'an acidic' : 'a basic'} medium the couple ${couple} is written ${equation}.`);
  }
  if (notes.length > 0) convention = [convention, ...notes].filter((x) => x !== undefined).join(' ');
  return {
    terms,
    equation,
    electrons: Number(-e),
    oxidised,
    reduced,
    medium,
    ...(convention !== undefined ? { convention } : {}),
  };
}

/** oxidised + H+/OH- + H2O + e- → reduced + H2O + H+/OH-, auxiliaries with coefficient 0 left out. */
function orderTerms(columns: readonly Column[], v: readonly bigint[]): Term[] {
  const reactants: Term[] = [];
  const products: Term[] = [];
  const put = (j: number): void => {
    const c = columns[j] as Column;
    const x = v[j] as bigint;
    if (x === 0n) return;
    const side = c.side === 'reactant' ? 'reactant' : c.side === 'product' ? 'product' : x < 0n ? 'reactant' : 'product';
    const coefficient = x < 0n ? -x : x;
    (side === 'reactant' ? reactants : products).push({ species: c.species, coefficient, side });
  };
  put(0);
  put(1);
  const aux = columns.map((_, j) => j).filter((j) => j > 1 && columns[j]?.side === 'free');
  const water = aux.filter((j) => speciesKey((columns[j] as Column).species) === KEYS.water);
  const ions = aux.filter((j) => [KEYS.proton, KEYS.hydroxide].includes(speciesKey((columns[j] as Column).species)));
  const electrons = aux.filter((j) => isElectron((columns[j] as Column).species));
  // reactant side: ions, water, electrons; product side: water, ions
  for (const j of ions) if ((v[j] as bigint) < 0n) put(j);
  for (const j of water) if ((v[j] as bigint) < 0n) put(j);
  for (const j of electrons) if ((v[j] as bigint) < 0n) put(j);
  for (const j of water) if ((v[j] as bigint) > 0n) put(j);
  for (const j of ions) if ((v[j] as bigint) > 0n) put(j);
  for (const j of electrons) if ((v[j] as bigint) > 0n) put(j);
  return [...reactants, ...products];
}
