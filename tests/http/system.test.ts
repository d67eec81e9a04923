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
    // every route of the issues' contracts is documented, with its request body schema
    const contract: [string, string][] = [
      ['post', '/api/v1/reactions/balance'], ['post', '/api/v1/couples/potential'], ['post', '/api/v1/cells/evaluate'],
      ['get', '/api/v1/tables/potentials'], ['post', '/api/v1/doses'], ['post', '/api/v1/sheets'], ['get', '/api/v1/sheets'],
      ['get', '/api/v1/sheets/{id}'], ['get', '/api/v1/sheets/{id}/pdf'], ['get', '/api/v1/sheets/{id}/verification'],
      ['get', '/api/v1/sheets/export.csv'], ['get', '/api/v1/archive/verification'], ['post', '/api/v1/users'],
    ];
    for (const [method, path] of contract) {
      const op = doc.paths[path]?.[method];
      expect(op, `${method.toUpperCase()} ${path}`).toBeDefined();
      expect(op.responses['4XX'] ?? op.responses['4xx'] ?? op.responses['400'], `${method.toUpperCase()} ${path} documents its problems`).toBeDefined();
      if (method === 'post') expect(op.requestBody?.content?.['application/json']?.schema, `${path} body`).toBeDefined();
    }
    // problems are documented as application/problem+json, files as their own media types (not the error schema)
    expect(Object.keys(doc.paths['/api/v1/doses'].post.responses['4XX'].content)).toEqual(['application/problem+json']);
    for (const [path, type] of [['/api/v1/sheets/{id}/pdf', 'application/pdf'], ['/api/v1/sheets/export.csv', 'text/csv']] as const) {
      expect(doc.paths[path].get.responses['200'].content[type].schema, path).toEqual({ type: 'string', format: 'binary' });
    }
    const plan = doc.paths['/api/v1/jar-tests/plans'].post.responses['200'].content;
    expect(plan['application/json'].schema.properties.jars).toBeDefined();
    expect(plan['application/pdf'].schema).toEqual({ type: 'string', format: 'binary' });
    // every response has a description of its own, and answers carry no ±(2^53 − 1) noise
    expect(r.body).not.toContain('Default Response');
    expect(JSON.stringify(doc.paths['/api/v1/cells/evaluate'].post.responses['200'])).not.toContain('9007199254740991');
    // a nullable member of an answer is a JSON Schema type list, valid in OpenAPI 3.1
    expect(doc.openapi).toBe('3.1.0');
    const cell = doc.paths['/api/v1/cells/evaluate'].post.responses['200'].content['application/json'].schema;
    expect(cell.properties.equilibriumResidual.type).toEqual(['object', 'null']);
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

  it('a body over the limit (256 KiB) is a 413 problem naming the limit and the request', async () => {
    const big = JSON.stringify({ oxidant: 'ozone', padding: 'x'.repeat(300 * 1024) });
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', headers: { 'content-type': 'application/json' }, payload: big });
    expect(r.statusCode).toBe(413);
    expect(r.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(r.json()).toMatchObject({ code: 'BODY_TOO_LARGE', instance: '/api/v1/doses' });
    expect(r.json().detail).toContain(String(256 * 1024));
  });

  it('a problem type resolves to its catalogue entry', async () => {
    const r = await app.inject({ method: 'GET', url: '/problems/formula-syntax' });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toMatchObject({ code: 'FORMULA_SYNTAX', status: 400 });
  });
});
