/** The small part of fontkit 2 that the sheets use (fontkit ships no type declarations). */
declare module 'fontkit' {
  export interface FontkitFont {
    readonly postscriptName: string;
    readonly familyName: string;
    readonly unitsPerEm: number;
    readonly ascent: number;
    readonly descent: number;
    readonly numGlyphs: number;
    hasGlyphForCodePoint(codePoint: number): boolean;
    layout(text: string, features?: unknown): unknown;
  }
  export function create(buffer: Uint8Array, postscriptName?: string): FontkitFont;
}
