/**
 * Balancing a reaction given as reactant and product species: the null space of the
 * element-and-charge matrix over exact BigInt rationals (reactant columns negative).
 * A unique balance is a one-dimensional null space whose vector is positive; every
 * other outcome is a DomainError that says which and why.
 */
import { DomainError, type FieldProblem } from '../../core/errors.js';
import { Rational, gcdBig, toSmallestIntegers } from '../../core/rational.js';
import type { ParsedEquation } from '../formula/equation.js';
import { formatFormula, isElectron, speciesKey } from '../formula/format.js';
import type { Species } from '../formula/types.js';
import { nullSpace } from './matrix.js';
import type { Reaction, Side, Term } from './types.js';

/** Most species a reaction may have (the matrix stays small enough to answer at once). */
export const MAX_SPECIES = 40;

/** A column of the balance matrix: a species and where it is written (or 'free' to let the sign decide). */
export interface Column {
  readonly species: Species;
  readonly side: Side | 'free';
  /** JSON pointer of the species in the caller's input. */
  readonly pointer: string;
}

export const CHARGE_ROW = 'charge';

/** Rows (elements in order of first appearance, then the charge) and the matrix; reactant columns negative, product and free columns positive. */
export function balanceMatrix(columns: readonly Column[]): { rows: string[]; matrix: Rational[][] } {
  const rows: string[] = [];
  for (const c of columns) for (const el of Object.keys(c.species.composition)) if (!rows.includes(el)) rows.push(el);
  if (columns.some((c) => c.species.charge !== 0)) rows.push(CHARGE_ROW);
  const matrix = rows.map((row) =>
    columns.map((c) => {
      const amount = row === CHARGE_ROW ? c.species.charge : (c.species.composition[row] ?? 0);
      return Rational.of(c.side === 'reactant' ? -amount : amount);
    }),
  );
  return { rows, matrix };
}

/**
 * "A + 2B -> C + D" with the coefficient 1 left out: the plain-text form, pure ASCII and in the
 * same notation the parser reads (the typeset form, with →, subscripts and superscripts, is
 * formatEquationUnicode).
 */
export function equationText(terms: readonly Pick<Term, 'species' | 'coefficient' | 'side'>[]): string {
  const side = (s: Side): string =>
    terms
      .filter((t) => t.side === s)
      .map((t) => (t.coefficient === 1n ? '' : t.coefficient.toString()) + formatFormula(t.species))
      .join(' + ');
  return `${side('reactant')} -> ${side('product')}`;
}

function other(side: Side): Side {
  return side === 'reactant' ? 'product' : 'reactant';
}

/** Signed whole vector (in column orientation) → terms on their sides; zeros dropped. */
export function vectorTerms(columns: readonly Column[], v: readonly bigint[]): Term[] {
  const terms: Term[] = [];
  columns.forEach((c, j) => {
    const x = v[j] ?? 0n;
    if (x === 0n) return;
    const given: Side = c.side === 'free' ? 'product' : c.side;
    // reactant columns are negated, so a positive entry keeps a species on its given side
    terms.push({ species: c.species, coefficient: x < 0n ? -x : x, side: x > 0n ? given : other(given) });
  });
  return terms;
}

/** Sign that puts most species on their given sides (ties: the first species keeps its side). */
export function orient(v: readonly bigint[]): bigint[] {
  let pos = 0;
  let neg = 0;
  let first = 0n;
  for (const x of v) {
    if (x > 0n) pos++;
    else if (x < 0n) neg++;
    if (first === 0n) first = x;
  }
  const flip = neg > pos || (neg === pos && first < 0n);
  return flip ? v.map((x) => -x) : v.slice();
}

export function listNames(names: readonly string[]): string {
  const q = names.map((n) => `"${n}"`);
  if (q.length <= 1) return q.join('');
  return `${q.slice(0, -1).join(', ')} and ${q[q.length - 1]}`;
}

function sideTotal(columns: readonly Column[], v: readonly bigint[], row: string, side: Side): bigint {
  let total = 0n;
  columns.forEach((c, j) => {
    const x = v[j] ?? 0n;
    if (x === 0n) return;
    const given: Side = c.side === 'free' ? 'product' : c.side;
    const actual = x > 0n ? given : other(given);
    if (actual !== side) return;
    const amount = row === CHARGE_ROW ? c.species.charge : (c.species.composition[row] ?? 0);
    total += (x < 0n ? -x : x) * BigInt(amount);
  });
  return total;
}

function showCharge(q: bigint): string {
  if (q === 0n) return '0';
  const m = q < 0n ? -q : q;
  return `${m}${q > 0n ? '+' : '-'}`;
}

/** Why a set of species has no balance at all: an element or the charge on one side only, or the one row that conflicts. */
export function diagnoseImpossible(columns: readonly Column[], rows: readonly string[], matrix: readonly Rational[][]): { cause: string; row: string | null } {
  // a row present on one side only can never balance with positive coefficients
  for (let i = 0; i < rows.length; i++) {
    const r = matrix[i] as Rational[];
    const signs = new Set(r.filter((x) => !x.isZero()).map((x) => x.sign()));
    if (signs.size !== 1) continue;
    const row = rows[i] as string;
    const holders = columns.filter((_, j) => !(r[j] as Rational).isZero()).map((c) => formatFormula(c.species));
    const side = columns.find((_, j) => !(r[j] as Rational).isZero())?.side;
    const where = side === 'reactant' ? 'reactants' : 'products';
    const missing = side === 'reactant' ? 'products' : 'reactants';
    if (row === CHARGE_ROW) {
      const sides = new Set(columns.filter((_, j) => !(r[j] as Rational).isZero()).map((c) => c.side));
      if (sides.size > 1) {
        // charged species on both sides, but of signs that add up (a negative reactant against a positive product)
        const on = (sd: string) => listNames(columns.filter((c, j) => c.side === sd && !(r[j] as Rational).isZero()).map((c) => formatFormula(c.species)));
        return {
          row,
          cause: `The charge cannot balance: the charged reactants (${on('reactant')}) and the charged products (${on('product')}) carry charges of opposite sign, so no positive coefficients make the two sides' charges equal; add electrons (e-) or the missing ions, or check the charges written`,
        };
      }
      return {
        row,
        cause: `The charge cannot balance: only the ${where} carry charge (${listNames(holders)}) and the ${missing} are all neutral; add electrons (e-) or the missing ions`,
      };
    }
    return {
      row,
      cause: `${row} cannot balance: it appears only among the ${where} (in ${listNames(holders)}); add one of the ${missing} that contains ${row}, or check the formulas`,
    };
  }
  // otherwise: is there one row without which the species would balance?
  const culprits: { row: string; without: bigint[] | null }[] = [];
  for (let i = 0; i < rows.length; i++) {
    const reduced = matrix.filter((_, k) => k !== i);
    const basis = nullSpace(reduced, columns.length);
    if (basis.length === 0) continue;
    culprits.push({ row: rows[i] as string, without: basis.length === 1 ? orient(toSmallestIntegers(basis[0] as Rational[])) : null });
  }
  // the usual case first: the elements balance and the charge does not (electrons or ions missing)
  const chosen = culprits.length === 1 ? culprits[0] : culprits.find((c) => c.row === CHARGE_ROW && c.without !== null);
  if (chosen) {
    const { row, without } = chosen;
    const what = row === CHARGE_ROW ? 'The charge' : row;
    let how = '';
    if (without) {
      const left = sideTotal(columns, without, row, 'reactant');
      const right = sideTotal(columns, without, row, 'product');
      const shown = row === CHARGE_ROW ? [showCharge(left), showCharge(right)] : [left.toString(), right.toString()];
      const rest = row === CHARGE_ROW ? 'the elements alone' : 'everything else';
      how = `: balancing ${rest} gives ${equationText(vectorTerms(columns, without))}, with ${row === CHARGE_ROW ? 'charge' : row} ${shown[0]} on the left and ${shown[1]} on the right`;
    }
    const hint = row === CHARGE_ROW ? 'add electrons (e-) or the missing ions' : `check the formulas that contain ${row}`;
    return { row, cause: `${what} cannot balance${how}; ${hint}` };
  }
  if (culprits.length > 1) {
    return {
      row: null,
      cause: `No single element is at fault: ${listNames(culprits.map((c) => (c.row === CHARGE_ROW ? 'the charge' : c.row)))} conflict with one another`,
    };
  }
  return { row: null, cause: 'The elements and the charge conflict in more than one way' };
}

function reactionError(code: 'BALANCE_IMPOSSIBLE' | 'BALANCE_NOT_UNIQUE' | 'BALANCE_WRONG_SIDE', detail: string, params: Record<string, unknown>, fields: FieldProblem[]): DomainError {
  return new DomainError(code, { detail, params, fields });
}

function support(v: readonly Rational[]): number {
  return v.reduce((n, x) => n + (x.isZero() ? 0 : 1), 0);
}

/**
 * Make a basis easier to read: replace a vector by its sum with a multiple of another whenever
 * that leaves fewer species in it (a listed-twice species then shows as its own "H2O → H2O").
 * The span is unchanged.
 */
export function sparsify(basis: readonly Rational[][]): Rational[][] {
  const b = basis.map((v) => v.slice());
  let improved = true;
  let rounds = 0;
  while (improved && rounds++ < 50) {
    improved = false;
    for (let i = 0; i < b.length; i++) {
      for (let j = 0; j < b.length; j++) {
        if (i === j) continue;
        const vi = b[i] as Rational[];
        const vj = b[j] as Rational[];
        for (let k = 0; k < vi.length; k++) {
          const a = vi[k] as Rational;
          const c = vj[k] as Rational;
          if (a.isZero() || c.isZero()) continue;
          const f = a.div(c);
          const candidate = vi.map((x, m) => x.sub(f.mul(vj[m] as Rational)));
          if (support(candidate) > 0 && support(candidate) < support(vi)) {
            b[i] = candidate;
            improved = true;
            break;
          }
        }
      }
    }
  }
  return b;
}

/** The independent sub-reactions spanning a null space of dimension > 1, as equation text (sparsest first). */
export function subReactions(columns: readonly Column[], basis: readonly Rational[][]): string[] {
  return sparsify(basis)
    .sort((x, y) => support(x) - support(y))
    .map((b) => equationText(vectorTerms(columns, orient(toSmallestIntegers(b)))));
}

function allPointers(columns: readonly Column[], message: string): FieldProblem[] {
  return columns.map((c) => ({ pointer: c.pointer, message }));
}

/**
 * Balance the given species with whole, positive coefficients in lowest terms.
 * Terms keep the input order (reactants, then products). `electrons` is the coefficient of
 * "e-" when it is among the species, else 0.
 */
export function balanceReaction(input: { readonly reactants: readonly Species[]; readonly products: readonly Species[] }): Reaction {
  const { reactants, products } = input;
  const total = reactants.length + products.length;
  if (total > MAX_SPECIES) {
    throw new DomainError('BALANCE_TOO_LARGE', {
      detail: `The reaction has ${total} species; at most ${MAX_SPECIES} can be balanced at once. Split it into smaller reactions`,
      params: { species: total, limit: MAX_SPECIES },
      fields: [{ pointer: '', message: `${total} species; at most ${MAX_SPECIES}` }],
    });
  }
  if (reactants.length === 0 || products.length === 0) {
    const pointer = reactants.length === 0 ? '/reactants' : '/products';
    const detail = `A reaction needs at least one reactant and one product; the list of ${reactants.length === 0 ? 'reactants' : 'products'} is empty`;
    throw new DomainError('BALANCE_IMPOSSIBLE', { detail, params: {}, fields: [{ pointer, message: detail }] });
  }
  const columns: Column[] = [
    ...reactants.map((species, i) => ({ species, side: 'reactant' as const, pointer: `/reactants/${i}` })),
    ...products.map((species, i) => ({ species, side: 'product' as const, pointer: `/products/${i}` })),
  ];
  const v = uniqueBalance(columns);
  const terms = columns.map((c, j) => ({ species: c.species, coefficient: v[j] as bigint, side: c.side as Side }));
  return { terms, equation: equationText(terms), electrons: electronsOf(terms) };
}

function electronsOf(terms: readonly Term[]): number {
  let n = 0n;
  for (const t of terms) if (isElectron(t.species)) n += t.coefficient;
  return Number(n);
}

/** The one positive whole balance of the columns (all sides fixed), or the DomainError that says why there is none. */
function uniqueBalance(columns: readonly Column[]): bigint[] {
  const { rows, matrix } = balanceMatrix(columns);
  const basis = nullSpace(matrix, columns.length);
  const shown = columns.map((c) => formatFormula(c.species));

  if (basis.length === 0) {
    const { cause, row } = diagnoseImpossible(columns, rows, matrix);
    throw reactionError(
      'BALANCE_IMPOSSIBLE',
      `No whole coefficients balance ${listNames(shown)}. ${cause}`,
      { cause: row },
      allPointers(columns, cause),
    );
  }
  if (basis.length > 1) {
    const subs = subReactions(columns, basis);
    const keys = columns.map((c) => speciesKey(c.species));
    const twice = [...new Set(keys.filter((k, i) => keys.indexOf(k) !== i))].map((k) => shown[keys.indexOf(k)] as string);
    const dup = twice.length > 0 ? ` (${listNames(twice)} ${twice.length === 1 ? 'is' : 'are'} listed more than once)` : '';
    const detail =
      `The balance is not unique: these species take part in ${basis.length} independent reactions${dup}: ` +
      subs.map((s, i) => `(${i + 1}) ${s}`).join('; ') +
      '. Any mix of them balances, so no single answer exists; remove species or balance each reaction on its own';
    throw reactionError('BALANCE_NOT_UNIQUE', detail, { subReactions: subs, freedom: basis.length }, allPointers(columns, 'part of a balance that is not unique'));
  }

  const v = orient(toSmallestIntegers(basis[0] as Rational[]));
  const zero = columns.filter((_, j) => v[j] === 0n);
  if (zero.length > 0) {
    const names = zero.map((c) => formatFormula(c.species));
    const rest = equationText(vectorTerms(columns, v));
    const detail = `${listNames(names)} ${zero.length === 1 ? 'takes' : 'take'} no part: the only balance of these species is ${rest}, with coefficient 0 for ${listNames(names)}. Remove ${zero.length === 1 ? 'it' : 'them'} or check the formula`;
    throw reactionError('BALANCE_IMPOSSIBLE', detail, { cause: 'zero-coefficient', species: names, balancedEquation: rest }, zero.map((c) => ({ pointer: c.pointer, message: `${formatFormula(c.species)} takes no part in the balance` })));
  }
  const wrong = columns.filter((_, j) => (v[j] as bigint) < 0n);
  if (wrong.length > 0) {
    const names = wrong.map((c) => formatFormula(c.species));
    const moved = equationText(vectorTerms(columns, v));
    const where = wrong.map((c) => `${formatFormula(c.species)} on the ${other(c.side as Side)} side`);
    const detail = `The species balance only with ${where.join(' and ')}: ${moved}. Move ${wrong.length === 1 ? 'it' : 'them'} to the other side or check the formulas`;
    throw reactionError('BALANCE_WRONG_SIDE', detail, { species: names, balancedEquation: moved }, wrong.map((c) => ({ pointer: c.pointer, message: `${formatFormula(c.species)} would have to be a ${other(c.side as Side)}` })));
  }
  return v;
}

/**
 * The reaction as a vector over species keys (see speciesKey): products positive, reactants
 * negative, electrons under "e-". Works on a balanced Reaction and on a parsed equation; a
 * species on both sides appears once, with its net coefficient (net zero is left out).
 */
export function reactionVector(r: Reaction | ParsedEquation): Map<string, Rational> {
  const out = new Map<string, Rational>();
  const put = (s: Species, c: Rational): void => {
    const k = speciesKey(s);
    const next = (out.get(k) ?? Rational.ZERO).add(c);
    if (next.isZero()) out.delete(k);
    else out.set(k, next);
  };
  if ('terms' in r) {
    for (const t of r.terms) put(t.species, Rational.of(t.side === 'product' ? t.coefficient : -t.coefficient));
  } else {
    for (const t of r.reactants) put(t.species, t.coefficient.neg());
    for (const t of r.products) put(t.species, t.coefficient);
  }
  return out;
}

/** Divide whole coefficients by their greatest common divisor. */
export function lowestTerms(v: readonly bigint[]): bigint[] {
  let g = 0n;
  for (const x of v) g = gcdBig(g, x);
  return g === 0n || g === 1n ? v.slice() : v.map((x) => x / g);
}
