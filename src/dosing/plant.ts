/**
 * Plant profile: what a plant keeps between daily dose requests (flow, contact volume,
 * products on hand, metering pumps, targets, preferred units). Storage is the archive's
 * business; this file owns the schema and merges a profile into a dose request, so a daily
 * request needs only the oxidant and the lab readings.
 */
import { z } from 'zod';
import { DomainError } from '../core/errors.js';
import {
  ConcentrationSchema,
  DensitySchema,
  FlowSchema,
  OXIDANT_IDS,
  PuritySchema,
  SolutionRateSchema,
  StockSchema,
  StrengthSchema,
  VolumeSchema,
  issuesToFields,
  type DoseRequest,
} from './request.js';

const OxidantIdSchema = z.enum(OXIDANT_IDS, { error: `oxidant must be one of: ${OXIDANT_IDS.join(', ')}` });

export const PlantProductSchema = z.strictObject({
  oxidant: OxidantIdSchema,
  strength: StrengthSchema,
  density: DensitySchema.optional(),
  purity: PuritySchema.optional(),
  stock: StockSchema.optional(),
  /** Batch tank volume for a solid made up as a solution. */
  batchVolume: VolumeSchema.optional(),
});

export const PlantPumpSchema = z.strictObject({
  id: z.string().min(1).max(100),
  oxidant: OxidantIdSchema,
  ratedCapacity: SolutionRateSchema,
});

export const PlantProfileSchema = z.strictObject({
  id: z.string().regex(/^[a-z0-9][a-z0-9-]{0,63}$/, { error: 'id must be 1 to 64 lower-case letters, digits or hyphens, starting with a letter or digit' }),
  name: z.string().min(1).max(200),
  /** True for demonstration data that describes no real plant. */
  invented: z.boolean(),
  note: z.string().max(2000).optional(),
  source: z.string().max(500).optional(),
  description: z.string().max(2000).optional(),
  flow: FlowSchema,
  contactVolume: VolumeSchema.optional(),
  products: z.array(PlantProductSchema).max(20),
  pumps: z.array(PlantPumpSchema).max(40),
  targets: z.strictObject({
    residual: ConcentrationSchema.optional(),
    residualByOxidant: z.partialRecord(OxidantIdSchema, ConcentrationSchema).optional(),
  }),
  preferredUnits: z.enum(['SI', 'US'], { error: 'preferredUnits must be SI or US' }),
});
export type PlantProfile = z.infer<typeof PlantProfileSchema>;

/** Validate a profile; throws PLANT_INVALID naming each bad field (pointers relative to the profile). */
export function parsePlantProfile(input: unknown): PlantProfile {
  const r = PlantProfileSchema.safeParse(input);
  if (!r.success) {
    const fields = issuesToFields(r.error.issues);
    throw new DomainError('PLANT_INVALID', {
      detail: `The plant profile has ${fields.length} invalid field(s): ${fields.map((f) => `${f.pointer || '/'} ${f.message}`).join('; ')}.`,
      fields,
    });
  }
  const p = r.data;
  const fields: { pointer: string; message: string }[] = [];
  const seen = new Set<string>();
  p.pumps.forEach((pump, i) => {
    if (seen.has(pump.id)) fields.push({ pointer: `/pumps/${i}/id`, message: `pump id "${pump.id}" is used twice` });
    seen.add(pump.id);
  });
  const products = new Set<string>();
  p.products.forEach((prod, i) => {
    if (products.has(prod.oxidant)) fields.push({ pointer: `/products/${i}/oxidant`, message: `product ${prod.oxidant} is listed twice; keep one entry per oxidant` });
    products.add(prod.oxidant);
    if (prod.strength.unit !== 'g/L' && prod.strength.value > 100) fields.push({ pointer: `/products/${i}/strength/value`, message: `a strength in ${prod.strength.unit} must be at most 100` });
  });
  if (fields.length > 0) {
    throw new DomainError('PLANT_INVALID', { detail: fields.map((f) => `${f.pointer}: ${f.message}`).join('; ') + '.', fields });
  }
  return p;
}

/** Which request fields came from the plant profile (echoed in the result). */
export interface PlantMerge {
  readonly request: DoseRequest;
  readonly fromPlant: readonly string[];
  readonly plant: { readonly id: string; readonly name: string; readonly invented: boolean; readonly preferredUnits: 'SI' | 'US' };
}

/**
 * Fill a dose request from a plant profile. Fields the request gives win over the profile
 * (an operator may override today's flow). The request's `plantId` must match the profile.
 */
export function mergePlantIntoRequest(request: DoseRequest, plant: PlantProfile): PlantMerge {
  if (request.plantId !== undefined && request.plantId !== plant.id) {
    throw new DomainError('PLANT_NOT_FOUND', {
      detail: `The request names plant "${request.plantId}" but profile "${plant.id}" was supplied.`,
      fields: [{ pointer: '/plantId', message: `no plant profile "${request.plantId}"` }],
    });
  }
  const fromPlant: string[] = [];
  const out: Record<string, unknown> = { ...request, plantId: plant.id };
  const take = (key: string, value: unknown) => {
    if (value === undefined || (request as Record<string, unknown>)[key] !== undefined) return;
    out[key] = value;
    fromPlant.push(key);
  };
  take('flow', plant.flow);
  if (request.contactTime === undefined) take('contactVolume', plant.contactVolume);
  const product = plant.products.find((p) => p.oxidant === request.oxidant);
  if (product) {
    take('product', {
      strength: product.strength,
      ...(product.density ? { density: product.density } : {}),
      ...(product.purity ? { purity: product.purity } : {}),
    });
    take('stock', product.stock);
    if (product.batchVolume) take('batch', { volume: product.batchVolume });
  }
  const pump = plant.pumps.find((p) => p.oxidant === request.oxidant);
  if (pump) take('pump', { id: pump.id, ratedCapacity: pump.ratedCapacity });
  take('targetResidual', plant.targets.residualByOxidant?.[request.oxidant] ?? plant.targets.residual);
  if (request.options?.units === undefined) {
    out['options'] = { ...(request.options ?? {}), units: plant.preferredUnits };
  }
  return {
    request: out as DoseRequest,
    fromPlant,
    plant: { id: plant.id, name: plant.name, invented: plant.invented, preferredUnits: plant.preferredUnits },
  };
}
