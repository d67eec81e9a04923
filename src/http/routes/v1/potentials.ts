import type { FastifyInstance } from 'fastify';
import { z } from 'zod';
import { CellBody, CellResponse, PotentialBody, PotentialResponse } from '../../schemas/chemistry.js';
import { defineRoute } from '../../route.js';
import { couplePotential, evaluateCellText } from '../../../water/redox-service.js';
import { EMPIRICAL_RELATIONS } from '../../../water/activity.js';

const PotentialRowOut = z.object({
  id: z.string(),
  halfReaction: z.string(),
  value: z.string().describe('As published: E° in V, or log K / pε° where the source prints those'),
  quantity: z.string(),
  electrons: z.number().nullable(),
  dEdTmVPerK: z.string().nullable(),
  uncertaintyV: z.string().nullable(),
  source: z.string(),
  citation: z.string(),
  note: z.string().nullable(),
});

/** The JSON text of a request body as received (kept by this plugin's JSON parser). */
const REQUEST_TEXT = Symbol('requestText');

export async function potentialRoutes(app: FastifyInstance): Promise<void> {
  const deps = () => app.services.redox;
  // Fastify's own JSON parser (same prototype-poisoning rules), keeping the text it parsed so the
  // cell memo can key on it instead of serialising the parsed body again.
  const parseJson = app.getDefaultJsonParser('error', 'error');
  app.removeContentTypeParser('application/json');
  app.addContentTypeParser('application/json', { parseAs: 'string' }, (req, body, done) => {
    (req as unknown as Record<symbol, unknown>)[REQUEST_TEXT] = body;
    parseJson(req, body as string, done);
  });

  defineRoute(app, {
    method: 'POST',
    url: '/couples/potential',
    summary: 'Potential of a redox couple: E° (tabled, derived by ΔG° from tabled rows, or a site value) and E at pH, temperature and activities (Nernst)',
    tags: ['chemistry'],
    body: PotentialBody,
    response: { 200: PotentialResponse },
    handler: async (req) => couplePotential(req.body, deps()),
  });

  defineRoute(app, {
    method: 'POST',
    url: '/cells/evaluate',
    summary: 'Cell of an oxidant and a reductant couple at the water’s pH and temperature: E°cell, E, ΔG, log K, feasibility and the pH where it stops',
    tags: ['chemistry'],
    body: CellBody,
    response: { 200: CellResponse },
    handler: async (req) => evaluateCellText(req.body, deps(), (req as unknown as Record<symbol, string | undefined>)[REQUEST_TEXT]),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/tables/potentials',
    summary: 'Standard reduction potentials (25 °C) as tabled, each row with its source',
    tags: ['tables'],
    response: { 200: z.object({ table: z.string(), description: z.string(), rows: z.array(PotentialRowOut) }) },
    handler: async () => app.services.potentialRows,
  });

  defineRoute(app, {
    method: 'GET',
    url: '/tables/equilibria',
    summary: 'Non-redox equilibria (water ionisation, acid constants, solubility products, Henry constants) as published, each row with its source',
    tags: ['tables'],
    response: {
      200: z.object({
        table: z.string(),
        description: z.string(),
        rows: z.array(z.looseObject({ id: z.string(), reaction: z.string(), kind: z.string(), source: z.string(), citation: z.string() })),
      }),
    },
    handler: async () => ({
      table: 'equilibria',
      description: 'Non-redox equilibria at 25 °C with their temperature data, as published (tables/equilibria.json); the ids appear in derivations.',
      rows: app.services.tables.equilibria.map((r) => ({ ...(r as Record<string, unknown>), id: r.id, reaction: r.reaction, kind: r.kind, source: r.source, citation: app.services.dosing.citations.get(r.source) ?? r.source })),
    }),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/tables/relations',
    summary: 'The empirical relations used for activities (ionic strength from TDS or conductance, Davies, Debye–Hückel A), with coefficients as published and citations',
    tags: ['tables'],
    response: {
      200: z.object({
        relations: z.array(
          z.object({ id: z.string(), equation: z.string(), coefficients: z.record(z.string(), z.string()), citation: z.string(), note: z.string() }),
        ),
      }),
    },
    handler: async () => ({ relations: EMPIRICAL_RELATIONS.map((r) => ({ ...r, coefficients: { ...r.coefficients } })) }),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/tables/sources',
    summary: 'Every source the tables cite, with its full citation (the ids in derivations and flags resolve here)',
    tags: ['tables'],
    response: { 200: z.object({ sources: z.array(z.looseObject({ id: z.string(), citation: z.string() })) }) },
    handler: async () => ({
      sources: app.services.tables.sources.map((s) => ({ ...(s as Record<string, unknown>), id: s.id, citation: app.services.dosing.citations.get(s.id) ?? s.id })),
    }),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/tables/potentials/consistency',
    summary: 'Every tabled couple that can also be derived from other rows, with the discrepancy (flagged above 5 mV)',
    tags: ['tables'],
    response: {
      200: z.object({
        thresholdMV: z.number(),
        entries: z.array(
          z.object({
            rowId: z.string(),
            halfReaction: z.string(),
            source: z.string(),
            tabledV: z.number(),
            derivedV: z.number(),
            discrepancyMV: z.number(),
            flagged: z.boolean(),
            maxDiscrepancyMV: z.number(),
            via: z.array(z.object({ rowId: z.string(), coefficient: z.string(), source: z.string() })),
            otherDerivations: z.array(z.object({ derivedV: z.number(), discrepancyMV: z.number(), via: z.array(z.string()) })),
          }),
        ),
        duplicates: z.array(z.object({ halfReaction: z.string(), rows: z.array(z.object({ rowId: z.string(), value: z.string(), source: z.string() })), spreadMV: z.number() })),
        underivable: z.array(z.string()),
      }),
    },
    handler: async () => app.services.consistency(),
  });
}
