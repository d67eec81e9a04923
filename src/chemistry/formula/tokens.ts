/**
 * The typed token alphabet of the formula notation (see the comment block at the
 * top of parse.ts for the notation itself) and the lexer that produces it.
 *
 * The lexer knows characters, not chemistry: it does not decide whether trailing
 * digits are a count or a charge; the parser does that, and refuses when both
 * readings are possible.
 */
import { DomainError } from '../../core/errors.js';
import type { Phase } from './types.js';

/** The 118 element symbols named by IUPAC (elements 1–118), in atomic-number order. */
export const ELEMENT_SYMBOLS = [
  'H', 'He',
  'Li', 'Be', 'B', 'C', 'N', 'O', 'F', 'Ne',
  'Na', 'Mg', 'Al', 'Si', 'P', 'S', 'Cl', 'Ar',
  'K', 'Ca', 'Sc', 'Ti', 'V', 'Cr', 'Mn', 'Fe', 'Co', 'Ni', 'Cu', 'Zn', 'Ga', 'Ge', 'As', 'Se', 'Br', 'Kr',
  'Rb', 'Sr', 'Y', 'Zr', 'Nb', 'Mo', 'Tc', 'Ru', 'Rh', 'Pd', 'Ag', 'Cd', 'In', 'Sn', 'Sb', 'Te', 'I', 'Xe',
  'Cs', 'Ba',
  'La', 'Ce', 'Pr', 'Nd', 'Pm', 'Sm', 'Eu', 'Gd', 'Tb', 'Dy', 'Ho', 'Er', 'Tm', 'Yb', 'Lu',
  'Hf', 'Ta', 'W', 'Re', 'Os', 'Ir', 'Pt', 'Au', 'Hg', 'Tl', 'Pb', 'Bi', 'Po', 'At', 'Rn',
  'Fr', 'Ra',
  'Ac', 'Th', 'Pa', 'U', 'Np', 'Pu', 'Am', 'Cm', 'Bk', 'Cf', 'Es', 'Fm', 'Md', 'No', 'Lr',
  'Rf', 'Db', 'Sg', 'Bh', 'Hs', 'Mt', 'Ds', 'Rg', 'Cn', 'Nh', 'Fl', 'Mc', 'Lv', 'Ts', 'Og',
] as const;

export type ElementSymbol = (typeof ELEMENT_SYMBOLS)[number];

/** Default element set for the parser: every IUPAC symbol. */
export const IUPAC_ELEMENTS: ReadonlySet<string> = new Set<string>(ELEMENT_SYMBOLS);

/** Characters that separate the parts of a hydrate. */
export const HYDRATE_DOTS = ['·', '.', '*'] as const;

const SUBSCRIPT_DIGITS = '₀₁₂₃₄₅₆₇₈₉';
const SUPERSCRIPT_DIGITS = '⁰¹²³⁴⁵⁶⁷⁸⁹';
const SUPERSCRIPT_PLUS = '⁺';
const SUPERSCRIPT_MINUS = '⁻';
/** U+2212 MINUS SIGN is read as '-'. */
const MINUS_SIGN = '−';

export type Token =
  /** An element symbol: capital letter + lowercase letters, validated against the element set. */
  | { readonly kind: 'element'; readonly symbol: string; readonly pos: number; readonly end: number }
  /** A run of digits (plain or subscript). Whether it is a count or a charge is the parser's call. */
  | { readonly kind: 'number'; readonly digits: string; readonly value: number; readonly subscript: boolean; readonly pos: number; readonly end: number }
  | { readonly kind: 'open'; readonly bracket: '(' | '['; readonly pos: number; readonly end: number }
  | { readonly kind: 'close'; readonly bracket: ')' | ']'; readonly pos: number; readonly end: number }
  /** Hydrate separator: '·', '.' or '*' (with any spaces around it). */
  | { readonly kind: 'dot'; readonly char: string; readonly pos: number; readonly end: number }
  | { readonly kind: 'caret'; readonly pos: number; readonly end: number }
  | { readonly kind: 'sign'; readonly sign: 1 | -1; readonly pos: number; readonly end: number }
  /** A charge written in superscript (e.g. "²⁻", "⁺"): always explicit. */
  | { readonly kind: 'supcharge'; readonly charge: number; readonly pos: number; readonly end: number }
  /** A phase label "(s)", "(l)", "(g)" or "(aq)", or "(cr)"/"(am)" read as (s) (spaces before it allowed); `label` as written, without brackets. */
  | { readonly kind: 'phase'; readonly phase: Phase; readonly label: string; readonly pos: number; readonly end: number }
  | { readonly kind: 'end'; readonly pos: number; readonly end: number };

export type TokenKind = Token['kind'];

/** Where the characters to lex are: a slice [start, end) of a source text (a formula, or a term of an equation). */
export interface SourceSlice {
  readonly source: string;
  readonly start: number;
  readonly end: number;
}

const PHASE_LABELS: readonly { readonly label: string; readonly phase: Phase }[] = [
  { label: '(aq)', phase: 'aq' },
  { label: '(s)', phase: 's' },
  { label: '(l)', phase: 'l' },
  { label: '(g)', phase: 'g' },
  // thermodynamic tables label solids crystalline (cr) or amorphous (am) (e.g. the NBS tables,
  // Fe(OH)3(am)); both are the solid phase here, at unit activity
  { label: '(cr)', phase: 's' },
  { label: '(am)', phase: 's' },
];

/** Phase labels read as another (the solid labels of thermodynamic tables), for the notes that say so. */
export const SOLID_LABELS: ReadonlySet<string> = new Set(['cr', 'am']);

export const ACCEPTED_CHARACTERS =
  'element symbols (a capital letter and any lowercase letters, e.g. Fe, Cl), counts (digits), ( ) [ ], ' +
  'a hydrate dot (·, . or *), a charge (^2-, ^+, a trailing + or -) and a phase label at the end ((s), (l), (g), (aq); (cr) and (am) read as (s))';

function isUpper(c: string): boolean {
  return c >= 'A' && c <= 'Z';
}
function isLower(c: string): boolean {
  return c >= 'a' && c <= 'z';
}
function isDigit(c: string): boolean {
  return c >= '0' && c <= '9';
}
function isSpace(c: string): boolean {
  return c === ' ' || c === '\t' || c === '\u00a0';
}

export function quote(s: string): string {
  return `"${s}"`;
}

/**
 * Split a slice of text into tokens. Throws FORMULA_SYNTAX for a character outside
 * the alphabet, FORMULA_UNKNOWN_ELEMENT for a symbol outside `elements`.
 */
export function lex(slice: SourceSlice, elements: ReadonlySet<string>): Token[] {
  const { source, start, end } = slice;
  const shown = quote(source);
  const tokens: Token[] = [];
  let i = start;

  const syntax = (pos: number, what: string): DomainError =>
    new DomainError('FORMULA_SYNTAX', { detail: `In ${shown} ${what}`, text: source, position: pos, params: { formula: source } });

  while (i < end) {
    const c = source[i] as string;

    // spaces are allowed only around a hydrate dot and before a phase label
    if (isSpace(c)) {
      let j = i;
      while (j < end && isSpace(source[j] as string)) j++;
      const next = j < end ? (source[j] as string) : '';
      const prev = tokens[tokens.length - 1];
      const phaseNext = PHASE_LABELS.some((p) => source.startsWith(p.label, j) && j + p.label.length <= end);
      if ((HYDRATE_DOTS as readonly string[]).includes(next) || prev?.kind === 'dot' || phaseNext) {
        i = j;
        continue;
      }
      throw syntax(i, `there is a space at position ${i}; a formula is written without spaces (spaces are allowed only around a hydrate dot · and before a phase label such as (aq))`);
    }

    if (isUpper(c)) {
      let j = i + 1;
      while (j < end && isLower(source[j] as string)) j++;
      const symbol = source.slice(i, j);
      if (!elements.has(symbol)) throw unknownElement(source, i, symbol, elements, tokens[tokens.length - 1]);
      tokens.push({ kind: 'element', symbol, pos: i, end: j });
      i = j;
      continue;
    }

    if (isLower(c)) {
      let j = i + 1;
      while (j < end && isLower(source[j] as string)) j++;
      const word = source.slice(i, j);
      const capital = word.charAt(0).toUpperCase() + word.slice(1);
      if (source[i - 1] === '(' && source[j] === ')' && source.slice(j + 1, end).trim() === '') {
        // a lowercase word in brackets at the end: meant as a phase label
        throw syntax(i - 1, `${quote(`(${word})`)} at position ${i - 1} is not a phase label this service reads; the phase labels are (s), (l), (g) and (aq), with (cr) and (am) read as (s)`);
      }
      const hint = elements.has(capital) ? `; did you mean ${quote(capital)}?` : '';
      throw syntax(i, `the letter ${quote(c)} at position ${i} does not start an element symbol; an element symbol starts with a capital letter (Fe, Cl, Mn)${hint}`);
    }

    if (isDigit(c) || SUBSCRIPT_DIGITS.includes(c)) {
      const subscript = !isDigit(c);
      let j = i;
      let digits = '';
      while (j < end) {
        const d = source[j] as string;
        if (subscript ? SUBSCRIPT_DIGITS.includes(d) : isDigit(d)) {
          digits += subscript ? String(SUBSCRIPT_DIGITS.indexOf(d)) : d;
          j++;
        } else break;
      }
      if (digits.length > 1 && digits.startsWith('0')) {
        throw syntax(i, `the number ${quote(source.slice(i, j))} at position ${i} starts with 0; a count is a whole number of at least 1 written without leading zeros`);
      }
      if (digits.length > 6) {
        throw syntax(i, `the number ${quote(source.slice(i, j))} at position ${i} is too long; a count has at most 6 digits`);
      }
      tokens.push({ kind: 'number', digits, value: Number(digits), subscript, pos: i, end: j });
      i = j;
      continue;
    }

    if (SUPERSCRIPT_DIGITS.includes(c) || c === SUPERSCRIPT_PLUS || c === SUPERSCRIPT_MINUS) {
      let j = i;
      let digits = '';
      while (j < end && SUPERSCRIPT_DIGITS.includes(source[j] as string)) {
        digits += String(SUPERSCRIPT_DIGITS.indexOf(source[j] as string));
        j++;
      }
      const s = j < end ? (source[j] as string) : '';
      if (s !== SUPERSCRIPT_PLUS && s !== SUPERSCRIPT_MINUS) {
        throw syntax(j, `a superscript charge at position ${i} must end with a superscript sign ⁺ or ⁻ (e.g. ²⁻)`);
      }
      j++;
      const magnitude = digits === '' ? 1 : Number(digits);
      if (magnitude === 0 || (digits.length > 1 && digits.startsWith('0'))) {
        throw syntax(i, `the superscript charge at position ${i} must be a whole number of at least 1`);
      }
      tokens.push({ kind: 'supcharge', charge: s === SUPERSCRIPT_PLUS ? magnitude : -magnitude, pos: i, end: j });
      i = j;
      continue;
    }

    if (c === '(') {
      const label = PHASE_LABELS.find((p) => source.startsWith(p.label, i) && i + p.label.length <= end);
      if (label) {
        tokens.push({ kind: 'phase', phase: label.phase, label: label.label.slice(1, -1), pos: i, end: i + label.label.length });
        i += label.label.length;
        continue;
      }
      tokens.push({ kind: 'open', bracket: '(', pos: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '[') {
      tokens.push({ kind: 'open', bracket: '[', pos: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === ')' || c === ']') {
      tokens.push({ kind: 'close', bracket: c, pos: i, end: i + 1 });
      i++;
      continue;
    }
    if ((HYDRATE_DOTS as readonly string[]).includes(c)) {
      tokens.push({ kind: 'dot', char: c, pos: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '^') {
      tokens.push({ kind: 'caret', pos: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '+' || c === '-' || c === MINUS_SIGN) {
      tokens.push({ kind: 'sign', sign: c === '+' ? 1 : -1, pos: i, end: i + 1 });
      i++;
      continue;
    }
    throw syntax(i, `the character ${quote(c)} at position ${i} is not part of the formula notation; accepted are ${ACCEPTED_CHARACTERS}`);
  }
  tokens.push({ kind: 'end', pos: end, end });
  return tokens;
}

function unknownElement(
  source: string,
  pos: number,
  symbol: string,
  elements: ReadonlySet<string>,
  previous: Token | undefined,
): DomainError {
  let hint = '';
  if (previous?.kind === 'element' && symbol.length === 1) {
    const joined = previous.symbol + symbol.toLowerCase();
    if (elements.has(joined)) hint = `; did you mean ${quote(joined)} (the second letter of a symbol is lowercase)?`;
  }
  if (hint === '' && symbol.length > 1 && elements.has(symbol.charAt(0))) {
    const rest = symbol.slice(1);
    hint = `; if you meant ${quote(symbol.charAt(0))} followed by another element, write that element with a capital letter (e.g. ${quote(symbol.charAt(0) + rest.charAt(0).toUpperCase() + rest.slice(1))})`;
  }
  const known = IUPAC_ELEMENTS.has(symbol)
    ? `is an element symbol, but the atomic-weights table in use has no entry for it`
    : `is not an element symbol`;
  return new DomainError('FORMULA_UNKNOWN_ELEMENT', {
    detail: `In ${quote(source)} the symbol ${quote(symbol)} at position ${pos} ${known}${hint}`,
    text: source,
    position: pos,
    params: { formula: source, symbol },
  });
}
