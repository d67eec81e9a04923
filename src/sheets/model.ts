/**
 * The document model of a sheet: plain data, no pdfkit. A mapping turns a computed
 * result (a dose, a jar-test plan or evaluation) into a `SheetDocument`; the renderer
 * (pdf.ts) draws any `SheetDocument`; the signer signs the PDF bytes.
 *
 * Text that may hold chemical formulas is `Rich`: a plain string, or runs where a run
 * marked `formula: true` is typeset with real subscripts and superscripts
 * ("MnO4-" → MnO₄⁻, "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O" → an equation with →).
 * `rich("Dose as {KMnO4}, **3 mg/L**")` builds runs from a small markup:
 * `{…}` a formula, `**…**` bold.
 */
import { createHash } from 'node:crypto';
import { DomainError } from '../core/errors.js';
import { inWords } from './wording.js';

export type SheetKind = 'dose' | 'jar-test-plan' | 'jar-test-evaluation';
export type PageSize = 'A4' | 'LETTER';
export type Severity = 'info' | 'warning' | 'danger';
export type RunStyle = 'regular' | 'bold';

export interface TextRun {
  readonly text: string;
  readonly style?: RunStyle;
  /** Typeset as a chemical formula or equation (subscripts, superscripts, arrows). */
  readonly formula?: boolean;
}

/** A plain string, or styled runs. */
export type Rich = string | readonly TextRun[];

export interface MetaItem {
  readonly label: string;
  readonly value: Rich;
}

export interface ParagraphBlock {
  readonly kind: 'paragraph';
  readonly text: Rich;
}

export interface KeyValueRow {
  readonly label: Rich;
  readonly value: Rich;
  /** Where the value comes from (a source id, a short citation or how it was found), printed small. */
  readonly source?: Rich;
}

export interface KeyValueBlock {
  readonly kind: 'keyValue';
  readonly rows: readonly KeyValueRow[];
  /** Two pairs per line for short values (default 1). */
  readonly columns?: 1 | 2;
}

export interface TableColumn {
  readonly header: Rich;
  /** Printed under the header, e.g. "mg/L". */
  readonly unit?: string;
  /** Default: right when every filled cell of the column is a number, else left. */
  readonly align?: 'left' | 'right' | 'center';
  /** Relative width; default from the content. */
  readonly width?: number;
}

/** A cell; null is a blank cell (a write-in box when the table is `writeIn`). */
export type TableCell = Rich | null;

export interface TableBlock {
  readonly kind: 'table';
  readonly columns: readonly TableColumn[];
  readonly rows: readonly (readonly TableCell[])[];
  readonly caption?: Rich;
  readonly notes?: readonly Rich[];
  /** Rows tall enough to write results in by hand (bench sheets). */
  readonly writeIn?: boolean;
}

export interface EquationBlock {
  readonly kind: 'equation';
  /** In formula notation with spaces around "+" and the arrow: "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O". */
  readonly equation: string;
  /** Printed at the right, e.g. "(1)". */
  readonly label?: string;
  readonly caption?: Rich;
}

export interface NoteBlock {
  readonly kind: 'note';
  readonly text: Rich;
  readonly tone?: 'info' | 'warning';
}

export interface FlagItem {
  readonly severity: Severity;
  readonly code?: string;
  readonly message: Rich;
  readonly source?: string;
}

export interface FlagListBlock {
  readonly kind: 'flags';
  readonly items: readonly FlagItem[];
  /** Printed when there are no items (default "No flags."). */
  readonly emptyText?: string;
}

export interface ChartAxis {
  readonly label: Rich;
  /** Printed in brackets after the label; empty when the label names it already. */
  readonly unit: string;
  readonly min?: number;
  readonly max?: number;
  /** Tick values (default: round numbers over the range). */
  readonly ticks?: readonly number[];
}

export interface ChartPoint {
  readonly x: number;
  readonly y: number;
  /** Drawn as an open marker (e.g. below the detection limit, left out of the fit). */
  readonly hollow?: boolean;
}

export interface ChartSeries {
  readonly name: string;
  readonly points: readonly ChartPoint[];
  /** Default 'points-and-line'. */
  readonly style?: 'points' | 'line' | 'points-and-line';
}

export interface FittedLine {
  readonly label: string;
  readonly slope: number;
  readonly intercept: number;
  /** Range drawn (default: the x axis range, clipped to the plot). */
  readonly xFrom?: number;
  readonly xTo?: number;
}

/** A reference line across the plot: a target residual (axis 'y') or a dose (axis 'x'). */
export interface ChartGuide {
  readonly axis: 'x' | 'y';
  readonly value: number;
  readonly label: string;
}

export interface ChartBlock {
  readonly kind: 'chart';
  readonly title?: string;
  readonly xAxis: ChartAxis;
  readonly yAxis: ChartAxis;
  readonly series: readonly ChartSeries[];
  readonly fit?: FittedLine;
  readonly guides?: readonly ChartGuide[];
  readonly caption?: Rich;
  /** Height of the plot in points (default 200). */
  readonly height?: number;
}

export type Block =
  | ParagraphBlock
  | KeyValueBlock
  | TableBlock
  | EquationBlock
  | NoteBlock
  | FlagListBlock
  | ChartBlock;

export interface Section {
  readonly heading: string;
  readonly blocks: readonly Block[];
}

export interface SafetyBox {
  /** e.g. "Safety: sodium hypochlorite solution". */
  readonly heading: string;
  readonly product: Rich;
  readonly hazards: readonly Rich[];
  readonly incompatibilities: readonly Rich[];
  readonly ppe: readonly Rich[];
  readonly overdoseSigns: readonly Rich[];
  /** Sources of the safety text, printed small at the foot of the box. */
  readonly sources?: readonly string[];
}

export interface Person {
  readonly name: string;
  readonly role: string;
}

export interface SignatureBlock {
  readonly preparedBy: Person;
  /** ISO 8601. */
  readonly preparedAt: string;
  readonly signedBy?: Person & { readonly organisation?: string; readonly certificateSubject: string };
  /** ISO 8601. */
  readonly signedAt?: string;
  readonly statement?: string;
}

export interface SheetDocument {
  readonly id: string;
  readonly kind: SheetKind;
  readonly title: string;
  readonly subtitle: string;
  readonly pageSize: PageSize;
  /** ISO 8601; becomes the PDF's CreationDate so the same document renders to the same bytes. */
  readonly issuedAt: string;
  /** SHA-256 (hex) of the canonical JSON of every other field; printed in every footer. */
  readonly contentSha256: string;
  readonly meta: readonly MetaItem[];
  readonly sections: readonly Section[];
  readonly safety: SafetyBox;
  /** Where the safety box goes (default after the first section). */
  readonly safetyPosition?: 'after-first-section' | 'start' | 'end';
  readonly signature: SignatureBlock;
  /** Printed on every page. */
  readonly disclaimer: string;
  /**
   * A notice printed in the header of every page (e.g. that the sheet was signed with the
   * self-signed demo certificate and is not for regulatory use).
   */
  readonly notice?: string;
}

export type SheetDraft = Omit<SheetDocument, 'contentSha256' | 'disclaimer' | 'pageSize'> & {
  readonly pageSize?: PageSize;
  readonly disclaimer?: string;
  /**
   * A content hash computed elsewhere (the archive's hash of the request and result the sheet
   * is made from): printed in the footer as given, and the document's own hash is not computed.
   */
  readonly contentSha256?: string;
};

export const DEFAULT_DISCLAIMER =
  'This sheet supports, and does not replace, the judgement of a licensed operator or engineer. ' +
  'Local regulations, permits and codes govern.';

export const SHEET_KIND_LABELS: Readonly<Record<SheetKind, string>> = {
  dose: 'Oxidant dosing sheet',
  'jar-test-plan': 'Jar test bench sheet',
  'jar-test-evaluation': 'Jar test evaluation',
};

/** Sheet ids: letters, digits, ".", "_" and "-", 1 to 64 characters, starting with a letter or digit. */
export const SHEET_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$/;

// ---------------------------------------------------------------------------
// Rich text helpers

/** A plain run. */
export const t = (text: string, style: RunStyle = 'regular'): TextRun => ({ text, style });
/** A formula or equation run. */
export const f = (text: string): TextRun => ({ text, formula: true });
/** A bold run. */
export const b = (text: string): TextRun => ({ text, style: 'bold' });

/** Runs from markup: `{MnO4-}` is a formula, `**text**` is bold; "\{" and "\*" escape. */
export function rich(markup: string): TextRun[] {
  const runs: TextRun[] = [];
  let buf = '';
  let bold = false;
  const flush = (): void => {
    if (buf.length > 0) runs.push(bold ? { text: buf, style: 'bold' } : { text: buf });
    buf = '';
  };
  for (let i = 0; i < markup.length; i++) {
    const ch = markup[i]!;
    if (ch === '\\' && i + 1 < markup.length) {
      buf += markup[++i];
    } else if (ch === '{') {
      const end = markup.indexOf('}', i + 1);
      if (end < 0) {
        buf += markup.slice(i);
        break;
      }
      flush();
      runs.push({ text: markup.slice(i + 1, end), formula: true, ...(bold ? { style: 'bold' as const } : {}) });
      i = end;
    } else if (ch === '*' && markup[i + 1] === '*') {
      flush();
      bold = !bold;
      i++;
    } else {
      buf += ch;
    }
  }
  flush();
  return runs;
}

// Chemical element symbols, only to tell a formula from an ordinary word in free text.
const ELEMENTS = new Set(
  ('H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe ' +
    'Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No Lr').split(' '),
);

const FORMULA_TOKEN = /^\d*(?:[A-Z][a-z]?\d{0,2}|\((?:[A-Z][a-z]?\d{0,2})+\)\d{0,2})+(?:\((?:s|l|g|aq)\))?(?:\^?\d?[+\-−])?$/;

/** Whether a word of free text is a chemical formula worth typesetting (H2O, Fe2+, MnO4-, 5e-). */
export function looksLikeFormula(word: string): boolean {
  if (/^\d*e[-−]$/.test(word)) return true;
  if (!FORMULA_TOKEN.test(word)) return false;
  const body = word.replace(/^\d+/, '').replace(/\((?:s|l|g|aq)\)$/, '');
  const symbols = body.match(/[A-Z][a-z]?/g) ?? [];
  if (symbols.length === 0 || !symbols.every((sym) => ELEMENTS.has(sym))) return false;
  // something to typeset: a count after a symbol or bracket, or a charge
  return /[A-Za-z)]\d/.test(body) || /[+\-−]$/.test(body);
}

/**
 * Runs from free text (flag messages, notes, table texts from the tables), with every
 * word that is a chemical formula marked as one: "2 % w/w as KMnO4" → "…as KMnO₄".
 * Surrounding brackets and punctuation stay plain; "m3" becomes "m³". Field paths of the API
 * ("give product.purity") are put in words first (`inWords`, wording.ts).
 */
export function autoRich(text: string, style?: RunStyle): TextRun[] {
  // the same notes, flags and table texts recur on every sheet: marked once per process
  const key = style === undefined ? text : `${text}\u0000${JSON.stringify(style)}`;
  let runs = autoRichCache.get(key);
  if (!runs) {
    runs = autoRichUncached(text, style);
    if (autoRichCache.size >= 10_000) autoRichCache.clear();
    autoRichCache.set(key, runs);
  }
  return [...runs];
}

const autoRichCache = new Map<string, readonly TextRun[]>();

function autoRichUncached(source: string, style?: RunStyle): TextRun[] {
  const text = inWords(source);
  const runs: TextRun[] = [];
  let plain = '';
  const base = (s: string): void => {
    plain += s;
  };
  const flush = (): void => {
    if (plain) runs.push(style ? { text: plain, style } : { text: plain });
    plain = '';
  };
  for (const part of text.split(/(\s+)/)) {
    if (part === '' || /^\s+$/.test(part)) {
      base(part);
      continue;
    }
    // an equation quoted in plain text (flag messages): its arrow typeset like the formulas around it
    if (part === '->' || part === '<=>') {
      base(part === '->' ? '→' : '⇌');
      continue;
    }
    // peel punctuation that is not part of the formula
    let lead = '';
    let core = part;
    let trail = '';
    while (core.length > 0 && /^[("'“‘\[]/.test(core) && !balanced(core)) {
      lead += core[0];
      core = core.slice(1);
    }
    while (core.length > 0 && /[)\]"'”’.,;:!?]$/.test(core) && (!balanced(core) || /[.,;:!?"'”’]$/.test(core))) {
      trail = core[core.length - 1] + trail;
      core = core.slice(0, -1);
    }
    if (core.length > 3 && core.startsWith('(') && core.endsWith(')') && looksLikeFormula(core.slice(1, -1))) {
      lead += '(';
      trail = ')' + trail;
      core = core.slice(1, -1);
    }
    if (core.length > 1 && looksLikeFormula(core)) {
      base(lead);
      flush();
      runs.push(style ? { text: core, formula: true, style } : { text: core, formula: true });
      base(trail);
    } else {
      base(part.replace(/\b(c?m)3\b/g, '$1³'));
    }
  }
  flush();
  return runs;
}

function balanced(s: string): boolean {
  let depth = 0;
  for (const ch of s) {
    if (ch === '(' || ch === '[') depth++;
    else if (ch === ')' || ch === ']') depth--;
    if (depth < 0) return false;
  }
  return depth === 0;
}

/** The runs of a Rich value. */
export function toRuns(text: Rich): readonly TextRun[] {
  return typeof text === 'string' ? [{ text }] : text;
}

/** Plain text of a Rich value (formulas as written). */
export function plainText(text: Rich): string {
  return toRuns(text).map((r) => r.text).join('');
}

/**
 * An ISO 8601 time as printed on the sheets, without converting its zone:
 * "2025-03-14T08:30:00+01:00" → "2025-03-14 08:30 (UTC+01:00)", "…Z" → "… UTC".
 * Text that is not ISO 8601 is returned unchanged.
 */
export function displayTime(iso: string): string {
  const m = /^(\d{4}-\d{2}-\d{2})(?:[T ](\d{2}:\d{2})(?::\d{2}(?:\.\d+)?)?)?\s*(Z|[+-]\d{2}:?\d{2})?$/.exec(iso.trim());
  if (!m) return iso;
  const [, date, time, zone] = m;
  if (!time) return date!;
  if (!zone) return `${date} ${time}`;
  if (zone === 'Z') return `${date} ${time} UTC`;
  const z = zone.includes(':') ? zone : `${zone.slice(0, 3)}:${zone.slice(3)}`;
  return `${date} ${time} (UTC${z})`;
}

// ---------------------------------------------------------------------------
// Canonical hashing

function canonical(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(canonical);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const key of Object.keys(value).sort()) {
      const v = (value as Record<string, unknown>)[key];
      if (v !== undefined) out[key] = canonical(v);
    }
    return out;
  }
  if (typeof value === 'number' && !Number.isFinite(value)) return String(value);
  return value;
}

/** JSON with sorted keys and no undefined members: the bytes the content hash covers. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(canonical(value));
}

/** SHA-256 (hex) of a document's canonical JSON, its own `contentSha256` left out. */
export function sheetContentSha256(doc: SheetDraft | SheetDocument): string {
  const { contentSha256: _omit, ...rest } = doc as SheetDocument;
  void _omit;
  return createHash('sha256').update(canonicalJson(rest), 'utf8').digest('hex');
}

function assertIso(value: string, pointer: string): void {
  if (!/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/.test(value) || Number.isNaN(Date.parse(value))) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `${pointer.slice(1)} must be an ISO 8601 date-time with a zone, e.g. 2025-03-14T08:30:00Z; got "${value}".`,
      fields: [{ pointer, message: 'expected an ISO 8601 date-time with Z or an offset' }],
    });
  }
}

/**
 * A complete sheet document from a draft: checks the id and times, fills the page size
 * (A4) and the disclaimer, and computes the content hash.
 */
export function buildSheetDocument(draft: SheetDraft): SheetDocument {
  if (!SHEET_ID_PATTERN.test(draft.id)) {
    throw new DomainError('ID_INVALID', {
      detail: `The sheet id "${draft.id}" is not valid: use 1 to 64 letters, digits, ".", "_" or "-", starting with a letter or digit.`,
      fields: [{ pointer: '/id', message: 'letters, digits, ".", "_" or "-" only, at most 64' }],
    });
  }
  assertIso(draft.issuedAt, '/issuedAt');
  assertIso(draft.signature.preparedAt, '/signature/preparedAt');
  if (draft.signature.signedAt !== undefined) assertIso(draft.signature.signedAt, '/signature/signedAt');
  const withDefaults: SheetDraft = {
    ...draft,
    pageSize: draft.pageSize ?? 'A4',
    disclaimer: draft.disclaimer ?? DEFAULT_DISCLAIMER,
  };
  if (draft.contentSha256 !== undefined && !/^[0-9a-f]{64}$/.test(draft.contentSha256)) {
    throw new DomainError('VALIDATION_FAILED', { detail: 'contentSha256 must be 64 lowercase hex digits.', fields: [{ pointer: '/contentSha256', message: 'not a SHA-256 hex digest' }] });
  }
  const contentSha256 = draft.contentSha256 ?? sheetContentSha256(withDefaults);
  return { ...(withDefaults as SheetDocument), contentSha256 };
}

/** The same document with the signer's identity in its signature block (and a new content hash). */
export function withSignedBy(
  doc: SheetDocument,
  signedBy: NonNullable<SignatureBlock['signedBy']>,
  signedAt: string,
  options: { readonly contentSha256?: string; readonly notice?: string } = {},
): SheetDocument {
  const { contentSha256: _omit, ...draft } = doc;
  void _omit;
  return buildSheetDocument({
    ...draft,
    ...(options.notice !== undefined ? { notice: options.notice } : {}),
    signature: { ...doc.signature, signedBy, signedAt },
    ...(options.contentSha256 !== undefined ? { contentSha256: options.contentSha256 } : {}),
  });
}
