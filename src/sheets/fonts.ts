/**
 * The embedded open fonts of the sheets: DejaVu Sans and DejaVu Sans Bold (the sheets
 * use these two; Oblique and Mono are available for other documents), shipped as the npm dependency `dejavu-fonts-ttf` (free licence,
 * see node_modules/dejavu-fonts-ttf/LICENSE) so that the output never depends on the
 * fonts of the machine.
 *
 * Each font file is read and parsed by fontkit once per process and the parsed font
 * is handed to pdfkit (`registerFont(name, fontkitFont)`; pdfkit 0.20 accepts any
 * object with a `layout` method). Measured on this machine, a one-page document with
 * the parsed font takes about 2 ms, against about 15 ms when pdfkit is given the
 * Buffer (it re-parses the TrueType file for every document).
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import * as fontkit from 'fontkit';
import type { FontkitFont } from 'fontkit';

export type FontKey = 'regular' | 'bold' | 'italic' | 'mono';

/** Font file per role, inside node_modules/dejavu-fonts-ttf/ttf/. */
export const FONT_FILES: Readonly<Record<FontKey, string>> = {
  regular: 'DejaVuSans.ttf',
  bold: 'DejaVuSans-Bold.ttf',
  italic: 'DejaVuSans-Oblique.ttf',
  mono: 'DejaVuSansMono.ttf',
};

/** The name each font is registered under in a pdfkit document. */
export const FONT_NAMES: Readonly<Record<FontKey, string>> = {
  regular: 'Sheet-Regular',
  bold: 'Sheet-Bold',
  italic: 'Sheet-Italic',
  mono: 'Sheet-Mono',
};

export interface LoadedFont {
  readonly key: FontKey;
  readonly path: string;
  /** The TrueType file as read (kept for callers that need the bytes). */
  readonly buffer: Buffer;
  /** The fontkit font parsed from `buffer`, shared by every document. */
  readonly font: FontkitFont;
}

const cache = new Map<FontKey, LoadedFont>();

/** The folder holding the DejaVu TrueType files of the npm package. */
export function fontDirectory(): string {
  const require = createRequire(import.meta.url);
  return join(dirname(require.resolve('dejavu-fonts-ttf/package.json')), 'ttf');
}

/** The font for a role, read and parsed on first use and kept for the life of the process. */
/** The Latin ligatures of the DejaVu faces, written with their letters. */
export const LIGATURE_SEED = 'ff fi fl ffi ffl';

export function loadFont(key: FontKey): LoadedFont {
  const hit = cache.get(key);
  if (hit) return hit;
  const path = join(fontDirectory(), FONT_FILES[key]);
  const buffer = readFileSync(path);
  const font = memoiseGlyphDecoding(fontkit.create(buffer));
  // fontkit keeps one glyph object per glyph, with the code points of its first use; the
  // ligatures are laid out from their letters first, so that a later "ﬁ" (U+FB01) in some
  // text cannot make every "fi" of every later sheet extract as U+FB01.
  (font as unknown as { layout(text: string): unknown }).layout(LIGATURE_SEED);
  const loaded: LoadedFont = { key, path, buffer, font };
  cache.set(key, loaded);
  return loaded;
}

/**
 * fontkit caches glyph objects per font but decodes a glyph's outline again each time
 * a document's subset includes it (TTFSubset._addGlyph calls glyph._decode()). The
 * decoded outline depends only on the font file and is read, never changed, by the
 * subsetter, so keep it on the glyph: each later document saves the decoding.
 * Only this process's sheet fonts are touched.
 */
function memoiseGlyphDecoding(font: FontkitFont): FontkitFont {
  type Glyph = { _decode?: () => unknown; __sheetMemo?: true };
  const f = font as unknown as { getGlyph(id: number, codePoints?: number[]): Glyph };
  const original = f.getGlyph.bind(font);
  f.getGlyph = (id: number, codePoints?: number[]): Glyph => {
    const glyph = original(id, codePoints);
    if (glyph && typeof glyph._decode === 'function' && !glyph.__sheetMemo) {
      const decode = glyph._decode.bind(glyph);
      let done = false;
      let value: unknown;
      glyph._decode = () => {
        if (!done) {
          value = decode();
          done = true;
        }
        return value;
      };
      glyph.__sheetMemo = true;
    }
    return glyph;
  };
  return font;
}

/**
 * The fonts the sheets use. Two faces only: every further face embedded costs about
 * 0.6 ms per document (subset, ToUnicode map, compression).
 */
export const SHEET_FONTS: readonly FontKey[] = ['regular', 'bold'];

/** The sheet fonts, loaded once (call at start-up to keep the first request fast). */
export function loadSheetFonts(): readonly LoadedFont[] {
  return SHEET_FONTS.map(loadFont);
}

/** The minimum a pdfkit document offers for registering fonts. */
export interface FontRegistry {
  registerFont(name: string, src: unknown, family?: string): unknown;
}

/** Register fonts (parsed once; default the sheet fonts) in a pdfkit document under FONT_NAMES. */
export function registerSheetFonts(doc: FontRegistry, keys: readonly FontKey[] = SHEET_FONTS): void {
  for (const key of keys) doc.registerFont(FONT_NAMES[key], loadFont(key).font);
}

/** Whether the regular font has a glyph for every character of `text` (spaces aside). */
export function fontCovers(text: string, key: FontKey = 'regular'): boolean {
  const { font } = loadFont(key);
  for (const ch of text) {
    const cp = ch.codePointAt(0)!;
    if (cp <= 0x20) continue;
    if (!font.hasGlyphForCodePoint(cp)) return false;
  }
  return true;
}
