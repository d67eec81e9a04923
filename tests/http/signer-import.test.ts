/**
 * Importing a signer: a certificate whose common name (CN, X.501 / RFC 5280 subject attribute) does
 * not contain the user's name is accepted with a warning naming both, because the sheet prints the
 * user's name as the signer while the PDF signature names the certificate's holder; the sheet prints
 * the certificate subject beside the name (read back with pdftotext, poppler-utils).
 * The people and certificates are invented (self-signed, made here).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';
import { commonNameOf, signerWarnings } from '../../src/http/routes/v1/users.js';
import { createDemoSigner } from '../../src/sheets/sign.js';
import { pdfFile, pdfText, requireTools } from '../sheets/tools.js';

const BOOTSTRAP = 'signer-import-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const p12Of = (name: string) =>
  createDemoSigner({ name, role: 'Chief operator, grade III', organisation: 'Example Water Works (invented)', password: 'p12-password-0123' }).p12.toString('base64');

describe('the common name of a subject', () => {
  it.each([
    ['CN=Jane Roe (DEMO), title=Chief operator, O=Example', 'Jane Roe (DEMO)'],
    ['O=Example, CN=Jane Roe', 'Jane Roe'],
    ['O=Example, OU=Plant', null],
  ])('%s → %s', (subject, cn) => {
    expect(commonNameOf(subject)).toBe(cn);
  });

  it.each([
    ['Jane Roe', 'CN=Jane Roe (DEMO), O=Example', 0],
    ['jane  ROE', 'CN=Jane Roe (DEMO), O=Example', 0],
    ['Probe operator', 'CN=Jane Roe (DEMO), O=Example', 1],
    ['Jane Roe', 'O=Example', 1],
  ])('user %j, certificate %j: %i warning(s)', (user, subject, n) => {
    expect(signerWarnings(user, subject)).toHaveLength(n);
  });
});

describe('POST /api/v1/signers warns when the certificate is not the user’s', () => {
  let app: FastifyInstance;
  let operator: { id: string; token: string };
  beforeAll(async () => {
    requireTools('pdftotext');
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-signer-import-')), bootstrapToken: BOOTSTRAP });
    const u = await app.inject({ method: 'POST', url: '/api/v1/users', headers: admin, payload: { name: 'Probe operator', role: 'operator' } });
    expect(u.statusCode, u.body).toBe(201);
    operator = { id: u.json().id, token: u.json().token };
  });
  afterAll(async () => {
    await app?.close();
  });

  it('an operator imports a certificate for "Jane Roe": 201 with a warning naming both; the sheet prints the certificate subject', async () => {
    const r = await app.inject({
      method: 'POST',
      url: '/api/v1/signers',
      headers: { authorization: `Bearer ${operator.token}` },
      payload: { role: 'Chief operator, grade III', p12Base64: p12Of('Jane Roe'), password: 'p12-password-0123' },
    });
    expect(r.statusCode, r.body).toBe(201);
    expect(r.json().warnings).toHaveLength(1);
    expect(r.json().warnings[0]).toContain('issued to "Jane Roe (DEMO)", but it is imported for the user "Probe operator"');
    const sheet = await app.inject({
      method: 'POST',
      url: '/api/v1/sheets',
      headers: { authorization: `Bearer ${operator.token}` },
      payload: { plantId: 'demo-groundwater', oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } }, sampledAt: new Date(Date.now() - 3_600_000).toISOString() },
    });
    expect(sheet.statusCode, sheet.body).toBe(201);
    const pdf = (await app.inject({ method: 'GET', url: sheet.json().pdfUrl })).rawPayload;
    const text = pdfText(pdfFile(pdf, 'signer-import')).replace(/\s+/g, ' ');
    expect(text).toContain('Probe operator');
    expect(text).toContain('Certificate: CN=Jane Roe (DEMO)');
  });

  it('a certificate whose CN holds the user’s name: no warning', async () => {
    const u = await app.inject({ method: 'POST', url: '/api/v1/users', headers: admin, payload: { name: 'Jane Roe', role: 'operator' } });
    const r = await app.inject({
      method: 'POST',
      url: '/api/v1/signers',
      headers: { authorization: `Bearer ${u.json().token}` },
      payload: { role: 'Chief operator, grade III', p12Base64: p12Of('Jane Roe'), password: 'p12-password-0123' },
    });
    expect(r.statusCode, r.body).toBe(201);
    expect(r.json().warnings).toEqual([]);
  });
});
