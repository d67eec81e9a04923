/**
 * The paper of a signed dose sheet: the request's pageSize when given; else US Letter when the sheet
 * leads with US units (the request's options.units, else the plant profile's preferredUnits); else A4.
 * Independent check: pdfinfo (poppler-utils) reads the page size; US Letter is 8.5 × 11 in = 612 × 792 pt
 * (ANSI/ASME Y14.1), A4 is 210 × 297 mm = 595.28 × 841.89 pt (ISO 216; pdfinfo prints 595.28 x 841.89).
 * The plants and samples are invented.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';
import { pdfFile, requireTools, run } from '../sheets/tools.js';
import { US_PLANT } from './fixtures/us-plant.js';

const BOOTSTRAP = 'sheet-page-size-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const sampledAt = new Date(Date.now() - 3_600_000).toISOString();
const sample = { pH: 7.2, temperatureC: 12, iron: { value: 1.2, unit: 'mg/L' }, manganese: { value: 0.1, unit: 'mg/L' } };
const LETTER = /Page size:\s+612 x 792 pts \(letter\)/;
const A4 = /Page size:\s+595\.2\d* x 841\.89\d* pts \(A4\)/;

describe('the page size of a dose sheet follows the units it leads with', () => {
  let app: FastifyInstance;
  beforeAll(async () => {
    requireTools('pdfinfo');
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-page-')), bootstrapToken: BOOTSTRAP });
    const p = await app.inject({ method: 'POST', url: '/api/v1/plants', headers: admin, payload: US_PLANT });
    expect(p.statusCode, p.body).toBe(201);
  });
  afterAll(async () => {
    await app?.close();
  });

  it.each([
    ['a US plant', { plantId: 'probe-us' }, 'LETTER', LETTER],
    ['an SI plant (the demo plant)', { plantId: 'demo-groundwater' }, 'A4', A4],
    ['a US plant, the request asking for A4', { plantId: 'probe-us', pageSize: 'A4' }, 'A4', A4],
    ['an SI plant, the request asking for "Letter"', { plantId: 'demo-groundwater', pageSize: 'Letter' }, 'LETTER', LETTER],
    ['an SI plant, the request asking for US units', { plantId: 'demo-groundwater', options: { units: 'US' } }, 'LETTER', LETTER],
    ['a US plant, the request asking for SI units', { plantId: 'probe-us', options: { units: 'SI' } }, 'A4', A4],
  ])('%s → %s', async (_what, extra, pageSize, size) => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: { oxidant: 'potassium-permanganate', sample, sampledAt, ...extra } });
    expect(r.statusCode, r.body).toBe(201);
    expect(r.json().pageSize).toBe(pageSize);
    const pdf = await app.inject({ method: 'GET', url: r.json().pdfUrl });
    expect(run('pdfinfo', [pdfFile(pdf.rawPayload, `page-${pageSize}`)])).toMatch(size);
  });
});

describe('jar-test bench plans follow the plant the same way', () => {
  let app: FastifyInstance;
  beforeAll(async () => {
    requireTools('pdfinfo');
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-page-jar-')), bootstrapToken: BOOTSTRAP });
    const p = await app.inject({ method: 'POST', url: '/api/v1/plants', headers: admin, payload: US_PLANT });
    expect(p.statusCode, p.body).toBe(201);
  });
  afterAll(async () => {
    await app?.close();
  });

  it.each([
    ['a US plant', { plantId: 'probe-us' }, LETTER],
    ['an SI plant', { plantId: 'demo-groundwater' }, A4],
    ['a US plant, the request asking for A4', { plantId: 'probe-us', pageSize: 'A4' }, A4],
    ['no plant', {}, A4],
  ])('%s', async (_what, extra, size) => {
    const r = await app.inject({
      method: 'POST',
      url: '/api/v1/jar-tests/plans',
      headers: { accept: 'application/pdf' },
      payload: { oxidant: 'potassium-permanganate', sample, jarVolume: { value: 1, unit: 'L' }, ...extra },
    });
    expect(r.statusCode, r.body).toBe(200);
    expect(run('pdfinfo', [pdfFile(r.rawPayload, 'jar-page')])).toMatch(size);
  });
});
