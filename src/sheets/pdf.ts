/**
 * SheetDocument → PDF (pdfkit 0.20, embedded DejaVu fonts parsed once per process).
 *
 * Layout is done here rather than by pdfkit's text flow, so that formulas get real
 * subscripts and superscripts (smaller text moved off the baseline), tables keep their
 * columns across pages and the output is the same bytes for the same document:
 * CreationDate, ModDate and the file ID come from the document, never from the clock.
 *
 * Every page carries: a header (a coloured band with title and meta on page 1, a slim
 * running head after), the disclaimer, and a footer with the sheet id, the content
 * SHA-256 and "Page n of N".
 */
import { deflateSync } from 'node:zlib';
import PDFDocument from 'pdfkit';
import { pdfkitAddPlaceholder } from '@signpdf/placeholder-pdfkit';
import { equationRuns, type Script } from './formula-runs.js';
import { FONT_NAMES, LIGATURE_SEED, loadFont, registerSheetFonts, type FontKey } from './fonts.js';
import {
  SHEET_KIND_LABELS,
  displayTime,
  toRuns,
  type Block,
  type ChartBlock,
  type EquationBlock,
  type FlagListBlock,
  type KeyValueBlock,
  type NoteBlock,
  type Rich,
  type SafetyBox,
  type SheetDocument,
  type SignatureBlock,
  type TableBlock,
  type TableCell,
} from './model.js';

// ---------------------------------------------------------------------------
// Theme

const INK = '#1b1f24';
const MUTED = '#5b6470';
const RULE = '#d3d8de';
const RULE_STRONG = '#8a939e';
const ACCENT = '#1d4f73';
/** The header notice (demo signer): dark text on amber in the band, amber text in running heads. */
const NOTICE_FILL = '#f6c343';
const NOTICE_INK = '#3b2a00';
const NOTICE_TEXT = '#9a5b00';
const ACCENT_TINT = '#e9f0f6';
const HEADER_FILL = '#eef2f6';
const SAFETY = '#c2410c';
const SAFETY_TINT = '#fff3eb';
const WHITE = '#ffffff';

const SEVERITY = {
  info: { label: 'INFO', fg: '#1f5fa8', tint: '#edf4fc' },
  warning: { label: 'WARNING', fg: '#9a5b00', tint: '#fdf4e3' },
  danger: { label: 'DANGER', fg: '#b42318', tint: '#fdeeec' },
} as const;

const SERIES_COLOURS = ['#1d4f73', '#c2410c', '#2e7d32', '#6a1b9a', '#8d6e00', '#00838f'];

const BODY = 9;
const TABLE = 8.3;
const SMALL = 7.2;
const LEADING = 1.32;
const SCRIPT_SCALE = 0.7;
const SUB_SHIFT = 0.2;
const SUP_SHIFT = 0.38;
const MARGIN_X = 50;
const BLOCK_GAP = 9;
/** Space under a section heading (its rule and the gap below it). */
const HEADING_GAP = 9;
/** Rows, lines or items of the last block kept on the page of the signature block. */
const KEEP_WITH_SIGNATURE = 2;
/** A paragraph up to this share of the page's text height is kept on one page. */
const KEEP_PARAGRAPH_SHARE = 0.4;

const PAGE_SIZES = { A4: [595.28, 841.89], LETTER: [612, 792] } as const;

// ---------------------------------------------------------------------------
// Measuring (widths cached for the process: the fonts never change)

const widthCache = new Map<string, number>();

function widthAt1000(font: FontKey, text: string): number {
  const key = font + '\u0000' + text;
  const hit = widthCache.get(key);
  if (hit !== undefined) return hit;
  const run = loadFont(font).font.layout(text) as { advanceWidth: number };
  const w = (run.advanceWidth * 1000) / loadFont(font).font.unitsPerEm;
  if (widthCache.size > 50_000) widthCache.clear();
  widthCache.set(key, w);
  return w;
}

function widthOf(font: FontKey, size: number, text: string): number {
  return (widthAt1000(font, text) * size) / 1000;
}

/**
 * pdfkit keeps a cache of laid-out words per embedded font, that is per document.
 * The runs depend only on the font (fontkit glyphs and positions scaled to 1000 units)
 * and pdfkit does not change them after laying them out, so one cache per font serves
 * every document of the process; this saves the OpenType layout of every word of every
 * sheet (about a third of the rendering time). Relies on pdfkit 0.20's EmbeddedFont
 * `layoutCache` field; without it nothing changes but the speed.
 */
const sharedLayoutCaches = new Map<FontKey, Record<string, unknown>>();

/** The part of pdfkit 0.20's EmbeddedFont used here. */
interface EmbeddedFontLike {
  readonly id: string;
  layoutCache?: Record<string, unknown>;
  subset?: { glyphs: number[]; encode(): Uint8Array };
  encode(text: string): [string[], { xAdvance: number; advanceWidth: number; xOffset: number; yOffset: number }[]];
  ref(): unknown;
}

/** Fonts opened per face since the shared cache was last measured (counting its keys is O(n)). */
const opensSinceCheck = new Map<FontKey, number>();

function shareLayoutCache(font: EmbeddedFontLike, key: FontKey): void {
  if (typeof font.layoutCache !== 'object' || font.layoutCache === null) return;
  let shared = sharedLayoutCaches.get(key);
  const opens = (opensSinceCheck.get(key) ?? 0) + 1;
  opensSinceCheck.set(key, opens % 64);
  if (!shared || (opens % 64 === 0 && Object.keys(shared).length > 20_000)) {
    shared = Object.create(null) as Record<string, unknown>;
    sharedLayoutCaches.set(key, shared);
  }
  font.layoutCache = shared;
}

/**
 * The characters every sheet font subset starts with, in this order. With the same
 * first glyphs in every document the subset is usually the same glyph list, so its
 * TrueType encoding (about 0.7 ms per face) is computed once per process and reused;
 * a document that needs further glyphs gets them appended and encoded afresh.
 */
const SEED_TEXT =
  Array.from({ length: 0x7f - 0x20 }, (_, i) => String.fromCharCode(0x20 + i)).join('') + '°±×–—’“”•…−→⇌≤≥≈µ²³· ' + LIGATURE_SEED;

const subsetCaches = new Map<FontKey, Map<string, Uint8Array>>();

function seedSubset(font: EmbeddedFontLike, key: FontKey): void {
  const subset = font.subset;
  if (!subset || !Array.isArray(subset.glyphs) || typeof subset.encode !== 'function') return;
  // encode() includes the glyphs and records their widths and code points, as for text
  font.encode(SEED_TEXT);
  if (!seededGlyphCount.has(key)) seededGlyphCount.set(key, subset.glyphs.length);
  let cache = subsetCaches.get(key);
  if (!cache) {
    cache = new Map();
    subsetCaches.set(key, cache);
  }
  const store = cache;
  const encode = subset.encode.bind(subset);
  reuseCompressedFontFile(font);
  reuseToUnicodeCmap(font);
  subset.encode = (): Uint8Array => {
    const id = subset.glyphs.join(',');
    let bytes = store.get(id);
    if (!bytes) {
      bytes = encode();
      if (store.size >= 32) store.clear();
      store.set(id, bytes);
    }
    return bytes;
  };
}

const compressedFontFiles = new WeakMap<Uint8Array, Buffer>();

/**
 * pdfkit compresses the font file of every document again (about 0.5 ms per face);
 * with the subset bytes reused (seedSubset), their compressed form is the same too.
 * pdfkit 0.20's EmbeddedFont.embed() makes the font file as its first `document.ref()`
 * and ends it with the subset bytes: for that one reference the stream is marked
 * FlateDecode and given the compressed bytes, made once per subset with the same
 * zlib call pdfkit uses (so the output is the bytes pdfkit would write).
 */
function reuseCompressedFontFile(font: EmbeddedFontLike): void {
  type Ref = { data: Record<string, unknown>; compress: boolean; end(chunk?: Uint8Array): void };
  type Doc = { ref(data?: Record<string, unknown>): Ref };
  const f = font as unknown as { document?: Doc; embed?: () => unknown };
  if (!f.document || typeof f.embed !== 'function' || typeof f.document.ref !== 'function') return;
  const embed = f.embed.bind(font);
  const document = f.document;
  f.embed = () => {
    const ref = document.ref;
    let first = true;
    document.ref = function (this: Doc, data?: Record<string, unknown>): Ref {
      const r = ref.call(this, data);
      if (first && data === undefined && r.compress) {
        first = false;
        const end = r.end.bind(r);
        r.end = (chunk?: Uint8Array) => {
          if (!chunk) return end(chunk);
          let packed = compressedFontFiles.get(chunk);
          if (!packed) {
            packed = deflateSync(chunk);
            compressedFontFiles.set(chunk, packed);
          }
          r.compress = false;
          r.data.Length = 0; // pdfkit's key order: /Length, then /Filter
          r.data.Filter = 'FlateDecode';
          return end(packed);
        };
      }
      first = false;
      return r;
    };
    try {
      return embed();
    } finally {
      document.ref = ref;
    }
  };
}

/** Subset glyph count right after seeding, per face: the same in every document. */
const seededGlyphCount = new Map<FontKey, number>();

/**
 * TJ operands of text already written, per face, for every document of the process.
 * Only text whose glyphs all come from the seed is kept: those glyphs have the same
 * subset codes in every document (seedSubset includes them first, in a fixed order, and
 * records their widths and code points), so the operand written for one document is the
 * one pdfkit's encoding would give in the next. Text with other glyphs is encoded afresh
 * each time (its subset codes depend on the document), and so is text that needs doc.text().
 */
const runCaches = new Map<FontKey, Map<string, string>>();

function rememberRun(font: FontKey, text: string, encoded: readonly string[], tj: string): void {
  const seeded = seededGlyphCount.get(font);
  if (seeded === undefined) return;
  for (const hex of encoded) if (Number.parseInt(hex, 16) >= seeded) return;
  let cache = runCaches.get(font);
  if (!cache || cache.size >= 20_000) {
    cache = new Map();
    runCaches.set(font, cache);
  }
  cache.set(text, tj);
}

/** The operand of TJ: 2-byte glyph codes as literal strings, with the font's kerning as adjustments. */
function tjOperand(encoded: readonly string[], positions: readonly { xAdvance: number; advanceWidth: number }[]): string {
  const parts: string[] = [];
  let run = '';
  for (let i = 0; i < encoded.length; i++) {
    run += literalCode(encoded[i]!);
    const adjust = positions[i]!.xAdvance - positions[i]!.advanceWidth;
    if (adjust !== 0 && i < encoded.length - 1) {
      parts.push(`(${run})`, num(-adjust));
      run = '';
    }
  }
  if (run) parts.push(`(${run})`);
  return parts.join(' ');
}

const toUnicodeStreams = new Map<string, Buffer>();

/**
 * The ToUnicode CMap of a face depends only on the code points recorded per subset glyph;
 * with the seeded subsets most documents record the same ones. pdfkit 0.20's
 * EmbeddedFont.toUnicodeCmap() writes the CMap into a new reference and compresses it; here
 * the CMap is written by pdfkit once per distinct mapping, into a scratch reference that
 * keeps its bytes, and each document gets those bytes compressed once with pdfkit's zlib call.
 */
function reuseToUnicodeCmap(font: EmbeddedFontLike): void {
  type Ref = { data: Record<string, unknown>; compress: boolean; end(chunk?: string | Uint8Array): void };
  type Doc = { ref(data?: Record<string, unknown>): Ref };
  const f = font as unknown as { document?: Doc; unicode?: unknown[]; toUnicodeCmap?: () => Ref };
  if (!f.document || !Array.isArray(f.unicode) || typeof f.toUnicodeCmap !== 'function') return;
  const original = f.toUnicodeCmap.bind(font);
  const document = f.document;
  f.toUnicodeCmap = (): Ref => {
    const key = JSON.stringify(f.unicode);
    let packed = toUnicodeStreams.get(key);
    if (!packed) {
      // let pdfkit write the CMap, capturing its text instead of a stream of this document
      let text: string | Uint8Array | undefined;
      const ref = document.ref;
      document.ref = function (this: Doc, data?: Record<string, unknown>): Ref {
        document.ref = ref;
        return { data: data ?? {}, compress: false, end: (chunk?: string | Uint8Array) => void (text = chunk) } as Ref;
      };
      try {
        original();
      } finally {
        document.ref = ref;
      }
      if (text === undefined) return original();
      packed = deflateSync(typeof text === 'string' ? Buffer.from(text + '\n', 'binary') : text); // as pdfkit's PDFReference.write
      if (toUnicodeStreams.size >= 32) toUnicodeStreams.clear();
      toUnicodeStreams.set(key, packed);
    }
    const cmap = document.ref();
    cmap.compress = false;
    cmap.data.Length = 0; // pdfkit's key order: /Length, then /Filter
    cmap.data.Filter = 'FlateDecode';
    cmap.end(packed);
    return cmap;
  };
}

/** A PDF number: at most 3 decimals, no trailing zeros (deterministic). */
function num(n: number): string {
  const r = Math.round(n * 1000) / 1000;
  return Object.is(r, -0) ? '0' : String(r);
}

const literalCache = new Map<string, string>();

// ISO 32000-1 §7.3.4.2: a bare end-of-line inside a literal string reads as LF, so CR and LF
// (and the other escapable bytes) are written as escapes; brackets and backslash must be.
const LITERAL_ESCAPES: Readonly<Record<number, string>> = {
  0x08: '\\b',
  0x09: '\\t',
  0x0a: '\\n',
  0x0c: '\\f',
  0x0d: '\\r',
  0x28: '\\(',
  0x29: '\\)',
  0x5c: '\\\\',
};

/**
 * A 2-byte glyph code (pdfkit gives "002f") as the two bytes of a PDF literal string,
 * escaped where needed (LITERAL_ESCAPES): half the bytes of hex in the content stream,
 * so less to compress (the content is written as a binary string).
 */
function literalCode(hex: string): string {
  let lit = literalCache.get(hex);
  if (lit === undefined) {
    const esc = (c: number): string => LITERAL_ESCAPES[c] ?? String.fromCharCode(c);
    lit = esc(Number.parseInt(hex.slice(0, 2), 16)) + esc(Number.parseInt(hex.slice(2, 4), 16));
    literalCache.set(hex, lit);
  }
  return lit;
}

const rgCache = new Map<string, string>();

/** The fill-colour operator for "#rrggbb". */
function rgOp(hex: string): string {
  let op = rgCache.get(hex);
  if (!op) {
    const v = Number.parseInt(hex.slice(1), 16);
    op = `${num(((v >> 16) & 255) / 255)} ${num(((v >> 8) & 255) / 255)} ${num((v & 255) / 255)} rg`;
    rgCache.set(hex, op);
  }
  return op;
}

// ---------------------------------------------------------------------------
// Rich text layout

interface IRun {
  readonly text: string;
  readonly font: FontKey;
  readonly colour: string;
  readonly script: Script;
}

interface Frag {
  readonly text: string;
  readonly font: FontKey;
  readonly size: number;
  /** Upwards shift of the baseline, points. */
  readonly rise: number;
  readonly colour: string;
  readonly width: number;
}

interface PlacedFrag extends Frag {
  readonly x: number;
}

interface Line {
  readonly frags: PlacedFrag[];
  width: number;
}

interface Laid {
  readonly lines: Line[];
  readonly size: number;
  readonly lineHeight: number;
  readonly height: number;
  readonly width: number;
}

interface TextStyle {
  readonly size: number;
  readonly font?: FontKey;
  readonly colour?: string;
  readonly leading?: number;
}

const STYLE_FONT: Readonly<Record<string, FontKey>> = { regular: 'regular', bold: 'bold' };

function internalRuns(text: Rich, base: FontKey, colour: string): IRun[] {
  const out: IRun[] = [];
  for (const run of toRuns(text)) {
    const font = run.style ? STYLE_FONT[run.style] ?? base : base;
    if (run.formula) {
      for (const r of equationRuns(run.text)) out.push({ text: r.text, font, colour, script: r.script });
    } else {
      out.push({ text: run.text, font, colour, script: 'base' });
    }
  }
  return out;
}

function fragOf(run: IRun, text: string, size: number): Frag {
  const scripted = run.script !== 'base';
  const fsize = scripted ? size * SCRIPT_SCALE : size;
  const rise = run.script === 'sub' ? -SUB_SHIFT * size : run.script === 'sup' ? SUP_SHIFT * size : 0;
  return { text, font: run.font, size: fsize, rise, colour: run.colour, width: widthOf(run.font, fsize, text) };
}

type Token =
  | { kind: 'word'; frags: Frag[]; width: number }
  | { kind: 'space'; width: number; font: FontKey }
  | { kind: 'break' };

const NBSP = '\u00a0';

/**
 * A date-time as the sheets print it (displayTime: "2026-12-01 23:30 UTC",
 * "2025-03-14 08:30 (UTC+01:00)") is one word for line breaking: its spaces are no-break
 * spaces, drawn as ordinary spaces.
 */
const DATE_TIME = /(?:\b(sampled|issued|signed|prepared|at|on|since|until) )?\b(\d{4}-\d{2}-\d{2}) (\d{2}:\d{2})(?: (UTC\b|\(UTC[+\-−]\d{2}:\d{2}\)))?/g;

/** The spaces of a date-time, and the one after the word that introduces it ("sampled …"), made no-break. */
function keepDateTimes(text: string): string {
  if (!/\d{4}-\d{2}-\d{2} \d{2}:\d{2}/.test(text)) return text;
  return text.replace(DATE_TIME, (_m, word: string | undefined, date: string, time: string, zone: string | undefined) => [word, date, time, zone].filter(Boolean).join(NBSP));
}

function tokenise(runs: readonly IRun[], size: number): Token[] {
  const tokens: Token[] = [];
  let word: Frag[] = [];
  const endWord = (): void => {
    if (word.length > 0) tokens.push({ kind: 'word', frags: word, width: word.reduce((s, fr) => s + fr.width, 0) });
    word = [];
  };
  for (const run of runs) {
    const parts = (run.script === 'base' ? keepDateTimes(run.text) : run.text).split(/( |\n)/);
    for (const part of parts) {
      if (part === '') continue;
      if (part === ' ') {
        endWord();
        tokens.push({ kind: 'space', width: widthOf(run.font, size, ' '), font: run.font });
      } else if (part === '\n') {
        endWord();
        tokens.push({ kind: 'break' });
      } else {
        // a no-break space joins the parts of a word and is drawn (and extracted) as a space
        word.push(fragOf(run, part.includes(NBSP) ? part.replace(/\u00a0/g, ' ') : part, size));
      }
    }
  }
  endWord();
  return tokens;
}

function sameStyle(a: Frag, b: Frag): boolean {
  return a.font === b.font && a.size === b.size && a.rise === b.rise && a.colour === b.colour;
}

/** Split a word wider than the line into pieces that fit (hashes, long ids). */
function splitWord(frags: readonly Frag[], width: number): Frag[][] {
  const pieces: Frag[][] = [];
  let cur: Frag[] = [];
  let curW = 0;
  for (const fr of frags) {
    let text = '';
    for (const ch of fr.text) {
      const w = widthOf(fr.font, fr.size, text + ch);
      if (curW + w > width && (text.length > 0 || cur.length > 0)) {
        if (text.length > 0) cur.push({ ...fr, text, width: widthOf(fr.font, fr.size, text) });
        pieces.push(cur);
        cur = [];
        curW = 0;
        text = ch;
      } else {
        text += ch;
      }
    }
    if (text.length > 0) {
      const piece = { ...fr, text, width: widthOf(fr.font, fr.size, text) };
      cur.push(piece);
      curW += piece.width;
    }
  }
  if (cur.length > 0) pieces.push(cur);
  return pieces;
}

/** Text split into words and spaces once, to be measured and laid out at several widths. */
interface Prepared {
  readonly tokens: readonly Token[];
  readonly style: TextStyle;
  /** Width on one line (the widest line where the text has line breaks). */
  readonly natural: number;
  /** Widest word. */
  readonly minWord: number;
}

/**
 * Prepared texts kept for the process: sheets repeat most of their words (labels,
 * headers, units, cautions, citations) from one document to the next. Keyed by the
 * style and the runs; bounded.
 */
const preparedCache = new Map<string, Prepared>();

function prepare(text: Rich, style: TextStyle): Prepared {
  const key = `${style.size}|${style.font ?? ''}|${style.colour ?? ''}|${style.leading ?? ''}|${typeof text === 'string' ? text : JSON.stringify(text)}`;
  const hit = preparedCache.get(key);
  if (hit) return hit;
  const prepared = prepareUncached(text, style);
  if (preparedCache.size >= 20_000) preparedCache.clear();
  preparedCache.set(key, prepared);
  return prepared;
}

function prepareUncached(text: Rich, style: TextStyle): Prepared {
  const tokens = tokenise(internalRuns(text, style.font ?? 'regular', style.colour ?? INK), style.size);
  let natural = 0;
  let line = 0;
  let minWord = 0;
  for (const tk of tokens) {
    if (tk.kind === 'break') {
      natural = Math.max(natural, line);
      line = 0;
    } else {
      line += tk.width;
      if (tk.kind === 'word') minWord = Math.max(minWord, tk.width);
    }
  }
  return { tokens, style, natural: Math.max(natural, line), minWord };
}

function layout(text: Rich, width: number, style: TextStyle): Laid {
  return layoutPrepared(prepare(text, style), width);
}

/**
 * Laid-out text per prepared text and width, for every document of the process (prepared
 * texts are cached by content, and a layout depends only on the tokens and the width).
 * Layouts are read, never changed, by the drawing code.
 */
const laidCache = new WeakMap<Prepared, Map<number, Laid>>();

function layoutPrepared(prepared: Prepared, width: number): Laid {
  let byWidth = laidCache.get(prepared);
  if (!byWidth) {
    byWidth = new Map();
    laidCache.set(prepared, byWidth);
  }
  let laid = byWidth.get(width);
  if (!laid) {
    laid = layoutUncached(prepared, width);
    if (byWidth.size >= 16) byWidth.clear();
    byWidth.set(width, laid);
  }
  return laid;
}

function layoutUncached(prepared: Prepared, width: number): Laid {
  const style = prepared.style;
  const size = style.size;
  const lineHeight = size * (style.leading ?? LEADING);
  const tokens = prepared.tokens;
  const lines: Line[] = [];
  let cur: Line = { frags: [], width: 0 };
  let pendingSpace = 0;
  let pendingSpaces = '';
  let spaceFont: FontKey | null = null;
  const place = (frags: readonly Frag[]): void => {
    let x = cur.width + (cur.frags.length > 0 ? pendingSpace : 0);
    frags.forEach((fr, i) => {
      const prev = cur.frags[cur.frags.length - 1];
      // words of one style on a line become one fragment (one text operator, not one per word)
      if (i === 0 && prev && pendingSpaces.length > 0 && spaceFont === fr.font && sameStyle(prev, fr) && fr.rise === 0 && fr.size === size) {
        cur.frags[cur.frags.length - 1] = { ...prev, text: prev.text + pendingSpaces + fr.text, width: x + fr.width - prev.x };
      } else {
        cur.frags.push({ ...fr, x });
      }
      x += fr.width;
    });
    cur.width = x;
    pendingSpace = 0;
    pendingSpaces = '';
    spaceFont = null;
  };
  for (const tok of tokens) {
    if (tok.kind === 'break') {
      lines.push(cur);
      cur = { frags: [], width: 0 };
      pendingSpace = 0;
      pendingSpaces = '';
      spaceFont = null;
    } else if (tok.kind === 'space') {
      if (cur.frags.length > 0) {
        pendingSpace += tok.width;
        pendingSpaces += ' ';
        spaceFont = spaceFont === null || spaceFont === tok.font ? tok.font : ('mixed' as FontKey);
      }
    } else if (cur.frags.length === 0 || cur.width + pendingSpace + tok.width <= width + 0.01) {
      if (tok.width > width + 0.01) {
        const pieces = splitWord(tok.frags, width);
        pieces.forEach((p, i) => {
          if (i > 0) {
            lines.push(cur);
            cur = { frags: [], width: 0 };
          }
          place(p);
        });
      } else {
        place(tok.frags);
      }
    } else {
      lines.push(cur);
      cur = { frags: [], width: 0 };
      pendingSpace = 0;
      pendingSpaces = '';
      spaceFont = null;
      if (tok.width > width + 0.01) {
        const pieces = splitWord(tok.frags, width);
        pieces.forEach((p, i) => {
          if (i > 0) {
            lines.push(cur);
            cur = { frags: [], width: 0 };
          }
          place(p);
        });
      } else {
        place(tok.frags);
      }
    }
  }
  if (cur.frags.length > 0 || lines.length === 0) lines.push(cur);
  const maxW = lines.reduce((m, l) => Math.max(m, l.width), 0);
  return { lines, size, lineHeight, height: lines.length * lineHeight, width: maxW };
}

// ---------------------------------------------------------------------------
// The renderer

export interface PlaceholderOptions {
  readonly reason: string;
  readonly name: string;
  readonly location: string;
  readonly contactInfo: string;
  readonly signingTime: Date;
  /** Bytes reserved for the CMS signature (default 8192). */
  readonly signatureLength?: number;
}

export interface RenderOptions {
  /** Add a signature placeholder (for signPdf). */
  readonly placeholder?: PlaceholderOptions;
}

type Doc = InstanceType<typeof PDFDocument>;

class SheetRenderer {
  readonly doc: Doc;
  readonly pageW: number;
  readonly pageH: number;
  readonly left = MARGIN_X;
  readonly right: number;
  readonly contentW: number;
  readonly contTop = 50;
  bottom = 0;
  y = 0;
  private font: FontKey | null = null;
  private size = 0;
  private fill = '';
  private signaturePage = 0;

  constructor(readonly sheet: SheetDocument) {
    const [w, h] = PAGE_SIZES[sheet.pageSize];
    this.pageW = w;
    this.pageH = h;
    this.right = w - MARGIN_X;
    this.contentW = this.right - this.left;
    const issued = new Date(sheet.issuedAt);
    this.doc = new PDFDocument({
      autoFirstPage: false,
      bufferPages: true,
      size: sheet.pageSize,
      margin: 0,
      // no default font: pdfkit would load Helvetica; the sheet fonts are registered below
      font: null as unknown as string,
      lang: 'en',
      displayTitle: true,
      info: {
        Title: sheet.title,
        Subject: sheet.subtitle,
        Author: sheet.signature.preparedBy.name,
        Keywords: `${SHEET_KIND_LABELS[sheet.kind]}; sheet ${sheet.id}; content SHA-256 ${sheet.contentSha256}`,
        Creator: 'oxidant-dosing',
        Producer: 'oxidant-dosing (pdfkit 0.20)',
        CreationDate: issued,
        ModDate: issued,
      },
    });
    registerSheetFonts(this.doc);
  }

  // -- low-level drawing ----------------------------------------------------

  /** The pdfkit EmbeddedFont per sheet font, opened on first use. */
  private readonly embedded = new Map<FontKey, EmbeddedFontLike>();

  private embeddedFont(font: FontKey): EmbeddedFontLike {
    let f = this.embedded.get(font);
    if (!f) {
      this.doc.font(FONT_NAMES[font]);
      this.font = font;
      f = (this.doc as unknown as { _font: EmbeddedFontLike })._font;
      shareLayoutCache(f, font);
      seedSubset(f, font);
      this.embedded.set(font, f);
    }
    return f;
  }

  private setFont(font: FontKey, size: number): void {
    if (this.font !== font) {
      this.embeddedFont(font);
      this.doc.font(FONT_NAMES[font]);
      this.font = font;
    }
    if (this.size !== size) {
      this.doc.fontSize(size);
      this.size = size;
    }
  }

  private setFill(colour: string): void {
    if (this.fill !== colour) {
      this.doc.fillColor(colour);
      this.fill = colour;
    }
  }

  /** Draw text with its baseline at `baseline`. */
  private textAt(text: string, x: number, baseline: number, font: FontKey, size: number, colour: string, immediate = false): void {
    this.emitFragments([{ text, x, baseline, font, size, colour }], immediate);
  }

  /** Text operators per page, written as one text object per page when the document ends. */
  private readonly pageText = new Map<number, { ops: string[]; font: string; colour: string }>();
  private pageIndex = 0;

  /**
   * Write text fragments: the glyphs are encoded by pdfkit's embedded font (which
   * subsets the font and records widths and ToUnicode), and the operators are collected
   * per page and written as one text object on top of the page's graphics, which costs
   * a fraction of a `doc.text()` call per fragment. Kerning from the font's layout is
   * kept as TJ adjustments. `immediate` writes at once under the current transformation
   * (rotated axis labels). A fragment that needs glyph offsets (combining marks) goes
   * through `doc.text()`.
   */
  private emitFragments(
    frags: readonly { text: string; x: number; baseline: number; font: FontKey; size: number; colour: string }[],
    immediate = false,
  ): void {
    const doc = this.doc as unknown as { page: { fonts: Record<string, unknown> }; addContent(s: string): unknown };
    let state = immediate ? { ops: [] as string[], font: '', colour: '' } : this.pageText.get(this.pageIndex);
    if (!state) {
      state = { ops: [], font: '', colour: '' };
      this.pageText.set(this.pageIndex, state);
    }
    const fallbacks: typeof frags[number][] = [];
    for (const fr of frags) {
      if (fr.text.length === 0) continue;
      const ef = this.embeddedFont(fr.font);
      let tj = runCaches.get(fr.font)?.get(fr.text);
      if (tj === undefined) {
        const [encoded, positions] = ef.encode(fr.text);
        if (positions.some((p) => p.xOffset !== 0 || p.yOffset !== 0)) {
          fallbacks.push(fr);
          continue;
        }
        tj = tjOperand(encoded, positions);
        rememberRun(fr.font, fr.text, encoded, tj);
      }
      if (doc.page.fonts[ef.id] == null) doc.page.fonts[ef.id] = ef.ref();
      const fontOp = `/${ef.id} ${num(fr.size)} Tf`;
      if (fontOp !== state.font) {
        state.ops.push(fontOp);
        state.font = fontOp;
      }
      if (fr.colour !== state.colour) {
        state.ops.push(rgOp(fr.colour));
        state.colour = fr.colour;
      }
      state.ops.push(`1 0 0 1 ${num(fr.x)} ${num(this.pageH - fr.baseline)} Tm [${tj}] TJ`);
    }
    if (immediate && state.ops.length > 0) doc.addContent(`q 1 0 0 -1 0 ${num(this.pageH)} cm BT\n${state.ops.join('\n')}\nET Q`);
    for (const fr of fallbacks) {
      this.setFont(fr.font, fr.size);
      this.setFill(fr.colour);
      this.doc.text(fr.text, fr.x, fr.baseline, { lineBreak: false, baseline: 'alphabetic' });
    }
  }

  /** Write each page's collected text (call once, after all drawing). */
  private flushPageText(): void {
    const range = this.doc.bufferedPageRange();
    const doc = this.doc as unknown as { addContent(s: string): unknown };
    for (const [index, state] of [...this.pageText.entries()].sort((a, b) => a[0] - b[0])) {
      if (state.ops.length === 0) continue;
      this.doc.switchToPage(range.start + index);
      doc.addContent(`q 1 0 0 -1 0 ${num(this.pageH)} cm BT\n${state.ops.join('\n')}\nET Q`);
    }
    this.pageText.clear();
  }

  private drawLine(line: Line, x: number, top: number, size: number): void {
    const baseline = top + size * 1.0;
    this.emitFragments(
      line.frags.map((fr) => ({ text: fr.text, x: x + fr.x, baseline: baseline - fr.rise, font: fr.font, size: fr.size, colour: fr.colour })),
    );
  }

  private drawLaid(laid: Laid, x: number, top: number, width = 0, align: 'left' | 'right' | 'center' = 'left'): void {
    laid.lines.forEach((line, i) => {
      const dx = align === 'right' ? width - line.width : align === 'center' ? (width - line.width) / 2 : 0;
      this.drawLine(line, x + dx, top + i * laid.lineHeight, laid.size);
    });
  }

  private rect(x: number, y: number, w: number, h: number, fill: string): void {
    this.doc.rect(x, y, w, h).fill(fill);
    this.fill = '';
  }

  private hline(x1: number, x2: number, y: number, colour: string, width = 0.5): void {
    this.doc.moveTo(x1, y).lineTo(x2, y).lineWidth(width).strokeColor(colour).stroke();
  }

  private vline(x: number, y1: number, y2: number, colour: string, width = 0.5): void {
    this.doc.moveTo(x, y1).lineTo(x, y2).lineWidth(width).strokeColor(colour).stroke();
  }

  private boxStroke(x: number, y: number, w: number, h: number, colour: string, width: number): void {
    this.doc.rect(x, y, w, h).lineWidth(width).strokeColor(colour).stroke();
  }

  // -- pages ------------------------------------------------------------------

  private footerReserve = 0;

  private addPage(): void {
    this.doc.addPage({ size: this.sheet.pageSize, margin: 0 });
    this.pageIndex = this.doc.bufferedPageRange().count - 1;
    this.font = null;
    this.size = 0;
    this.fill = '';
    this.bottom = this.pageH - this.footerReserve;
    this.y = this.contTop;
  }

  /**
   * Room for `height` below the current position, else a new page. A section heading not yet
   * drawn (drawSection) needs its room too and is drawn here, so it goes to the page of the
   * first part of its first block.
   */
  private ensure(height: number): void {
    const pending = this.pendingHeading ? this.pendingHeading.height + HEADING_GAP : 0;
    if (this.y + pending + height > this.bottom && this.y > this.contTop) this.addPage();
    this.flushHeading();
  }

  /** The heading of the section being started, drawn with the first part of its first block. */
  private pendingHeading: Laid | null = null;

  private flushHeading(): void {
    const head = this.pendingHeading;
    if (!head) return;
    this.pendingHeading = null;
    this.drawLaid(head, this.left, this.y);
    this.y += head.height + 2;
    this.hline(this.left, this.right, this.y, '#b7c9d8', 0.8);
    this.y += HEADING_GAP - 2;
  }

  /**
   * While the last block before the signature block is drawn: the height that follows it up to
   * the end of the signature block (the gaps and the block), else 0. The end of that block (its
   * last KEEP_WITH_SIGNATURE rows, lines or items) is kept on one page with the signature block,
   * so the signature block never stands alone on the last page.
   */
  private tail = 0;

  /**
   * Room for a part of a block that is drawn whole (`height`); when the tail is kept and this
   * part starts the end of the last block, room for it, the rest of the block (`after`) and
   * the tail, provided all of that fits on one page.
   */
  private ensureKeep(height: number, after = 0, startsEnd = true): void {
    const need = height + after + this.tail;
    if (this.tail > 0 && startsEnd && need <= this.bottom - this.contTop) this.ensure(need);
    else this.ensure(height);
  }

  /** Index of the first part of a block of `count` parts that is kept with the signature block. */
  private tailStart(count: number): number {
    return this.tail > 0 ? Math.max(0, count - KEEP_WITH_SIGNATURE) : Number.POSITIVE_INFINITY;
  }

  private get remaining(): number {
    return this.bottom - this.y;
  }

  // -- whole document -----------------------------------------------------------

  render(options: RenderOptions): Promise<Buffer> {
    const sheet = this.sheet;
    const disclaimer = layout(sheet.disclaimer, this.contentW, { size: 7, colour: MUTED, leading: 1.25 });
    this.footerReserve = 30 + disclaimer.height + 10;
    this.addPage();
    this.drawFirstHeader();

    const position = sheet.safetyPosition ?? 'after-first-section';
    // what is drawn last before the signature block keeps its end on the signature's page
    const signature = this.prepareSignature(sheet.signature);
    const n = sheet.sections.length;
    const safetyLast = position === 'end' || (position === 'after-first-section' && n <= 1) || n === 0;
    if (position === 'start') this.drawSafety(sheet.safety, n === 0 ? signature.h + 4 : 0);
    sheet.sections.forEach((section, i) => {
      this.drawSection(section.heading, i + 1, section.blocks, i === n - 1 && !safetyLast ? signature.h + 4 : 0);
      if (i === 0 && position === 'after-first-section') this.drawSafety(sheet.safety, safetyLast ? signature.h + 4 : 0);
    });
    if (n === 0 && position === 'after-first-section') this.drawSafety(sheet.safety, signature.h + 4);
    if (position === 'end') this.drawSafety(sheet.safety, signature.h + 4);
    this.drawSignature(signature);

    const range = this.doc.bufferedPageRange();
    for (let i = 0; i < range.count; i++) {
      this.doc.switchToPage(range.start + i);
      this.pageIndex = i;
      this.font = null;
      this.size = 0;
      this.fill = '';
      if (i > 0) this.drawRunningHead();
      this.drawFooter(i + 1, range.count, disclaimer);
    }

    this.flushPageText();

    const chunks: Buffer[] = [];
    const done = new Promise<Buffer>((resolve, reject) => {
      this.doc.on('data', (c: Buffer) => chunks.push(c));
      this.doc.on('end', () => resolve(Buffer.concat(chunks)));
      this.doc.on('error', reject);
    });
    if (options.placeholder) {
      const p = options.placeholder;
      this.doc.switchToPage(range.start + this.signaturePage);
      pdfkitAddPlaceholder({
        pdf: this.doc,
        pdfBuffer: Buffer.alloc(0),
        reason: p.reason,
        name: p.name,
        location: p.location,
        contactInfo: p.contactInfo,
        signingTime: p.signingTime,
        signatureLength: p.signatureLength ?? 8192,
        appName: 'oxidant-dosing',
      });
    }
    this.doc.end();
    return done;
  }

  private drawFirstHeader(): void {
    const sheet = this.sheet;
    const pad = 16;
    const rightW = 150;
    const titleW = this.contentW - rightW - 12;
    const title = layout(sheet.title, titleW, { size: 16, font: 'bold', colour: WHITE, leading: 1.2 });
    const subtitle = layout(sheet.subtitle, titleW, { size: 9, colour: '#d6e3ee', leading: 1.3 });
    const kind = SHEET_KIND_LABELS[sheet.kind].toUpperCase();
    const notice = sheet.notice ? layout(sheet.notice, titleW - 12, { size: 7.5, font: 'bold', colour: NOTICE_INK, leading: 1.25 }) : null;
    const noticeH = notice ? notice.height + 8 : 0;
    const bandH = pad + 11 + title.height + 3 + subtitle.height + (notice ? 6 + noticeH : 0) + pad - 4;
    this.rect(0, 0, this.pageW, bandH, ACCENT);
    let y = pad;
    this.textAt(kind, this.left, y + 7, 'bold', 7.2, '#b9d0e3');
    y += 11;
    this.drawLaid(title, this.left, y);
    y += title.height + 3;
    this.drawLaid(subtitle, this.left, y);
    if (notice) {
      y += subtitle.height + 6;
      this.doc.roundedRect(this.left, y, Math.min(titleW, notice.width + 12), noticeH, 2).fill(NOTICE_FILL);
      this.fill = '';
      this.drawLaid(notice, this.left + 6, y + 4);
    }

    // right column of the band: id and issue time
    const rx = this.right - rightW;
    const idLines: [string, string][] = [
      ['SHEET', sheet.id],
      ['ISSUED', displayTime(sheet.issuedAt)],
    ];
    let ry = pad;
    for (const [label, value] of idLines) {
      const lw = widthOf('bold', 6.5, label);
      this.textAt(label, this.right - lw, ry + 7, 'bold', 6.5, '#b9d0e3');
      const v = layout(value, rightW, { size: 8.5, colour: WHITE, leading: 1.25 });
      this.drawLaid(v, rx, ry + 9, rightW, 'right');
      ry += 9 + v.height + 5;
    }

    // meta grid
    this.y = bandH + 12;
    const cols = 4;
    const gap = 14;
    const colW = (this.contentW - gap * (cols - 1)) / cols;
    // an item whose longest word (a sheet id) is wider than a column spans the columns it needs,
    // so that an id is never broken inside; items wrap at their spaces
    const metaStyle = { size: 9, colour: INK, leading: 1.28 };
    const spanW = (span: number): number => span * colW + (span - 1) * gap;
    const placed = sheet.meta.map((m) => {
      const word = prepare(m.value, metaStyle).minWord;
      let span = 1;
      while (span < cols && spanW(span) + 0.01 < word) span++;
      return { m, span };
    });
    const rows: (typeof placed)[] = [];
    let used = cols;
    for (const item of placed) {
      if (used + item.span > cols) {
        rows.push([]);
        used = 0;
      }
      rows[rows.length - 1]!.push(item);
      used += item.span;
    }
    for (const row of rows) {
      const laid = row.map(({ m, span }) => layout(m.value, spanW(span), metaStyle));
      const h = 10 + Math.max(...laid.map((l) => l.height));
      let col = 0;
      row.forEach(({ m, span }, i) => {
        const x = this.left + col * (colW + gap);
        this.textAt(m.label.toUpperCase(), x, this.y + 6.5, 'bold', 6.4, MUTED);
        this.drawLaid(laid[i]!, x, this.y + 9);
        col += span;
      });
      this.y += h + 7;
    }
    this.hline(this.left, this.right, this.y, RULE_STRONG, 0.6);
    this.y += 14;
  }

  private drawRunningHead(): void {
    const y = 28;
    const idText = `Sheet ${this.sheet.id}`;
    const idW = widthOf('regular', 7.5, idText);
    const noticeText = this.sheet.notice ? clipText(this.sheet.notice.split(':')[0]!, 'bold', 7.5, (this.contentW - idW - 20) / 2) : '';
    const noticeW = noticeText ? widthOf('bold', 7.5, noticeText) + 12 : 0;
    const title = clipText(this.sheet.title, 'bold', 7.5, this.contentW - idW - 20 - noticeW);
    this.textAt(title, this.left, y, 'bold', 7.5, ACCENT);
    if (noticeText) this.textAt(noticeText, this.left + widthOf('bold', 7.5, title) + 12, y, 'bold', 7.5, NOTICE_TEXT);
    this.textAt(idText, this.right - idW, y, 'regular', 7.5, MUTED);
    this.hline(this.left, this.right, y + 6, RULE, 0.6);
  }

  private drawFooter(page: number, pages: number, disclaimer: Laid): void {
    const ruleY = this.pageH - this.footerReserve + 8;
    this.hline(this.left, this.right, ruleY, RULE, 0.6);
    this.drawLaid(disclaimer, this.left, ruleY + 4);
    const baseline = this.pageH - 20;
    const pageText = `Page ${page} of ${pages}`;
    const pw = widthOf('bold', 7.5, pageText);
    this.textAt(pageText, this.right - pw, baseline, 'bold', 7.5, INK);
    const idLabel = 'Sheet ';
    let x = this.left;
    this.textAt(idLabel, x, baseline, 'regular', 6.6, MUTED);
    x += widthOf('regular', 6.6, idLabel);
    this.textAt(this.sheet.id, x, baseline, 'regular', 6.6, INK);
    x += widthOf('regular', 6.6, this.sheet.id) + 10;
    this.textAt('Content SHA-256 ', x, baseline, 'regular', 6.6, MUTED);
    x += widthOf('regular', 6.6, 'Content SHA-256 ');
    this.textAt(this.sheet.contentSha256, x, baseline, 'regular', 6.6, INK);
  }

  // -- sections and blocks -------------------------------------------------------

  /** A section; `signatureH` (last section only): the signature block that follows it. */
  private drawSection(heading: string, number: number, blocks: readonly Block[], signatureH = 0): void {
    const head = layout(`${number}  ${heading}`, this.contentW, { size: 11, font: 'bold', colour: ACCENT, leading: 1.2 });
    // keep the heading with the start of its first block: room for a first part here, and the
    // heading is drawn by the block's first ensure(), on the page where that part goes
    const first = this.estimateFirstLine(blocks[0]);
    this.ensure(head.height + 8 + (first > this.bottom - this.contTop - 40 ? 64 : first));
    this.pendingHeading = head;
    blocks.forEach((block, i) => {
      this.tail = signatureH > 0 && i === blocks.length - 1 ? BLOCK_GAP + 4 + signatureH : 0;
      this.drawBlock(block);
      this.tail = 0;
      this.y += BLOCK_GAP;
    });
    this.flushHeading();
    this.y += 4;
  }

  /** Room the first part of a block needs, so that a heading is not left alone at a page foot. */
  private estimateFirstLine(block: Block | undefined): number {
    if (!block) return 0;
    switch (block.kind) {
      case 'chart':
        return (block.height ?? 200) + 60;
      case 'table':
      case 'keyValue':
      case 'flags':
        return 64;
      case 'equation':
        return 40;
      default:
        return 28;
    }
  }

  private drawBlock(block: Block): void {
    switch (block.kind) {
      case 'paragraph':
        this.drawParagraph(layout(block.text, this.contentW, { size: BODY }), this.left);
        return;
      case 'keyValue':
        this.drawKeyValue(block);
        return;
      case 'table':
        this.drawTable(block);
        return;
      case 'equation':
        this.drawEquation(block);
        return;
      case 'note':
        this.drawNote(block);
        return;
      case 'flags':
        this.drawFlags(block);
        return;
      case 'chart':
        this.drawChart(block);
        return;
    }
  }

  /**
   * A paragraph (a numbered instruction, a note under a table): on one page when it is short
   * enough, else flowing with at least two lines at the foot and at the head of a page.
   */
  private drawParagraph(laid: Laid, x: number, after = 0): void {
    const n = laid.lines.length;
    if (laid.height <= KEEP_PARAGRAPH_SHARE * (this.bottom - this.contTop)) {
      this.ensureKeep(laid.height, after, this.tail > 0);
      for (const line of laid.lines) {
        this.drawLine(line, x, this.y, laid.size);
        this.y += laid.lineHeight;
      }
      return;
    }
    const end = this.tailStart(n);
    laid.lines.forEach((line, i) => {
      // two lines at the start, the last two together (no orphan, no widow)
      const group = i === 0 ? Math.min(2, n) : i === n - 2 ? 2 : 1;
      this.ensureKeep(group * laid.lineHeight, (i === end ? (n - i - group) * laid.lineHeight : 0) + after, i === end);
      this.drawLine(line, x, this.y, laid.size);
      this.y += laid.lineHeight;
    });
  }

  /** Draw laid-out lines, continuing on a new page when the page is full. */
  private drawFlowing(laid: Laid, x: number): void {
    this.drawParagraph(laid, x);
  }

  private drawKeyValue(block: KeyValueBlock): void {
    const cols = block.columns ?? 1;
    const gap = 18;
    const pairW = (this.contentW - gap * (cols - 1)) / cols;
    const labelW = cols === 1 ? Math.min(190, pairW * 0.36) : pairW * 0.48;
    const valueW = pairW - labelW - 8;
    const lines: { row: readonly KeyValueBlock['rows'][number][]; cells: { label: Laid; value: Laid; source: Laid | null; h: number }[]; h: number }[] = [];
    for (let r = 0; r < block.rows.length; r += cols) {
      const row = block.rows.slice(r, r + cols);
      const cells = row.map((kv) => {
        const label = layout(kv.label, labelW, { size: 8.4, colour: MUTED });
        const value = layout(kv.value, valueW, { size: BODY });
        const source = kv.source ? layout([{ text: 'Source: ' }, ...toRuns(kv.source)], valueW, { size: 6.6, colour: MUTED, leading: 1.25 }) : null;
        const h = Math.max(label.height, value.height + (source ? source.height + 1 : 0));
        return { label, value, source, h };
      });
      lines.push({ row, cells, h: Math.max(...cells.map((c) => c.h)) + 6 });
    }
    const end = this.tailStart(lines.length);
    lines.forEach(({ row, cells, h }, li) => {
      this.ensureKeep(h, li === end ? lines.slice(li + 1).reduce((s, l) => s + l.h, 0) : 0, li === end);
      cells.forEach((c, i) => {
        const x = this.left + i * (pairW + gap);
        this.drawLaid(c.label, x, this.y + 3);
        this.drawLaid(c.value, x + labelW + 8, this.y + 3);
        if (c.source) this.drawLaid(c.source, x + labelW + 8, this.y + 3 + c.value.height + 1);
      });
      this.y += h;
      for (let i = 0; i < row.length; i++) {
        const x = this.left + i * (pairW + gap);
        this.hline(x, x + pairW, this.y, RULE, 0.4);
      }
    });
  }

  private drawTable(block: TableBlock): void {
    const pad = 4;
    const ncol = block.columns.length;
    const style = { size: TABLE };
    const headerStyle = { size: TABLE - 0.3, font: 'bold' as FontKey };
    const aligns = block.columns.map((c, i) => c.align ?? (columnIsNumeric(block.rows, i) ? 'right' : 'left'));

    // every cell split into words once, measured, then laid out at its column's width
    const headerPrep = block.columns.map((c) => prepare(c.header, headerStyle));
    const cellPrep = block.rows.map((row) => row.map((cell: TableCell | undefined) => (cell === null || cell === undefined ? null : prepare(cell, style))));

    // column widths: explicit weights, else from content
    let widths: number[];
    if (block.columns.every((c) => c.width !== undefined)) {
      const total = block.columns.reduce((s, c) => s + (c.width ?? 1), 0);
      widths = block.columns.map((c) => ((c.width ?? 1) / total) * this.contentW);
    } else {
      const naturalWith = (compactNumericHeaders: boolean): number[] =>
        block.columns.map((c, i) => {
          // a numeric column's header may take two lines rather than widen the column
          const headerW = headerPrep[i]!.natural;
          const headerNat = compactNumericHeaders && aligns[i] === 'right' ? Math.max(headerPrep[i]!.minWord, headerW / 2) : headerW;
          let w = Math.max(headerNat, c.unit ? widthOf('regular', TABLE - 0.8, c.unit) : 0);
          for (const row of cellPrep) {
            const cell = row[i];
            if (cell) w = Math.max(w, cell.natural);
          }
          return Math.min(w, this.contentW * 0.6) + 2 * pad + 2;
        });
      const full = naturalWith(false);
      const natural = full.reduce((a, b) => a + b, 0) <= this.contentW ? full : naturalWith(true);
      const minimum = block.columns.map((c, i) => {
        let w = Math.max(headerPrep[i]!.minWord, c.unit ? widthOf('regular', TABLE - 0.8, c.unit) : 0);
        for (const row of cellPrep) {
          const cell = row[i];
          if (cell) w = Math.max(w, cell.minWord);
        }
        return Math.min(w + 2 * pad + 2, this.contentW / ncol);
      });
      widths = fitColumns(natural, minimum, aligns.map((a) => a !== 'right'), this.contentW);
    }
    const xs: number[] = [];
    let acc = this.left;
    for (const w of widths) {
      xs.push(acc);
      acc += w;
    }

    const caption = block.caption ? layout(block.caption, this.contentW, { size: 8.2, font: 'bold', colour: INK }) : null;
    const headers = block.columns.map((c, i) => {
      const label = layoutPrepared(headerPrep[i]!, widths[i]! - 2 * pad);
      const unit = c.unit ? layout(c.unit, widths[i]! - 2 * pad, { size: TABLE - 0.8, colour: MUTED }) : null;
      return { label, unit, h: label.height + (unit ? unit.height : 0) };
    });
    const headerH = Math.max(...headers.map((h) => h.h)) + 2 * pad;

    const drawHeader = (): void => {
      this.rect(this.left, this.y, this.contentW, headerH, HEADER_FILL);
      headers.forEach((h, i) => {
        const x = xs[i]! + pad;
        const w = widths[i]! - 2 * pad;
        const a = aligns[i]!;
        this.drawLaid(h.label, x, this.y + pad, w, a);
        if (h.unit) this.drawLaid(h.unit, x, this.y + pad + h.label.height, w, a);
      });
      this.hline(this.left, this.right, this.y + headerH, RULE_STRONG, 0.7);
      if (block.writeIn) this.gridLines(xs, widths, this.y, this.y + headerH);
      this.y += headerH;
    };

    const rowsLaid = cellPrep.map((row) => {
      const cells = row.map((cell, i) => (cell === null ? null : layoutPrepared(cell, widths[i]! - 2 * pad)));
      const contentH = Math.max(TABLE * LEADING, ...cells.map((c) => (c ? c.height : 0)));
      const h = Math.max(contentH + 2 * pad - 1, block.writeIn ? 21 : 0);
      return { cells, h };
    });

    const notesLaid = (block.notes ?? []).map((note) => layout(note, this.contentW, { size: 7, colour: MUTED, leading: 1.3 }));
    const notesH = notesLaid.length > 0 ? 3 + notesLaid.reduce((s, l) => s + l.height, 0) : 0;
    // the last rows (and the notes) of the last block before the signature stay with it
    const end = this.tailStart(rowsLaid.length);
    const restFrom = (r: number): number => rowsLaid.slice(r).reduce((s, row) => s + row.h, 0) + notesH;
    const firstRowH = rowsLaid[0]?.h ?? 0;
    const startH = (caption ? caption.height + 4 : 0) + headerH + firstRowH;
    this.ensureKeep(startH, end === 0 ? restFrom(1) : 0, end === 0);
    if (caption) {
      this.drawLaid(caption, this.left, this.y);
      this.y += caption.height + 4;
    }
    drawHeader();
    rowsLaid.forEach((row, r) => {
      const keep = r === end && r > 0 && restFrom(r) + this.tail <= this.bottom - this.contTop - headerH - 20;
      if (this.y + row.h > this.bottom || (keep && this.y + restFrom(r) + this.tail > this.bottom)) {
        this.addPage();
        const cont = layout('Table continued', this.contentW, { size: 7.2, colour: MUTED });
        if (caption) {
          const c2 = layout([...toRunsArray(block.caption!), { text: ' (continued)', style: 'regular' }], this.contentW, {
            size: 8.2,
            font: 'bold',
          });
          this.drawLaid(c2, this.left, this.y);
          this.y += c2.height + 4;
        } else {
          this.drawLaid(cont, this.left, this.y);
          this.y += cont.height + 3;
        }
        drawHeader();
      }
      row.cells.forEach((cell, i) => {
        if (!cell) return;
        const x = xs[i]! + pad;
        this.drawLaid(cell, x, this.y + pad - 0.5, widths[i]! - 2 * pad, aligns[i]!);
      });
      if (block.writeIn) this.gridLines(xs, widths, this.y, this.y + row.h);
      const last = r === rowsLaid.length - 1;
      this.hline(this.left, this.right, this.y + row.h, last ? RULE_STRONG : RULE, last ? 0.7 : 0.4);
      this.y += row.h;
    });
    if (notesLaid.length > 0) {
      this.y += 3;
      notesLaid.forEach((laid, i) => this.drawParagraph(laid, this.left, notesLaid.slice(i + 1).reduce((s, l) => s + l.height, 0)));
    }
  }

  private gridLines(xs: readonly number[], widths: readonly number[], y1: number, y2: number): void {
    for (let i = 0; i < xs.length; i++) this.vline(xs[i]!, y1, y2, RULE, 0.4);
    this.vline(xs[xs.length - 1]! + widths[widths.length - 1]!, y1, y2, RULE, 0.4);
  }

  private drawEquation(block: EquationBlock): void {
    const indent = 14;
    const labelW = block.label ? widthOf('regular', 9, block.label) + 10 : 0;
    const eq = layout([{ text: block.equation, formula: true }], this.contentW - indent - labelW, { size: 10, leading: 1.45 });
    const caption = block.caption ? layout(block.caption, this.contentW - indent, { size: 7.6, colour: MUTED }) : null;
    const h = eq.height + (caption ? caption.height + 1 : 0) + 4;
    this.ensureKeep(h);
    this.rect(this.left, this.y, 2, eq.height + 2, '#b7c9d8');
    this.drawLaid(eq, this.left + indent, this.y + 1);
    if (block.label) {
      const w = widthOf('regular', 9, block.label);
      this.textAt(block.label, this.right - w, this.y + 1 + 10 * 1.1, 'regular', 9, MUTED);
    }
    this.y += eq.height + 3;
    if (caption) {
      this.drawLaid(caption, this.left + indent, this.y);
      this.y += caption.height;
    }
  }

  private drawNote(block: NoteBlock): void {
    const tone = block.tone === 'warning' ? SEVERITY.warning : SEVERITY.info;
    const pad = 6;
    const laid = layout(block.text, this.contentW - 2 * pad - 4, { size: 8.3 });
    const h = laid.height + 2 * pad - 2;
    if (h <= this.bottom - this.contTop) this.ensureKeep(h);
    else this.flushHeading();
    this.rect(this.left, this.y, this.contentW, h, tone.tint);
    this.rect(this.left, this.y, 2.5, h, tone.fg);
    this.drawLaid(laid, this.left + pad + 4, this.y + pad - 1);
    this.y += h;
  }

  private drawFlags(block: FlagListBlock): void {
    if (block.items.length === 0) {
      this.drawFlowing(layout(block.emptyText ?? 'No flags.', this.contentW, { size: BODY, colour: MUTED }), this.left);
      return;
    }
    const pillW = 50;
    const pad = 5;
    const textX = this.left + pad + pillW + 8;
    const textW = this.right - pad - textX;
    const items = block.items.map((item) => {
      const message = layout(item.message, textW, { size: 8.5 });
      const tail = [item.code, item.source ? `Source: ${item.source}` : undefined].filter((s): s is string => !!s).join('  ·  ');
      const tailLaid = tail ? layout(tail, textW, { size: 6.8, colour: MUTED, leading: 1.25 }) : null;
      const h = Math.max(14, message.height + (tailLaid ? tailLaid.height + 1 : 0)) + 2 * pad - 2;
      return { message, tailLaid, h };
    });
    const end = this.tailStart(items.length);
    block.items.forEach((item, idx) => {
      const sev = SEVERITY[item.severity];
      const { message, tailLaid, h } = items[idx]!;
      this.ensureKeep(h, idx === end ? items.slice(idx + 1).reduce((s, it) => s + it.h + 3, 0) : 0, idx === end);
      this.rect(this.left, this.y, this.contentW, h, sev.tint);
      this.rect(this.left, this.y, 2.5, h, sev.fg);
      // pill
      this.doc.roundedRect(this.left + pad + 2, this.y + pad - 1, pillW, 11, 2).fill(sev.fg);
      this.fill = '';
      const lw = widthOf('bold', 6.3, sev.label);
      this.textAt(sev.label, this.left + pad + 2 + (pillW - lw) / 2, this.y + pad - 1 + 8, 'bold', 6.3, WHITE);
      this.drawLaid(message, textX, this.y + pad - 1);
      if (tailLaid) this.drawLaid(tailLaid, textX, this.y + pad - 1 + message.height + 1);
      this.y += h;
      if (idx < block.items.length - 1) this.y += 3;
    });
  }

  private drawChart(block: ChartBlock): void {
    const plotH = block.height ?? 200;
    const title = block.title ? layout(block.title, this.contentW, { size: 8.6, font: 'bold' }) : null;
    const caption = block.caption ? layout(block.caption, this.contentW, { size: 7.4, colour: MUTED }) : null;
    const legendItems = legendEntries(block);
    // legend rows: items placed left to right, wrapping before the right edge
    const legendX0 = this.left + 46;
    const legendX1 = this.right - 8;
    const placed: { item: LegendItem; laid: Laid; x: number; row: number }[] = [];
    {
      let lx = legendX0;
      let row = 0;
      for (const item of legendItems) {
        const laid = layout(item.label, legendX1 - legendX0 - 16, { size: 7.2 });
        const w = 16 + laid.width;
        if (lx > legendX0 && lx + w > legendX1) {
          row++;
          lx = legendX0;
        }
        placed.push({ item, laid, x: lx, row });
        lx += w + 14;
      }
    }
    const legendRows = placed.length ? placed[placed.length - 1]!.row + 1 : 0;
    const legendH = 4 + legendRows * 11;
    const total = (title ? title.height + 6 : 0) + plotH + 26 + legendH + (caption ? caption.height + 4 : 0);
    this.ensureKeep(total);

    if (title) {
      this.drawLaid(title, this.left, this.y);
      this.y += title.height + 6;
    }
    const x0 = this.left + 46;
    const x1 = this.right - 8;
    const y0 = this.y;
    const y1 = this.y + plotH;

    const xs = block.series.flatMap((s) => s.points.map((p) => p.x));
    const ys = block.series.flatMap((s) => s.points.map((p) => p.y));
    for (const g of block.guides ?? []) (g.axis === 'x' ? xs : ys).push(g.value);
    const xScale = axisScale(block.xAxis, Math.min(0, ...xs), Math.max(...xs, 1e-9));
    if (block.fit) {
      const fx0 = block.fit.xFrom ?? xScale.lo;
      const fx1 = block.fit.xTo ?? xScale.hi;
      ys.push(block.fit.slope * fx0 + block.fit.intercept, block.fit.slope * fx1 + block.fit.intercept);
    }
    const yScale = axisScale(block.yAxis, Math.min(0, ...ys), Math.max(...ys, 1e-9));
    const px = (x: number): number => x0 + ((x - xScale.lo) / (xScale.hi - xScale.lo)) * (x1 - x0);
    const py = (y: number): number => y1 - ((y - yScale.lo) / (yScale.hi - yScale.lo)) * (y1 - y0);

    // grid and ticks
    this.rect(x0, y0, x1 - x0, y1 - y0, '#fbfcfd');
    for (const tx of ticks(xScale)) {
      const x = px(tx);
      this.vline(x, y0, y1, '#e3e7ec', 0.4);
      const label = formatTick(tx, xScale.step);
      const w = widthOf('regular', 7, label);
      this.textAt(label, x - w / 2, y1 + 10, 'regular', 7, MUTED);
    }
    for (const ty of ticks(yScale)) {
      const y = py(ty);
      this.hline(x0, x1, y, '#e3e7ec', 0.4);
      const label = formatTick(ty, yScale.step);
      const w = widthOf('regular', 7, label);
      this.textAt(label, x0 - 5 - w, y + 2.5, 'regular', 7, MUTED);
    }
    this.hline(x0, x1, y1, RULE_STRONG, 0.8);
    this.vline(x0, y0, y1, RULE_STRONG, 0.8);
    if (yScale.lo < 0 && yScale.hi > 0) this.hline(x0, x1, py(0), RULE_STRONG, 0.5);

    // axis labels
    const axisText = (a: ChartBlock['xAxis']): Rich => (a.unit ? [...toRuns(a.label), { text: ` (${a.unit})` }] : a.label);
    const xLabel = layout(axisText(block.xAxis), x1 - x0, { size: 7.8 });
    this.drawLaid(xLabel, (x0 + x1) / 2 - xLabel.width / 2, y1 + 14);
    const yLabel = layout(axisText(block.yAxis), y1 - y0, { size: 7.8 });
    this.doc.save();
    this.doc.translate(this.left + 8, (y0 + y1) / 2);
    this.doc.rotate(-90);
    this.font = null;
    this.size = 0;
    const yLine = yLabel.lines[0];
    if (yLine) {
      this.emitFragments(
        yLine.frags.map((fr) => ({ text: fr.text, x: -yLabel.width / 2 + fr.x, baseline: -fr.rise, font: fr.font, size: fr.size, colour: fr.colour })),
        true,
      );
    }
    this.doc.restore();
    this.font = null;
    this.size = 0;
    this.fill = '';

    // clipped drawing area
    this.doc.save();
    this.doc.rect(x0, y0, x1 - x0, y1 - y0).clip();
    for (const g of block.guides ?? []) {
      this.doc.dash(1.5, { space: 2 });
      if (g.axis === 'y') this.hline(x0, x1, py(g.value), '#7a8491', 0.8);
      else this.vline(px(g.value), y0, y1, '#7a8491', 0.8);
      this.doc.undash();
    }
    if (block.fit) {
      const fx0 = block.fit.xFrom ?? xScale.lo;
      const fx1 = block.fit.xTo ?? xScale.hi;
      this.doc.dash(5, { space: 3 });
      this.doc
        .moveTo(px(fx0), py(block.fit.slope * fx0 + block.fit.intercept))
        .lineTo(px(fx1), py(block.fit.slope * fx1 + block.fit.intercept))
        .lineWidth(1)
        .strokeColor('#3c4652')
        .stroke();
      this.doc.undash();
    }
    block.series.forEach((s, i) => {
      const colour = SERIES_COLOURS[i % SERIES_COLOURS.length]!;
      const style = s.style ?? 'points-and-line';
      const pts = [...s.points].sort((a, b) => a.x - b.x);
      if (style !== 'points' && pts.length > 1) {
        this.doc.moveTo(px(pts[0]!.x), py(pts[0]!.y));
        for (const p of pts.slice(1)) this.doc.lineTo(px(p.x), py(p.y));
        this.doc.lineWidth(1.1).strokeColor(colour).stroke();
      }
      if (style !== 'line') for (const p of pts) this.marker(i, px(p.x), py(p.y), colour, p.hollow === true);
    });
    this.doc.restore();
    this.fill = '';
    // guide labels (outside the clip so they are never cut)
    for (const g of block.guides ?? []) {
      const w = widthOf('regular', 6.6, g.label);
      if (g.axis === 'y') {
        const y = py(g.value);
        if (y >= y0 && y <= y1) this.textAt(g.label, x1 - w - 3, y - 2.5, 'regular', 6.6, '#4a5360');
      } else {
        const x = px(g.value);
        if (x >= x0 && x <= x1) this.textAt(g.label, Math.min(x + 3, x1 - w - 2), y0 + 9, 'regular', 6.6, '#4a5360');
      }
    }

    // legend
    const ly0 = y1 + 33;
    for (const { item, laid, x: lx, row } of placed) {
      const ly = ly0 + row * 11;
      if (item.kind === 'series') this.marker(item.index, lx + 5, ly - 2.5, SERIES_COLOURS[item.index % SERIES_COLOURS.length]!);
      else {
        this.doc.dash(item.kind === 'fit' ? 4 : 1.5, { space: 2 });
        this.hline(lx, lx + 12, ly - 2.5, item.kind === 'fit' ? '#3c4652' : '#7a8491', 1);
        this.doc.undash();
      }
      this.drawLaid(laid, lx + 16, ly - 8.3);
    }
    this.y = ly0 + (legendRows - 1) * 11 + 6;
    if (caption) {
      this.y += 2;
      this.drawLaid(caption, this.left, this.y);
      this.y += caption.height;
    }
  }

  private marker(index: number, x: number, y: number, colour: string, hollow = false): void {
    const r = 2.8;
    const kind = index % 4;
    if (kind === 0) this.doc.circle(x, y, r);
    else if (kind === 1) this.doc.rect(x - r, y - r, 2 * r, 2 * r);
    else if (kind === 2) this.doc.polygon([x, y - r * 1.2], [x + r * 1.1, y + r * 0.8], [x - r * 1.1, y + r * 0.8]);
    else this.doc.polygon([x, y - r * 1.25], [x + r * 1.1, y], [x, y + r * 1.25], [x - r * 1.1, y]);
    if (hollow) this.doc.lineWidth(1).fillAndStroke(WHITE, colour);
    else this.doc.lineWidth(0.7).fillAndStroke(colour, WHITE);
    this.fill = '';
  }

  /** The safety box; `signatureH` when the signature block follows it (kept on the same page). */
  private drawSafety(box: SafetyBox, signatureH = 0): void {
    const pad = 8;
    const gap = 14;
    const innerW = this.contentW - 2 * pad;
    const colW = (innerW - gap) / 2;
    const heading = layout(box.heading, innerW - 20, { size: 9.6, font: 'bold', colour: SAFETY });
    const product = layout(box.product, innerW, { size: 7.8, colour: '#7c2d12' });
    const group = (title: string, items: readonly Rich[]) => {
      const laidItems = items.map((it) => layout(it, colW - 9, { size: 7.9, leading: 1.28 }));
      const h = 11 + laidItems.reduce((s, l) => s + l.height + 1.5, 0);
      return { title, laidItems, h };
    };
    const groups = [
      group('Hazards', box.hazards),
      group('Incompatible with', box.incompatibilities),
      group('Protective equipment', box.ppe),
      group('Signs of overdose', box.overdoseSigns),
    ];
    const rowH = [Math.max(groups[0]!.h, groups[1]!.h), Math.max(groups[2]!.h, groups[3]!.h)];
    const sources = box.sources && box.sources.length > 0
      ? layout(`Sources: ${box.sources.join('; ')}`, innerW, { size: 6.6, colour: MUTED, leading: 1.25 })
      : null;
    const stripH = 6 + heading.height + product.height + 4;
    const h = stripH + pad + rowH[0]! + 6 + rowH[1]! + (sources ? sources.height + 4 : 0) + pad - 2;
    this.tail = signatureH > 0 ? BLOCK_GAP + 6 + signatureH : 0;
    this.ensureKeep(h + 4);
    this.tail = 0;
    const top = this.y;
    this.rect(this.left, top, this.contentW, stripH, SAFETY_TINT);
    // warning sign drawn as a vector triangle with "!"
    const tx = this.left + pad;
    const ty = top + 6;
    this.doc.polygon([tx + 6, ty], [tx + 12, ty + 10.5], [tx, ty + 10.5]).fill(SAFETY);
    this.fill = '';
    this.textAt('!', tx + 4.7, ty + 9.6, 'bold', 7.5, WHITE);
    this.drawLaid(heading, this.left + pad + 18, top + 5);
    this.drawLaid(product, this.left + pad + 18, top + 5 + heading.height);
    let y = top + stripH + pad;
    for (let r = 0; r < 2; r++) {
      for (let c = 0; c < 2; c++) {
        const g = groups[r * 2 + c]!;
        const x = this.left + pad + c * (colW + gap);
        this.textAt(g.title.toUpperCase(), x, y + 7, 'bold', 6.8, SAFETY);
        let iy = y + 11;
        for (const it of g.laidItems) {
          this.textAt('•', x + 1, iy + 7.9, 'bold', 7.9, SAFETY);
          this.drawLaid(it, x + 9, iy);
          iy += it.height + 1.5;
        }
      }
      y += rowH[r]! + 6;
    }
    if (sources) {
      this.drawLaid(sources, this.left + pad, y);
    }
    this.boxStroke(this.left, top, this.contentW, h, SAFETY, 1.6);
    this.y = top + h + BLOCK_GAP + 6;
  }

  /** The signature block laid out (its height is known before the content above it is drawn). */
  private prepareSignature(sig: SignatureBlock) {
    const pad = 9;
    const gap = 18;
    const colW = (this.contentW - 2 * pad - gap) / 2;
    const statement = sig.statement ? layout(sig.statement, this.contentW - 2 * pad, { size: 8, colour: INK }) : null;
    const col = (label: string, lines: { text: Rich; size: number; font?: FontKey; colour?: string }[]) => {
      const laid = lines.map((l) => layout(l.text, colW, { size: l.size, font: l.font ?? 'regular', colour: l.colour ?? INK, leading: 1.3 }));
      return { label, laid, h: 11 + laid.reduce((s, l) => s + l.height, 0) };
    };
    const prepared = col('Prepared by', [
      { text: sig.preparedBy.name, size: 9.5, font: 'bold' },
      { text: sig.preparedBy.role, size: 8.3 },
      { text: displayTime(sig.preparedAt), size: 8.3, colour: MUTED },
    ]);
    const signed = sig.signedBy
      ? col('Digitally signed by', [
          { text: sig.signedBy.name, size: 9.5, font: 'bold' },
          { text: [sig.signedBy.role, sig.signedBy.organisation].filter(Boolean).join(', '), size: 8.3 },
          { text: sig.signedAt ? displayTime(sig.signedAt) : 'time of signing in the signature', size: 8.3, colour: MUTED },
          { text: `Certificate: ${sig.signedBy.certificateSubject}`, size: 7, colour: MUTED },
          {
            text: 'PDF signature embedded in this file (PKCS#7 detached, SHA-256). Check it in the signature panel of a PDF reader.',
            size: 7,
            colour: MUTED,
          },
        ])
      : col('Signature', [{ text: 'This copy is not signed.', size: 8.5, colour: MUTED }]);
    const headH = 16;
    const h = headH + (statement ? statement.height + 6 : 0) + Math.max(prepared.h, signed.h) + 2 * pad - 4;
    return { pad, gap, colW, statement, prepared, signed, headH, h };
  }

  private drawSignature(layoutOf: ReturnType<SheetRenderer['prepareSignature']>): void {
    const { pad, gap, colW, statement, prepared, signed, headH, h } = layoutOf;
    this.ensure(h + 4);
    const top = this.y;
    this.signaturePage = this.doc.bufferedPageRange().count - 1;
    this.rect(this.left, top, this.contentW, headH, ACCENT_TINT);
    this.textAt('SIGNATURES', this.left + pad, top + 11, 'bold', 7.6, ACCENT);
    let y = top + headH + pad - 2;
    if (statement) {
      this.drawLaid(statement, this.left + pad, y);
      y += statement.height + 6;
    }
    [prepared, signed].forEach((c, i) => {
      const x = this.left + pad + i * (colW + gap);
      this.textAt(c.label.toUpperCase(), x, y + 7, 'bold', 6.6, MUTED);
      let ly = y + 11;
      for (const l of c.laid) {
        this.drawLaid(l, x, ly);
        ly += l.height;
      }
    });
    this.boxStroke(this.left, top, this.contentW, h, '#9fb6c9', 0.9);
    this.y = top + h;
  }
}

// ---------------------------------------------------------------------------
// helpers

/**
 * Column widths that fill `total`: numeric (right-aligned) columns get their natural
 * width when it fits and text columns share the rest, so words are not broken in a
 * column of numbers while a column of prose is squeezed.
 */
function fitColumns(natural: readonly number[], minimum: readonly number[], isText: readonly boolean[], total: number): number[] {
  const anyText = isText.some(Boolean);
  const flexible = (i: number): boolean => !anyText || isText[i]!;
  const sumNat = natural.reduce((a, b) => a + b, 0);
  if (sumNat <= total) {
    const flexNat = natural.reduce((s, w, i) => s + (flexible(i) ? w : 0), 0);
    return natural.map((w, i) => (flexible(i) ? w + ((total - sumNat) * w) / flexNat : w));
  }
  // fixed columns at natural width if the flexible ones can still have their minimum
  const fixedNat = natural.reduce((s, w, i) => s + (flexible(i) ? 0 : w), 0);
  const flexMin = minimum.reduce((s, w, i) => s + (flexible(i) ? w : 0), 0);
  if (anyText && fixedNat + flexMin <= total) {
    const spare = total - fixedNat - flexMin;
    const want = natural.map((w, i) => (flexible(i) ? Math.max(0, w - minimum[i]!) : 0));
    const sumWant = want.reduce((a, b) => a + b, 0) || 1;
    return natural.map((w, i) => (flexible(i) ? minimum[i]! + (spare * want[i]!) / sumWant : w));
  }
  const sumMin = minimum.reduce((a, b) => a + b, 0);
  const spare = Math.max(0, total - sumMin);
  const flex = natural.map((w, i) => Math.max(0, w - minimum[i]!));
  const sumFlex = flex.reduce((a, b) => a + b, 0) || 1;
  const widths = minimum.map((m, i) => m + (spare * flex[i]!) / sumFlex);
  const scale = total / widths.reduce((a, b) => a + b, 0);
  return widths.map((w) => w * scale);
}

function toRunsArray(text: Rich) {
  return [...toRuns(text)];
}

function clipText(text: string, font: FontKey, size: number, width: number): string {
  if (widthOf(font, size, text) <= width) return text;
  let s = text;
  while (s.length > 1 && widthOf(font, size, s + '…') > width) s = s.slice(0, -1);
  return s.trimEnd() + '…';
}

const NUMERIC = /^[<>≤≥~≈±+\-−]?\s*\d[\d\s.,]*(?:[eE][+\-−]?\d+)?\s*(?:%|±\s*[\d.,]+)?$/;

function columnIsNumeric(rows: readonly (readonly TableCell[])[], i: number): boolean {
  let filled = 0;
  for (const row of rows) {
    const cell = row[i];
    if (cell === null || cell === undefined) continue;
    const text = typeof cell === 'string' ? cell : cell.map((r) => r.text).join('');
    if (text.trim() === '' || text.trim() === '–' || text.trim() === '—') continue;
    if (!NUMERIC.test(text.trim())) return false;
    filled++;
  }
  return filled > 0;
}

interface Scale {
  readonly lo: number;
  readonly hi: number;
  readonly step: number;
  readonly ticks?: readonly number[];
}

function niceNumber(x: number, round: boolean): number {
  const exp = Math.floor(Math.log10(x));
  const frac = x / 10 ** exp;
  let nice: number;
  if (round) nice = frac < 1.5 ? 1 : frac < 3 ? 2 : frac < 7 ? 5 : 10;
  else nice = frac <= 1 ? 1 : frac <= 2 ? 2 : frac <= 5 ? 5 : 10;
  return nice * 10 ** exp;
}

/** Axis range and tick step in round numbers (about six ticks). */
export function niceScale(min: number, max: number, ticksWanted = 6): Scale {
  let lo = Number.isFinite(min) ? min : 0;
  let hi = Number.isFinite(max) ? max : 1;
  if (hi <= lo) hi = lo + (Math.abs(lo) > 0 ? Math.abs(lo) : 1);
  const range = niceNumber(hi - lo, false);
  const step = niceNumber(range / (ticksWanted - 1), true);
  lo = Math.floor(lo / step + 1e-9) * step;
  hi = Math.ceil(hi / step - 1e-9) * step;
  return { lo, hi, step };
}

function axisScale(axis: { min?: number; max?: number; ticks?: readonly number[] }, dataMin: number, dataMax: number): Scale {
  if (axis.ticks && axis.ticks.length >= 2) {
    const t = [...axis.ticks].sort((a, b) => a - b);
    const step = t[1]! - t[0]!;
    return { lo: axis.min ?? t[0]!, hi: axis.max ?? t[t.length - 1]!, step, ticks: t };
  }
  return niceScale(axis.min ?? dataMin, axis.max ?? dataMax);
}

function ticks(scale: Scale): number[] {
  if (scale.ticks) return [...scale.ticks];
  const out: number[] = [];
  const n = Math.round((scale.hi - scale.lo) / scale.step);
  for (let i = 0; i <= n; i++) out.push(scale.lo + i * scale.step);
  return out;
}

function formatTick(v: number, step: number): string {
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  const s = (Math.abs(v) < step / 1e6 ? 0 : v).toFixed(decimals);
  return s.replace('-', '−');
}

type LegendItem = { kind: 'series'; index: number; label: Rich } | { kind: 'fit' | 'guide'; label: Rich };

function legendEntries(block: ChartBlock): LegendItem[] {
  const items: LegendItem[] = block.series.map((s, index) => ({ kind: 'series' as const, index, label: s.name }));
  if (block.fit) items.push({ kind: 'fit', label: block.fit.label });
  return items;
}

// ---------------------------------------------------------------------------
// public

/**
 * Render a sheet document to PDF bytes. The same document (and placeholder options)
 * gives the same bytes. With `placeholder`, the PDF carries an empty signature field
 * for `signPdf` (sign.ts).
 */
export function renderSheet(sheet: SheetDocument, options: RenderOptions = {}): Promise<Buffer> {
  return new SheetRenderer(sheet).render(options);
}

/**
 * A bare one-page pdfkit document with the same embedded font: the yardstick of the
 * sheet benchmark (issue 4: a signed sheet within 3× this document's time).
 */
export function renderBareDocument(text = 'Bare one-page document with the embedded DejaVu Sans font.'): Promise<Buffer> {
  const doc = new PDFDocument({
    size: 'A4',
    margin: 50,
    font: loadFont('regular').font as unknown as string,
    info: { CreationDate: new Date(0), ModDate: new Date(0) },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  doc.fontSize(10).text(text);
  doc.end();
  return done;
}
