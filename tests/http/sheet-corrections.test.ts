/**
 * A correction (supersedes) that changes the oxidant, or moves the sample into another calendar
 * month, is accepted with warnings naming both values: the monthly operating report (which counts
 * a sample in its local month, as the from/to filter does) would lose a row in one month and gain
 * one in another. The months are read from sampledAt as written, with its offset (ISO 8601 local
 * time: 2025-12-01T00:30+01:00 is a December sample although it is 30 November in UTC).
 * The samples are invented; the demo plant is the invented one in tables/demo/demo-plant.json.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';

const BOOTSTRAP = 'sheet-corrections-bootstrap-token-0123456789';
const admin = { authorization: `Bearer ${BOOTSTRAP}` };
const sample = { pH: 7.2, temperatureC: 12, iron: { value: 1.2, unit: 'mg/L' }, manganese: { value: 0.1, unit: 'mg/L' } };
/** The correction warnings, without the one every sample older than 90 days gets (these samples are of 2025). */
const correctionOnly = (w: string[]): string[] => w.filter((x) => !/days before now/.test(x));
const body = (oxidant: string, sampledAt: string, extra: Record<string, unknown> = {}) => ({ plantId: 'demo-groundwater', oxidant, sample, sampledAt, ...extra });
const REASON = { correctionReason: 'lab re-ran the sample (invented)' };

describe('warnings of a correction that changes the oxidant or the month', () => {
  let app: FastifyInstance;
  const post = (payload: Record<string, unknown>) => app.inject({ method: 'POST', url: '/api/v1/sheets', headers: admin, payload });
  beforeAll(async () => {
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-corrections-')), bootstrapToken: BOOTSTRAP });
  });
  afterAll(async () => {
    await app?.close();
  });

  it('a sample more than 90 days old is filed with a warning naming its report month (a mistyped year is seen); a recent one is not', async () => {
    const now = Date.now();
    const old = new Date(now - 400 * 86_400_000).toISOString();
    const r = await post(body('sodium-hypochlorite', old));
    expect(r.statusCode, r.body).toBe(201);
    const w = (r.json().warnings as string[]).filter((x) => /days before now/.test(x));
    expect(w).toHaveLength(1);
    expect(w[0]).toContain(`${Math.floor((now - Date.parse(old)) / 86_400_000)} days before now`);
    expect(w[0]).toContain(`the report for ${old.slice(0, 7)}`);
    const recent = await post(body('sodium-hypochlorite', new Date(now - 3 * 3_600_000).toISOString()));
    expect((recent.json().warnings as string[]).filter((x) => /days before now/.test(x))).toEqual([]);
  });

  it('hypochlorite sampled 2 Dec corrected by permanganate sampled 15 Oct: two warnings, each naming both values', async () => {
    const first = await post(body('sodium-hypochlorite', '2025-12-02T08:00:00+01:00'));
    expect(first.statusCode, first.body).toBe(201);
    const id = first.json().id as string;
    const fix = await post(body('potassium-permanganate', '2025-10-15T08:00:00+01:00', { supersedes: id, ...REASON }));
    expect(fix.statusCode, fix.body).toBe(201);
    const warnings = correctionOnly(fix.json().warnings);
    expect(warnings).toHaveLength(2);
    expect(warnings[0]).toContain(`This correction is for potassium-permanganate; the sheet it corrects, ${id}, is for sodium-hypochlorite`);
    expect(warnings[1]).toContain(`dated 2025-10-15 (local), in 2025-10; the sheet it corrects, ${id}, was sampled on 2025-12-02, in 2025-12`);
    expect(warnings[1]).toContain('The monthly report for 2025-12 loses this row and the one for 2025-10 gains it');
  });

  it.each([
    // same oxidant, same local month: nothing to warn about
    ['the same oxidant and month', '2025-11-10T08:00:00+01:00', 'sodium-hypochlorite', '2025-11-20T09:00:00+01:00', 0],
    // 00:30 at UTC+01:00 on 1 December is 23:30 UTC on 30 November: still a December sample locally
    ['a local-December sample that is November in UTC', '2025-12-03T08:00:00+01:00', 'sodium-hypochlorite', '2025-12-01T00:30:00+01:00', 0],
    // the other way round: 23:30 at UTC−05:00 on 30 November is 04:30 UTC on 1 December, a November sample
    ['a local-November sample that is December in UTC', '2025-12-03T08:00:00+01:00', 'sodium-hypochlorite', '2025-11-30T23:30:00-05:00', 1],
    ['another oxidant, same month', '2025-09-03T08:00:00+01:00', 'potassium-permanganate', '2025-09-04T08:00:00+01:00', 1],
  ])('%s', async (_what, originalAt, oxidant, correctionAt, n) => {
    const first = await post(body('sodium-hypochlorite', originalAt));
    expect(first.statusCode, first.body).toBe(201);
    const fix = await post(body(oxidant, correctionAt, { supersedes: first.json().id, ...REASON }));
    expect(fix.statusCode, fix.body).toBe(201);
    expect(correctionOnly(fix.json().warnings)).toHaveLength(n);
  });
});
