/**
 * Formula notation
 * ================
 *
 * Elements   A capital letter followed by any lowercase letters: Fe, Cl, Mn, O. The symbol must be
 *            one of the 118 IUPAC element symbols (or, when the caller passes a set, one of the
 *            symbols of its atomic-weights table). "CL" is C and L, and L is not an element.
 * Counts     A whole number of at least 1 after an element or a group: H2O, Fe2(SO4)3.
 *            Subscript digits are read as counts too (H₂O).
 * Groups     Parentheses and square brackets, nested to any depth, with an optional count:
 *            Fe(OH)3, Ca(OCl)2, K4[Fe(CN)6].
 * Hydrates   Parts joined by "·", "." or "*", each part after the first with an optional leading
 *            multiplier: CuSO4·5H2O, Ca(OCl)2.4H2O, Na2CO3*10H2O. Spaces around the dot are allowed.
 * Charge     Written after the formula, before any phase label:
 *              ^ form, always accepted and never ambiguous: MnO4^-, SO4^2-, Fe^3+, MnO4^2-, NH4^+
 *              repeated signs: SO4-- (charge 2-), Fe+++ (charge 3+), Fe(OH)2++; digits directly before
 *                them are a count only where a single sign would read them as one too (see below)
 *              one trailing sign: charge 1+ or 1-, any digits before it are a count:
 *                MnO4- (four O, charge 1-), NH4+, HCO3-, ClO2-, OH-, H+, Fe(OH)2+
 *              a monatomic ion written as ONE element symbol, ONE digit and a sign: the digit is the
 *                charge: Fe2+, Fe3+, Mn2+, Ca2+, S2-
 *              superscripts: SO₄²⁻, Fe³⁺
 *            Refused as ambiguous (FORMULA_AMBIGUOUS_CHARGE, naming both readings; use the ^ form):
 *              two or more digits before a single sign: SO42- (SO4^2- or SO42^-?), MnO42-, HPO42-;
 *              digits after a closing square bracket then a sign: [Fe(H2O)6]3+ (charge 3+ or count 3?);
 *              the same digits before a repeated sign: Fe2++ (Fe^2+ with the sign doubled, or the dimer
 *                Fe2^2+?), Hg2++, O2--, SO42--, [Fe(H2O)6]3++. One digit after a formula of more than one
 *                element, or after ")", stays a count: SO4--, Cr2O7--, Fe(OH)2++.
 *              a metal with one OH or halide and then 2 or 3 before one sign: FeOH2+ (FeOH^2+, the
 *                hydroxo-iron(III) ion, or FeOH2^+?), AlOH2+, AlF2+, FeCl2+. With brackets the digit stays
 *                a count: Fe(OH)2+ is Fe(OH)2^+.
 *            Note: O2- reads as the oxide ion O^2- (a monatomic ion); write O2^- for superoxide.
 *            A charge is not written after a number or inside parentheses: Fe+2, Fe^+2, SO4-2 and Fe(2+)
 *            are refused, the message spelling the formula typed with its charge in the notation (Fe2+, Fe^2+).
 * Phase      At the very end, after any charge: (s), (l), (g), (aq): Fe(OH)3(s), Fe2+(aq), O2(g).
 *            The solid labels of thermodynamic tables, (cr) crystalline and (am) amorphous, are read
 *            as (s): Fe(OH)3(am), Fe2O3(cr).
 *            A space before the label is allowed.
 * Electron   "e-" (also "e^-", "e−"): composition {}, charge 1-.
 * Spaces     Not allowed inside a formula except around a hydrate dot and before a phase label.
 *
 * Every error is a DomainError (FORMULA_EMPTY, FORMULA_SYNTAX, FORMULA_UNKNOWN_ELEMENT,
 * FORMULA_AMBIGUOUS_CHARGE) with `text` = the formula (or the equation it stands in) and
 * `position` = the 0-based index of the character at fault.
 *
 * Grammar (recursive descent over the tokens of tokens.ts):
 *   species  := electron | formula charge? phase? END
 *   formula  := part (DOT multiplier? part)*
 *   part     := item+
 *   item     := ELEMENT count? | "(" item+ ")" count? | "[" item+ "]" count?
 *   charge   := "^" NUMBER? SIGN+ | SIGN+ | SUPCHARGE
 */
import { DomainError } from '../../core/errors.js';
import { IUPAC_ELEMENTS, lex, quote, type Token } from './tokens.js';
import type { Phase, Species } from './types.js';

export interface ElementItem {
  readonly kind: 'element';
  readonly symbol: string;
  count: number;
  readonly pos: number;
}
export interface GroupItem {
  readonly kind: 'group';
  readonly bracket: '(' | '[';
  readonly items: readonly Item[];
  count: number;
  readonly pos: number;
}
export type Item = ElementItem | GroupItem;

export interface FormulaPart {
  readonly multiplier: number | null;
  readonly items: readonly Item[];
}

/** The parsed structure of a formula; the formatters typeset from it. */
export interface FormulaAst {
  readonly electron: boolean;
  readonly parts: readonly FormulaPart[];
  readonly charge: number;
  readonly phase: Phase | null;
  /** The phase label as written when it is not the phase's own ("cr" or "am" for phase "s"). */
  readonly phaseLabel?: string;
}

export interface ParseOptions {
  /** Accepted element symbols (default: the 118 IUPAC symbols). Pass the symbols of the atomic-weights table to refuse elements it has no weight for. */
  readonly elements?: ReadonlySet<string>;
}

const ELECTRON_SPELLINGS = new Set(['e-', 'e^-', 'e−', 'e^−', 'e⁻']);

/** Parse a formula such as "MnO4-", "Fe(OH)3(s)", "CuSO4·5H2O", "SO4^2-" or "e-". */
export function parseFormula(text: string, options: ParseOptions = {}): Species {
  const trimmed = text.trim();
  return parseFormulaIn(trimmed, 0, trimmed.length, options.elements ?? IUPAC_ELEMENTS).species;
}

/** Parse a formula and return its structure too (for typesetting). */
export function parseFormulaAst(text: string, options: ParseOptions = {}): { species: Species; ast: FormulaAst } {
  const trimmed = text.trim();
  return parseFormulaIn(trimmed, 0, trimmed.length, options.elements ?? IUPAC_ELEMENTS);
}

/**
 * Elements whose oxidation states in water are carried by oxyanions or neutral acids (arsenic(III)
 * is H3AsO3, not As3+): a Roman numeral after them is not answered with a bare cation.
 */
const IN_OXYANIONS: ReadonlySet<string> = new Set(['As', 'Sb', 'Se', 'Te', 'S', 'N', 'P', 'C', 'Si', 'B', 'Cl', 'Br', 'I']);

/**
 * Parse the formula in source[start, end). Errors carry `text` = the whole source and
 * positions into it, so a formula inside an equation is reported in place.
 */
export function parseFormulaIn(
  source: string,
  start: number,
  end: number,
  elements: ReadonlySet<string>,
  /** Whether errors spell out corrected formulas (off while such a spelling is itself being checked). */
  suggest = true,
): { species: Species; ast: FormulaAst } {
  while (start < end && /\s/.test(source[start] as string)) start++;
  while (end > start && /\s/.test(source[end - 1] as string)) end--;
  const text = source.slice(start, end);
  if (text === '') {
    throw new DomainError('FORMULA_EMPTY', {
      detail: source.trim() === ''
        ? 'The formula is empty; enter a chemical formula such as "MnO4-", "Fe2+" or "Fe(OH)3(s)"'
        : `In ${quote(source)} a formula is missing at position ${start}; enter a chemical formula such as "MnO4-" or "Fe2+"`,
      text: source,
      position: start,
      params: { formula: source },
    });
  }
  if (ELECTRON_SPELLINGS.has(text)) {
    return {
      species: { text: 'e-', composition: {}, charge: -1, phase: null },
      ast: { electron: true, parts: [], charge: -1, phase: null },
    };
  }
  const tokens = lex({ source, start, end }, elements);
  const ast = new Parser(source, start, tokens, elements, suggest).species();
  const composition: Record<string, number> = {};
  for (const part of ast.parts) addItems(composition, part.items, part.multiplier ?? 1);
  const species: Species = { text, composition, charge: ast.charge, phase: ast.phase };
  return { species: { ...species, text: asciiText(text, species, elements) }, ast };
}

const SUB = '₀₁₂₃₄₅₆₇₈₉';
const SUP = '⁰¹²³⁴⁵⁶⁷⁸⁹';

/**
 * The plain-text form of a formula written with Unicode (H₂O, SO₄²⁻, Fe³⁺, CuSO4·5H2O, "−"):
 * subscripts become digits, "·" becomes ".", a superscript charge becomes a trailing charge,
 * and the ^ form is used wherever the plain one would read differently (O₂⁻ → O2^-, SO₄²⁻ →
 * SO4^2-). Answers and stored records then carry ASCII formulas only; the typeset form
 * (subscripts, superscripts) is made from the structure, not from this text.
 */
function asciiText(text: string, species: Species, elements: ReadonlySet<string>): string {
  if (/^[\x20-\x7e]*$/.test(text)) return text;
  let plain = '';
  let caret = '';
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    const sub = SUB.indexOf(ch);
    if (sub >= 0) {
      plain += String(sub);
      caret += String(sub);
      continue;
    }
    if (SUP.includes(ch) || ch === '⁺' || ch === '⁻') {
      let digits = '';
      let sign = '';
      while (i < text.length && SUP.includes(text[i]!)) digits += String(SUP.indexOf(text[i++]!));
      while (i < text.length && (text[i] === '⁺' || text[i] === '⁻')) sign += text[i++] === '⁺' ? '+' : '-';
      i--;
      plain += digits + sign;
      caret += `^${digits}${sign}`;
      continue;
    }
    const mapped = ch === '·' ? '.' : ch === '−' ? '-' : ch;
    plain += mapped;
    caret += mapped;
  }
  // a trailing run of plain signs after digits that came from subscripts (Fe₂+, Fe₂++) reads
  // differently in plain digits (Fe2+ is Fe^2+; Fe2++ is ambiguous): write it with ^
  const run = /^(.*?[^+\-^])([+-]+)(\s*\((?:s|l|g|aq)\))?$/.exec(caret);
  const signsWithCaret = run && !caret.includes('^') ? `${run[1]}^${run[2]!.length > 1 ? run[2]!.length : ''}${run[2]![0]}${run[3] ?? ''}` : null;
  for (const candidate of signsWithCaret ? [plain, caret, signsWithCaret] : [plain, caret]) {
    if (!/^[\x20-\x7e]*$/.test(candidate)) continue;
    try {
      const again = parseFormulaIn(candidate, 0, candidate.length, elements, false).species;
      if (again.charge === species.charge && again.phase === species.phase && sameComposition(again.composition, species.composition)) return candidate;
    } catch {
      // the plain reading is ambiguous or different: try the ^ form
    }
  }
  return text;
}

function sameComposition(a: Readonly<Record<string, number>>, b: Readonly<Record<string, number>>): boolean {
  const ka = Object.keys(a);
  return ka.length === Object.keys(b).length && ka.every((k) => a[k] === b[k]);
}

function addItems(into: Record<string, number>, items: readonly Item[], factor: number): void {
  for (const item of items) {
    if (item.kind === 'element') into[item.symbol] = (into[item.symbol] ?? 0) + item.count * factor;
    else addItems(into, item.items, item.count * factor);
  }
}

function describe(t: Token): string {
  switch (t.kind) {
    case 'element':
      return `the element ${quote(t.symbol)}`;
    case 'number':
      return `the number ${quote(t.digits)}`;
    case 'open':
      return `${quote(t.bracket)}`;
    case 'close':
      return `${quote(t.bracket)}`;
    case 'dot':
      return `the hydrate dot ${quote(t.char)}`;
    case 'caret':
      return '"^"';
    case 'sign':
      return `the sign ${quote(t.sign > 0 ? '+' : '-')}`;
    case 'supcharge':
      return 'a superscript charge';
    case 'phase':
      return `the phase label (${t.phase})`;
    case 'end':
      return 'the end';
  }
}

const CLOSER = { '(': ')', '[': ']' } as const;
const BRACKET_NAME = { '(': 'parenthesis', '[': 'square bracket' } as const;

type NumberToken = Extract<Token, { kind: 'number' }>;
type SignToken = Extract<Token, { kind: 'sign' }>;

/** How the charge of the formula was written: where it starts and whether it had a number of its own. */
interface WrittenCharge {
  /** Position of the first character of the charge (the "^", the first sign, or the digit read as the charge). */
  readonly start: number;
  readonly magnitude: number;
  readonly sign: 1 | -1;
  /** The charge was written with a number (^2-, Fe2+, ²⁻), not with signs alone. */
  readonly numbered: boolean;
}

function signText(sign: 1 | -1): string {
  return sign > 0 ? '+' : '-';
}

function chargeText(magnitude: number, sign: 1 | -1): string {
  return `${magnitude}${signText(sign)}`;
}

/** '"A"', '"A" or "B"'. */
function either(spellings: readonly string[]): string {
  return spellings.map(quote).join(' or ');
}

class Parser {
  private i = 0;
  /** The count token read last, with the item it was given to (a single trailing sign may turn it into a charge). */
  private lastCount: { token: NumberToken; item: Item; afterClose: ']' | ')' | null } | null = null;
  private written: WrittenCharge | null = null;

  constructor(
    private readonly source: string,
    private readonly start: number,
    private readonly tokens: readonly Token[],
    private readonly elements: ReadonlySet<string>,
    private readonly suggest: boolean,
  ) {}

  /** Position just past the formula (the end token). */
  private get end(): number {
    return (this.tokens[this.tokens.length - 1] as Token).pos;
  }

  /**
   * Spellings of `formula` (the text before the charge, as typed) with the charge `magnitude`,`sign`
   * and then `suffix` (a phase label or nothing) that this parser reads as that species, the most
   * usual first: Fe2+ and Fe^2+; SO4^2- and SO4--; at most two. Empty when the formula before the
   * charge does not parse on its own, or while a spelling is being checked.
   */
  private spellings(formula: string, magnitude: number, sign: 1 | -1, suffix: string): string[] {
    if (!this.suggest || formula.trim() === '' || magnitude < 1) return [];
    let composition: Readonly<Record<string, number>>;
    try {
      const bare = parseFormulaIn(formula, 0, formula.length, this.elements, false).species;
      if (bare.charge !== 0) return [];
      composition = bare.composition;
    } catch {
      return [];
    }
    const s = signText(sign);
    const candidates = [
      ...(magnitude > 1 ? [`${formula}${magnitude}${s}`] : [`${formula}${s}`]),
      `${formula}^${magnitude > 1 ? magnitude : ''}${s}`,
      ...(magnitude > 1 && magnitude <= 3 ? [`${formula}${s.repeat(magnitude)}`] : []),
    ].map((c) => c + suffix);
    const out: string[] = [];
    for (const c of candidates) {
      try {
        const sp = parseFormulaIn(c, 0, c.length, this.elements, false).species;
        if (sp.charge === magnitude * sign && sameComposition(sp.composition, composition) && !out.includes(c)) out.push(c);
      } catch {
        // not read as meant: not offered
      }
      if (out.length === 2) break;
    }
    return out;
  }

  /**
   * The text from token index `from` to the end when it is a phase label or nothing ("", " (aq)");
   * null when something else follows (a corrected spelling of the part before would drop it).
   */
  private phaseSuffix(from: number): string | null {
    const rest = this.tokens.slice(from);
    const first = rest[0];
    if (!first) return null;
    if (first.kind === 'end' || (first.kind === 'phase' && rest[1]?.kind === 'end')) {
      const prev = this.tokens[from - 1];
      return this.source.slice(prev ? prev.end : first.pos, this.end);
    }
    return null;
  }

  private peek(): Token {
    return this.tokens[this.i] as Token;
  }
  private next(): Token {
    return this.tokens[this.i++] as Token;
  }

  private fail(position: number, what: string): DomainError {
    return new DomainError('FORMULA_SYNTAX', {
      detail: `In ${quote(this.source)} ${what}`,
      text: this.source,
      position,
      params: { formula: this.source },
    });
  }

  species(): FormulaAst {
    this.refuseBareRomanNumeral();
    const parts: FormulaPart[] = [];
    for (;;) {
      let multiplier: number | null = null;
      const t = this.peek();
      if (t.kind === 'number') {
        if (parts.length === 0) {
          throw this.fail(t.pos, `the formula starts with the number ${quote(t.digits)} at position ${t.pos}; a formula starts with an element symbol or a bracket (coefficients belong in an equation, e.g. "2H2O = ...")`);
        }
        this.refuseFractionalMultiplier(t, parts);
        if (t.value === 0) throw this.fail(t.pos, `the hydrate multiplier at position ${t.pos} is 0; it must be a whole number of at least 1`);
        multiplier = t.value;
        this.next();
      }
      const here = this.peek();
      const items = this.items(null);
      if (items.length === 0) {
        const after = parts.length === 0 ? 'at the start' : 'after the hydrate dot';
        throw this.fail(here.pos, `${describe(here)} at position ${here.pos} cannot stand ${after}; expected an element symbol (e.g. Fe) or an opening bracket`);
      }
      parts.push({ multiplier, items });
      if (this.peek().kind === 'dot') {
        this.next();
        this.lastCount = null;
        continue;
      }
      break;
    }

    const charge = this.charge(parts);
    let phase: Phase | null = null;
    let phaseLabel: string | undefined;
    const p = this.peek();
    if (p.kind === 'phase') {
      phase = p.phase;
      if (p.label !== p.phase) phaseLabel = p.label;
      this.next();
    }
    const e = this.peek();
    if (e.kind !== 'end') throw this.trailing(e, charge !== 0, phase !== null);
    return { electron: false, parts, charge, phase, ...(phaseLabel ? { phaseLabel } : {}) };
  }

  /**
   * A hydrate multiplier written as a decimal fraction ("CaSO4·0.5H2O", "1.5H2O"): the lexer sees
   * a number, a hydrate dot and a number. Refused, with the formula in whole numbers where the
   * hydrated part is the first one ("(CaSO4)2·H2O").
   */
  private refuseFractionalMultiplier(t: NumberToken, parts: readonly FormulaPart[]): void {
    const dot = this.tokens[this.i + 1];
    const frac = this.tokens[this.i + 2];
    if (dot?.kind !== 'dot' || dot.char !== '.' || dot.pos !== t.end || frac?.kind !== 'number' || frac.pos !== dot.end || frac.subscript) return;
    const written = this.source.slice(t.pos, frac.end);
    // p/q in lowest terms
    let p = BigInt(t.digits + frac.digits);
    let q = 10n ** BigInt(frac.digits.length);
    const gcd = (a: bigint, b: bigint): bigint => (b === 0n ? a : gcd(b, a % b));
    const g = gcd(p, q);
    p /= g;
    q /= g;
    let fix = '';
    const rest = this.source.slice(frac.end, this.end);
    const later = this.tokens.slice(this.i + 3).some((k) => k.kind === 'dot');
    if (parts.length === 1 && !later && p > 0n && q > 1n && q <= 1000n) {
      const first = this.source.slice(this.start, (this.tokens.find((k) => k.kind === 'dot') as Token).pos).trim();
      const single = parts[0]!.items.length === 1 && parts[0]!.items[0]!.kind === 'group';
      const head = single ? `${first}${q}` : `(${first})${q}`;
      const dotChar = this.source.slice(this.tokens.find((k) => k.kind === 'dot')!.pos, t.pos).trim();
      fix = `; write it in whole numbers, e.g. ${quote(`${head}${dotChar}${p === 1n ? '' : p}${rest}`)} for ${quote(this.source.slice(this.start, this.end))}`;
    } else {
      fix = '; write the formula in whole numbers, e.g. "(CaSO4)2·H2O" for CaSO4·0.5H2O';
    }
    throw this.fail(t.pos, `the hydrate multiplier ${quote(written)} at position ${t.pos} is a fraction; fractional hydrate multipliers are not supported${fix}`);
  }

  private items(open: Extract<Token, { kind: 'open' }> | null): Item[] {
    const items: Item[] = [];
    for (;;) {
      const t = this.peek();
      if (t.kind === 'element') {
        this.next();
        const item: ElementItem = { kind: 'element', symbol: t.symbol, count: 1, pos: t.pos };
        this.count(item, null);
        items.push(item);
      } else if (t.kind === 'open') {
        this.next();
        this.refuseRomanNumeral(t);
        const inner = this.items(t);
        const close = this.next(); // checked by the inner call
        const item: GroupItem = { kind: 'group', bracket: t.bracket, items: inner, count: 1, pos: t.pos };
        this.count(item, close.kind === 'close' ? close.bracket : null);
        items.push(item);
      } else break;
    }
    if (open !== null) {
      const t = this.peek();
      const name = BRACKET_NAME[open.bracket];
      if (items.length === 0) {
        throw this.notItems(open) ?? this.fail(t.pos, `the ${name} opened at position ${open.pos} is empty; expected an element symbol inside it`);
      }
      if (t.kind !== 'close') {
        const at = t.kind === 'end' ? 'at the end' : `before ${describe(t)} at position ${t.pos}`;
        throw this.fail(t.pos, `a closing ${name} ${quote(CLOSER[open.bracket])} is missing ${at} for the one opened at position ${open.pos}`);
      }
      if (t.bracket !== CLOSER[open.bracket]) {
        throw this.fail(t.pos, `the ${quote(t.bracket)} at position ${t.pos} does not close the ${quote(open.bracket)} opened at position ${open.pos}; expected ${quote(CLOSER[open.bracket])}`);
      }
    }
    return items;
  }

  /**
   * "Fe(II)", "As(III)", "Mn(IV)": an oxidation state in Roman numerals would otherwise read as a
   * group of iodine and vanadium atoms (FeI2, AsI3, MnIV). Refused, with the ion spelled in the
   * notation where the element's ion of that charge reads ("Fe2+" for iron(II)).
   */
  private refuseRomanNumeral(open: Extract<Token, { kind: 'open' }>): void {
    if (open.bracket !== '(') return;
    const rest = this.source.slice(open.end);
    const m = /^(VIII|VII|VI|IV|V|III|II|I)\)/.exec(rest);
    if (!m) return;
    const roman = m[1]!;
    const value = { I: 1, II: 2, III: 3, IV: 4, V: 5, VI: 6, VII: 7, VIII: 8 }[roman as 'I']!;
    const formula = this.source.slice(this.start, open.pos);
    // the bare ion only where it is a usual aqueous ion's charge (Fe2+, Mn2+, Fe3+, Cu+); As(III), Cr(VI) are in oxyanions
    const spelled = /^[A-Z][a-z]?$/.test(formula) && value <= 3 && !IN_OXYANIONS.has(formula) ? this.spellings(formula, value, 1, '') : [];
    const fix = spelled.length > 0 ? `: for the ion write ${either(spelled)}, or the species it is in (e.g. "Fe(OH)3" for iron(III) hydroxide)` : ': write the species as a formula with its charge (e.g. "Fe2+" for iron(II), "H3AsO3" for arsenic(III))';
    throw this.fail(open.pos, `the parentheses at position ${open.pos} hold "${roman}", an oxidation state in Roman numerals, which a formula does not carry (it would read as atoms of iodine or vanadium)${fix}`);
  }

  /**
   * "FeIII", "MnII", "AsV", "MnVII": one element symbol followed by a Roman numeral, the way
   * oxidation states are often written in notes, would read as iodine and vanadium atoms (FeI3,
   * MnI2, AsV, MnVI2). Nobody writes those compounds so (iron(II) iodide is FeI2), so the form
   * is refused rather than guessed. A single trailing "I" is left alone: CuI, KI and AgI are
   * the usual spellings of real iodides.
   */
  private refuseBareRomanNumeral(): void {
    const elements: Extract<Token, { kind: 'element' }>[] = [];
    for (const t of this.tokens) {
      if (t.kind === 'element') elements.push(t);
      else if (t.kind === 'end' || t.kind === 'phase' || t.kind === 'sign' || t.kind === 'caret' || t.kind === 'supcharge') break;
      else return; // a count, a bracket or a dot: a formula written with counts, not this form
    }
    if (elements.length < 3 && !(elements.length === 2 && elements[1]!.symbol === 'V')) return;
    const [head, ...tail] = elements;
    const roman = tail.map((t) => t.symbol).join('');
    if (!/^(VIII|VII|VI|IV|V|III|II)$/.test(roman)) return;
    const value = { II: 2, III: 3, IV: 4, V: 5, VI: 6, VII: 7, VIII: 8 }[roman as 'II']!;
    const formula = head!.symbol;
    const spelled = value <= 3 && !IN_OXYANIONS.has(formula) ? this.spellings(formula, value, 1, '') : [];
    const fix = spelled.length > 0 ? `: for the ion write ${either(spelled)}, or the species it is in (e.g. "Fe(OH)3" for iron(III) hydroxide)` : ': write the species as a formula with its charge (e.g. "H3AsO3" for arsenic(III), "H2AsO4-" for arsenic(V), "MnO4-" for manganese(VII))';
    const atoms = new Map<string, number>();
    for (const t of tail) atoms.set(t.symbol, (atoms.get(t.symbol) ?? 0) + 1);
    const read = formula + [...atoms].map(([el, n]) => el + (n > 1 ? String(n) : '')).join('');
    throw this.fail(tail[0]!.pos, `"${roman}" after ${formula} at position ${tail[0]!.pos} reads as an oxidation state in Roman numerals, which a formula does not carry (as atoms it would be ${read})${fix}`);
  }

  /**
   * A bracket that holds no element but a charge ("Fe(2+)", "SO4(2-)", "Fe(+3)") or only a number
   * ("Fe(2)"): the error that says so, spelling the formula with its charge in the notation.
   */
  private notItems(open: Extract<Token, { kind: 'open' }>): DomainError | null {
    let j = this.i;
    const inner: Token[] = [];
    for (; j < this.tokens.length; j++) {
      const t = this.tokens[j] as Token;
      if (t.kind === 'close' || t.kind === 'end') break;
      if (t.kind !== 'number' && t.kind !== 'sign' && t.kind !== 'caret' && t.kind !== 'supcharge') return null;
      inner.push(t);
    }
    const close = this.tokens[j];
    if (inner.length === 0 || close?.kind !== 'close') return null;
    const name = open.bracket === '(' ? 'parentheses' : 'square brackets';
    const shownInner = this.source.slice(open.end, close.pos);
    const formula = this.source.slice(this.start, open.pos);
    const suffix = this.phaseSuffix(j + 1);
    const signs = inner.filter((t): t is SignToken => t.kind === 'sign');
    const numbers = inner.filter((t): t is NumberToken => t.kind === 'number');
    const sup = inner.find((t): t is Extract<Token, { kind: 'supcharge' }> => t.kind === 'supcharge');
    const where = `the ${name} at position ${open.pos} hold`;
    if (signs.length === 0 && !sup) {
      const n = numbers[0]?.digits ?? '';
      // "Fe(2)" → Fe2; after a longer formula the count's place is not known ("SO4(2)": (SO4)2?)
      const count = /^[A-Z][a-z]*$/.test(formula) && numbers.length === 1 ? ` (e.g. ${quote(formula + n)})` : ' (e.g. "Fe2(SO4)3")';
      const charged = `${formula || 'Fe'}^${n || 2}`;
      return this.fail(open.pos, `${where} only ${quote(shownInner)}, with no element symbol; a count is written directly after the element or group it counts${count}, and a charge after the formula with its sign and no brackets (e.g. ${either([`${charged}+`, `${charged}-`])})`);
    }
    let magnitude = 0;
    let sign: 1 | -1 = 1;
    if (sup) {
      magnitude = Math.abs(sup.charge);
      sign = sup.charge > 0 ? 1 : -1;
    } else if (signs.every((t) => t.sign === (signs[0] as SignToken).sign) && numbers.length <= 1) {
      sign = (signs[0] as SignToken).sign;
      magnitude = numbers.length === 1 ? (numbers[0] as NumberToken).value : signs.length;
    }
    const spelled = magnitude > 0 && suffix !== null ? this.spellings(formula, magnitude, sign, suffix) : [];
    const fix = spelled.length > 0 ? `: write ${either(spelled)}` : ' (e.g. "Fe^2+", "SO4^2-")';
    return this.fail(open.pos, `${where} a charge, ${quote(shownInner)}, and no element symbol; a charge is written after the formula without brackets${fix}`);
  }

  private count(item: Item, afterClose: ']' | ')' | null): void {
    const t = this.peek();
    if (t.kind !== 'number') {
      this.lastCount = null;
      return;
    }
    this.next();
    if (t.value === 0) throw this.fail(t.pos, `the count at position ${t.pos} is 0; a count is a whole number of at least 1 (leave it out for 1)`);
    item.count = t.value;
    this.lastCount = { token: t, item, afterClose };
  }

  private charge(parts: readonly FormulaPart[]): number {
    const t = this.peek();
    if (t.kind === 'supcharge') {
      this.next();
      this.written = { start: t.pos, magnitude: Math.abs(t.charge), sign: t.charge > 0 ? 1 : -1, numbered: true };
      return t.charge;
    }
    if (t.kind === 'caret') {
      this.next();
      let magnitude: number | null = null;
      const n = this.peek();
      if (n.kind === 'number') {
        this.next();
        if (n.value === 0) throw this.fail(n.pos, `the charge at position ${n.pos} is 0; leave out the charge of a neutral species`);
        magnitude = n.value;
      }
      const signs = this.signs();
      if (signs.length === 0) {
        const s = this.peek();
        throw this.fail(s.pos, `after "^" at position ${t.pos} a charge is expected, a number and a sign such as ^2- or ^+, but found ${describe(s)}`);
      }
      if (magnitude !== null && signs.length > 1) {
        throw this.fail((signs[1] as Token).pos, `the charge after "^" at position ${t.pos} has a number and more than one sign; write one sign, e.g. ^2-`);
      }
      const sign = (signs[0] as SignToken).sign;
      this.written = { start: t.pos, magnitude: magnitude ?? signs.length, sign, numbered: magnitude !== null };
      return (magnitude ?? signs.length) * sign;
    }
    if (t.kind !== 'sign') return 0;

    const before = this.tokens[this.i - 1];
    const signs = this.signs();
    const sign = (signs[0] as SignToken).sign;
    this.written = { start: t.pos, magnitude: signs.length, sign, numbered: false };

    const last = this.lastCount;
    if (!last || before !== last.token || last.token.subscript) return sign * signs.length;

    // digits directly before the sign(s): count or charge?
    const digits = last.token.digits;
    const only = parts.length === 1 && parts[0]?.items.length === 1 ? parts[0].items[0] : undefined;
    const monatomic = only !== undefined && only.kind === 'element' && only === last.item;
    // where a single sign would read the digits as a charge or refuse them, a repeated sign is
    // no help: "Fe2++" may be Fe^2+ with its sign doubled or the dimer Fe2^2+
    const unclear = digits.length >= 2 || last.afterClose === ']' || monatomic;
    if (signs.length > 1) {
      if (unclear) throw this.ambiguousRepeated(last.token, sign, signs, last.afterClose === ']', monatomic);
      return sign * signs.length;
    }
    if (monatomic && digits.length === 1) {
      last.item.count = 1;
      this.written = { start: last.token.pos, magnitude: Number(digits), sign, numbered: true };
      return sign * Number(digits);
    }
    if (unclear) throw this.ambiguous(last.token, sign, last.afterClose === ']');
    // the likelier reading first: a hydroxo or halo cation (FeOH^2+), a halo anion (CuCl2^-)
    if (this.ligandCount(parts, last.item, digits)) throw this.ambiguous(last.token, sign, true, sign < 0);
    return sign;
  }

  /**
   * A complex ion written without brackets whose last digit can as well be its charge: a metal
   * with one hydroxide or halide and then 2 or 3 before one sign (FeOH2+: FeOH^2+, the
   * hydroxo-iron(III) ion, or FeOH2^+; AlF2+: AlF^2+ or AlF2^+; FeCl2+). Oxyanions and the
   * hydrides stay counts (ClO2-, MnO4-, NO2-, NH4+, H2PO4-): their digit follows O, or H after
   * something other than O.
   */
  private ligandCount(parts: readonly FormulaPart[], item: Item, digits: string): boolean {
    if (parts.length !== 1 || (digits !== '2' && digits !== '3') || item.kind !== 'element') return false;
    const items = parts[0]!.items;
    const k = items.indexOf(item);
    if (k !== items.length - 1 || k < 1) return false;
    const before = items[k - 1]!;
    if (item.symbol === 'H') return before.kind === 'element' && before.symbol === 'O' && before.count === 1 && k >= 2;
    return ['F', 'Cl', 'Br', 'I'].includes(item.symbol) && before.kind === 'element' && before.count === 1 && before.symbol !== 'O' && before.symbol !== 'H' && k === 1;
  }

  private signs(): Extract<Token, { kind: 'sign' }>[] {
    const out: Extract<Token, { kind: 'sign' }>[] = [];
    for (;;) {
      const s = this.peek();
      if (s.kind !== 'sign') break;
      if (out.length > 0 && s.sign !== (out[0] as Extract<Token, { kind: 'sign' }>).sign) {
        throw this.fail(s.pos, `the charge mixes + and - at position ${s.pos}; write one kind of sign, e.g. ^2- or ++`);
      }
      out.push(s);
      this.next();
    }
    return out;
  }

  /**
   * A number after the charge: "Fe+2", "Fe^+2", "SO4-2" (the number of the charge written after its
   * sign), or "Fe2+3", "Fe^2+3" (a second number). The fix is spelled with the formula typed.
   */
  private numberAfterCharge(t: NumberToken, written: WrittenCharge): DomainError {
    const formula = this.source.slice(this.start, written.start);
    const chargeWritten = this.source.slice(written.start, t.pos);
    const suffix = this.phaseSuffix(this.i + 1);
    const magnitudes = written.numbered || (written.magnitude > 1 && written.magnitude !== t.value) ? [written.magnitude, t.value] : [t.value];
    const options = [...new Set(magnitudes)]
      .filter((m) => m >= 1 && suffix !== null)
      .map((m) => ({ m, spelled: this.spellings(formula, m, written.sign, suffix ?? '') }))
      .filter((o) => o.spelled.length > 0);
    const at = `the number ${quote(t.digits)} at position ${t.pos}`;
    const head = written.numbered
      ? `${at} follows the charge ${quote(chargeWritten)}; a charge is written once, its number before the sign`
      : `${at} follows the sign; the number of a charge is written before its sign`;
    if (options.length === 0) return this.fail(t.pos, `${head} (e.g. "Fe2+", "Fe^2+", "SO4^2-")`);
    const fix = options.length === 1
      ? `: write ${either(options[0]!.spelled)}`
      : `: write ${options.map((o) => `${either(o.spelled)} for charge ${chargeText(o.m, written.sign)}`).join(', ')}`;
    return this.fail(t.pos, head + fix);
  }

  private ambiguous(token: NumberToken, sign: 1 | -1, afterBracket: boolean, countFirst = false): DomainError {
    const prefix = this.source.slice(this.start, token.pos);
    const digits = token.digits;
    const s = sign > 0 ? '+' : '-';
    const readings: { text: string; count: string; charge: string }[] = [];
    if (afterBracket) readings.push({ text: `${prefix}^${digits}${s}`, count: '1', charge: `${digits}${s}` });
    for (let k = digits.length; k >= 1; k--) {
      const countPart = digits.slice(0, k);
      const chargePart = digits.slice(k);
      if (chargePart.startsWith('0')) continue;
      readings.push({ text: `${prefix}${countPart}^${chargePart}${s}`, count: countPart, charge: `${chargePart === '' ? '1' : chargePart}${s}` });
    }
    // the most likely intent first: the last digit (or the whole number after "]") as the charge
    readings.sort((a, b) => (a.count.length === b.count.length ? 0 : a.count.length < b.count.length ? -1 : 1));
    const likely = countFirst ? readings.find((r) => r.count === digits) : afterBracket ? readings[0] : readings.find((r) => r.count === digits.slice(0, -1)) ?? readings[0];
    const ordered = likely ? [likely, ...readings.filter((r) => r !== likely)] : readings;
    const listed = ordered.map((r) => `${quote(r.text)} (count ${r.count}, charge ${r.charge})`);
    const options = listed.length === 2 ? `${listed[0]} or ${listed[1]}` : listed.slice(0, -1).join(', ') + ` or ${listed[listed.length - 1]}`;
    return new DomainError('FORMULA_AMBIGUOUS_CHARGE', {
      detail: `In ${quote(this.source)} the ${digits.length === 1 ? 'digit' : 'digits'} ${quote(digits)} at position ${token.pos} before the sign can be read ${ordered.length === 2 ? 'two' : 'several'} ways: ${options}. Write the charge with ^ to say which you mean, e.g. ${quote(ordered[0]?.text ?? '')}`,
      text: this.source,
      position: token.pos,
      params: { formula: this.source, readings: ordered.map((r) => r.text) },
    });
  }

  /**
   * Digits before a repeated sign where they could be the charge: "Fe2++" (Fe^2+ with the sign
   * doubled, or Fe2^2+), "SO42--" (SO4^2- or SO42^2-), "[Fe(H2O)6]3++" ([Fe(H2O)6]^3+ or
   * [Fe(H2O)6]3^2+). The readings with the last digits as the charge come first.
   */
  private ambiguousRepeated(token: NumberToken, sign: 1 | -1, signs: readonly SignToken[], afterBracket: boolean, monatomic: boolean): DomainError {
    const prefix = this.source.slice(this.start, token.pos);
    const digits = token.digits;
    const s = signText(sign);
    const suffix = this.phaseSuffix(this.i) ?? '';
    const readings: { formula: string; count: string; magnitude: number; why: string }[] = [];
    const lowest = afterBracket || (monatomic && digits.length === 1) ? 0 : 1;
    for (let k = digits.length - 1; k >= lowest; k--) {
      const chargePart = digits.slice(k);
      if (chargePart.startsWith('0')) continue;
      readings.push({
        formula: prefix + digits.slice(0, k),
        count: k === 0 ? '1' : digits.slice(0, k),
        magnitude: Number(chargePart),
        why: `${chargePart.length === 1 ? 'the digit' : 'the digits'} ${quote(chargePart)} as the charge, the sign ${signs.length === 2 ? 'doubled' : 'repeated'}`,
      });
    }
    readings.push({ formula: prefix + digits, count: digits, magnitude: signs.length, why: `the ${signs.length} signs as the charge` });
    const caretForm = (r: (typeof readings)[number]): string => `${r.formula}^${r.magnitude > 1 ? r.magnitude : ''}${s}`;
    const described = readings.map((r) => `count ${r.count} and charge ${chargeText(r.magnitude, sign)} (${r.why})`);
    const fixes = readings.map((r) => {
      const spelled = this.spellings(r.formula, r.magnitude, sign, suffix);
      return `${either(spelled.length > 0 ? spelled : [caretForm(r) + suffix])} for count ${r.count} and charge ${chargeText(r.magnitude, sign)}`;
    });
    const signsText = this.source.slice((signs[0] as SignToken).pos, (signs[signs.length - 1] as SignToken).end);
    const ways = readings.length === 2 ? 'two ways' : 'several ways';
    return new DomainError('FORMULA_AMBIGUOUS_CHARGE', {
      detail:
        `In ${quote(this.source)} the ${digits.length === 1 ? 'digit' : 'digits'} ${quote(digits)} at position ${token.pos} before the repeated sign ${quote(signsText)} can be read ${ways}: ` +
        `${described.slice(0, -1).join(', ')} or ${described[described.length - 1]}. Write ${fixes.join('; ')}`,
      text: this.source,
      position: token.pos,
      params: { formula: this.source, readings: readings.map(caretForm) },
    });
  }

  private trailing(t: Token, hadCharge: boolean, hadPhase: boolean): DomainError {
    if (hadPhase) {
      return this.fail(t.pos, `${describe(t)} at position ${t.pos} follows the phase label; the phase label comes last (e.g. "Fe2+(aq)")`);
    }
    if (t.kind === 'number' && hadCharge && this.written) {
      return this.numberAfterCharge(t, this.written);
    }
    if (hadCharge) {
      return this.fail(t.pos, `${describe(t)} at position ${t.pos} follows the charge; only a phase label ((s), (l), (g), (aq), or (cr)/(am) for a solid) may come after the charge`);
    }
    if (t.kind === 'close') {
      return this.fail(t.pos, `the ${quote(t.bracket)} at position ${t.pos} has no matching opening bracket`);
    }
    if (t.kind === 'caret') {
      return this.fail(t.pos, `"^" at position ${t.pos} must be followed by a charge such as ^2- or ^+`);
    }
    return this.fail(t.pos, `${describe(t)} at position ${t.pos} is not expected here; expected an element symbol, a bracket, a hydrate dot, a charge or a phase label`);
  }
}
