/**
 * jsonSchemaOf: zod schemas as the JSON Schema Fastify compiles. A nullable member of a
 * response is written as a type list (the same set of values) so that the serializer tests
 * the type instead of running a validator on every response.
 */
import Fastify from 'fastify';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { jsonSchemaOf, nullableAsTypeList } from '../../src/http/route.js';

const Residual = z.object({ species: z.string(), molPerL: z.number(), mgPerL: z.number().nullable() });
const Answer = z.object({
  residual: Residual.nullable().describe('null when none applies'),
  label: z.string().nullable(),
  either: z.union([z.string(), z.number()]).nullable(),
  kind: z.enum(['a', 'b']).nullable(),
});

describe('response schemas', () => {
  it('a nullable object becomes a type list; a nullable enum keeps its anyOf (null is not in the enum)', () => {
    const js = jsonSchemaOf(Answer, 'output') as { properties: Record<string, Record<string, unknown>> };
    expect(js.properties['residual']).toMatchObject({ type: ['object', 'null'], required: ['species', 'molPerL', 'mgPerL'], description: 'null when none applies' });
    expect(js.properties['residual']).not.toHaveProperty('anyOf');
    expect(js.properties['label']).toMatchObject({ type: ['string', 'null'] });
    expect(js.properties['either']).toMatchObject({ type: ['string', 'number', 'null'] }); // zod merges scalar unions itself
    expect(js.properties['kind']).toHaveProperty('anyOf'); // an enum: null is not in the enum, keep both branches
  });

  it('request schemas are left as zod writes them', () => {
    const js = JSON.stringify(jsonSchemaOf(z.object({ residual: Residual.nullable() }), 'input'));
    expect(js).toContain('"anyOf"');
  });

  it('the rewrite leaves nodes without a nullable anyOf unchanged', () => {
    const plain = { type: 'object', properties: { a: { type: 'integer', minimum: 0 }, b: { anyOf: [{ type: 'string' }, { type: 'number' }] } } };
    expect(nullableAsTypeList(plain)).toEqual(plain);
  });

  it.each([
    ['an object', { residual: { species: 'Mn2+', molPerL: 1e-9, mgPerL: null }, label: 'x', either: 3, kind: 'a' }],
    ['nulls', { residual: null, label: null, either: null, kind: null }],
  ])("Fastify's serializer writes %s exactly as JSON.stringify does", async (_what, value) => {
    const app = Fastify();
    app.get('/x', { schema: { response: { 200: jsonSchemaOf(Answer, 'output') } } }, async () => value);
    const r = await app.inject({ method: 'GET', url: '/x' });
    await app.close();
    expect(r.statusCode).toBe(200);
    expect(JSON.parse(r.body)).toEqual(value);
  });
});
