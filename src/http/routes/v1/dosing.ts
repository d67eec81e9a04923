import type { FastifyInstance } from 'fastify';
import { z } from 'zod';
import { DomainError, isDomainError } from '../../../core/errors.js';
import { computeDose, parsePlantProfile, plantProfileWarnings, type DoseRequest, type PlantProfile } from '../../../dosing/index.js';
import { isValidPlantId } from '../../../archive/index.js';
import { DoseBody, DoseResponse, OxidantOut, PlantBody, PlantOut, PlantSummary } from '../../schemas/dosing.js';
import { defineRoute } from '../../route.js';
import { requireRole } from '../../auth.js';
import type { Services } from '../../services.js';

/** The latest stored version of a plant, or null (the archive throws PLANT_NOT_FOUND; routes name their own field). */
export function findPlant(services: Services, plantId: string) {
  if (!isValidPlantId(plantId)) return null;
  try {
    return services.archive.getPlant(plantId);
  } catch (e) {
    if (isDomainError(e) && e.code === 'PLANT_NOT_FOUND') return null;
    throw e;
  }
}

/** The stored plant version a request names, or undefined; a missing one is a 404 naming the field. */
export function storedPlantFor(services: Services, plantId: string | undefined) {
  if (plantId === undefined) return undefined;
  const stored = findPlant(services, plantId);
  if (!stored) {
    throw new DomainError('PLANT_NOT_FOUND', {
      detail: `No plant profile "${plantId}"; GET /api/v1/plants lists the stored ones, or send flow and product in the request instead.`,
      fields: [{ pointer: '/plantId', message: 'no stored plant profile with this id' }],
    });
  }
  return stored;
}

/** The plant profile a request names, or undefined; a missing one is a 404 naming the field. */
export function plantFor(services: Services, plantId: string | undefined): PlantProfile | undefined {
  return storedPlantFor(services, plantId)?.profile as PlantProfile | undefined;
}

/** The dose, and the plant profile version it was computed with (read once, so a sheet names that version). */
export function doseWithPlantVersion(services: Services, body: DoseRequest) {
  const stored = storedPlantFor(services, body.plantId);
  const result = computeDose(body, services.dosing, stored ? { plant: stored.profile as PlantProfile } : {});
  return { result, plantVersion: stored?.version ?? null };
}

export function doseFor(services: Services, body: DoseRequest) {
  return doseWithPlantVersion(services, body).result;
}

function plantOut(p: { plantId: string; version: number; profile: unknown; sha256: string; createdAt: string; createdBy: string }) {
  return { id: p.plantId, version: p.version, savedAt: p.createdAt, savedBy: p.createdBy, sha256: p.sha256, profile: p.profile as PlantProfile };
}

export async function dosingRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'GET',
    url: '/oxidants',
    summary: 'Oxidant products with their active species, reduced product, dose basis, strengths and sources',
    tags: ['dosing'],
    response: { 200: z.object({ oxidants: z.array(OxidantOut) }) },
    handler: async () => app.services.oxidantList,
  });

  defineRoute(app, {
    method: 'POST',
    url: '/doses',
    summary: 'Oxidant dose and feed setting from the day’s lab readings: stoichiometric demand from balanced reactions, background demand and residual, feasibility, contact time, side effects, flags and cautions',
    tags: ['dosing'],
    body: DoseBody,
    response: { 200: DoseResponse },
    handler: async (req) => doseFor(app.services, req.body),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/plants',
    summary: 'Stored plant profiles (latest version of each); a version whose profile no longer hashes to its sha256 is marked altered',
    tags: ['plants'],
    response: { 200: z.object({ plants: z.array(PlantSummary) }) },
    handler: async () => ({
      plants: app.services.archive.listPlants().map((p) => {
        const prof = p.profile as PlantProfile;
        // an altered version is listed (never hidden) and marked; its profile is not believed, so its name is not shown from it
        if (p.altered) return { id: p.plantId, name: '(altered: fails its integrity check)', invented: false, version: p.version, savedAt: p.createdAt, sha256: p.sha256, altered: true };
        return { id: p.plantId, name: prof.name, invented: prof.invented, version: p.version, savedAt: p.createdAt, sha256: p.sha256, altered: false };
      }),
    }),
  });

  defineRoute(app, {
    method: 'GET',
    url: '/plants/:id',
    summary: 'One plant profile (latest version); a version that fails its integrity check is a 409 ARCHIVE_RECORD_ALTERED',
    tags: ['plants'],
    params: z.object({ id: z.string().regex(/^[a-z0-9][a-z0-9-]{0,63}$/) }),
    response: { 200: PlantOut },
    handler: async (req) => {
      const p = findPlant(app.services, req.params.id);
      if (!p) throw new DomainError('PLANT_NOT_FOUND', { detail: `No plant profile "${req.params.id}"; GET /api/v1/plants lists them.`, fields: [{ pointer: '/id', message: 'no such plant' }] });
      return plantOut(p);
    },
  });

  defineRoute(app, {
    method: 'POST',
    url: '/plants',
    summary: 'Store a plant profile (a changed profile is appended as a new version; nothing is overwritten). Engineer role.',
    tags: ['plants'],
    auth: true,
    body: PlantBody,
    response: { 201: PlantOut, 200: PlantOut },
    responseDescriptions: { 201: 'A new version of the profile was stored', 200: 'Unchanged: the latest stored version already holds this profile' },
    preHandler: requireRole('engineer'),
    handler: async (req, reply) => {
      const profile = parsePlantProfile(req.body, app.services.dosing.strengthLimits);
      const saved = app.services.archive.savePlant(profile, { createdBy: req.user!.id });
      reply.code(saved.changed ? 201 : 200);
      return { ...plantOut(saved), warnings: plantProfileWarnings(profile, app.services.dosing.oxidants, app.services.dosing.limits) };
    },
  });
}
