import { describe, expect, it } from 'vitest';
import { asciiText } from '../../src/water/redox-service.js';

describe('asciiText: notes carried into the ASCII answer of the cell route', () => {
  it.each([
    ['', ''],
    ['At 25 C: nothing to change.', 'At 25 C: nothing to change.'],
    ['crc-hocl-cl: no dE°/dT in the tables; E° held at its 25 °C value at 99.0 °C.', 'crc-hocl-cl: no dE0/dT in the tables; E0 held at its 25 degC value at 99.0 degC.'],
    ['its ΔG° is held', 'its DeltaG0 is held'],
    ['γ = 0.70 · s × 2 − 1 ≤ 3 ± 1', 'gamma = 0.70 * s x 2 - 1 <= 3 +/- 1'],
  ])('%j → %j', (text, ascii) => {
    expect(asciiText(text)).toBe(ascii);
    expect(asciiText(text)).toMatch(/^[\x20-\x7e]*$/);
  });

  it('names any other character outside ASCII by its code point rather than dropping it', () => {
    expect(asciiText('Ω ≈ 1')).toBe('U+03A9 U+2248 1');
  });
});
