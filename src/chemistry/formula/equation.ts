/**
 * Equation text, for tabled half-reactions and user reactions:
 *   "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O", "O3 + 2H+ + 2e- → O2 + H2O", "1/2O2 + 2H+ + 2e- -> H2O"
 *
 * - One separator between the sides: "=", "→", "->", "⇌" or "<=>".
 * - Terms are separated by a "+" with a space before it ("Fe2+ + 2e-"); a "+" written directly
 *   after a formula is its charge.
 * - A term may start with a coefficient: whole ("8H+"), decimal ("0.5 O2", "2.5O2") or a fraction
 *   ("1/2O2", "3/2 O2"), with or without a space before the formula. Coefficients are exact Rationals.
 *
 * Errors are EQUATION_SYNTAX (or the FORMULA_* error of a bad term) with `text` = the equation and
 * `position` = the 0-based index of the character at fault.
 */
import { DomainError } from '../../core/errors.js';
import { Rational } from '../../core/rational.js';
import { astRuns, mergeRuns, runsToUnicode, type Run } from './format.js';
import { parseFormulaIn, type FormulaAst, type ParseOptions } from './parse.js';
import { IUPAC_ELEMENTS, quote } from './tokens.js';
import type { Species } from './types.js';

export interface EquationTerm {
  readonly species: Species;
  readonly coefficient: Rational;
  /** The coefficient as written ("" when none was written). */
  readonly coefficientText: string;
  /** 0-based position of the term's formula in the equation text. */
  readonly position: number;
}

export interface ParsedEquation {
  readonly text: string;
  readonly arrow: string;
  readonly reactants: readonly EquationTerm[];
  readonly products: readonly EquationTerm[];
}

export const EQUATION_ARROWS = ['<=>', '->', '→', '⇌', '='] as const;

interface Arrow {
  readonly text: string;
  readonly pos: number;
}

function findArrows(text: string): Arrow[] {
  const out: Arrow[] = [];
  let i = 0;
  while (i < text.length) {
    const a = EQUATION_ARROWS.find((x) => text.startsWith(x, i));
    if (a) {
      out.push({ text: a, pos: i });
      i += a.length;
    } else i++;
  }
  return out;
}

function syntax(text: string, position: number, what: string): DomainError {
  return new DomainError('EQUATION_SYNTAX', {
    detail: `In ${quote(text)} ${what}`,
    text,
    position,
    params: { equation: text },
  });
}

const COEFFICIENT = /^(\d+\/\d+|\d+(?:\.\d+)?|\.\d+)/;

interface TermAst {
  readonly term: EquationTerm;
  readonly ast: FormulaAst;
}

function parseSide(text: string, from: number, to: number, sideName: string, elements: ReadonlySet<string>): TermAst[] {
  // split at "+" that has whitespace before it
  const bounds: [number, number][] = [];
  let start = from;
  for (let i = from; i < to; i++) {
    if (text[i] === '+' && i > from && /\s/.test(text[i - 1] as string)) {
      bounds.push([start, i]);
      start = i + 1;
    }
  }
  bounds.push([start, to]);
  const out: TermAst[] = [];
  for (const [a0, b0] of bounds) {
    let a = a0;
    let b = b0;
    while (a < b && /\s/.test(text[a] as string)) a++;
    while (b > a && /\s/.test(text[b - 1] as string)) b--;
    if (a === b) {
      throw syntax(text, Math.min(a, text.length), bounds.length === 1
        ? `the ${sideName} side is empty at position ${a}; write at least one species on each side of the arrow`
        : `a term is missing at position ${a} on the ${sideName} side; terms are formulas separated by " + "`);
    }
    const m = COEFFICIENT.exec(text.slice(a, b));
    let coefficient = Rational.ONE;
    let coefficientText = '';
    let f = a;
    if (m && m[1]) {
      coefficientText = m[1];
      coefficient = coefficientText.includes('/')
        ? ratio(text, a, coefficientText)
        : Rational.fromDecimalString(coefficientText);
      if (coefficient.isZero()) throw syntax(text, a, `the coefficient ${quote(coefficientText)} at position ${a} is zero; leave the species out instead`);
      f = a + coefficientText.length;
      while (f < b && /\s/.test(text[f] as string)) f++;
      if (f === b) throw syntax(text, f, `the coefficient ${quote(coefficientText)} at position ${a} is not followed by a formula`);
    }
    try {
      const { species, ast } = parseFormulaIn(text, f, b, elements);
      out.push({ term: { species, coefficient, coefficientText, position: f }, ast });
    } catch (e) {
      if (e instanceof DomainError && /[+-]\S/.test(text.slice(f, b)) && e.code === 'FORMULA_SYNTAX') {
        throw new DomainError(e.code, {
          detail: `${e.detail}. If two species are meant here, separate them with " + " (a space before the plus)`,
          params: e.params,
          ...(e.text !== undefined ? { text: e.text } : {}),
          ...(e.position !== undefined ? { position: e.position } : {}),
        });
      }
      throw e;
    }
  }
  return out;
}

function ratio(text: string, at: number, written: string): Rational {
  const [n, d] = written.split('/');
  if (BigInt(d ?? '0') === 0n) throw syntax(text, at, `the coefficient ${quote(written)} at position ${at} divides by zero`);
  return Rational.of(BigInt(n ?? '0'), BigInt(d ?? '1'));
}

function parseWithAst(text: string, options: ParseOptions): { eq: ParsedEquation; reactants: TermAst[]; products: TermAst[] } {
  const trimmed = text.trim();
  if (trimmed === '') throw syntax(trimmed, 0, 'there is no equation; write reactants, an arrow and products, e.g. "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O"');
  const arrows = findArrows(trimmed);
  if (arrows.length === 0) {
    throw syntax(trimmed, trimmed.length, `there is no arrow between reactants and products; expected one of ${EQUATION_ARROWS.map(quote).join(', ')}`);
  }
  if (arrows.length > 1) {
    const second = arrows[1] as Arrow;
    throw syntax(trimmed, second.pos, `there is a second arrow ${quote(second.text)} at position ${second.pos}; an equation has exactly one arrow (the first is at position ${(arrows[0] as Arrow).pos})`);
  }
  const arrow = arrows[0] as Arrow;
  const elements = options.elements ?? IUPAC_ELEMENTS;
  const reactants = parseSide(trimmed, 0, arrow.pos, 'reactant', elements);
  const products = parseSide(trimmed, arrow.pos + arrow.text.length, trimmed.length, 'product', elements);
  return {
    eq: { text: trimmed, arrow: arrow.text, reactants: reactants.map((t) => t.term), products: products.map((t) => t.term) },
    reactants,
    products,
  };
}

/** Parse "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O" into species with exact coefficients. */
export function parseEquation(text: string, options: ParseOptions = {}): ParsedEquation {
  return parseWithAst(text, options).eq;
}

/** Runs for typesetting a whole equation: coefficients as written, formulas sub/superscripted, the arrow as "→" (or "⇌"). */
export function equationRuns(text: string, options: ParseOptions = {}): Run[] {
  const { eq, reactants, products } = parseWithAst(text, options);
  const out: Run[] = [];
  const side = (terms: readonly TermAst[]): void => {
    terms.forEach((t, k) => {
      if (k > 0) out.push({ text: ' + ', script: 'base' });
      if (t.term.coefficientText !== '') out.push({ text: t.term.coefficientText, script: 'base' });
      out.push(...astRuns(t.ast));
    });
  };
  side(reactants);
  out.push({ text: eq.arrow === '⇌' || eq.arrow === '<=>' ? ' ⇌ ' : ' → ', script: 'base' });
  side(products);
  return mergeRuns(out);
}

/** "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O" → "MnO₄⁻ + 8H⁺ + 5e⁻ → Mn²⁺ + 4H₂O". */
export function formatEquationUnicode(text: string, options: ParseOptions = {}): string {
  return runsToUnicode(equationRuns(text, options));
}
