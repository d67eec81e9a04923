import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';

let app: FastifyInstance;
beforeAll(async () => {
  app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-system-')) });
});
afterAll(async () => {
  await app.close();
});

describe('system routes', () => {
  it('GET /health answers {"status":"ok"}', async () => {
    const r = await app.inject({ method: 'GET', url: '/health' });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toEqual({ status: 'ok' });
  });

  it('serves an OpenAPI 3 document generated from the route schemas', async () => {
    const r = await app.inject({ method: 'GET', url: '/openapi.json' });
    expect(r.statusCode).toBe(200);
    const doc = r.json();
    expect(doc.openapi).toMatch(/^3\./);
    expect(doc.paths['/health'].get.responses['200']).toBeDefined();
  });

  it('serves a browsable documentation page at /docs', async () => {
    const r = await app.inject({ method: 'GET', url: '/docs/' });
    expect(r.statusCode).toBe(200);
    expect(r.headers['content-type']).toMatch(/text\/html/);
    expect(r.body).toMatch(/swagger/i);
  });

  it('an unknown route is an RFC 9457 problem', async () => {
    const r = await app.inject({ method: 'GET', url: '/nowhere' });
    expect(r.statusCode).toBe(404);
    expect(r.headers['content-type']).toMatch(/application\/problem\+json/);
    const p = r.json();
    expect(p).toMatchObject({ status: 404, title: expect.any(String), type: expect.stringMatching(/^\/problems\//), detail: expect.stringContaining('/nowhere') });
  });

  it('a problem type resolves to its catalogue entry', async () => {
    const r = await app.inject({ method: 'GET', url: '/problems/formula-syntax' });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toMatchObject({ code: 'FORMULA_SYNTAX', status: 400 });
  });
});
