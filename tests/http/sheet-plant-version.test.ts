/**
 * A sheet names the plant profile version its dose was computed with, even when a new version is
 * stored while the sheet is being made (the version is read once, with the profile). The plant is
 * invented; 1 MGD = 3785.411784 m³/d (NIST SP 811, US liquid gallon 3.785411784 L).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';

const BOOTSTRAP = 'sheet-plant-version-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const plant = (mgd: number) => ({
  id: 'probe-us',
  name: 'US demo plant (invented)',
  invented: true,
  flow: { value: mgd, unit: 'MGD' },
  products: [{ oxidant: 'potassium-permanganate', strength: { value: 2, unit: '% w/w' }, purity: { value: 97, unit: '%' } }],
  pumps: [],
  targets: { residual: { value: 0, unit: 'mg/L' } },
  preferredUnits: 'US',
});
const body = { plantId: 'probe-us', oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 12, iron: { value: 1.2, unit: 'mg/L' } }, sampledAt: new Date(Date.now() - 3_600_000).toISOString() };

describe('the plant version a sheet names', () => {
  let app: FastifyInstance;
  beforeAll(async () => {
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-plant-version-')), bootstrapToken: BOOTSTRAP });
    expect((await app.inject({ method: 'POST', url: '/api/v1/plants', headers: admin, payload: plant(1.5) })).statusCode).toBe(201);
  });
  afterAll(async () => {
    await app?.close();
  });

  it('a version stored between the dose and the archiving: the sheet names the version its dose used', async () => {
    const archive = app.services.archive;
    const original = archive.getPlant.bind(archive);
    let calls = 0;
    // the first read of the plant is followed at once by an engineer storing version 2 (2.0 MGD)
    archive.getPlant = ((id: string, version?: number) => {
      const p = original(id, version);
      if (calls++ === 0) archive.savePlant(plant(2.0), { createdBy: 'system:test' });
      return p;
    }) as typeof archive.getPlant;
    let r;
    try {
      r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: body });
    } finally {
      archive.getPlant = original;
    }
    expect(r.statusCode, r.body).toBe(201);
    const sheet = (await app.inject({ method: 'GET', url: `/api/v1/sheets/${r.json().id}` })).json();
    expect(sheet.plantVersion).toBe(1);
    expect(sheet.result.units.flow.si.value).toBeCloseTo(1.5 * 3785.411784, 6);
    // the next sheet is made with version 2
    const next = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: body });
    const again = (await app.inject({ method: 'GET', url: `/api/v1/sheets/${next.json().id}` })).json();
    expect(again.plantVersion).toBe(2);
    expect(again.result.units.flow.si.value).toBeCloseTo(2.0 * 3785.411784, 6);
  });
});
