/**
 * Plant profile: what a plant keeps between daily dose requests (flow, contact volume,
 * products on hand, metering pumps, targets, preferred units). Storage is the archive's
 * business; this file owns the schema and merges a profile into a dose request, so a daily
 * request needs only the oxidant and the lab readings.
 */
import { z } from 'zod';
import { DomainError } from '../core/errors.js';
import { toBaseDec } from '../core/quantity.js';
import { quantityBoundProblems } from './bounds.js';
import { FED_AS_GAS_IDS, GAS_FEEDER_TEXT, SOLID_PRODUCT_IDS, strengthLimitProblem, type StrengthLimit } from './strength-limits.js';
import { densityCheck } from './feed.js';
import { residualFlags } from './flags.js';
import type { Flag } from './types.js';
import type { LimitRow, OxidantRow } from '../reference/dosing-schemas.js';
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
  type ConcentrationInput,
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
export function parsePlantProfile(input: unknown, strengthLimits?: readonly StrengthLimit[]): PlantProfile {
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
    // a gas has no product strength: refused as the dose route refuses product for it. A product entry needs a strength (the
    // profile's shape), so a gas cannot be listed among the products at all; its residual target goes in targets.residualByOxidant.
    if (FED_AS_GAS_IDS.has(prod.oxidant)) {
      fields.push({
        pointer: `/products/${i}/strength`,
        message: `${GAS_FEEDER_TEXT[prod.oxidant] ?? `${prod.oxidant} is fed as a gas`}: a product strength (${prod.strength.value} ${prod.strength.unit}) does not apply. Remove this product entry; a residual target for it goes in targets.residualByOxidant.${prod.oxidant}, and its stock on hand with the dose request (stock)`,
      });
      return;
    }
    const before = fields.length;
    if (prod.strength.unit !== 'g/L' && prod.strength.value > 100) fields.push({ pointer: `/products/${i}/strength/value`, message: `a strength in ${prod.strength.unit} must be at most 100` });
    fields.push(
      ...quantityBoundProblems(
        { product: prod, stock: prod.stock, batch: prod.batchVolume ? { volume: prod.batchVolume } : undefined },
        { product: `/products/${i}`, stock: `/products/${i}/stock`, batch: `/products/${i}/batchVolume` },
      ).map((f) => (f.pointer === `/products/${i}/batchVolume/volume/value` ? { ...f, pointer: `/products/${i}/batchVolume/value` } : f)),
    );
    // a strength no solution of the product can have (src/dosing/strength-limits.ts), the same check as a dose request's
    if (!fields.slice(before).some((f) => f.pointer.startsWith(`/products/${i}/strength`) || f.pointer.startsWith(`/products/${i}/density`))) {
      const limit = strengthLimitProblem(prod.oxidant, prod, `/products/${i}`, strengthLimits);
      if (limit) fields.push({ pointer: limit.pointer, message: limit.message });
    }
  });
  // the same ranges as a dose request, so a stored profile cannot make every dose refused or overflow
  fields.push(...quantityBoundProblems({ flow: p.flow, contactVolume: p.contactVolume }, { flow: '/flow', contactVolume: '/contactVolume' }));
  p.pumps.forEach((pump, i) => {
    // a metering pump is rated in a solution rate (L/h, gal/h …): a gas has none
    if (FED_AS_GAS_IDS.has(pump.oxidant)) {
      fields.push({
        pointer: `/pumps/${i}/ratedCapacity`,
        message: `${GAS_FEEDER_TEXT[pump.oxidant] ?? `${pump.oxidant} is fed as a gas`}: a metering pump rated in ${pump.ratedCapacity.unit} does not apply. Remove this pump`,
      });
      return;
    }
    fields.push(...quantityBoundProblems({ pump }, { pump: `/pumps/${i}` }));
  });
  const residuals: [string, ConcentrationInput | undefined][] = [['/targets/residual', p.targets.residual], ...Object.entries(p.targets.residualByOxidant ?? {}).map(([id, q]): [string, ConcentrationInput | undefined] => [`/targets/residualByOxidant/${id}`, q])];
  for (const [pointer, q] of residuals) {
    if (q) fields.push(...quantityBoundProblems({ targetResidual: q }, { targetResidual: pointer }));
  }
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
  /** Which residual target of the profile was taken, or why none was. */
  readonly residual: PlantResidual;
}

/** What the merge needs to know of an oxidant (from tables/oxidants.json). */
export interface PlantMergeOxidant {
  /** The dose basis (Cl2, KMnO4, O3 …): a residual set for one oxidant holds for the others on its basis. */
  readonly doseBasis: string;
  /**
   * Fed as a gas (chlorine gas, oxygen, ozone): a product strength does not apply. parsePlantProfile refuses a product
   * entry for a gas; one stored before it did is not merged as product (its stock still is).
   */
  readonly fedAsGas: boolean;
}

export interface PlantResidual {
  /** The profile entry taken as targetResidual (null when the request gave one, or none applies). */
  readonly used: { readonly entry: string; readonly reason: string } | null;
  /** The profile holds residual targets, but none for this oxidant or its basis: the sentence for the info flag. */
  readonly forOtherOxidant: string | null;
}

const qText = (q: { value: number; unit: string }) => `${q.value} ${q.unit}`;
const listText = (xs: readonly string[]) => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}`);

/**
 * The profile's residual target for an oxidant. A residual belongs to an oxidant: the entry of
 * `targets.residualByOxidant` for it, else one for another oxidant on the same dose basis (the
 * chlorine products share "as Cl2"; entries that disagree are not chosen between), else the
 * general `targets.residual` when every product of the profile doses on that basis (the
 * residual of a plant that feeds only chlorine is a chlorine residual). Otherwise none is taken.
 */
export function plantResidualFor(plant: PlantProfile, oxidantId: string, basisOf: (id: string) => string): { value: { value: number; unit: string } | undefined; residual: PlantResidual } {
  const basis = basisOf(oxidantId);
  const byOx = Object.entries(plant.targets.residualByOxidant ?? {}).filter((e): e is [string, ConcentrationInput] => e[1] !== undefined);
  const own = byOx.find(([id]) => id === oxidantId);
  if (own) return { value: own[1], residual: { used: { entry: `targets.residualByOxidant.${oxidantId}`, reason: `set for ${oxidantId}` }, forOtherOxidant: null } };
  const sameBasis = byOx.filter(([id]) => basisOf(id) === basis);
  const sameValues = new Set(sameBasis.map(([, q]) => toBaseDec('concentration', q).toString()));
  if (sameBasis.length > 0 && sameValues.size === 1) {
    const [id, q] = sameBasis[0]!;
    return { value: q, residual: { used: { entry: `targets.residualByOxidant.${id}`, reason: `set for ${listText(sameBasis.map(([x]) => x))}, on the same basis (as ${basis})` }, forOtherOxidant: null } };
  }
  const general = plant.targets.residual;
  const productBases = [...new Set(plant.products.map((p) => basisOf(p.oxidant)))];
  if (general && sameBasis.length === 0 && productBases.length === 1 && productBases[0] === basis) {
    return { value: general, residual: { used: { entry: 'targets.residual', reason: `the plant's residual target, read as ${basis} because every product of the profile doses as ${basis}` }, forOtherOxidant: null } };
  }
  if (byOx.length === 0 && !general) return { value: undefined, residual: { used: null, forOtherOxidant: null } };
  const parts: string[] = [];
  if (byOx.length > 0) parts.push(`targets.residualByOxidant gives ${listText(byOx.map(([id, q]) => `${id} ${qText(q)} (as ${basisOf(id)})`))}`);
  if (sameBasis.length > 1) parts.push(`its entries on the basis ${basis} disagree, so none is chosen`);
  if (general) {
    parts.push(
      productBases.length === 1
        ? `targets.residual ${qText(general)} is read as ${productBases[0]}, the basis of every product of the profile`
        : `targets.residual ${qText(general)} names no oxidant${productBases.length > 1 ? ` and the profile's products dose as ${listText(productBases)}` : ' and the profile lists no product'}`,
    );
  }
  const lead = sameBasis.length > 1 ? `The plant profile's residual targets for the oxidants dosed as ${basis} disagree` : "The plant profile's residual target was set for another oxidant";
  const sentence = `${lead}: ${parts.join('; ')}. None is for ${oxidantId} (as ${basis}), so no residual from the profile was used and the dose meets the demand only. Give targetResidual (mg/L as ${basis}) in the request to carry one, or add targets.residualByOxidant.${oxidantId} to the plant profile.`;
  return { value: undefined, residual: { used: null, forOtherOxidant: sentence } };
}

/**
 * Fill a dose request from a plant profile. Fields the request gives win over the profile
 * (an operator may override today's flow). The request's `plantId` must match the profile.
 */
export function mergePlantIntoRequest(request: DoseRequest, plant: PlantProfile, oxidants?: ReadonlyMap<string, PlantMergeOxidant>): PlantMerge {
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
  const fedAsGas = oxidants?.get(request.oxidant)?.fedAsGas ?? false;
  if (product) {
    if (!fedAsGas) take('product', {
      strength: product.strength,
      ...(product.density ? { density: product.density } : {}),
      ...(product.purity ? { purity: product.purity } : {}),
    });
    take('stock', product.stock);
    if (product.batchVolume) take('batch', { volume: product.batchVolume });
  }
  const pump = plant.pumps.find((p) => p.oxidant === request.oxidant);
  if (pump) take('pump', { id: pump.id, ratedCapacity: pump.ratedCapacity });
  // a residual target belongs to an oxidant (or its basis): never another oxidant's
  let residual: PlantResidual = { used: null, forOtherOxidant: null };
  if (request.targetResidual === undefined) {
    const r = plantResidualFor(plant, request.oxidant, (id) => oxidants?.get(id)?.doseBasis ?? id);
    residual = r.residual;
    take('targetResidual', r.value);
  }
  if (request.options?.units === undefined) {
    out['options'] = { ...(request.options ?? {}), units: plant.preferredUnits };
  }
  return {
    request: out as DoseRequest,
    fromPlant,
    plant: { id: plant.id, name: plant.name, invented: plant.invented, preferredUnits: plant.preferredUnits },
    residual,
  };
}

/**
 * What a stored profile holds that its doses will warn about, said when it is saved: a product
 * density below water's or unlike the tabled one at that strength (the same check as a dose's).
 */
export function plantProfileWarnings(
  profile: PlantProfile,
  oxidants: ReadonlyMap<string, OxidantRow>,
  limits: readonly LimitRow[] = [],
): { code: string; message: string; pointer: string }[] {
  const out: { code: string; message: string; pointer: string }[] = [];
  // residual targets above a maximum residual level (MRDL) or guideline: the dose route flags them on every
  // request; said here too, when the profile is saved, so that it is corrected once
  const residualChecks: [string, string, ConcentrationInput][] = [];
  for (const [id, q] of Object.entries(profile.targets.residualByOxidant ?? {})) if (q) residualChecks.push([id, `/targets/residualByOxidant/${id}`, q]);
  if (profile.targets.residual) {
    const own = new Set(Object.keys(profile.targets.residualByOxidant ?? {}));
    for (const prod of profile.products) if (!own.has(prod.oxidant)) residualChecks.push([prod.oxidant, '/targets/residual', profile.targets.residual]);
  }
  const seen = new Set<string>();
  for (const [id, pointer, q] of residualChecks) {
    const ox = oxidants.get(id);
    if (!ox) continue;
    for (const f of residualFlags({ oxidant: ox, residualMgPerL: toBaseDec('concentration', q, pointer), limits })) {
      const key = `${pointer}|${f.code}|${f.message}`;
      if (seen.has(key)) continue;
      seen.add(key);
      out.push({ code: f.code, pointer, message: `For ${ox.name.toLowerCase()}, ${f.message.charAt(0).toLowerCase()}${f.message.slice(1)}` });
    }
  }
  profile.products.forEach((prod, i) => {
    if (prod.purity && !SOLID_PRODUCT_IDS.has(prod.oxidant)) {
      out.push({
        code: 'PURITY_NOT_APPLICABLE',
        pointer: `/products/${i}/purity`,
        message: `${prod.oxidant.replace(/-/g, ' ')} is supplied as a solution: its strength states the active content, so the purity is not used in its doses (it is for solid products: ${[...SOLID_PRODUCT_IDS].map((x) => x.replace(/-/g, ' ')).join(', ')}). Remove it from the profile.`,
      });
    }
    const ox = oxidants.get(prod.oxidant);
    if (!ox || !prod.density) return;
    const flags: Flag[] = [];
    densityCheck(ox, prod.strength, toBaseDec('density', prod.density, `/products/${i}/density`), `The density of product ${i + 1} (${prod.oxidant})`, flags);
    for (const f of flags) out.push({ code: f.code, message: f.message, pointer: `/products/${i}/density` });
  });
  return out;
}
