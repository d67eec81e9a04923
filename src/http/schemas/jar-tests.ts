/**
 * Request and response schemas of the jar-test routes (issue 5, "HTTP contract"). zod is the
 * single source of truth; route.ts turns these into JSON Schema for Fastify's validator and
 * serializer. Only checks JSON Schema can state live here; cross-field checks (a % w/v stock at
 * most 100, the domain's ranges) are made in the route or the domain with the same pointers.
 */
import { z } from 'zod';
import {
  BackgroundDemandSchema,
  ConcentrationSchema,
  DensitySchema,
  OXIDANT_IDS,
  PuritySchema,
  SampleSchema,
  StrengthSchema,
} from '../../dosing/request.js';
import { IsoDateTime, PageSize, QuantityOut } from './common.js';
import { CorrectionReason, Integrity, SheetStatus } from './sheets.js';

// ---------------------------------------------------------------------------------------------
// request pieces

export const JarOxidant = z.enum(OXIDANT_IDS, { error: `oxidant must be one of: ${OXIDANT_IDS.join(', ')}` });

export const JAR_VOLUME_UNITS = ['L', 'mL'] as const;
/** Jar volume: L or mL (converted through the volume kind of src/core/quantity.ts). */
export const JarVolumeSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).positive({ error: 'the jar volume must be more than 0' }),
  unit: z.enum(JAR_VOLUME_UNITS, { error: `unit of the jar volume must be one of: ${JAR_VOLUME_UNITS.join(', ')}` }),
});

export const JAR_DOSE_UNITS = ['mg/L', 'µg/L', 'ug/L', 'g/m3', 'ppm', 'ppb'] as const;
/** A jar dose, on the oxidant's basis (as KMnO4, as Cl2 …). */
export const JarDoseSchema = z.strictObject({
  value: z.number({ error: 'value must be a number' }).min(0, { error: 'a dose must be 0 or more' }),
  unit: z.enum(JAR_DOSE_UNITS, { error: `unit of a dose must be one of: ${JAR_DOSE_UNITS.join(', ')}` }),
});

export const STOCK_STRENGTH_UNITS = ['g/L', 'mg/mL', '% w/v'] as const;
/** Stock strength on the dose basis: g/L, mg/mL (= g/L) or % w/v (= 10 g/L per %). */
export const StockStrengthSchema = z.strictObject({
  value: z
    .number({ error: 'value must be a number' })
    .positive({ error: 'the stock strength must be more than 0' })
    .max(1000, { error: 'the stock strength must be at most 1000 g/L (100 % w/v)' }),
  unit: z.enum(STOCK_STRENGTH_UNITS, { error: `unit of the stock strength must be one of: ${STOCK_STRENGTH_UNITS.join(', ')} (1 mg/mL = 1 g/L; 1 % w/v = 10 g/L)` }),
});

const PipetteResolutionMl = z
  .number({ error: 'pipetteResolutionMl must be a number (mL)' })
  .min(0.001, { error: 'the pipette resolution must be at least 0.001 mL (1 µL, the finest step of a bench micropipette; common practice)' })
  .max(10, { error: 'the pipette resolution must be at most 10 mL' })
  .describe('Smallest volume step the pipette reads, mL (default 0.1 mL, common practice)');

const ContactTimeMin = z
  .number({ error: 'a contact time must be a number (min)' })
  .positive({ error: 'a contact time must be more than 0 min' })
  .max(1440, { error: 'a contact time must be at most 1440 min (one day)' });

/** What the plant has on hand: purity of a solid, strength (and density) of a trade solution. */
export const JarProductSchema = z.strictObject({
  strength: StrengthSchema.optional().describe('Strength of the trade solution on hand (e.g. 12.5 % w/v hypochlorite = 125 g/L available chlorine)'),
  density: DensitySchema.optional().describe('Density of the trade solution, needed for a strength in % w/w'),
  purity: PuritySchema.optional().describe('Assay of a solid product from its certificate of analysis'),
  strengthMeasured: z.boolean().optional().describe('True when the trade strength was measured on the day of the test'),
});

const SampleMeta = {
  sampleLabel: z.string().min(1).max(200).optional(),
  samplingPoint: z.string().min(1).max(200).optional(),
  sampledAt: IsoDateTime.optional().describe('When the sample was taken (ISO 8601 with a zone)'),
  pageSize: PageSize.optional(),
};

export const JarPlanBody = z.strictObject({
  oxidant: JarOxidant,
  sample: SampleSchema.describe('Raw-water readings, as in the dose request'),
  jarVolume: JarVolumeSchema,
  jars: z.number().int({ error: 'jars must be a whole number' }).min(2, { error: 'at least 2 jars' }).max(24, { error: 'at most 24 jars' }).optional().describe('Number of jars of the default ladder (default 6)'),
  doses: z.array(JarDoseSchema).min(2, { error: 'give at least 2 doses' }).max(24, { error: 'give at most 24 doses' }).optional().describe('Explicit doses in jar order (0 = a control jar)'),
  stockStrength: StockStrengthSchema.optional(),
  pipetteResolutionMl: PipetteResolutionMl.optional(),
  contactTimesMin: z.array(ContactTimeMin).min(1, { error: 'give at least one contact time' }).max(12, { error: 'give at most 12 contact times' }).optional(),
  backgroundDemand: BackgroundDemandSchema.optional().describe('Measured background demand (mg/L) or TOC × plant factor; added to the estimate the ladder brackets'),
  targetResidual: ConcentrationSchema.optional().describe(
    'Residual the plant must carry after contact, on the dose basis, as in the dose request; the planned dose (estimate + background + target residual) is what POST /api/v1/doses computes, and the ladder reaches above it',
  ),
  plantId: z
    .string()
    .min(1)
    .max(100)
    .optional()
    .describe('Stored plant profile: fills targetResidual (per oxidant, else the plant\'s) and product (strength, density, purity) when the request leaves them out'),
  product: JarProductSchema.optional(),
  ...SampleMeta,
});
export type JarPlanBodyT = z.output<typeof JarPlanBody>;

export const JarCheckBody = z.strictObject({
  oxidant: JarOxidant,
  sample: SampleSchema.optional().describe('With the sample, the stoichiometric estimate is computed and the bracketing checked'),
  backgroundDemand: BackgroundDemandSchema.optional(),
  jarVolume: JarVolumeSchema,
  stockStrength: StockStrengthSchema,
  jars: z
    .array(z.strictObject({ dose: JarDoseSchema.optional(), aliquotMl: z.number({ error: 'aliquotMl must be a number (mL)' }).min(0, { error: 'an aliquot must be 0 mL or more' }).optional() }))
    .min(1, { error: 'give at least one jar' })
    .max(50, { error: 'give at most 50 jars' }),
  contactTimesMin: z.array(ContactTimeMin).max(12, { error: 'give at most 12 contact times' }).optional(),
  pipetteResolutionMl: PipetteResolutionMl.optional(),
});
export type JarCheckBodyT = z.output<typeof JarCheckBody>;

export const JarResultSchema = z.strictObject({
  contactTimeMin: ContactTimeMin,
  residualOxidant: ConcentrationSchema.optional().describe('Residual oxidant on the dose basis'),
  iron: ConcentrationSchema.optional().describe('Dissolved iron after 0.45 µm filtration, as Fe'),
  manganese: ConcentrationSchema.optional().describe('Dissolved manganese after 0.45 µm filtration, as Mn'),
  turbidityNTU: z.number({ error: 'turbidityNTU must be a number' }).min(0, { error: 'turbidity must be 0 NTU or more' }).optional(),
  note: z.string().max(500).optional().describe('Colour, floc, anything seen'),
});

export const JarEvaluationBody = z.strictObject({
  oxidant: JarOxidant,
  sample: SampleSchema.describe('Raw-water readings; the stoichiometric estimate comes from them'),
  jarVolume: JarVolumeSchema,
  jars: z
    .array(z.strictObject({ dose: JarDoseSchema, results: z.array(JarResultSchema).min(1, { error: 'give at least one result per jar' }).max(12, { error: 'give at most 12 results per jar' }) }))
    .min(1, { error: 'give at least one jar' })
    .max(50, { error: 'give at most 50 jars' }),
  targets: z
    .strictObject({
      iron: ConcentrationSchema.optional(),
      manganese: ConcentrationSchema.optional(),
      residualOxidant: ConcentrationSchema.optional().describe('Residual the plant must carry (at least)'),
      residualOxidantMax: ConcentrationSchema.optional().describe('Most residual allowed (e.g. no visible permanganate)'),
    })
    .optional()
    .describe('Default iron and manganese targets: the US secondary levels from tables/limits.json, when measured'),
  detectionLimit: ConcentrationSchema.optional().describe('Lower working limit of the residual method (default 0.05 mg/L, common practice)'),
  fitContactTimeMin: ContactTimeMin.optional().describe('Contact time whose residuals are fitted (default the longest)'),
  plantContactTimeMin: ContactTimeMin.optional().describe('Contact time the plant provides'),
  marginPercent: z
    .number({ error: 'marginPercent must be a number: the margin added to the bench dose, in % (0 to 100)' })
    .min(0, { error: 'marginPercent, the margin added to the bench dose, must be from 0 to 100 % (10 % is common practice)' })
    .max(100, { error: 'marginPercent, the margin added to the bench dose, must be from 0 to 100 % (10 % is common practice)' })
    .optional().describe('Margin added to the bench dose for the plant dose (default 10 %, common practice)'),
  plantId: z
    .string()
    .min(1)
    .max(100)
    .optional()
    .describe('Stored plant profile the test was run for: the archived evaluation is filed under the plant and its current profile version (GET /api/v1/sheets?plantId=…), and the sheet names it'),
  supersedes: z.string().regex(/^JT-\d{8}-[0-9A-HJKMNP-TV-Z]{10}$/, { error: 'supersedes must be a jar-test sheet id JT-YYYYMMDD-XXXXXXXXXX' }).optional(),
  correctionReason: CorrectionReason.optional(),
  ...SampleMeta,
});
export type JarEvaluationBodyT = z.output<typeof JarEvaluationBody>;

export const EvaluationId = z.object({
  id: z.string().regex(/^JT-\d{8}-[0-9A-HJKMNP-TV-Z]{10}$/, { error: 'not a jar-test sheet id (JT-YYYYMMDD-XXXXXXXXXX)' }),
});

// ---------------------------------------------------------------------------------------------
// response pieces

const Reported = z.object({ value: z.number(), unit: z.string(), rounded: z.string() });
const ReportedBasis = Reported.extend({ basis: z.string() });
const Problem = z.object({ code: z.string(), severity: z.enum(['error', 'warning', 'info']), message: z.string(), jar: z.number().int().optional() });

export const EstimateOut = ReportedBasis.extend({
  includes: z.string().describe('Which terms make up the estimate'),
  terms: z.array(
    z.object({
      contaminant: z.string(),
      field: z.string(),
      name: z.string(),
      concentration: Reported,
      ratio: z.number(),
      ratioUnit: z.string(),
      demand: Reported,
      reaction: z.string(),
      source: z.string(),
    }),
  ),
});

const OxidantInfo = z.object({ id: z.string(), name: z.string(), basis: z.string() });

export const PlanOut = z.object({
  oxidant: OxidantInfo,
  plant: z
    .object({ id: z.string(), name: z.string(), version: z.number().int(), invented: z.boolean(), fromPlant: z.array(z.string()).describe('Request fields taken from the profile') })
    .nullable(),
  estimate: EstimateOut,
  backgroundDemand: ReportedBasis.extend({ method: z.string() }),
  expectedDemand: ReportedBasis.extend({ how: z.string() }),
  targetResidual: ReportedBasis.extend({ source: z.enum(['request', 'plant profile', 'not given']), reason: z.string() }),
  plannedDose: ReportedBasis.extend({ includes: z.string().describe('Which terms make up the planned dose, and how the ladder relates to it') }),
  ladder: z.object({
    source: z.enum(['default', 'caller']),
    fromFraction: z.number().optional().describe('First dose of a default ladder as a fraction of the expected demand'),
    toFraction: z.number().optional().describe('Last dose of a default ladder as a fraction of the planned dose'),
    brackets: z.boolean().describe('A jar below and a jar above the expected demand'),
    bracketsPlannedDose: z.boolean().describe('A jar below and a jar above the planned dose'),
  }),
  jarVolume: QuantityOut,
  pipetteResolutionMl: z.number(),
  minAliquotMl: z.number(),
  maxAliquotMl: z.number(),
  dilutionCorrected: z.boolean(),
  stock: z.object({
    strength: ReportedBasis,
    strengthChoice: z.enum(['caller', 'chosen']),
    productMass: Reported.nullable(),
    flaskVolume: QuantityOut,
    preparation: z.object({
      kind: z.enum(['weigh', 'dilute', 'generate']),
      productMass: Reported.optional(),
      purityPercent: z.number().optional(),
      purityAssumed: z.boolean().optional(),
      tradeVolume: Reported.optional(),
      tradeStrength: Reported.optional(),
      tradeStrengthMustBeMeasured: z.boolean().optional(),
      measureBy: z.string().optional(),
      stockSolution: z.string().optional().describe('A generated stock: what it is (ozone water, chlorine water, chlorine dioxide solution)'),
      make: z.string().optional().describe('A generated stock: how it is made'),
    }),
    stockUsed: Reported,
    stockWanted: Reported,
    solubility: QuantityOut.nullable(),
    instructions: z.array(z.string()),
  }),
  jars: z.array(
    z.object({
      jar: z.number().int(),
      dose: Reported,
      aliquotMl: z.number(),
      aliquotExactMl: z.number(),
      actualDose: Reported,
      aliquotPercentOfJar: z.number(),
      expectedResidual: Reported,
    }),
  ),
  schedule: z.object({
    steps: z.array(
      z.object({
        order: z.number().int(),
        action: z.string(),
        durationMin: z.number().optional(),
        speedRpm: z.object({ min: z.number(), max: z.number() }).optional(),
        basis: z.string(),
        source: z.string().optional(),
      }),
    ),
    contactTimesMin: z.array(z.number()),
    filtration: z.object({ poreSizeUm: z.number(), for: z.array(z.string()), basis: z.string(), note: z.string() }),
    measurements: z.array(z.object({ what: z.string(), method: z.string(), when: z.string(), basis: z.string() })),
  }),
  warnings: z.array(Problem),
  assumptions: z.array(z.string()),
  pdf: z.string().describe('How to get the bench sheet'),
});

export const CheckOut = z.object({
  oxidant: OxidantInfo,
  jarVolume: QuantityOut,
  stockStrength: ReportedBasis,
  pipetteResolutionMl: z.number(),
  estimate: EstimateOut.nullable(),
  expectedDemand: Reported.nullable(),
  solubility: QuantityOut.extend({ temperatureC: z.number().nullable(), source: z.string().nullable() }).nullable(),
  jars: z.array(
    z.object({
      jar: z.number().int(),
      dose: Reported.nullable(),
      aliquotMl: z.number().nullable(),
      recomputedDose: Reported.nullable(),
      recomputedAliquotMl: z.number().nullable(),
      nominalDose: Reported.nullable(),
      problems: z.array(Problem),
    }),
  ),
  problems: z.array(Problem),
  ok: z.boolean(),
  toleranceRule: z.string(),
});

const NullableNumber = z.number().nullable();

export const EvaluationResultOut = z.object({
  id: z.string(),
  oxidant: OxidantInfo,
  jarVolume: QuantityOut,
  estimate: EstimateOut,
  apparentDemand: ReportedBasis.extend({ stdError: NullableNumber, ci95: z.array(NullableNumber), method: z.string() }).nullable(),
  backgroundDemand: ReportedBasis.extend({ stdError: NullableNumber, how: z.string() }).nullable(),
  lowestDoseMeetingTargets: ReportedBasis.extend({
    contactTimeMin: z.number(),
    jar: z.number().int(),
    note: z.string(),
  }).nullable(),
  lowestDoseByContactTime: z.array(
    z.object({
      contactTimeMin: z.number(),
      dose: Reported.nullable(),
      jar: z.number().int().nullable(),
      jarsMeeting: z.array(z.number().int()),
      higherDosesFailing: z.array(z.number().int()),
      note: z.string(),
    }),
  ),
  recommendedDose: ReportedBasis.extend({
    baseDose: Reported,
    from: z.enum(['lowest-dose-meeting-targets', 'apparent-demand-plus-residual']),
    contactTimeMin: z.number(),
    margin: z.object({ kind: z.enum(['relative', 'absolute']), fraction: z.number().optional(), dose: Reported, basis: z.string() }),
    expectedResidual: Reported.nullable(),
    reason: z.string(),
  }).nullable(),
  fit: z.object({
    slope: z.number(),
    intercept: z.number().describe('mg/L'),
    r2: NullableNumber,
    interceptUnit: z.string(),
    n: z.number().int(),
    contactTimeMin: z.number(),
    contactTimeChoice: z.enum(['caller', 'plant-contact', 'longest']).describe("caller: fitContactTimeMin; plant-contact: the longest bench time not beyond plantContactTimeMin that gives a line (the recommendation's); longest: the longest with residual readings"),
    jarsUsed: z.array(z.number().int()),
    jarsExcluded: z.array(z.object({ jar: z.number().int(), reason: z.string() })),
    slopeStdError: NullableNumber,
    interceptStdError: NullableNumber,
    residualStdError: NullableNumber,
    degreesOfFreedom: z.number().int(),
    demandLine: z.object({ slope: z.number(), intercept: z.number(), r2: NullableNumber }),
    what: z.string(),
  }).nullable().describe('The residual line; null when too few jars kept a measurable residual to fit one (problem RESIDUAL_LINE_NOT_FITTED; the recommendation then rests on the jars that met the iron and manganese targets)'),
  detectionLimit: QuantityOut,
  contactTimesMin: z.array(z.number()),
  targets: z.array(
    z.object({
      analyte: z.string(),
      limit: QuantityOut,
      comparison: z.enum(['at most', 'at least']),
      origin: z.enum(['caller', 'default limit']),
      source: z.string().optional(),
      name: z.string().optional(),
    }),
  ),
  jars: z.array(
    z.object({
      jar: z.number().int(),
      dose: Reported,
      results: z.array(
        z.object({
          contactTimeMin: z.number(),
          residualOxidant: QuantityOut.nullable(),
          residualBelowDetection: z.boolean().nullable(),
          consumed: QuantityOut.nullable(),
          iron: QuantityOut.nullable(),
          manganese: QuantityOut.nullable(),
          turbidityNTU: NullableNumber,
          note: z.string().nullable(),
          meetsTargets: z.boolean().nullable(),
          failures: z.array(z.string()),
        }),
      ),
    }),
  ),
  problems: z.array(Problem),
  notes: z.array(z.string()),
  plotUrl: z.string(),
  pdfUrl: z.string(),
  verificationUrl: z.string(),
});

const ArchiveInfo = z.object({
  seq: z.number().int().optional(),
  sha256: z.string().describe('SHA-256 of the signed PDF'),
  contentSha256: z.string().describe('SHA-256 of the stored request and result (printed in the PDF footer)'),
  recordHash: z.string(),
  prevHash: z.string(),
  createdAt: z.string(),
  createdBy: z.string(),
  sampledAt: z.string(),
  signer: z.object({ name: z.string(), role: z.string(), subject: z.string() }),
  supersedes: z.string().nullable(),
  supersededBy: z.string().nullable(),
  status: SheetStatus.optional(),
  integrity: Integrity.optional(),
});

export const EvaluationCreatedOut = EvaluationResultOut.extend({
  archive: ArchiveInfo,
  warnings: z.array(z.string()).optional().describe('What the archived record lacks that a reviewer will expect (a correction without its reason)'),
});
export const EvaluationRecordOut = EvaluationResultOut.extend({ archive: ArchiveInfo, request: z.unknown() });
