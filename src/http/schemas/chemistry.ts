import { z } from 'zod';
import { CoupleSchema, Formula, Medium, PH, SiteValueMedium, TemperatureC } from './common.js';

export const BalanceBody = z
  .strictObject({
    reactants: z.array(Formula).min(1).max(40).optional().describe('Reactant formulas (with products: any reaction)'),
    products: z.array(Formula).min(1).max(40).optional(),
    oxidant: CoupleSchema.optional().describe('Oxidant couple: from the oxidised form to the reduced form'),
    reductant: CoupleSchema.optional().describe('Reductant couple: from the reduced form to the oxidised form'),
    medium: Medium.optional().describe('acid (H+, H2O) or base (OH-, H2O); default from pH, else acid'),
    pH: PH.optional().describe('Chooses the medium when medium is not given: base above pH 7'),
  })
  .describe('Either reactants and products, or an oxidant and a reductant couple');

const TermOut = z.object({
  species: z.string(),
  coefficient: z.number().int(),
  side: z.enum(['reactant', 'product']),
});

const HalfOut = z.object({
  equation: z.string(),
  electrons: z.number().int(),
  convention: z.string().optional(),
});

export const BalanceResponse = z.object({
  kind: z.enum(['reaction', 'redox']),
  equation: z.string(),
  equationUnicode: z.string(),
  terms: z.array(TermOut),
  electrons: z
    .number()
    .int()
    .nullable()
    .describe('Electrons transferred by the reaction as written: the e- coefficient of a half-reaction, else from the oxidation states of the species (0 for a non-redox reaction); null when the formula rules cannot settle them (see electronsNote)'),
  oxidationStateChanges: z
    .array(z.object({ element: z.string(), electronsLost: z.string(), electronsGained: z.string() }))
    .nullable()
    .optional()
    .describe('Per element that changes oxidation state: the electrons its atoms give up (oxidation) and take up (reduction) in the reaction as written, exact; null when the formula rules cannot settle a species (the reason is in electronsNote)'),
  electronsNote: z.string().optional().describe('How the oxidation states were read (the polyatomic ions used, a mixed-valence split), or why electrons is null'),
  medium: Medium.optional(),
  mediumReason: z.string().optional(),
  notes: z.array(z.string()).optional().describe('What the request gave that the balance did not use, and why; how a formula was read (a (cr) or (am) solid label as (s))'),
  halfReactions: z.object({ reduction: HalfOut, oxidation: HalfOut }).optional(),
  multipliers: z.object({ oxidant: z.number().int(), reductant: z.number().int() }).optional(),
  method: z.string(),
});

export const DerivationStep = z.object({
  rowId: z.string(),
  table: z.string(),
  equation: z.string(),
  coefficient: z.string(),
  kind: z.enum(['redox', 'equilibrium']),
  value: z.string(),
  source: z.string(),
  citation: z.string().optional(),
});

export const PotentialBody = z.strictObject({
  from: Formula.describe('Oxidised form'),
  to: Formula.describe('Reduced form'),
  pH: PH.optional().describe('pH (0–14); without it an H+ or OH- entry in activities sets the pH, else H+ is at unit activity (pH 0)'),
  temperatureC: TemperatureC.optional(),
  medium: Medium.optional(),
  activities: z
    .record(z.string(), z.number().gt(0))
    .optional()
    .describe('Activities by species formula, each species once (two spellings of one species are refused); mol/L are taken with activity coefficients of 1; unit activity otherwise'),
  partialPressuresAtm: z.record(z.string(), z.number().gt(0)).optional().describe('Partial pressures (atm) of gases written with (g); a gas is given here or in activities, not both'),
  standardPotentialV: z
    .strictObject({
      value: z.number().min(-4).max(4),
      source: z.string().min(3).max(300),
      medium: SiteValueMedium,
    })
    .optional()
    .describe('A site value of E° (25 °C) for this couple and where it comes from; replaces the tabled or derived value'),
  temperatureCorrection: z.boolean().default(true).describe('Apply dE°/dT where a table gives it'),
});

const ActivityOut = z.object({ species: z.string(), activity: z.number(), origin: z.string() });

export const PotentialResponse = z.object({
  couple: z.object({ from: z.string(), to: z.string() }),
  halfReaction: z.string().describe('The couple completed in the medium, as written: a reduction from the oxidised to the reduced form, an oxidation the other way round'),
  halfReactionUnicode: z.string(),
  direction: z.enum(['reduction', 'oxidation']).describe('An oxidation (from the reduced form to the oxidised one) has E° and E of the opposite sign to its reduction'),
  medium: Medium,
  electrons: z.number().int(),
  standardPotentialV: z.number().describe('E° at 25 °C of the half-reaction as written (the value used); for an oxidation the negative of the reduction’s'),
  reductionStandardPotentialV: z.number().describe('E° at 25 °C of the couple as a reduction (the tabled convention)'),
  valueUsed: z.enum(['tabled', 'derived', 'override']),
  override: z
    .object({
      value: z.number(),
      source: z.string(),
      medium: Medium.describe('The form of the couple the site value is for'),
      carriedV: z.number().nullable().describe('The site value carried to the form computed through the ionisation of water (null when it is for that form)'),
    })
    .nullable(),
  tablesStandardPotentialV: z.number().nullable().describe('What the tables give, whatever value was used'),
  temperatureC: z.number(),
  temperatureCorrectionV: z
    .number()
    .describe('E°(T) − E°(25 °C) of the couple written with H+ (its acid form), from the tables’ dE°/dT and log K(T) data; 0 where none or when turned off'),
  waterIonisationShiftV: z
    .number()
    .describe('For a couple written with OH-: the change of its E° carried from the acid form by Kw between 25 °C and the water temperature, applied whether or not the correction is on, so that both forms give one potential; 0 otherwise'),
  temperatureNote: z.string(),
  potentialV: z.number().describe('E at the given pH, temperature and activities; E°(T) without them'),
  nernst: z
    .object({
      slopeV: z.number(),
      log10Q: z.number(),
      pH: z.number(),
      pHNote: z.string(),
      activities: z.array(ActivityOut),
      unitActivity: z.array(z.string()),
    })
    .nullable(),
  derivation: z.array(DerivationStep),
  tabledCheck: z
    .object({
      tabledV: z.number(),
      derivedV: z.number(),
      discrepancyV: z.number(),
      flagged: z.boolean(),
      note: z.string(),
      derivation: z.array(DerivationStep),
    })
    .nullable(),
  alternatives: z.array(z.object({ standardPotentialV: z.number(), rows: z.array(z.string()), differs: z.string() })),
  notes: z.array(z.string()),
  constants: z.array(z.object({ name: z.string(), value: z.string(), source: z.string() })),
});

const ConcentrationIn = z.strictObject({
  value: z.number().min(0),
  unit: z
    .enum(['mg/L', 'ug/L', 'µg/L', 'g/m3', 'g/L', 'ppm', 'ppb', 'mol/L', 'mmol/L', 'umol/L', 'µmol/L', 'atm'])
    .describe('Mass per volume of the species itself (ppm and ppb read as mg/L and µg/L: dilute water), amount per volume, or atm for a gas'),
});

const SiteE0 = z.strictObject({ value: z.number().min(-4).max(4), source: z.string().min(3).max(300), medium: SiteValueMedium });

export const CellBody = z.strictObject({
  oxidant: CoupleSchema.describe('Oxidant couple: from the oxidised form to the reduced form'),
  reductant: CoupleSchema.describe('Reductant couple: from the reduced form to the oxidised form'),
  pH: PH,
  temperatureC: TemperatureC,
  concentrations: z
    .record(z.string(), ConcentrationIn)
    .optional()
    .describe('Concentrations by species formula (atm for gases), each species once (two spellings of one species are refused); others at unit activity'),
  ionicStrength: z.number().min(0).max(0.5).optional().describe('mol/L; Davies activity coefficients are used up to 0.5'),
  tdsMgPerL: z.number().min(0).max(20000).optional().describe('Total dissolved solids, to estimate ionic strength (Langelier 1936)'),
  conductanceUSPerCm: z
    .number()
    .min(0)
    .max(30000)
    .optional()
    .describe('Specific conductance at 25 °C, µS/cm, to estimate ionic strength (Russell 1976) when neither ionicStrength nor tdsMgPerL is given'),
  medium: Medium.optional(),
  standardPotentials: z
    .strictObject({ oxidant: SiteE0.optional(), reductant: SiteE0.optional() })
    .optional()
    .describe('Site values of E° (25 °C) replacing the tabled or derived ones, each with its source'),
});

const HalfAtConditions = z.object({
  equation: z.string().describe('The couple completed as a reduction in the medium (plain text)'),
  electrons: z.number().int(),
  standardPotentialV: z.number().describe('E° at 25 °C of the half-reaction as written (the value used)'),
  temperatureCorrectionV: z.number().describe('E°(T) − E°(25 °C) of the couple’s acid form, from the tables’ temperature data'),
  waterIonisationShiftV: z.number().describe('For a couple written with OH-: the change of Kw between 25 °C and the water temperature, in V; 0 otherwise'),
  standardPotentialAtTemperatureV: z.number().describe('E°(T) = standardPotentialV + temperatureCorrectionV + waterIonisationShiftV, the standard potential the Nernst equation started from'),
  potentialV: z.number().describe('E at the sample pH, temperature and activities'),
  valueUsed: z.enum(['tabled', 'derived', 'override']),
  derivation: z
    .array(z.object({ rowId: z.string(), coefficient: z.string(), source: z.string() }))
    .describe('Tabled rows combined (ids in GET /api/v1/tables/potentials or /tables/equilibria; sources in GET /api/v1/tables/sources)'),
  unitActivity: z.array(z.string()).describe('Dissolved species given no concentration, taken at unit activity (solids, water and gases at 1 atm are at unit activity by convention and not listed)'),
});

/**
 * Kept lean on purpose: this is the route called most, and an answer's cost grows with its
 * number of fields and with any character outside ASCII (npm run bench). Every constant is
 * still named: derivation row ids resolve in GET /api/v1/tables/potentials or /tables/equilibria, source ids in
 * GET /api/v1/tables/sources, relation ids in GET /api/v1/tables/relations; the typeset
 * equation is on POST /api/v1/reactions/balance and the full derivation on couples/potential.
 */
export const CellResponse = z.object({
  reaction: z.string().describe('Balanced overall reaction, plain text'),
  medium: Medium,
  electrons: z.number().int().describe('Electrons transferred in the reaction as written'),
  standardCellPotentialV: z.number().describe('E°(oxidant) − E°(reductant) at 25 °C (the half-reactions’ standardPotentialV)'),
  standardCellPotentialAtTemperatureV: z.number().describe('E°(oxidant) − E°(reductant), each at the sample temperature (with the tables’ dE°/dT): what the Nernst equation and log10 K start from'),
  cellPotentialV: z.number().describe('E(oxidant) − E(reductant) at the sample pH, temperature and activities'),
  deltaGkJPerMol: z.number().describe('ΔG = −nFE of the reaction as written, kJ/mol'),
  log10K: z.number().describe('log10 K = nFE°/(2.303RT) at the sample temperature'),
  feasible: z.boolean().describe('E > 0 at the sample conditions; the margin is cellPotentialV itself'),
  feasibilityLimitPH: z.number().nullable().describe('pH in 0–14 where E = 0 nearest the sample pH; null when none'),
  feasibilityLimitsPH: z.array(z.number()).describe('Every pH in 0–14 where E = 0'),
  feasibleSide: z.enum(['above', 'below', 'everywhere', 'nowhere']).describe('Where the reaction is feasible relative to the limit'),
  equilibriumResidual: z
    .object({ species: z.string(), molPerL: z.number(), mgPerL: z.number().nullable() })
    .nullable()
    .describe(
      'Thermodynamic floor of the reductant: its level where E reaches 0 V with every other activity held; ' +
        'kinetics usually stop the reaction well before it. Null when none applies, and when feasible is false (the reaction does not run, ' +
        'so the reductant stays as given); the reason is in notes',
    ),
  activity: z
    .object({
      ionicStrength: z.number().describe('mol/L'),
      ionicStrengthBasis: z.enum(['given', 'tds', 'conductance', 'none']).describe('none: activities taken equal to concentrations'),
      ionicStrengthRelation: z.string().nullable().describe('Id of the estimating relation (GET /api/v1/tables/relations)'),
      daviesA: z
        .number()
        .nullable()
        .describe(
          'Davies A at the sample temperature (relations debye-huckel-a, malmberg-maryott-1956 for the dielectric constant of water, tanaka-2001 for its density); null at zero ionic strength, where every activity coefficient is 1',
        ),
      relation: z.string().nullable().describe('Id of the activity-coefficient relation (Davies); neutral species at 1; null at zero ionic strength'),
    })
    .describe('How concentrations became activities'),
  slopeV: z.number().describe('Nernst slope 2.303RT/F at the sample temperature (CODATA 2018 R and F)'),
  halfReactions: z.object({ oxidant: HalfAtConditions, reductant: HalfAtConditions }),
  notes: z.array(z.string()),
});
