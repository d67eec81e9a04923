/**
 * Canonical JSON of the archive (src/archive/canonical.ts) against an independent implementation
 * of RFC 8785 (JSON Canonicalization Scheme): the npm package `canonicalize` (by one of the RFC's
 * authors), on generated JSON values (fast-check), and on the RFC's own examples.
 */
import canonicalize from 'canonicalize';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { canonicalJson, sha256Hex } from '../../src/archive/canonical.js';
import { DomainError } from '../../src/core/errors.js';

function refused(value: unknown): DomainError {
  try {
    canonicalJson(value);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a refusal');
}

describe('canonical JSON (RFC 8785)', () => {
  it('agrees with the canonicalize package on generated JSON values', () => {
    fc.assert(
      fc.property(fc.jsonValue(), (value) => {
        let reference: string | undefined;
        try {
          reference = canonicalize(value);
        } catch {
          fc.pre(false); // the package refuses what RFC 8785 leaves out (lone surrogates)
        }
        expect(canonicalJson(value)).toBe(reference);
      }),
      { numRuns: 500 },
    );
  });

  it('sorts members by UTF-16 code units (RFC 8785 §3.2.3 example, from memory of the RFC)', () => {
    const value = {
      '\u20ac': 'Euro Sign',
      '\r': 'Carriage Return',
      '\ufb33': 'Hebrew Letter Dalet With Dagesh',
      '1': 'One',
      '\ud83d\ude00': 'Emoji: Grinning Face',
      '\u0080': 'Control',
      '\u00f6': 'Latin Small Letter O With Diaeresis',
    };
    const keys = Object.keys(JSON.parse(canonicalJson(value)) as object);
    // JSON.parse puts the integer-like key "1" first whatever the text says; read the order from the text
    const order = [...canonicalJson(value).matchAll(/"((?:[^"\\]|\\.)*)":/g)].map((m) => JSON.parse(`"${m[1]}"`) as string);
    expect(order).toEqual(['\r', '1', '\u0080', '\u00f6', '\u20ac', '\ud83d\ude00', '\ufb33']);
    expect(keys).toHaveLength(7);
    expect(canonicalJson(value)).toBe(canonicalize(value));
  });

  it.each([
    [1e21, '1e+21'],
    [1e-7, '1e-7'],
    [0.000001, '0.000001'],
    [-0, '0'],
    [4.5, '4.5'],
    [2 ** 53, '9007199254740992'],
  ])('writes the number %d as %s (ECMAScript number to string, which RFC 8785 §3.2.2.3 adopts)', (n, text) => {
    expect(canonicalJson(n)).toBe(text);
    expect(canonicalJson([n])).toBe(`[${text}]`);
  });

  it('leaves out undefined members, writes undefined in an array as null, a Date through toJSON', () => {
    expect(canonicalJson({ b: 1, a: undefined, c: [undefined, 2] })).toBe('{"b":1,"c":[null,2]}');
    expect(canonicalJson({ at: new Date('2026-12-03T08:00:00Z') })).toBe('{"at":"2026-12-03T08:00:00.000Z"}');
  });

  it('refuses what JSON cannot hold, naming where it is (RFC 6901 pointer, "/" and "~" escaped)', () => {
    expect(refused({ a: [0, { 'b/c~d': Number.NaN }] }).params['pointer']).toBe('/a/1/b~1c~0d');
    expect(refused({ x: Number.POSITIVE_INFINITY }).detail).toMatch(/Infinity at \/x/);
    expect(refused({ n: 1n }).detail).toMatch(/a bigint at \/n/);
    const loop: Record<string, unknown> = { k: 1 };
    loop['self'] = loop;
    expect(refused(loop).detail).toMatch(/circular reference at \/self/);
    expect(refused({ bytes: new Uint8Array(2) }).detail).toMatch(/binary data at \/bytes/);
    expect(refused(() => 1).detail).toMatch(/a function at \//);
  });

  it('the same value in any member order gives the same text and SHA-256', () => {
    const a = { dose: { value: 2.18, unit: 'mg/L' }, oxidant: 'potassium-permanganate' };
    const b = { oxidant: 'potassium-permanganate', dose: { unit: 'mg/L', value: 2.18 } };
    expect(canonicalJson(a)).toBe(canonicalJson(b));
    expect(sha256Hex(canonicalJson(a))).toBe(sha256Hex(canonicalJson(b)));
  });
});
