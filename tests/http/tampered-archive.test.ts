/**
 * Through the HTTP contract: the service does not act on a stored row that fails its hash check.
 * An archive is made by a running app, copied, and the copy changed through a raw better-sqlite3
 * connection (as someone with file access could); an app on the copy must refuse with a 409
 * ARCHIVE_RECORD_ALTERED problem naming the row, never act on it:
 * - an operator whose role was changed to admin cannot create users;
 * - a plant profile whose flow was changed 1.5 → 1.6 MGD is neither served nor used for a dose or a sheet;
 * - a signer whose certificate subject was changed signs nothing.
 * And per-sheet verification compares the subject the record names with the certificate inside the
 * PDF signature (the service's own CMS reader), catching a sheet recorded under a false subject.
 *
 * The plant and the samples are invented. SHA-256 with node:crypto (FIPS 180-4).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { cpSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { buildApp } from '../../src/http/app.js';
import { registryRecordHash, rowDigest, REGISTRY_TABLES } from '../../src/archive/registry.js';
import { US_PLANT } from './fixtures/us-plant.js';

const BOOTSTRAP = 'tampered-archive-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const FILE = 'oxidant-dosing.sqlite';

const sampledAt = new Date(Date.now() - 3_600_000).toISOString();
const sheetBody = (extra: Record<string, unknown> = {}) => ({
  oxidant: 'potassium-permanganate',
  sample: { pH: 7.2, temperatureC: 12, iron: { value: 1.5, unit: 'mg/L' }, manganese: { value: 0.4, unit: 'mg/L' } },
  sampledAt,
  ...extra,
});

/** Copy the data folder of a closed app, change the copy's database, and answer the copy's folder. */
function tamperedCopy(dataDir: string, tamper: (db: Database.Database) => void): string {
  const copy = mkdtempSync(join(tmpdir(), 'oxd-http-tampered-'));
  cpSync(dataDir, copy, { recursive: true });
  const db = new Database(join(copy, FILE));
  try {
    for (const t of ['users', 'user_events', 'signers', 'plant_versions', 'registry_log', 'sheets']) {
      for (const suffix of ['no_update', 'no_delete', 'no_replace']) db.exec(`DROP TRIGGER IF EXISTS ${t}_${suffix}`);
    }
    tamper(db);
  } finally {
    db.close();
  }
  return copy;
}

describe('an app on a changed copy of the archive refuses to act on the changed rows', () => {
  let dataDir: string;
  let operator: { id: string; token: string };

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'oxd-http-tamper-src-'));
    const app = await buildApp({ dataDir, bootstrapToken: BOOTSTRAP });
    try {
      const u = await app.inject({ method: 'POST', url: '/api/v1/users', headers: admin, payload: { name: 'Probe operator (invented)', role: 'operator' } });
      expect(u.statusCode, u.body).toBe(201);
      operator = { id: u.json().id, token: u.json().token };
      const p = await app.inject({ method: 'POST', url: '/api/v1/plants', headers: admin, payload: US_PLANT });
      expect(p.statusCode, p.body).toBe(201);
      // before any change: the operator is an operator, the plant serves 1.5 MGD
      const denied = await app.inject({ method: 'POST', url: '/api/v1/users', headers: { authorization: `Bearer ${operator.token}` }, payload: { name: 'x', role: 'admin' } });
      expect(denied.statusCode).toBe(403);
    } finally {
      await app.close();
    }
  });

  it("2a: an operator's role changed to admin in the file: POST /api/v1/users is a 409 naming the user, no user is made", async () => {
    const copy = tamperedCopy(dataDir, (db) => {
      expect(db.prepare("UPDATE users SET role = 'admin' WHERE id = ?").run(operator.id).changes).toBe(1);
    });
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      const r = await app.inject({ method: 'POST', url: '/api/v1/users', headers: { authorization: `Bearer ${operator.token}` }, payload: { name: 'Evil admin (invented)', role: 'admin' } });
      expect(r.statusCode, r.body).toBe(409);
      expect(r.headers['content-type']).toContain('application/problem+json');
      expect(r.json()).toMatchObject({ code: 'ARCHIVE_RECORD_ALTERED', status: 409 });
      expect(r.json().detail).toContain(operator.id);
      const users = await app.inject({ method: 'GET', url: '/api/v1/users', headers: admin });
      expect(users.json().users.map((u: { name: string }) => u.name)).not.toContain('Evil admin (invented)');
      // the list shows the changed row, marked, and the untouched admin as it is
      expect(users.json().users).toContainEqual(expect.objectContaining({ id: operator.id, role: 'admin', altered: true }));
      expect(users.json().users).toContainEqual(expect.objectContaining({ name: 'admin', altered: false, problems: [] }));
      // the untouched admin still works, and the walk names the row
      const v = await app.inject({ method: 'GET', url: '/api/v1/archive/verification' });
      expect(v.json().problems).toContainEqual(expect.objectContaining({ id: `users:${operator.id}`, check: 'registry-row-hash' }));
    } finally {
      await app.close();
    }
  });

  it('2b: a plant flow changed 1.5 → 1.6 MGD in the file: not served, not used for a dose or a sheet', async () => {
    const copy = tamperedCopy(dataDir, (db) => {
      expect(db.prepare(`UPDATE plant_versions SET profile_json = replace(profile_json, '"value":1.5', '"value":1.6') WHERE plant_id = 'probe-us'`).run().changes).toBe(1);
    });
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      const one = await app.inject({ method: 'GET', url: '/api/v1/plants/probe-us' });
      expect(one.statusCode, one.body).toBe(409);
      expect(one.json()).toMatchObject({ code: 'ARCHIVE_RECORD_ALTERED', params: { plantId: 'probe-us', version: 1 } });
      expect(one.body).not.toContain('1.6');
      const list = await app.inject({ method: 'GET', url: '/api/v1/plants' });
      expect(list.json().plants).toContainEqual(expect.objectContaining({ id: 'probe-us', altered: true }));
      expect(list.json().plants).toContainEqual(expect.objectContaining({ id: 'demo-groundwater', altered: false }));
      const dose = await app.inject({ method: 'POST', url: '/api/v1/doses', payload: { ...sheetBody({ plantId: 'probe-us' }), sampledAt: undefined } });
      expect(dose.statusCode, dose.body).toBe(409);
      const sheet = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody({ plantId: 'probe-us' }) });
      expect(sheet.statusCode, sheet.body).toBe(409);
      expect(sheet.json().detail).toContain('Plant probe-us version 1');
      const sheets = await app.inject({ method: 'GET', url: '/api/v1/sheets?plantId=probe-us' });
      expect(sheets.statusCode).toBe(200);
      expect(sheets.json()).toMatchObject({ sheets: [] });
      expect(sheets.json().notes.join(' ')).toContain('fails its integrity check');
    } finally {
      await app.close();
    }
  });

  it('2c: the demo signer’s certificate subject changed in the file: POST /api/v1/sheets signs nothing (409)', async () => {
    const copy = tamperedCopy(dataDir, (db) => {
      expect(db.prepare("UPDATE signers SET certificate_subject = 'CN=Chief Engineer (fake), O=Nowhere' WHERE user_id IS NULL").run().changes).toBe(1);
    });
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody() });
      expect(r.statusCode, r.body).toBe(409);
      expect(r.json()).toMatchObject({ code: 'ARCHIVE_RECORD_ALTERED', params: { table: 'signers' } });
      const v = await app.inject({ method: 'GET', url: '/api/v1/archive/verification' });
      expect(v.json().records).toBe(0);
    } finally {
      await app.close();
    }
  });

  it('2c: a sheet recorded under a false subject (the registry rewritten to match) fails per-sheet verification', async () => {
    // The strongest change: the signer subject and its registry entry and every later entry recomputed,
    // so the row check passes (only a registry head written down earlier would show it). The sheet then
    // records the false subject, but the certificate inside its signature is the demo signer's.
    const copy = tamperedCopy(dataDir, (db) => {
      db.prepare("UPDATE signers SET certificate_subject = 'CN=Chief Engineer (fake), O=Nowhere' WHERE user_id IS NULL").run();
      const entries = db.prepare('SELECT * FROM registry_log ORDER BY seq').all() as {
        seq: number; format: number; table_name: 'users' | 'user_events' | 'signers' | 'plant_versions'; row_key: string; row_sha256: string; logged_at: string; prev_hash: string; record_hash: string;
      }[];
      let prev = '0'.repeat(64);
      for (const e of entries) {
        // the row by its registry key (REGISTRY_TABLES: a column, or an expression for a composite key)
        const row = db.prepare(`SELECT * FROM ${e.table_name} WHERE CAST(${REGISTRY_TABLES[e.table_name]} AS TEXT) = ?`).get(e.row_key) as Record<string, unknown>;
        const next = { ...e, row_sha256: rowDigest(e.table_name, row, e.format)!, prev_hash: prev };
        const hash = registryRecordHash(next);
        db.prepare('UPDATE registry_log SET row_sha256 = ?, prev_hash = ?, record_hash = ? WHERE seq = ?').run(next.row_sha256, prev, hash, e.seq);
        prev = hash;
      }
    });
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody() });
      expect(r.statusCode, r.body).toBe(201);
      expect(r.json().signer.subject).toBe('CN=Chief Engineer (fake), O=Nowhere');
      const v = await app.inject({ method: 'GET', url: `/api/v1/sheets/${r.json().id}/verification` });
      expect(v.json()).toMatchObject({ valid: false, hashMatches: true, signatureValid: true, chainValid: true, recordHashMatches: true, signerSubjectMatches: false });
      expect(v.json().problems.join(' ')).toMatch(/names the signer certificate "CN=Chief Engineer \(fake\), O=Nowhere", but the PDF was signed with the certificate "CN=.*DEMO/);
    } finally {
      await app.close();
    }
  });

  it('an untouched copy: everything works and per-sheet verification finds the recorded subject in the signature', async () => {
    const copy = tamperedCopy(dataDir, () => {});
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      expect((await app.inject({ method: 'GET', url: '/api/v1/plants/probe-us' })).json().profile.flow).toEqual({ value: 1.5, unit: 'MGD' });
      const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: { authorization: `Bearer ${operator.token}` }, payload: sheetBody({ plantId: 'probe-us' }) });
      expect(r.statusCode, r.body).toBe(201);
      const v = await app.inject({ method: 'GET', url: `/api/v1/sheets/${r.json().id}/verification` });
      expect(v.json()).toMatchObject({ valid: true, signatureValid: true, signerSubjectMatches: true, problems: [] });
    } finally {
      await app.close();
    }
  });

  it('a correction naming a sheet that fails its integrity check is a 409 naming /supersedes; the correction of an intact sheet is not', async () => {
    const source = mkdtempSync(join(tmpdir(), 'oxd-http-tamper-sheet-'));
    let firstId = '';
    {
      const app = await buildApp({ dataDir: source, bootstrapToken: BOOTSTRAP });
      try {
        const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody() });
        expect(r.statusCode, r.body).toBe(201);
        firstId = r.json().id;
      } finally {
        await app.close();
      }
    }
    const copy = tamperedCopy(source, (db) => {
      expect(db.prepare("UPDATE sheets SET result_json = replace(result_json, '\"oxidant\"', '\"oxidant \"') WHERE id = ?").run(firstId).changes).toBe(1);
    });
    const app = await buildApp({ dataDir: copy, bootstrapToken: BOOTSTRAP });
    try {
      const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody({ supersedes: firstId, correctionReason: 'iron reading corrected' }) });
      expect(r.statusCode, r.body).toBe(409);
      expect(r.json().code).toBe('ARCHIVE_RECORD_ALTERED');
      expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/supersedes']);
    } finally {
      await app.close();
    }
    // on the untouched archive the same correction is made
    const ok = await buildApp({ dataDir: source, bootstrapToken: BOOTSTRAP });
    try {
      const r = await ok.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload: sheetBody({ supersedes: firstId, correctionReason: 'iron reading corrected' }) });
      expect(r.statusCode, r.body).toBe(201);
    } finally {
      await ok.close();
    }
  });
});
