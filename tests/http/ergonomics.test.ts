/**
 * HTTP ergonomics: 405 with an Allow header for a method a path does not take, a missing body said
 * as such, date-times naming a day that does not exist, case-insensitive page sizes, numbers beyond
 * the double range, and every independent problem of a dose request in one answer.
 *
 * Outside references: RFC 9110 §15.5.6 (405 Method Not Allowed: the origin server MUST generate an
 * Allow header listing the methods the target resource supports) and §10.2.1 (Allow); RFC 9457
 * (problem details); the Gregorian calendar's leap-year rule (divisible by 4, except centuries not
 * divisible by 400: ISO 8601-1:2019 §3.2.1, the same rule as the ECMAScript Date it is checked
 * against below); RFC 8259 §6 / IEEE 754 binary64 (the largest finite double is about 1.8e308, so
 * JSON.parse reads 1e400 as Infinity).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { z } from 'zod';
import { buildApp, RouteTable, urlPatternRegExp } from '../../src/http/app.js';
import { defineRoute, jsonSchemaOf } from '../../src/http/route.js';
import { PROBLEM_CONTENT_TYPE } from '../../src/http/problem.js';
import {
  calendarProblem,
  DATE_OR_DATETIME_RE,
  DateOrTime,
  ISO_DATETIME_RE,
  IsoDateTime,
  PAGE_SIZE_SPELLINGS,
  PageSize,
} from '../../src/http/schemas/common.js';
import { ERROR_CATALOGUE } from '../../src/core/errors.js';

const BOOTSTRAP = 'ergonomics-test-bootstrap-token-0123456789';
let app: FastifyInstance;
let engineer = '';

// Routes of this test only (registered through AppOptions.configure): a body with a page size and a
// date-time, echoed as the handler receives it.
const EchoBody = z.strictObject({ pageSize: PageSize.optional(), at: IsoDateTime.optional(), nested: z.strictObject({ pageSize: PageSize }).optional() });
const EchoQuery = z.strictObject({ pageSize: PageSize.optional(), from: DateOrTime.optional() });

beforeAll(async () => {
  app = await buildApp({
    dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-ergonomics-')),
    bootstrapToken: BOOTSTRAP,
    rateLimitPerMinute: 10_000,
    configure: (a) => {
      defineRoute(a, { method: 'POST', url: '/test/echo', summary: 'echo (test)', tags: ['test'], body: EchoBody, handler: async (req) => ({ body: req.body }) });
      defineRoute(a, { method: 'GET', url: '/test/echo', summary: 'echo (test)', tags: ['test'], querystring: EchoQuery, handler: async (req) => ({ query: req.query }) });
    },
  });
  const made = await app.inject({ method: 'POST', url: '/api/v1/users', headers: { authorization: `Bearer ${BOOTSTRAP}` }, payload: { name: 'Ergonomics engineer (invented)', role: 'engineer' } });
  expect(made.statusCode).toBe(201);
  engineer = made.json().token as string;
});
afterAll(async () => {
  await app?.close();
});

const SAMPLE = { pH: 7.2, temperatureC: 12, iron: { value: 1.5, unit: 'mg/L' } };
const DOSE = { oxidant: 'potassium-permanganate', flow: { value: 1000, unit: 'm3/d' }, sample: SAMPLE };

describe('405 Method Not Allowed with an Allow header (RFC 9110 §15.5.6)', () => {
  it.each([
    ['GET', '/api/v1/doses', 'POST'],
    ['GET', '/api/v1/cells/evaluate', 'POST'],
    ['PUT', '/api/v1/doses/', 'POST'], // a trailing slash is the same path (ignoreTrailingSlash)
    ['DELETE', '/api/v1/sheets/DS-20261201-7K2M9Q4X1B', 'GET, HEAD'], // a path with a parameter
    ['POST', '/api/v1/sheets/DS-20261201-7K2M9Q4X1B/pdf', 'GET, HEAD'],
    ['PATCH', '/api/v1/plants/demo-plant', 'GET, HEAD'],
    ['DELETE', '/api/v1/plants', 'GET, HEAD, POST'], // one path, two routes: both methods listed
    ['POST', '/health', 'GET, HEAD'],
  ])('%s %s → 405, Allow: %s', async (method, url, allow) => {
    const r = await app.inject({ method: method as 'GET', url });
    expect(r.statusCode).toBe(405);
    expect(r.headers['content-type']).toContain(PROBLEM_CONTENT_TYPE);
    expect(r.headers['allow']).toBe(allow);
    const p = r.json();
    expect(p).toMatchObject({ status: 405, code: 'METHOD_NOT_ALLOWED', type: '/problems/method-not-allowed' });
    expect(p.detail).toContain(method);
    expect(p.detail).toContain(allow);
  });

  it('a query string does not hide the path: GET /api/v1/doses?x=1 is 405', async () => {
    const r = await app.inject({ method: 'GET', url: '/api/v1/doses?x=1' });
    expect(r.statusCode).toBe(405);
    expect(r.headers['allow']).toBe('POST');
  });

  it.each([
    ['GET', '/api/v1/dose'],
    ['POST', '/api/v1/nothing-here'],
    ['GET', '/api/v1/sheets/DS-20261201-7K2M9Q4X1B/pdf/extra'], // more segments than any route
    ['DELETE', '/api/v2/doses'],
  ])('%s %s: no route has the path → 404, no Allow header', async (method, url) => {
    const r = await app.inject({ method: method as 'GET', url });
    expect(r.statusCode).toBe(404);
    expect(r.headers['allow']).toBeUndefined();
    expect(r.json().code).toBe('ROUTE_NOT_FOUND');
  });

  it('the method the path does take still answers as before', async () => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', payload: DOSE });
    expect(r.statusCode).toBe(200);
  });

  it('the code is in the catalogue and described at /problems/method-not-allowed', async () => {
    expect(ERROR_CATALOGUE.METHOD_NOT_ALLOWED.kind).toBe('method-not-allowed');
    const r = await app.inject({ method: 'GET', url: '/problems/method-not-allowed' });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toMatchObject({ code: 'METHOD_NOT_ALLOWED', status: 405 });
  });

  it.each([
    ['/sheets/:id', '/sheets/DS-1', true],
    ['/sheets/:id', '/sheets/DS-1/', true],
    ['/sheets/:id', '/sheets/', false],
    ['/sheets/:id', '/sheets/a/b', false],
    ['/jar-tests/evaluations/:id/plot.svg', '/jar-tests/evaluations/JT-1/plot.svg', true],
    ['/jar-tests/evaluations/:id/plot.svg', '/jar-tests/evaluations/JT-1/plotXsvg', false], // the dot is literal
    ['/docs/*', '/docs/static/index.html', true],
    ['/a/:x(^\\d+)', '/a/12', true],
    ['/', '/', true],
  ])('URL pattern %s matches %s: %s', (pattern, path, matches) => {
    expect(urlPatternRegExp(pattern).test(path)).toBe(matches);
  });

  it('the route table merges the methods of every route on a path, in Allow order', () => {
    const t = new RouteTable();
    t.add('POST', '/plants');
    t.add(['GET', 'HEAD'], '/plants');
    t.add('GET', '/plants/:id');
    expect(t.methodsOf('/plants')).toEqual(['GET', 'HEAD', 'POST']);
    expect(t.methodsOf('/plants/x')).toEqual(['GET']);
    expect(t.methodsOf('/nothing')).toEqual([]);
  });
});

describe('a POST without a body says the body is missing', () => {
  it.each([
    ['/api/v1/doses'],
    ['/api/v1/cells/evaluate'],
    ['/api/v1/reactions/balance'],
  ])('POST %s with no body and no content type → 400 naming the missing body at pointer ""', async (url) => {
    const r = await app.inject({ method: 'POST', url });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe('VALIDATION_FAILED');
    expect(p.detail).toMatch(/no body/);
    expect(p.errors).toEqual([{ pointer: '', message: expect.stringMatching(/body is missing.*JSON object/) }]);
    expect(r.body).not.toContain('"\\"\\" is required"');
  });

  it('an empty body sent as application/json → 400 BODY_NOT_JSON saying it is empty and must be a JSON object', async () => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', headers: { 'content-type': 'application/json' }, payload: '' });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe('BODY_NOT_JSON');
    expect(p.detail).toMatch(/empty/);
    expect(p.errors[0]).toMatchObject({ pointer: '', message: expect.stringMatching(/JSON object/) });
  });

  it.each([
    ['null', 'null'],
    ['[]', 'an array'],
    ['"text"', 'a string'],
    ['7', 'number'],
  ])('a body of %s → 400: must be a JSON object; got %s', async (payload, got) => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', headers: { 'content-type': 'application/json' }, payload });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors).toEqual([{ pointer: '', message: `the request body must be a JSON object {…}; got ${got}` }]);
  });
});

describe('a date-time in the right form naming no real day says there is no such date', () => {
  // the leap-year rule (ISO 8601-1 §3.2.1), cross-checked against ECMAScript's own calendar
  const realDay = (y: number, m: number, d: number) => {
    const t = new Date(Date.UTC(2000, m - 1, d));
    t.setUTCFullYear(y, m - 1, d);
    return t.getUTCFullYear() === y && t.getUTCMonth() === m - 1 && t.getUTCDate() === d;
  };

  it.each([
    ['2026-02-30T07:30:00Z', /no such date.*February has 28 or 29 days; February 2026 has 28/],
    ['2026-02-29T07:30:00Z', /2026 is not a leap year, so February 2026 has 28 days/],
    ['1900-02-29T07:30:00+01:00', /1900 is not a leap year/], // a century not divisible by 400
    ['2026-04-31T07:30:00-05:00', /April has 30 days/],
    ['2026-13-01T07:30:00Z', /no month 13/],
    ['2026-00-10T07:30:00Z', /no month 00/],
    ['2026-01-00T07:30:00Z', /no day 00/],
    ['2026-01-10T24:00:00Z', /hour 24/],
    ['2026-01-10T07:60:00Z', /minute 60/],
    ['2026-01-10T07:30:60Z', /second 60/],
    ['2026-01-10T07:30:00+15:00', /offset \+15:00/],
  ])('%s: %s', (text, why) => {
    expect(calendarProblem(text)).toMatch(why);
    expect(ISO_DATETIME_RE.test(text)).toBe(false);
  });

  it.each([
    ['2028-02-29T00:00:00Z'], // divisible by 4
    ['2000-02-29T23:59:59.999+14:00'], // a century divisible by 400
    ['2026-12-31T07:30Z'],
    ['2026-04-30T07:30:00-12:00'],
  ])('%s is a real instant: no problem, and the pattern accepts it', (text) => {
    expect(calendarProblem(text)).toBeUndefined();
    expect(ISO_DATETIME_RE.test(text)).toBe(true);
  });

  it('the pattern agrees with the calendar on every day of 1896–1904 and 1996–2004 (leap years and centuries)', () => {
    for (const y of [1896, 1897, 1899, 1900, 1901, 1904, 1996, 1999, 2000, 2001, 2004, 2100, 2400]) {
      for (let m = 1; m <= 12; m++) {
        for (let d = 1; d <= 31; d++) {
          const day = `${String(y).padStart(4, '0')}-${String(m).padStart(2, '0')}-${String(d).padStart(2, '0')}`;
          expect([day, DATE_OR_DATETIME_RE.test(day)]).toEqual([day, realDay(y, m, d)]);
          expect([day, calendarProblem(day, 'date-or-date-time') === undefined]).toEqual([day, realDay(y, m, d)]);
        }
      }
    }
  });

  it.each([['2026-02-30 07:30'], ['30/02/2026'], ['2026-02-10T07:30:00']])('%s: the form is wrong, so the form message stays', (text) => {
    expect(calendarProblem(text)).toBeUndefined();
    const r = IsoDateTime.safeParse(text);
    expect(r.success).toBe(false);
    expect(r.error!.issues[0]!.message).toMatch(/ISO 8601 date and time with its zone/);
  });

  it('the shared IsoDateTime schema: the compiled validator refuses 2026-02-30 and the answer says there is no such date', async () => {
    const r = await app.inject({ method: 'POST', url: '/test/echo', payload: { at: '2026-02-30T07:30:00Z' } });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors).toEqual([{ pointer: '/at', message: expect.stringMatching(/^there is no such date: 30 February 2026 does not exist \(February has 28 or 29 days/) }]);
    const ok = await app.inject({ method: 'POST', url: '/test/echo', payload: { at: '2028-02-29T07:30:00Z' } });
    expect(ok.statusCode).toBe(200);
  });

  it('the shared DateOrTime schema (listing bounds): 2026-02-30 as a day is no such date', async () => {
    const r = await app.inject({ method: 'GET', url: '/test/echo?from=2026-02-30' });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors[0]).toMatchObject({ pointer: '/from', message: expect.stringMatching(/no such date/) });
  });

  it('POST /api/v1/sheets with sampledAt 2026-02-30T07:30:00Z → 400 at /sampledAt: no such date, not "not ISO 8601"', async () => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/sheets', headers: { authorization: `Bearer ${engineer}` }, payload: { ...DOSE, sampledAt: '2026-02-30T07:30:00Z' } });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.errors).toEqual([{ pointer: '/sampledAt', message: expect.stringMatching(/no such date.*February has 28 or 29 days/) }]);
    expect(p.detail).toMatch(/no such date/);
    expect(p.detail).not.toMatch(/not an ISO 8601/);
  });

  it('GET /api/v1/sheets?from=2026-02-30 → 400 at /from: no such date', async () => {
    const r = await app.inject({ method: 'GET', url: '/api/v1/sheets?from=2026-02-30', headers: { authorization: `Bearer ${engineer}` } });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors[0]).toMatchObject({ pointer: '/from', message: expect.stringMatching(/no such date/) });
  });
});

describe('page size: A4 or Letter in any of its usual spellings, normalised', () => {
  it.each([
    ['A4', 'A4'],
    ['a4', 'A4'],
    ['LETTER', 'LETTER'],
    ['Letter', 'LETTER'],
    ['letter', 'LETTER'],
  ])('body pageSize %s → the handler receives %s', async (given, wanted) => {
    const r = await app.inject({ method: 'POST', url: '/test/echo', payload: { pageSize: given, nested: { pageSize: given } } });
    expect(r.statusCode).toBe(200);
    expect(r.json().body).toEqual({ pageSize: wanted, nested: { pageSize: wanted } });
  });

  it('query pageSize=Letter → LETTER', async () => {
    const r = await app.inject({ method: 'GET', url: '/test/echo?pageSize=Letter' });
    expect(r.statusCode).toBe(200);
    expect(r.json().query).toEqual({ pageSize: 'LETTER' });
  });

  it.each([['Ltr'], ['US Letter'], ['A3']])('%s → 400 naming /pageSize and the accepted sizes', async (given) => {
    const r = await app.inject({ method: 'POST', url: '/test/echo', payload: { pageSize: given } });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors).toEqual([{ pointer: '/pageSize', message: expect.stringMatching(/A4 or LETTER/) }]);
  });

  it('the OpenAPI enum lists every accepted spelling, and zod gives the normalised form', async () => {
    expect(jsonSchemaOf(PageSize, 'input')).toMatchObject({ type: 'string', enum: [...PAGE_SIZE_SPELLINGS] });
    expect(PageSize.parse('Letter')).toBe('LETTER');
    const doc = (await app.inject({ method: 'GET', url: '/docs/json' })).json();
    const schema = doc.paths['/test/echo'].post.requestBody.content['application/json'].schema;
    expect(schema.properties.pageSize.enum).toEqual([...PAGE_SIZE_SPELLINGS]);
  });
});

describe('a number beyond the double range is too large, not "null"', () => {
  it.each([
    ['{"value":1e400,"unit":"mg/L"}', '/sample/iron/value'],
    ['{"value":-1e400,"unit":"mg/L"}', '/sample/iron/value'],
  ])('iron %s → 400 at %s: too large, not a finite number', async (iron, pointer) => {
    const payload = `{"oxidant":"ozone","flow":{"value":100,"unit":"m3/d"},"sample":{"pH":7,"temperatureC":15,"iron":${iron}}}`;
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', headers: { 'content-type': 'application/json' }, payload });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.errors).toEqual([{ pointer, message: expect.stringMatching(/too large.*not a finite number/) }]);
    expect(r.body).not.toContain('got null');
  });

  it('pH 1e400 → too large as well (a bare number field)', async () => {
    const payload = '{"oxidant":"ozone","sample":{"pH":1e400,"temperatureC":15}}';
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', headers: { 'content-type': 'application/json' }, payload });
    expect(r.statusCode).toBe(400);
    expect(r.json().errors[0]).toMatchObject({ pointer: '/sample/pH', message: expect.stringMatching(/too large/) });
  });
});

describe('a dose request reports every independent problem at once', () => {
  it('no temperature and an implausible iron reading (900 mg/L) → one 400 naming both', async () => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', payload: { ...DOSE, sample: { pH: 7.2, iron: { value: 900, unit: 'mg/L' } } } });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe('DOSE_INPUT_MISSING');
    expect(p.errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/sample/temperatureC', '/sample/iron/value']);
    expect(p.detail).toMatch(/temperature is needed/);
    expect(p.detail).toMatch(/iron/);
    expect(p.params.readings[0]).toMatchObject({ field: 'iron', mgPerL: '900' });
  });

  it('a strength of 150 % w/v and an implausible iron reading → one 400 QUANTITY_OUT_OF_RANGE naming both', async () => {
    const r = await app.inject({
      method: 'POST',
      url: '/api/v1/doses',
      payload: { ...DOSE, oxidant: 'sodium-hypochlorite', product: { strength: { value: 150, unit: '% w/v' } }, sample: { ...SAMPLE, iron: { value: 900, unit: 'mg/L' } } },
    });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(p.errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/product/strength/value', '/sample/iron/value']);
  });

  it('an implausible reading alone is still 422 READING_IMPLAUSIBLE', async () => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/doses', payload: { ...DOSE, sample: { ...SAMPLE, iron: { value: 900, unit: 'mg/L' } } } });
    expect(r.statusCode).toBe(422);
    expect(r.json().code).toBe('READING_IMPLAUSIBLE');
  });
});
