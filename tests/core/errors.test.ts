/**
 * src/core/errors.ts: field pointers are RFC 6901 JSON pointers (examples of RFC 6901 §3 and §5),
 * and every catalogue entry has a title and a problem kind for its RFC 9457 answer.
 */
import { describe, expect, it } from 'vitest';
import { DomainError, ERROR_CATALOGUE, pointerToken, toPointer } from '../../src/core/errors.js';

describe('JSON pointers (RFC 6901)', () => {
  it('escapes ~ as ~0 and / as ~1', () => {
    expect(pointerToken('a/b')).toBe('a~1b');
    expect(pointerToken('m~n')).toBe('m~0n');
    expect(pointerToken('~1')).toBe('~01'); // escaped in that order, so "~1" does not become "/"
    expect(toPointer(['sample', 'iron', 'value'])).toBe('/sample/iron/value');
    expect(toPointer(['jars', 2, 'dose'])).toBe('/jars/2/dose');
    expect(toPointer([])).toBe('');
  });
});

describe('DomainError', () => {
  it('moves its fields under a prefix, or names the prefix when it had none', () => {
    const e = new DomainError('UNIT_UNKNOWN', { detail: 'bad unit', fields: [{ pointer: '/unit', message: 'bad unit' }] });
    expect(e.under('/flow').fields).toEqual([{ pointer: '/flow/unit', message: 'bad unit' }]);
    const bare = new DomainError('UNIT_UNKNOWN', { detail: 'bad unit' });
    expect(bare.under('/flow').fields).toEqual([{ pointer: '/flow', message: 'bad unit' }]);
    expect(e.title).toBe(ERROR_CATALOGUE.UNIT_UNKNOWN.title);
  });

  it('points a caret at the bad character of a formula', () => {
    const e = new DomainError('UNIT_UNKNOWN', { detail: 'x', text: 'MnQ4-', position: 2 });
    expect(e.caret()).toBe('MnQ4-\n  ^');
  });

  it('every catalogue entry has a title', () => {
    for (const [code, entry] of Object.entries(ERROR_CATALOGUE)) {
      expect(entry.title.length, code).toBeGreaterThan(3);
    }
  });
});
