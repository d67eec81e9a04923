import { describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import {
  DEFAULT_DISCLAIMER,
  buildSheetDocument,
  canonicalJson,
  displayTime,
  plainText,
  rich,
  sheetContentSha256,
  withSignedBy,
} from '../../src/sheets/model.js';
import { doseSheet } from './fixtures.js';

describe('rich markup', () => {
  it.each([
    ['', []],
    ['plain', [{ text: 'plain' }]],
    ['as {KMnO4}', [{ text: 'as ' }, { text: 'KMnO4', formula: true }]],
    ['**2.0 mg/L** as {Cl2}', [{ text: '2.0 mg/L', style: 'bold' }, { text: ' as ' }, { text: 'Cl2', formula: true }]],
    ['a \\{b\\} c', [{ text: 'a {b} c' }]],
    ['open {brace', [{ text: 'open {brace' }]],
  ])('%j', (markup, runs) => {
    expect(rich(markup)).toEqual(runs);
  });

  it('plainText gives formulas as written', () => {
    expect(plainText(rich('dose as {KMnO4}'))).toBe('dose as KMnO4');
  });
});

describe('displayTime keeps the zone it was given', () => {
  it.each([
    ['2025-03-14', '2025-03-14'],
    ['2025-03-14T08:30:00Z', '2025-03-14 08:30 UTC'],
    ['2025-03-14T08:30:00.123Z', '2025-03-14 08:30 UTC'],
    ['2025-03-14T08:30:00+01:00', '2025-03-14 08:30 (UTC+01:00)'],
    ['2025-03-14T08:30-0500', '2025-03-14 08:30 (UTC-05:00)'],
    ['yesterday', 'yesterday'],
  ])('%s → %s', (iso, shown) => {
    expect(displayTime(iso)).toBe(shown);
  });
});

describe('buildSheetDocument', () => {
  it('fills A4 and the disclaimer, and hashes the canonical content', () => {
    const doc = doseSheet();
    expect(doc.pageSize).toBe('A4');
    expect(doc.disclaimer).toBe(DEFAULT_DISCLAIMER);
    expect(doc.contentSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(sheetContentSha256(doc)).toBe(doc.contentSha256);
  });

  it('the hash does not depend on key order and changes with any content', () => {
    expect(canonicalJson({ b: 1, a: [{ d: 2, c: undefined }] })).toBe('{"a":[{"d":2}],"b":1}');
    const a = doseSheet();
    const b = doseSheet({ id: 'DS-DEMO-0002' });
    const c = doseSheet({ pageSize: 'LETTER' });
    expect(new Set([a.contentSha256, b.contentSha256, c.contentSha256]).size).toBe(3);
  });

  it.each([
    ['', '/id'],
    ['../etc/passwd', '/id'],
    ['a'.repeat(65), '/id'],
    ['-leading-dash', '/id'],
  ])('refuses the id %j with ID_INVALID at %s', (id, pointer) => {
    const base = doseSheet();
    const { contentSha256: _h, ...draft } = base;
    try {
      buildSheetDocument({ ...draft, id });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DomainError);
      expect((e as DomainError).code).toBe('ID_INVALID');
      expect((e as DomainError).fields[0]?.pointer).toBe(pointer);
    }
  });

  it('refuses a time without a zone, naming the field', () => {
    const { contentSha256: _h, ...draft } = doseSheet();
    try {
      buildSheetDocument({ ...draft, issuedAt: '2025-03-14T09:05:00' });
      expect.unreachable();
    } catch (e) {
      expect((e as DomainError).code).toBe('VALIDATION_FAILED');
      expect((e as DomainError).fields[0]?.pointer).toBe('/issuedAt');
    }
  });

  it('withSignedBy puts the signer in the block and rehashes', () => {
    const doc = doseSheet();
    const signed = withSignedBy(doc, { name: 'C. Chief', role: 'Chief operator', certificateSubject: 'CN=C. Chief' }, '2025-03-14T10:00:00Z');
    expect(signed.signature.signedBy?.name).toBe('C. Chief');
    expect(signed.contentSha256).not.toBe(doc.contentSha256);
    expect(sheetContentSha256(signed)).toBe(signed.contentSha256);
  });
});
