/**
 * The service's own signature check (src/sheets/verify.ts) says in its own words when the
 * signature data in /Contents cannot be read, and keeps the parser's message only as a detail.
 * The CMS layout is RFC 5652 §5.1 (SignedData: version, digestAlgorithms, encapContentInfo with
 * id-data 1.2.840.113549.1.7.1, then [0] certificates); pdfsig (poppler-utils) agrees that each
 * changed file is not validly signed.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { createDemoSigner, renderSignedSheet } from '../../src/sheets/sign.js';
import { verifySignedPdf } from '../../src/sheets/verify.js';
import { doseSheet } from './fixtures.js';
import { pdfFile, requireTools, runAny } from './tools.js';

let signed: Buffer;
beforeAll(async () => {
  requireTools('pdfsig');
  const demo = createDemoSigner({ name: 'V. Checker', role: 'Process engineer', organisation: 'Demo Water Works (invented)', password: 'demo password', notBefore: new Date('2024-01-01T00:00:00Z') });
  signed = (await renderSignedSheet(doseSheet(), demo.signer, { signingTime: new Date('2025-03-14T09:06:00Z') })).pdf;
});

/** Where the /Contents hex starts in the file, and the CMS DER it holds. */
function contents(pdf: Buffer): { hexStart: number; der: Buffer } {
  const [, b, c] = verifySignedPdf(pdf).byteRange!;
  const hexStart = b! + 1; // after "<"
  return { hexStart, der: Buffer.from(pdf.subarray(hexStart, c! - 1).toString('latin1'), 'hex') };
}

/** The file with the byte at `derIndex` of the CMS set to `value` (its two hex digits rewritten). */
function withCmsByte(pdf: Buffer, derIndex: number, value: number): Buffer {
  const { hexStart } = contents(pdf);
  const copy = Buffer.from(pdf);
  copy.write(value.toString(16).padStart(2, '0'), hexStart + 2 * derIndex, 'latin1');
  return copy;
}

// id-data as a DER OID inside the encapsulated content info: 30 0B 06 09 2A 86 48 86 F7 0D 01 07 01 (RFC 5652 §4)
const ENCAP_ID_DATA = Buffer.from('300b06092a864886f70d010701', 'hex');

describe('corrupt signature data in /Contents', () => {
  it('the untouched file verifies, signed by the certificate it names', () => {
    const check = verifySignedPdf(signed);
    expect(check).toMatchObject({ signatureValid: true, digestMatches: true, coversWholeFile: true, problems: [] });
    expect(check.signerSubject).toContain('CN=V. Checker (DEMO)');
  });

  it.each([
    // the tag of the certificate's TBSCertificate (30 → 31; RFC 5280 §4.1): the certificate inside cannot be parsed
    ['the tag of the certificate body', (der: Buffer) => der.indexOf(ENCAP_ID_DATA) + ENCAP_ID_DATA.length + 4 + 4, 0x31],
    // the outer ContentInfo tag (30 → 04): not a CMS structure
    ['the tag of the ContentInfo', () => 0, 0x04],
  ])('a change to %s: reported as corrupt signature data in the service’s words, the library message only as a detail', (_what, index, value) => {
    const { der } = contents(signed);
    const at = index(der);
    expect(at).toBeGreaterThanOrEqual(0);
    const bad = withCmsByte(signed, at, value);
    const check = verifySignedPdf(bad);
    expect(check.signatureValid).toBe(false);
    const message = check.problems.join('; ');
    expect(message).toMatch(/^the signature data \(the CMS SignedData in \/Contents\) is corrupt or unreadable, so the signature cannot be checked \(detail: .+\)$/);
    expect(message).not.toMatch(/^error:/);
    if (at > 0) expect(message).toContain('(detail: a certificate in it is not a readable X.509 certificate: ');
    expect(runAny('pdfsig', ['-nocert', pdfFile(bad, 'cms-corrupt')]).output).not.toContain('Signature is Valid.');
  });
});
