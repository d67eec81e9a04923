/**
 * The dose answer as a zod schema (the shape of `DoseResult` in src/dosing/index.ts), for the
 * HTTP layer's response validation and serializer and for the OpenAPI document. A test checks
 * that real answers parse against it.
 */
import { z } from 'zod';

const Reported = z.object({ value: z.number(), unit: z.string(), rounded: z.string() });
const ReportedBasis = Reported.extend({ basis: z.string() });
const Flag = z.object({ code: z.string(), severity: z.enum(['info', 'warning', 'danger']), message: z.string(), source: z.string() });
const Medium = z.enum(['acid', 'base']);

const DerivationStep = z.object({ rowId: z.string(), equation: z.string(), coefficient: z.string(), kind: z.enum(['redox', 'equilibrium']), valueText: z.string(), source: z.string() });
const Couple = z.object({
  halfReaction: z.string(),
  electrons: z.number(),
  standardPotentialV: z.number(),
  temperatureCorrectionV: z.number(),
  standardPotentialAtTemperatureV: z.number(),
  potentialV: z.number(),
  usedValue: z.enum(['tabled', 'derived', 'override']),
  derivation: z.array(DerivationStep),
  tabledCheck: z
    .object({ tabledV: z.number(), derivedV: z.number(), discrepancyV: z.number(), flagged: z.boolean(), derivation: z.array(DerivationStep) })
    .nullable(),
  siteValue: z
    .object({ valueV: z.number(), source: z.string(), medium: z.enum(['acid', 'base']), carriedV: z.number().nullable() })
    .nullable()
    .describe('The site value of E° used: the form of the couple it was given for, and the value carried to the form computed (null when it is for that form)'),
  notes: z.array(z.string()),
});

export const DoseResultSchema = z.object({
  oxidant: z.object({
    id: z.string(),
    name: z.string(),
    form: z.enum(['solid', 'solution', 'gas', 'generated']),
    basis: z.string(),
    productFormula: z.string(),
    activeSpecies: z.string(),
    reducedProduct: z.string(),
    source: z.string(),
  }),
  plant: z.object({ id: z.string(), name: z.string(), invented: z.boolean(), preferredUnits: z.enum(['SI', 'US']), fromPlant: z.array(z.string()) }).nullable(),
  dose: ReportedBasis,
  terms: z.array(z.object({ term: z.enum(['contaminant', 'background', 'residual']), id: z.string(), label: z.string(), value: Reported, reason: z.string(), source: z.string() })),
  demand: z.array(
    z.object({
      contaminant: z.string(),
      field: z.string(),
      name: z.string(),
      reportedAs: z.string(),
      concentration: Reported,
      ratio: z.number(),
      ratioRounded: z.string(),
      ratioUnit: z.string(),
      ratioKind: z.enum(['stoichiometric', 'practical']),
      stoichiometricRatio: z.number(),
      demand: Reported,
      reaction: z.string(),
      electrons: z.number(),
      medium: Medium,
      product: z.object({ id: z.string(), formula: z.string(), why: z.string() }),
      provenance: z.array(z.string()),
      source: z.string(),
    }),
  ),
  feed: z
    .object({
      basis: z.string(),
      productFormula: z.string(),
      massRate: ReportedBasis,
      massRateUS: ReportedBasis,
      poundsFormula: z.object({ conventionalLbPerD: Reported, exactFactor: z.string(), conventionalFactor: z.literal('8.34'), note: z.string() }),
      compoundMassRate: Reported.extend({ formula: z.string(), derivation: z.string() }),
      productMassRate: Reported.extend({ what: z.string() }).nullable(),
      solutionRate: Reported.nullable(),
      solutionRateMLPerMin: Reported.nullable(),
      solutionRateGalPerD: Reported.nullable(),
      strength: z
        .object({
          given: z.object({ value: z.number(), unit: z.string() }).nullable(),
          asFormula: z.string(),
          gramsPerL: Reported,
          massFraction: Reported.nullable(),
          density: z.object({ value: z.number(), unit: z.literal('kg/L'), from: z.enum(['request', 'plant profile', 'table', 'water (assumed)']), note: z.string() }).nullable(),
          text: z.string(),
        })
        .nullable(),
      pump: z.object({ id: z.string().nullable(), ratedCapacity: Reported, settingPercent: Reported }).nullable(),
      dailyUse: z.object({ volume: Reported.nullable(), volumeUS: Reported.nullable(), mass: Reported.nullable(), massUS: Reported.nullable() }),
      daysOfSupply: Reported.nullable(),
      batch: z
        .object({
          volume: Reported,
          productKg: Reported,
          productLb: Reported,
          gramsPer100gWater: Reported,
          solubilityGPer100gWater: Reported.nullable(),
          temperatureC: z.number(),
          withinSolubility: z.boolean().nullable(),
          lastsDays: Reported.nullable(),
        })
        .nullable(),
      generator: z.object({ label: z.string(), output: Reported, outputGPerH: Reported, note: z.string() }).nullable(),
      notes: z.array(z.string()),
      flags: z.array(Flag),
    })
    .nullable(),
  feasibility: z.array(
    z.object({
      contaminant: z.string(),
      reaction: z.string(),
      cell: z.string(),
      cellPotentialV: z.number(),
      standardCellPotentialV: z.number().describe('E°(oxidant) − E°(contaminant couple) at 25 °C'),
      standardCellPotentialAtTemperatureV: z.number().describe('The same at the sample temperature'),
      feasible: z.boolean(),
      marginV: z.number(),
      feasibilityLimitPH: z.number().nullable(),
      feasibleSide: z.enum(['above', 'below', 'everywhere', 'nowhere']),
      deltaGkJPerMol: z.number(),
      log10K: z.number(),
      equilibriumResidual: z.object({ mgPerL: z.number().nullable(), molPerL: z.number(), species: z.string() }).nullable(),
      oxidantCouple: Couple,
      contaminantCouple: Couple,
      conditions: z.object({
        pH: z.number(),
        temperatureC: z.number(),
        ionicStrengthMolPerL: z.number(),
        ionicStrengthFrom: z.string(),
        activities: z.array(z.object({ species: z.string(), activity: z.number(), origin: z.string() })),
      }),
      notes: z.array(z.string()),
    }),
  ),
  contact: z.object({
    availableMinutes: z.number().nullable(),
    availableFrom: z.enum(['given', 'contact volume ÷ flow', 'not given']),
    entries: z.array(
      z.object({
        contaminant: z.string(),
        basis: z.enum(['rate-law', 'typical range from the literature', 'no data']),
        requiredMinutes: z.number().nullable(),
        requiredRange: z.object({ minMinutes: z.number(), maxMinutes: z.number().nullable() }).nullable(),
        availableMinutes: z.number().nullable(),
        status: z.enum(['ok', 'marginal', 'too-slow', 'unknown', 'outside-range']),
        tooSlow: z.boolean(),
        remedy: z.string().nullable(),
        message: z.string(),
        kineticsRow: z.string().nullable(),
        source: z.string().nullable(),
        detail: z.record(z.string(), z.unknown()).nullable(),
      }),
    ),
  }),
  sideEffects: z.object({
    alkalinityConsumed: Reported.extend({ basis: z.literal('as CaCO3') }),
    acidReleasedMeqPerL: z.number(),
    alkalinityTerms: z.array(z.object({ what: z.string(), meqPerL: z.number(), how: z.string() })),
    pH: z.object({
      before: z.number(),
      after: z.number().nullable(),
      drop: z.number().nullable(),
      alkalinityAfter: Reported.nullable(),
      alkalinityExhausted: z.boolean().nullable(),
      method: z.string(),
    }),
    solids: z.array(z.object({ formula: z.string(), amount: Reported, from: z.array(z.string()) })),
    solidsTotal: Reported,
    byproducts: z.array(
      z.object({ id: z.string(), estimate: Reported.nullable(), limit: z.object({ id: z.string(), value: z.string(), citation: z.string() }).nullable(), text: z.string(), source: z.string() }),
    ),
    excessOxidant: z.array(z.string()),
    notes: z.array(z.string()),
  }),
  flags: z.array(Flag),
  cautions: z.array(z.string()),
  cautionDetails: z.array(
    z.object({
      id: z.string(),
      category: z.enum(['standing', 'hazard', 'incompatibility', 'ppe', 'exposure-limit', 'overdose']),
      text: z.string(),
      source: z.string(),
      recalledFromMemory: z.boolean().describe('The row (or its source) states its content is recalled from memory and is to be verified'),
    }),
  ),
  conditions: z.object({
    pH: z.number(),
    temperatureC: z.number(),
    temperatureF: z.number(),
    medium: Medium,
    mediumReason: z.string(),
    ionicStrengthMolPerL: z.number(),
    ionicStrengthFrom: z.string(),
  }),
  units: z.object({
    preferred: z.enum(['SI', 'US']),
    flow: z.object({ si: Reported, siHourly: Reported, us: Reported, usGpm: Reported }).nullable(),
    temperature: z.object({ si: Reported, us: Reported }),
    dose: z.object({ si: Reported, us: Reported }),
    massRate: z.object({ si: ReportedBasis, us: ReportedBasis }).nullable(),
    solutionRate: z.object({ si: Reported, us: Reported, mLPerMin: Reported }).nullable(),
  }),
  rounding: z.object({ rule: z.string(), significantFigures: z.number(), note: z.string() }),
  traceability: z.array(z.object({ quantity: z.string(), value: z.string(), how: z.string(), sources: z.array(z.string()) })),
  sources: z.array(z.object({ id: z.string(), citation: z.string() })),
  notes: z.array(z.string()),
});
