/**
 * The embedded DejaVu faces: fontkit keeps one glyph object per glyph with the code points of
 * its first use, which become the ToUnicode entry (what pdftotext and a reader's search see).
 * Checked first thing in a fresh module: the first text laid out here is the ligature character.
 */
import { describe, expect, it } from 'vitest';
import { loadFont } from '../../src/sheets/fonts.js';

describe('ligatures', () => {
  it.each(['regular', 'bold'] as const)('%s: "ﬁ" (U+FB01) first still leaves the fi ligature mapped to "f" + "i"', (face) => {
    const font = loadFont(face).font as unknown as { layout(t: string): { glyphs: { id: number; codePoints: number[] }[] } };
    const first = font.layout('ﬁ').glyphs;
    expect(first).toHaveLength(1);
    expect(first[0]!.codePoints).toEqual([0x66, 0x69]);
    const word = font.layout('field').glyphs;
    expect(word[0]!.id).toBe(first[0]!.id); // the same ligature glyph
    expect(word[0]!.codePoints).toEqual([0x66, 0x69]);
  });
});
