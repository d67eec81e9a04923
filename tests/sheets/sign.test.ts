/**
 * Signing checked with an independent verifier: pdfsig from Debian's poppler-utils
 * (NSS underneath). pdfsig exits 0 even on a bad digest, so the tests read its text.
 * `-nocert` skips the trust check: the demo certificate is self-signed on purpose.
 */
import forge from 'node-forge';
import { beforeAll, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import { renderSheet } from '../../src/sheets/pdf.js';
import { DEMO_LABEL, createDemoSigner, loadSigner, renderSignedSheet, signPdf, placeholderFor, type DemoSigner } from '../../src/sheets/sign.js';
import { verifySignedPdf } from '../../src/sheets/verify.js';
import { doseSheet, jarTestEvaluationSheet } from './fixtures.js';
import { pdfFile, pdfText, requireTools, run, runAny } from './tools.js';

const VALID = 'Signature Validation: Signature is Valid.';
const WHOLE = 'Total document signed';
const SIGNED_AT = new Date('2025-03-14T09:06:00Z');

let demo: DemoSigner;
let signed: Buffer;

beforeAll(async () => {
  requireTools('pdfsig', 'pdftotext', 'qpdf');
  demo = createDemoSigner({
    name: 'B. Engineer',
    role: 'Process engineer',
    organisation: 'Demo Water Works (invented)',
    password: 'demo password',
    notBefore: new Date('2024-01-01T00:00:00Z'),
  });
  signed = (await renderSignedSheet(doseSheet(), demo.signer, { signingTime: SIGNED_AT })).pdf;
});

/** The same file with one byte changed at `at`. */
function flipped(pdf: Buffer, at: number): Buffer {
  const copy = Buffer.from(pdf);
  copy[at] = copy[at]! ^ 0x01;
  return copy;
}

describe('signed dose sheet', () => {
  it('pdfsig: valid, whole document signed, adbe.pkcs7.detached, SHA-256, signing time', () => {
    const out = run('pdfsig', ['-nocert', pdfFile(signed, 'signed')]);
    expect(out).toContain(VALID);
    expect(out).toContain(WHOLE);
    expect(out).toContain('Signature Type: adbe.pkcs7.detached');
    expect(out).toContain('Signing Hash Algorithm: SHA-256');
    expect(out).toContain('Signing Time: Mar 14 2025 09:06:00');
    expect(out).toContain('B. Engineer (DEMO)');
  });

  it('our verify agrees: digest, signature, coverage, signer, time', () => {
    const check = verifySignedPdf(signed);
    expect(check).toMatchObject({
      signatureValid: true,
      digestMatches: true,
      coversWholeFile: true,
      signingTime: '2025-03-14T09:06:00Z',
      subFilter: 'adbe.pkcs7.detached',
      problems: [],
    });
    expect(check.signerSubject).toContain(`OU=${DEMO_LABEL}`);
  });

  it('qpdf --check stays clean and the signature block names the signer and certificate', () => {
    const path = pdfFile(signed, 'signed');
    expect(run('qpdf', ['--check', path])).toContain('No syntax or stream encoding errors found');
    const text = pdfText(path);
    expect(text).toContain('DIGITALLY SIGNED BY');
    expect(text).toContain('B. Engineer');
    expect(text).toContain(DEMO_LABEL);
  });

  it('signing is deterministic for the same document, signer and time', async () => {
    const again = (await renderSignedSheet(doseSheet(), demo.signer, { signingTime: SIGNED_AT })).pdf;
    expect(again.equals(signed)).toBe(true);
  });

  it('one signer signs many documents (the key is parsed once, not per call)', async () => {
    for (const doc of [jarTestEvaluationSheet(), doseSheet({ pageSize: 'LETTER' })]) {
      const pdf = (await renderSignedSheet(doc, demo.signer, { signingTime: SIGNED_AT })).pdf;
      expect(run('pdfsig', ['-nocert', pdfFile(pdf, 'many')])).toContain(VALID);
      expect(verifySignedPdf(pdf).signatureValid).toBe(true);
    }
  });
});

describe('tampering is caught by pdfsig and by verifySignedPdf', () => {
  function positions(): [string, number][] {
    const text = signed.toString('latin1');
    const [a, b, c] = verifySignedPdf(signed).byteRange!;
    const streamAt = text.indexOf('stream\n', c!) + 200; // inside a compressed content stream
    return [
      ['a byte of the Info title', text.indexOf('(Permanganate dose', c!) + 5],
      ['a byte inside a compressed page stream', streamAt],
      ['a byte of the first signed range', a! + 60],
      ['the next-to-last byte of the file', signed.length - 2],
    ];
  }

  it.each([0, 1, 2, 3])('flip %i', (i) => {
    const [what, at] = positions()[i]!;
    const [a, b, c, d] = verifySignedPdf(signed).byteRange!;
    expect(at < a! + b! || (at >= c! && at < c! + d!), `${what} lies in a signed range`).toBe(true);
    const bad = flipped(signed, at);
    const { output } = runAny('pdfsig', ['-nocert', pdfFile(bad, 'tampered')]);
    expect(output, what).not.toContain(VALID);
    const check = verifySignedPdf(bad);
    expect(check.signatureValid, what).toBe(false);
    expect(check.problems.length, what).toBeGreaterThan(0);
  });

  it('a change inside the /Contents signature value is caught as well', () => {
    const text = signed.toString('latin1');
    const [, b] = verifySignedPdf(signed).byteRange!;
    // a hex digit inside the CMS: the RSA signature bytes near the end of the DER
    const der = verifySignedPdf(signed);
    expect(der.signatureValid).toBe(true);
    const hexStart = b! + 1;
    const end = text.indexOf('>', hexStart);
    const lastNonZero = text.slice(hexStart, end).replace(/0+$/, '').length;
    const at = hexStart + lastNonZero - 10;
    const copy = Buffer.from(signed);
    copy[at] = copy[at] === 0x61 ? 0x62 : 0x61;
    expect(verifySignedPdf(copy).signatureValid).toBe(false);
    expect(runAny('pdfsig', ['-nocert', pdfFile(copy, 'sigbytes')]).output).not.toContain(VALID);
  });

  it('an unsigned PDF is reported as not signed, without throwing', async () => {
    const check = verifySignedPdf(await renderSheet(doseSheet()));
    expect(check.signatureValid).toBe(false);
    expect(check.problems.join(' ')).toContain('no /ByteRange');
  });
});

describe('signers', () => {
  it('the demo certificate says DEMO — NOT FOR REGULATORY USE and carries name, role and organisation', () => {
    const id = demo.signer.identity;
    expect(id.demo).toBe(true);
    expect(id.certificateSubject).toContain(`OU=${DEMO_LABEL}`);
    expect(id.certificateSubject).toContain('CN=B. Engineer (DEMO)');
    expect(id.certificateSubject).toContain('title=Process engineer');
    expect(id.certificateSubject).toContain('O=Demo Water Works (invented)');
    expect(id.notAfter.getUTCFullYear()).toBe(2034);
  });

  it('a sheet signed with the demo certificate says so in the header of every page, not only in the signature block', () => {
    const file = pdfFile(signed, 'demo-notice');
    const pages = Number(/Pages:\s+(\d+)/.exec(run('pdfinfo', [file]))![1]);
    expect(pages).toBeGreaterThan(1);
    for (let page = 1; page <= pages; page++) expect(pdfText(file, page).replace(/\s+/g, ' ')).toContain(DEMO_LABEL);
    // page 1 says why, in the header band above the first section
    const first = pdfText(file, 1).replace(/\s+/g, ' ');
    expect(first.indexOf('signed with the self-signed demo certificate')).toBeGreaterThan(-1);
    expect(first.indexOf(DEMO_LABEL)).toBeLessThan(first.indexOf('1 Result') >= 0 ? first.indexOf('1 Result') : first.length);
  });

  it('loadSigner reopens the PKCS#12 with its password', () => {
    const again = loadSigner(demo.p12, 'demo password');
    expect(again.identity.certificateSha256).toBe(demo.signer.identity.certificateSha256);
    expect(again.identity.role).toBe('Process engineer');
  });

  function expectSignerInvalid(f: () => unknown, text: RegExp): void {
    try {
      f();
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DomainError);
      expect((e as DomainError).code).toBe('SIGNER_INVALID');
      expect((e as DomainError).detail).toMatch(text);
    }
  }

  it.each([
    ['a wrong password', () => loadSigner(demo.p12, 'wrong'), /password is wrong/],
    ['bytes that are no PKCS#12', () => loadSigner(Buffer.from('not a p12 file'), 'x'), /not a readable PKCS#12/],
  ])('SIGNER_INVALID for %s', (_what, f, text) => {
    expectSignerInvalid(f, text);
  });

  it('SIGNER_INVALID for a PKCS#12 without a key, without a certificate, or whose certificate is not the key\'s', () => {
    const p12Asn1 = forge.asn1.fromDer(forge.util.createBuffer(demo.p12.toString('binary')));
    const p12 = forge.pkcs12.pkcs12FromAsn1(p12Asn1, 'demo password');
    const cert = p12.getBags({ bagType: forge.pki.oids.certBag! })[forge.pki.oids.certBag!]![0]!.cert!;
    const key = p12.getBags({ bagType: forge.pki.oids.pkcs8ShroudedKeyBag! })[forge.pki.oids.pkcs8ShroudedKeyBag!]![0]!.key!;
    const toDer = (a: forge.asn1.Asn1): Buffer => Buffer.from(forge.asn1.toDer(a).getBytes(), 'binary');
    const certOnly = toDer(forge.pkcs12.toPkcs12Asn1(null, [cert], 'pw', { algorithm: '3des' }));
    const keyOnly = toDer(forge.pkcs12.toPkcs12Asn1(key, null as unknown as forge.pki.Certificate[], 'pw', { algorithm: '3des' }));
    const other = createDemoSigner({ name: 'Other', role: 'Operator', organisation: 'Demo (invented)', password: 'pw' });
    const otherCert = forge.pkcs12
      .pkcs12FromAsn1(forge.asn1.fromDer(forge.util.createBuffer(other.p12.toString('binary'))), 'pw')
      .getBags({ bagType: forge.pki.oids.certBag! })[forge.pki.oids.certBag!]![0]!.cert!;
    const mismatched = toDer(forge.pkcs12.toPkcs12Asn1(key, [otherCert], 'pw', { algorithm: '3des' }));
    expectSignerInvalid(() => loadSigner(certOnly, 'pw'), /no private key/);
    expectSignerInvalid(() => loadSigner(keyOnly, 'pw'), /no X.509 certificate/);
    expectSignerInvalid(() => loadSigner(mismatched, 'pw'), /No certificate in the PKCS#12 file matches its private key/);
  });

  it('a certificate cannot sign outside its validity', async () => {
    const unsigned = await renderSheet(doseSheet(), { placeholder: placeholderFor(demo.signer, new Date('2023-06-01T00:00:00Z')) });
    await expect(signPdf(unsigned, demo.signer, new Date('2023-06-01T00:00:00Z'))).rejects.toMatchObject({ code: 'SIGNER_INVALID' });
  });

  it('createDemoSigner names the empty fields', () => {
    try {
      createDemoSigner({ name: ' ', role: 'Operator', organisation: '' });
      expect.unreachable();
    } catch (e) {
      expect((e as DomainError).fields.map((f) => f.pointer)).toEqual(['/name', '/organisation']);
    }
  });
});
