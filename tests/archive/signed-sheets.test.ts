/**
 * The archive with the real signing code of src/sheets: a demo signer stored (PKCS#12 + encrypted
 * password) and loaded back, a rendered and signed sheet appended, and its signature checked through
 * verifySignedPdf passed in to verifySheet. A byte changed in the stored PDF fails both the archive's
 * hash and the signature.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { newSheetId, type Archive } from '../../src/archive/index.js';
import { createDemoSigner, loadSigner, renderSignedSheet } from '../../src/sheets/sign.js';
import { verifySignedPdf } from '../../src/sheets/verify.js';
import { doseSheet } from '../sheets/fixtures.js';
import { openTestArchive, rawTamper, tempDataDir } from './fixtures/archive-fixture.js';

let dir: string;
let cleanup: () => void;
let archive: Archive;
let sheetId: string;

beforeAll(async () => {
  const t = tempDataDir('signed');
  dir = t.dir;
  cleanup = t.cleanup;
  archive = openTestArchive(dir);
  const admin = archive.bootstrapAdmin({}).user!;
  const demo = createDemoSigner({ name: 'Demo Signer', role: 'Shift operator', organisation: 'Example Water Works (invented)' });
  archive.addSigner({
    name: 'Demo Signer',
    role: 'Shift operator',
    certificateSubject: demo.signer.identity.certificateSubject,
    p12: demo.p12,
    password: demo.password,
    demo: true,
    createdBy: 'system:first-start',
  });
  const stored = archive.getSignerForUser(admin.id)!;
  const signer = loadSigner(stored.p12, stored.password, { name: stored.name, role: stored.role });
  sheetId = newSheetId('dose');
  const { pdf } = await renderSignedSheet(doseSheet({ id: sheetId }), signer);
  archive.appendSheet({
    id: sheetId,
    kind: 'dose',
    sampledAt: '2026-03-14T08:30:00+01:00',
    createdBy: admin.id,
    signerId: stored.id,
    request: { oxidant: 'potassium-permanganate' },
    result: { dose: { value: 1.6, unit: 'mg/L', basis: 'as KMnO4' } },
    pdf,
  });
}, 60_000);
afterAll(() => {
  archive.close();
  cleanup();
});

describe('a signed sheet in the archive', () => {
  it('verifies: hash, record, chain and the PDF signature (verifySignedPdf)', async () => {
    expect(await archive.verifySheet(sheetId, { verifyPdfSignature: verifySignedPdf })).toMatchObject({
      valid: true,
      hashMatches: true,
      recordHashMatches: true,
      chainValid: true,
      signatureValid: true,
    });
    expect(await archive.verifyArchive({ verifyPdfSignature: verifySignedPdf })).toMatchObject({ valid: true, records: 1, signaturesChecked: 1 });
  });

  it('one byte changed inside the signed range: hash and signature both fail', async () => {
    archive.close();
    await rawTamper(archive.file, ['sheets'], (db) => {
      const { pdf } = db.prepare('SELECT pdf FROM sheets WHERE id = ?').get(sheetId) as { pdf: Buffer };
      const [, b] = verifySignedPdf(pdf).byteRange!;
      const at = Math.floor(b! / 2); // inside the first signed range
      pdf[at] = pdf[at]! ^ 0x01;
      db.prepare('UPDATE sheets SET pdf = ? WHERE id = ?').run(pdf, sheetId);
    });
    archive = openTestArchive(dir);
    const v = await archive.verifySheet(sheetId, { verifyPdfSignature: verifySignedPdf });
    expect(v).toMatchObject({ valid: false, hashMatches: false, recordHashMatches: false, chainValid: true, signatureValid: false });
  });
});
