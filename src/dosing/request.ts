/**
 * The dose request as a zod schema, shared by the HTTP layer (POST /api/v1/doses) and the CLI.
 * Only checks JSON Schema can state live here (types, ranges, enums, required, no unknown
 * fields), so the same schema runs through Fastify's compiled validator; checks that depend
 * on other fields (a % strength ≤ 100 and within what the oxidant's product can be, a
 * temperature range in the unit chosen, flow or a plant) are made by `checkDoseRequest` with the
 * same RFC 6901 pointers.
 */
import { z } from 'zod';
import { DomainError, toPointer, type FieldProblem } from '../core/errors.js';
import { UNIT_FACTORS, TEMPERATURE_UNITS, temperatureToC } from '../core/quantity.js';
import { READING_BOUNDS, quantityBoundProblems, readingBoundProblems } from './bounds.js';
import { SOLID_PRODUCT_IDS, strengthLimitProblem, type StrengthLimit, type StrengthLimitProblem } from './strength-limits.js';

/** The product ids the HTTP contract fixes (tables/oxidants.json holds their properties). */
export const OXIDANT_IDS = [
  'potassium-permanganate',
  'sodium-permanganate',
  'sodium-hypochlorite',
  'calcium-hypochlorite',
  'chlorine-gas',
  'chlorine-dioxide',
  'ozone',
  'hydrogen-peroxide',
  'oxygen',
] as const;
export type OxidantId = (typeof OXIDANT_IDS)[number];

/** Sample fields that carry a contaminant concentration (request field → contaminant id in tables/contaminants.json). */
export const CONTAMINANT_FIELDS = ['iron', 'manganese', 'sulfide', 'arsenite', 'nitrite', 'ammoniaN'] as const;
export type ContaminantField = (typeof CONTAMINANT_FIELDS)[number];
export const OTHER_SAMPLE_FIELDS = ['alkalinity', 'tds', 'bromide', 'toc', 'dissolvedOxygen'] as const;

const keysOf = (o: object): [string, ...string[]] => Object.keys(o) as [string, ...string[]];
export const CONCENTRATION_UNITS = keysOf(UNIT_FACTORS.concentration);
export const FLOW_UNITS = keysOf(UNIT_FACTORS.flow);
export const TIME_UNITS = keysOf(UNIT_FACTORS.time);
export const VOLUME_UNITS = keysOf(UNIT_FACTORS.volume);
export const MASS_UNITS = keysOf(UNIT_FACTORS.mass);
export const SOLUTION_RATE_UNITS = keysOf(UNIT_FACTORS.solutionRate);
export const STRENGTH_UNITS = ['% w/w', '% w/v', 'g/L'] as const;
/** Density units whose factor to kg/L is 1, so the 0.8–2.0 range reads the same in each. */
export const DENSITY_UNITS = ['kg/L', 'g/mL', 'g/cm3'] as const;
export const PURITY_UNITS = ['%', '% w/w'] as const;

const unitEnum = (units: readonly [string, ...string[]], what: string) =>
  z.enum(units, { error: `unit of ${what} must be one of: ${units.join(', ')}` });

/** A concentration: value ≥ 0 in mg/L, µg/L (ug/L), g/m3, g/L, ppm or ppb. */
export const ConcentrationSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).min(0, { error: 'a concentration must be 0 or more' }),
  unit: unitEnum(CONCENTRATION_UNITS, 'a concentration'),
});
export type ConcentrationInput = z.infer<typeof ConcentrationSchema>;

export const FlowSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'flow must be more than 0' }),
  unit: unitEnum(FLOW_UNITS, 'flow'),
});

export const TimeSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'a time must be more than 0' }),
  unit: unitEnum(TIME_UNITS, 'time'),
});

export const VolumeSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'a volume must be more than 0' }),
  unit: unitEnum(VOLUME_UNITS, 'volume'),
});

export const StockSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).min(0, { error: 'stock must be 0 or more' }),
  unit: unitEnum([...VOLUME_UNITS, ...MASS_UNITS] as [string, ...string[]], 'stock (a volume or a mass)'),
});

export const SolutionRateSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'a pump capacity must be more than 0' }),
  unit: unitEnum(SOLUTION_RATE_UNITS, 'a solution rate'),
});

/** Temperature as a quantity (°C, °F or K); the liquid-water range is checked after conversion. */
export const TemperatureSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }),
  unit: unitEnum(TEMPERATURE_UNITS as unknown as [string, ...string[]], 'temperature'),
});

export const StrengthSchema = z.strictObject({
  value: z
    .number({ error: 'value must be a number' })
    .positive({ error: 'strength must be more than 0' })
    .max(2000, { error: 'strength cannot exceed 100 % or 2000 g/L' }),
  unit: z.enum(STRENGTH_UNITS, { error: `unit of strength must be one of: ${STRENGTH_UNITS.join(', ')} (for hypochlorite, % w/v is trade percent = g/L available chlorine ÷ 10)` }),
});
export type StrengthInput = z.infer<typeof StrengthSchema>;

export const DensitySchema = z.strictObject({
  value: z
    .number({ error: 'value must be a number' })
    .min(0.8, { error: 'density must be between 0.8 and 2.0 kg/L' })
    .max(2.0, { error: 'density must be between 0.8 and 2.0 kg/L' }),
  unit: z.enum(DENSITY_UNITS, { error: `unit of density must be one of: ${DENSITY_UNITS.join(', ')}` }),
});

export const PuritySchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'purity must be more than 0 %' }).max(100, { error: 'purity cannot exceed 100 %' }),
  unit: z.enum(PURITY_UNITS, { error: `unit of purity must be one of: ${PURITY_UNITS.join(', ')}` }),
});

export const ProductSchema = z.strictObject({
  /** Required for a solution product; a solid (KMnO4, Ca(OCl)2) may give only its purity, for the mass of solid to feed. */
  strength: StrengthSchema.optional().describe('Strength of the product as fed: required for a solution; a solid (potassium permanganate, calcium hypochlorite) may give only its purity, for the mass of solid to feed'),
  density: DensitySchema.optional(),
  purity: PuritySchema.optional(),
});
export type ProductInput = z.infer<typeof ProductSchema>;

const sampleFieldNames = ['pH', 'temperatureC', 'temperature', ...CONTAMINANT_FIELDS, ...OTHER_SAMPLE_FIELDS];

export const SampleSchema = z.strictObject(
  {
    pH: z.number({ error: 'pH must be a number' }).min(0, { error: 'pH must be between 0 and 14' }).max(14, { error: 'pH must be between 0 and 14' }),
    temperatureC: z
      .number({ error: 'temperatureC must be a number' })
      .min(0, { error: 'temperature must be between 0 and 100 °C (liquid water)' })
      .max(100, { error: 'temperature must be between 0 and 100 °C (liquid water)' })
      .optional()
      .describe('Water temperature, °C (0–100). Required: give temperatureC or temperature (one of the two)'),
    /** Alternative to temperatureC: {value, unit: °C | °F | K}. */
    temperature: TemperatureSchema.optional().describe('Water temperature with its unit (°C, °F or K), instead of temperatureC; one of the two is required'),
    iron: ConcentrationSchema.optional(),
    manganese: ConcentrationSchema.optional(),
    sulfide: ConcentrationSchema.optional(),
    arsenite: ConcentrationSchema.optional(),
    nitrite: ConcentrationSchema.optional(),
    ammoniaN: ConcentrationSchema.optional(),
    /** Total alkalinity, read as CaCO3. */
    alkalinity: ConcentrationSchema.optional(),
    tds: ConcentrationSchema.optional(),
    bromide: ConcentrationSchema.optional(),
    toc: ConcentrationSchema.optional(),
    /** Measured dissolved oxygen (for iron(II) oxygenation); default: saturation in air at the water temperature. */
    dissolvedOxygen: ConcentrationSchema.optional(),
  },
  { error: (iss) => (iss.code === 'unrecognized_keys' ? `unknown sample field(s): ${iss.keys.join(', ')}; accepted: ${sampleFieldNames.join(', ')}` : undefined) },
);
export type SampleInput = z.infer<typeof SampleSchema>;
/** The plausibility bounds, stated in the OpenAPI document (the check is checkDoseRequest's, on the converted value). */
const SAMPLE_BOUNDS_TEXT = `Raw-water readings. Refused above (mg/L, common practice): ${READING_BOUNDS.map((b) => `${b.field} ${b.refuseAbove}`).join(', ')}; a warning above: ${READING_BOUNDS.map((b) => `${b.field} ${b.warnAbove}`).join(', ')}.`;

/** A measured demand (demand test, mg/L on the oxidant's basis) or TOC × a plant-specific factor. */
export const BackgroundDemandSchema = z.union([
  ConcentrationSchema,
  z.strictObject({
    /** mg oxidant (on its basis) per mg TOC, a factor the plant measured for its own water. */
    tocFactor: z.number({ error: 'tocFactor must be a number' }).positive({ error: 'tocFactor must be more than 0' }).max(100, { error: 'tocFactor must be at most 100 mg per mg TOC' }),
    note: z.string().max(500).optional(),
  }),
]);
export type BackgroundDemandInput = z.infer<typeof BackgroundDemandSchema>;

export const OptionsSchema = z.strictObject({
  /** Sulfide oxidised to elemental sulfur (default) or to sulfate. */
  sulfideProduct: z.enum(['sulfur', 'sulfate']).optional(),
  /** Ammonia breakpoint ratio: theoretical (default, from the balanced reaction) or the practical design ratio (common practice). */
  ammoniaRatio: z.enum(['theoretical', 'practical']).optional(),
  /** Balance in acid or base; default from the pH (base above pH 7). */
  medium: z.enum(['acid', 'base']).optional(),
  /** Units preferred in the summary (both are always given). */
  units: z.enum(['SI', 'US']).optional(),
  /** Fraction of a chlorine dioxide dose ending as chlorite (default from tables/oxidants.json). */
  chloriteFraction: z.number().min(0).max(1).optional(),
  /** Site values for standard potentials, e.g. the Fe(OH)3/Fe2+ couple for the iron(III) solid that forms. */
  potentialOverrides: z
    .array(
      z.strictObject({
        from: z.string().min(1).max(40),
        to: z.string().min(1).max(40),
        standardPotentialV: z.number().min(-4).max(4),
        source: z.string().min(1).max(200),
        medium: z
          .enum(['acid', 'base'])
          .optional()
          .describe('The form of the couple the value is for: acid (default; written with H+, or with neither) or base (written with OH-); carried to the form the pH calls for through the ionisation of water'),
      }),
    )
    .max(10)
    .optional(),
});
export type DoseOptions = z.infer<typeof OptionsSchema>;

const requestFieldNames = ['oxidant', 'plantId', 'flow', 'sample', 'backgroundDemand', 'targetResidual', 'product', 'contactTime', 'contactVolume', 'pump', 'stock', 'batch', 'options'];

export const DoseRequestSchema = z.strictObject(
  {
    oxidant: z.enum(OXIDANT_IDS, { error: `oxidant must be one of: ${OXIDANT_IDS.join(', ')}` }),
    /** A stored plant profile supplies flow, product, pump, stock, contact volume and target residual. */
    plantId: z.string().min(1).max(100).optional(),
    flow: FlowSchema.optional().describe('Plant flow; 1 L/d to 10 000 000 m3/d once converted (common practice), else QUANTITY_OUT_OF_RANGE naming /flow/value'),
    sample: SampleSchema.describe(SAMPLE_BOUNDS_TEXT),
    backgroundDemand: BackgroundDemandSchema.optional(),
    /** Residual wanted after the contact time, on the oxidant's basis (as Cl2, as KMnO4 …). */
    targetResidual: ConcentrationSchema.optional(),
    product: ProductSchema.optional(),
    /** Available contact time; else contact volume ÷ flow from the plant. */
    contactTime: TimeSchema.optional().describe('Available contact time, at most 30 days'),
    /** Contact basin volume (available contact time = volume ÷ flow). */
    contactVolume: VolumeSchema.optional().describe('Contact basin volume; volume ÷ flow at most 30 days, else both fields are named'),
    pump: z.strictObject({ id: z.string().max(100).optional(), ratedCapacity: SolutionRateSchema }).optional(),
    stock: StockSchema.optional(),
    /** Batch tank for a solid made up as a solution (potassium permanganate, calcium hypochlorite). */
    batch: z.strictObject({ volume: VolumeSchema, temperatureC: z.number().min(0).max(100).optional() }).optional(),
    options: OptionsSchema.optional(),
  },
  { error: (iss) => (iss.code === 'unrecognized_keys' ? `unknown field(s): ${iss.keys.join(', ')}; accepted: ${requestFieldNames.join(', ')}` : undefined) },
);
export type DoseRequest = z.infer<typeof DoseRequestSchema>;

/** zod issues → field problems with RFC 6901 pointers. */
export function issuesToFields(issues: readonly z.core.$ZodIssue[], prefix = ''): FieldProblem[] {
  return issues.map((i) => ({ pointer: prefix + toPointer(i.path.map((p) => (typeof p === 'symbol' ? String(p) : p))), message: i.message }));
}

/** Parse with the zod schema and the cross-field checks; throws VALIDATION_FAILED naming every bad field. */
export function parseDoseRequest(input: unknown, strengthLimits?: readonly StrengthLimit[]): DoseRequest {
  const r = DoseRequestSchema.safeParse(input);
  if (!r.success) {
    const fields = issuesToFields(r.error.issues);
    throw new DomainError('VALIDATION_FAILED', {
      detail: `The dose request has ${fields.length} invalid field(s): ${fields.map((f) => `${f.pointer || '/'} ${f.message}`).join('; ')}.`,
      fields,
    });
  }
  checkDoseRequest(r.data, strengthLimits);
  return r.data;
}

/**
 * Checks that depend on more than one field. Pointers are relative to the request. The checks are
 * independent of each other, so every problem is reported at once: a missing temperature does not
 * hide an out-of-range strength or an implausible iron reading. The code is that of the gravest
 * kind found, in this order: DOSE_INPUT_MISSING (a required input is absent), QUANTITY_OUT_OF_RANGE
 * (a quantity beyond what the service takes), READING_IMPLAUSIBLE (a reading no raw water holds);
 * the fields of the others ride along in the same problem. Called by computeDose too, so a caller
 * that validated with JSON Schema only still gets them.
 */
export function checkDoseRequest(req: DoseRequest, strengthLimits?: readonly StrengthLimit[]): void {
  const missing: FieldProblem[] = [];
  const fields: FieldProblem[] = [];
  const s = req.sample;
  if (s.temperatureC === undefined && s.temperature === undefined) {
    missing.push({ pointer: '/sample/temperatureC', message: 'temperature is required (0 to 100 °C, or sample.temperature in °F or K)' });
  }
  if (s.temperatureC !== undefined && s.temperature !== undefined) {
    fields.push({ pointer: '/sample/temperature', message: 'give either temperatureC or temperature, not both' });
  }
  if (s.temperature !== undefined) {
    const c = temperatureToC(s.temperature, '/sample/temperature');
    if (!(c >= 0 && c <= 100)) {
      fields.push({ pointer: '/sample/temperature/value', message: 'temperature must be liquid water: 0 to 100 °C, 32 to 212 °F or 273.15 to 373.15 K' });
    }
  }
  const st = req.product?.strength;
  // a solid may be given by its purity alone (the mass of solid to feed); a solution is given by its strength
  if (req.product && st === undefined && !SOLID_PRODUCT_IDS.has(req.oxidant)) {
    fields.push({ pointer: '/product/strength', message: `the strength of the ${req.oxidant.replace(/-/g, ' ')} fed is required (% w/w with density, % w/v or g/L); only a solid product (${[...SOLID_PRODUCT_IDS].map((x) => x.replace(/-/g, ' ')).join(', ')}) may be given by its purity alone` });
  }
  if (st && st.unit !== 'g/L' && st.value > 100) {
    fields.push({ pointer: '/product/strength/value', message: `a strength in ${st.unit} must be more than 0 and at most 100` });
  }
  // a background demand as TOC × factor needs the TOC reading (listed with the other problems, not after them)
  if (req.backgroundDemand && 'tocFactor' in req.backgroundDemand && s.toc === undefined) {
    missing.push({ pointer: '/sample/toc', message: 'TOC is required when backgroundDemand.tocFactor is given (the background demand is TOC × that factor)' });
  }
  // flow, contact, strength, pump, stock, batch, residual and demand within a plant's range (src/dosing/bounds.ts)
  fields.push(...quantityBoundProblems(req));
  // a strength no solution of the product can have: above its solubility, or far above its strongest grade (tables/strength-limits.json)
  let strengthLimit: StrengthLimitProblem | null = null;
  if (req.product?.strength && !fields.some((f) => f.pointer.startsWith('/product/'))) {
    strengthLimit = strengthLimitProblem(req.oxidant, { ...req.product, strength: req.product.strength }, '/product', strengthLimits);
    if (strengthLimit) fields.push({ pointer: strengthLimit.pointer, message: strengthLimit.message });
  }
  // readings a raw water cannot hold (a unit slip or a miscopied reading): refused, naming the field, the value, the bound and why
  const implausible = readingBoundProblems(s);
  const implausibleFields = implausible.map((f) => ({ pointer: f.pointer, message: f.message }));
  const params: Record<string, unknown> = {
    ...(strengthLimit ? { strengthLimit: strengthLimit.params } : {}),
    ...(implausible.length > 0 ? { readings: implausible.map((f) => ({ field: f.field, mgPerL: f.mgPerL, refusedAboveMgPerL: f.boundMgPerL })) } : {}),
  };
  const list = (fs: readonly FieldProblem[]) => fs.map((f) => `${f.pointer}: ${f.message}`).join('; ');
  const alsoOf = (fs: readonly FieldProblem[]) => (fs.length > 0 ? ` Also: ${list(fs)}.` : '');
  if (missing.length > 0) {
    throw new DomainError('DOSE_INPUT_MISSING', {
      detail:
        missing
          .map((m) =>
            m.pointer === '/sample/toc'
              ? 'The sample TOC is needed: backgroundDemand.tocFactor gives the background demand as TOC × that factor; give sample.toc {value, unit}.'
              : 'The sample temperature is needed: give sample.temperatureC (0 to 100 °C) or sample.temperature {value, unit: °C | °F | K}.',
          )
          .join(' ') + alsoOf([...fields, ...implausibleFields]),
      fields: [...missing, ...fields, ...implausibleFields],
      params,
    });
  }
  if (fields.length > 0) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: list(fields) + '.' + alsoOf(implausibleFields), fields: [...fields, ...implausibleFields], params });
  }
  if (implausible.length > 0) {
    throw new DomainError('READING_IMPLAUSIBLE', {
      detail: `${implausible.length === 1 ? 'A reading is' : `${implausible.length} readings are`} beyond what a raw drinking-water source holds: ${list(implausibleFields)}.`,
      fields: implausibleFields,
      params,
    });
  }
}
