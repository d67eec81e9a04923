/**
 * The benchmark's server process: the real app plus echo routes that validate and serialize
 * the same request and response shapes as the real routes but compute nothing (they answer
 * a response computed once at start-up). Two validation paths are measured for the cell
 * shapes: zod through fastify-type-provider-zod, and the same zod schemas turned into JSON
 * Schema for Fastify's compiled validator and serializer (what the service uses).
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { serializerCompiler, validatorCompiler, type ZodTypeProvider } from 'fastify-type-provider-zod';
import { buildApp } from '../../src/http/app.js';
import { defineRoute } from '../../src/http/route.js';
import { CellBody, CellResponse } from '../../src/http/schemas/chemistry.js';
import { DoseBody, DoseResponse } from '../../src/http/schemas/dosing.js';
import { benchBodies } from './bodies.js';
import { evaluateCellText } from '../../src/water/redox-service.js';
import { doseFor } from '../../src/http/routes/v1/dosing.js';

const bodies = benchBodies();

const app = await buildApp({
  dataDir: mkdtempSync(join(tmpdir(), 'oxd-bench-')),
  logger: false,
  configure: async (app) => {
    // Responses computed once, with the real services, before the server starts.
    const cannedCell = evaluateCellText(bodies.cell as Parameters<typeof evaluateCellText>[0], app.services.redox);
    const cannedDose = doseFor(app.services, bodies.dose as Parameters<typeof doseFor>[1]);
    defineRoute(app, {
      method: 'POST',
      url: '/bench/echo-cells',
      summary: 'bench echo (JSON Schema)',
      tags: ['bench'],
      body: CellBody,
      response: { 200: CellResponse },
      handler: async () => cannedCell,
    });
    defineRoute(app, {
      method: 'POST',
      url: '/bench/echo-doses',
      summary: 'bench echo (JSON Schema)',
      tags: ['bench'],
      body: DoseBody,
      response: { 200: DoseResponse },
      handler: async () => cannedDose,
    });
    // The floor under both echo routes: the same request bytes (parsed as JSON by Fastify's
    // default parser) and the same response bytes, with no schema at all. What the echo route
    // costs beyond this is validation and serialization; what this costs beyond the bare GET
    // is reading a POST body and writing a longer answer.
    const cannedCellText = JSON.stringify(cannedCell);
    app.post('/bench/echo-cells-raw', { schema: { hide: true } }, async (_req, reply) => {
      reply.type('application/json; charset=utf-8');
      return cannedCellText;
    });
    await app.register(async (zodScope) => {
      zodScope.setValidatorCompiler(validatorCompiler);
      zodScope.setSerializerCompiler(serializerCompiler);
      zodScope.withTypeProvider<ZodTypeProvider>().post('/bench/echo-cells-zod', { schema: { body: CellBody, response: { 200: CellResponse } } }, async () => cannedCell);
    });
  },
});

const address = await app.listen({ host: '127.0.0.1', port: 0 });
const port = Number(new URL(address).port);
console.log(`BENCH_PORT ${port}`);
const stop = async () => {
  await app.close();
  process.exit(0);
};
process.on('SIGTERM', () => void stop());
process.on('SIGINT', () => void stop());
