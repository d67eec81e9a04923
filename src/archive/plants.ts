/**
 * Plant profiles, stored as versions. The profile's schema (and the chemistry in it) belongs to
 * src/dosing; here a profile is a JSON object with a string `id`. Saving a changed profile appends
 * version n+1; saving an identical one (same canonical JSON) appends nothing. Nothing is changed in
 * place; every version stays readable, and a sheet names the version it was computed with.
 *
 * Every read recomputes the SHA-256 of the stored profile_json: `getPlant` (the profile a dose, a
 * sheet or a jar test is computed with, and GET /api/v1/plants/:id) refuses a version that does not
 * hash to its sha256 with ARCHIVE_RECORD_ALTERED (409) naming the plant and the version; the lists
 * (listPlants, plantHistory) return it marked `altered: true`, so it is seen and never used unseen.
 */
import { DomainError } from '../core/errors.js';
import { canonicalJson, sha256Hex } from './canonical.js';
import type { ArchiveContext } from './context.js';
import { requirePlantId } from './ids.js';
import { logRegistryRow, plantVersionKey, registryRowProblem } from './registry.js';

export interface PlantVersion<P = unknown> {
  readonly plantId: string;
  readonly version: number;
  readonly profile: P;
  /** SHA-256 of the canonical JSON of the profile. */
  readonly sha256: string;
  readonly createdAt: string;
  readonly createdBy: string;
  /** The stored profile does not hash to its sha256, or the row is not as the registry log chained it (both checked on this read): changed in the file; never use it. */
  readonly altered: boolean;
}

export interface SavedPlant<P = unknown> extends PlantVersion<P> {
  /** False when the profile equalled the latest version and nothing was appended. */
  readonly changed: boolean;
}

interface PlantRow {
  plant_id: string;
  version: number;
  profile_json: string;
  sha256: string;
  created_at: string;
  created_by: string;
}

/** JSON.parse that answers null for text that is not JSON (a damaged row is reported as altered, never a crash). */
function parseStored(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}

/**
 * A stored version as read, with its integrity: the profile hashes to its own SHA-256, and the row
 * is as the registry log chained it (so a profile rewritten together with its SHA-256 is caught too).
 */
function toPlant<P>(ctx: ArchiveContext, row: PlantRow): PlantVersion<P> & { readonly alteredWhy: string | null } {
  const alteredWhy =
    sha256Hex(row.profile_json) !== row.sha256
      ? `the stored profile does not hash to its recorded SHA-256 ${row.sha256}`
      : registryRowProblem(ctx, 'plant_versions', plantVersionKey(row.plant_id, row.version), { ...row });
  return {
    plantId: row.plant_id,
    version: row.version,
    profile: parseStored(row.profile_json) as P,
    sha256: row.sha256,
    createdAt: row.created_at,
    createdBy: row.created_by,
    altered: alteredWhy !== null,
    alteredWhy,
  };
}

function alteredPlant(p: PlantVersion & { readonly alteredWhy: string | null }): DomainError {
  return new DomainError('ARCHIVE_RECORD_ALTERED', {
    detail:
      `Plant ${p.plantId} version ${p.version} fails its integrity check (${p.alteredWhy ?? 'it does not match what was stored'}): it was changed in the archive file. ` +
      'The service does not serve it or compute a dose or a sheet with it. Store the correct profile again (POST /api/v1/plants appends a new version), and check the archive at /api/v1/archive/verification.',
    params: { table: 'plant_versions', plantId: p.plantId, version: p.version },
    fields: [{ pointer: '/plantId', message: `plant ${p.plantId} version ${p.version} fails its integrity check` }],
  });
}

function profileId(profile: unknown): string {
  if (typeof profile !== 'object' || profile === null || Array.isArray(profile)) {
    throw new DomainError('PLANT_INVALID', {
      detail: 'A plant profile is a JSON object with an "id".',
      fields: [{ pointer: '', message: 'expected an object' }],
    });
  }
  return requirePlantId((profile as { id?: unknown }).id, '/id');
}

const LATEST_SQL =
  'SELECT plant_id, version, profile_json, sha256, created_at, created_by FROM plant_versions WHERE plant_id = ? ORDER BY version DESC LIMIT 1';

/**
 * Append a new version of a plant profile (validated by the caller against the dosing schema).
 * `createdBy` is a user id or "system:…".
 */
export function savePlant<P>(ctx: ArchiveContext, profile: P, options: { createdBy: string }): SavedPlant<P> {
  const plantId = profileId(profile);
  const json = canonicalJson(profile);
  const sha256 = sha256Hex(json);
  return ctx.db
    .transaction((): SavedPlant<P> => {
      const latest = ctx.statement(LATEST_SQL).get(plantId) as PlantRow | undefined;
      if (latest && latest.sha256 === sha256 && latest.profile_json === json) return { ...toPlant<P>(ctx, latest), changed: false };
      const version = (latest?.version ?? 0) + 1;
      const createdAt = ctx.now().toISOString();
      ctx
        .statement('INSERT INTO plant_versions (plant_id, version, profile_json, sha256, created_at, created_by) VALUES (?, ?, ?, ?, ?, ?)')
        .run(plantId, version, json, sha256, createdAt, options.createdBy);
      logRegistryRow(ctx, 'plant_versions', plantVersionKey(plantId, version), createdAt);
      return { plantId, version, profile: JSON.parse(json) as P, sha256, createdAt, createdBy: options.createdBy, altered: false, changed: true };
    })
    .immediate();
}

/** Save the profile only if no version of that plant exists (the demo plant on first start). */
export function seedPlant<P>(ctx: ArchiveContext, profile: P, options: { createdBy?: string } = {}): SavedPlant<P> {
  const plantId = profileId(profile);
  return ctx.db
    .transaction((): SavedPlant<P> => {
      const latest = ctx.statement(LATEST_SQL).get(plantId) as PlantRow | undefined;
      if (latest) return { ...toPlant<P>(ctx, latest), changed: false };
      return savePlant(ctx, profile, { createdBy: options.createdBy ?? 'system:seed' });
    })
    .immediate();
}

/** The latest version of a plant, or a specific one; throws PLANT_NOT_FOUND, or ARCHIVE_RECORD_ALTERED for a version that fails its hash. */
export function getPlant<P = unknown>(ctx: ArchiveContext, plantId: string, version?: number): PlantVersion<P> {
  requirePlantId(plantId, '/plantId');
  const row = (version === undefined
    ? ctx.statement(LATEST_SQL).get(plantId)
    : ctx
        .statement('SELECT plant_id, version, profile_json, sha256, created_at, created_by FROM plant_versions WHERE plant_id = ? AND version = ?')
        .get(plantId, version)) as PlantRow | undefined;
  if (!row) {
    throw new DomainError('PLANT_NOT_FOUND', {
      detail:
        version === undefined
          ? `No plant profile with id ${JSON.stringify(plantId)}; GET /api/v1/plants lists the stored ones.`
          : `Plant ${JSON.stringify(plantId)} has no version ${version}.`,
      params: { plantId, ...(version !== undefined ? { version } : {}) },
      fields: [{ pointer: '/plantId', message: 'no such plant profile' }],
    });
  }
  const plant = toPlant<P>(ctx, row);
  if (plant.altered) throw alteredPlant(plant);
  return plant;
}

/** The latest version of every plant, by id (a version that fails its hash is marked `altered`). */
export function listPlants<P = unknown>(ctx: ArchiveContext): PlantVersion<P>[] {
  const rows = ctx
    .statement(
      `SELECT p.plant_id, p.version, p.profile_json, p.sha256, p.created_at, p.created_by
       FROM plant_versions p
       WHERE p.version = (SELECT max(q.version) FROM plant_versions q WHERE q.plant_id = p.plant_id)
       ORDER BY p.plant_id`,
    )
    .all() as PlantRow[];
  return rows.map((r) => toPlant<P>(ctx, r));
}

/** Every version of one plant, oldest first (a version that fails its hash is marked `altered`). */
export function plantHistory<P = unknown>(ctx: ArchiveContext, plantId: string): PlantVersion<P>[] {
  requirePlantId(plantId, '/plantId');
  const rows = ctx
    .statement('SELECT plant_id, version, profile_json, sha256, created_at, created_by FROM plant_versions WHERE plant_id = ? ORDER BY version')
    .all(plantId) as PlantRow[];
  return rows.map((r) => toPlant<P>(ctx, r));
}
