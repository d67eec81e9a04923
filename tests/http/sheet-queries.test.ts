/**
 * from/to of the sheet list and the CSV export: a date-time's zone "+" sent unencoded arrives as a
 * space (in a URL query "+" stands for a space: the WHATWG URL standard's
 * application/x-www-form-urlencoded parser, as Node's querystring does), and the 400 says to send it
 * as %2B; sent as %2B the same bound is accepted.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';
import { plusAsSpaceProblem } from '../../src/http/schemas/common.js';

describe('a "+" of a zone in a query date-time', () => {
  let app: FastifyInstance;
  beforeAll(async () => {
    app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-queries-')), bootstrapToken: 'sheet-queries-bootstrap-token-0123456789' });
  });
  afterAll(async () => {
    await app?.close();
  });

  it('is read as a space, as URLSearchParams reads it (WHATWG URL)', () => {
    expect(new URLSearchParams('from=2026-12-01T07:30:00+01:00').get('from')).toBe('2026-12-01T07:30:00 01:00');
  });

  it.each([
    ['/api/v1/sheets', 'from', '2026-12-01T07:30:00+01:00', '2026-12-01T07:30:00%2B01:00'],
    ['/api/v1/sheets/export.csv', 'to', '2026-12-31T23:59+01:00', '2026-12-31T23:59%2B01:00'],
    ['/api/v1/sheets', 'to', '2026-12-01T07:30:00.250+05:30', '2026-12-01T07:30:00.250%2B05:30'],
  ])('%s?%s=%s: a 400 naming the field and saying to send %%2B; %s is accepted', async (path, field, sent, encoded) => {
    const r = await app.inject({ method: 'GET', url: `${path}?${field}=${sent}` });
    expect(r.statusCode, r.body).toBe(400);
    const err = (r.json().errors as { pointer: string; message: string }[]).find((e) => e.pointer === `/${field}`);
    expect(err?.message).toContain('send it as %2B');
    expect(err?.message).toContain(`e.g. ${encoded}`);
    const ok = await app.inject({ method: 'GET', url: `${path}?${field}=${encoded}` });
    expect(ok.statusCode, ok.body).toBe(200);
  });

  it.each([
    ['2026-12-01T07:30:00 01:00', true],
    ['2026-12-01T07:30 01:00', true],
    ['2026-12-01 07:30:00', false], // a space for the T is another mistake: the general form message applies
    ['2026-12-01T07:30:00Z', false],
  ])('%j: the %%2B hint is %s', (text, hinted) => {
    expect(plusAsSpaceProblem(text) !== undefined).toBe(hinted);
  });
});
