/**
 * zod row schemas of the dosing tables: tables/oxidants.json, contaminants.json, limits.json,
 * cautions.json, oxygen-saturation.json. Values are kept as published text ("0.3"); every row
 * names a source id that must resolve in tables/sources.json (the loader checks that).
 * Registered in src/reference/schemas.ts.
 */
import { z } from 'zod';

/** A published number kept as its decimal text ("1.507", "0.010", "1.575701e5"). */
export const DecimalText = z.string().regex(/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/, { error: 'must be a decimal number written as text, e.g. "0.3"' });
const SourceId = z.string().min(1);
const Formula = z.string().min(1);
const Note = z.string().min(1);

export const OXIDANT_FORMS = ['solid', 'solution', 'gas', 'generated'] as const;
export const STRENGTH_UNITS = ['% w/w', '% w/v', 'g/L'] as const;

/** How one mole of a species converts to another formula (the dose basis or the product fed). */
export const ConversionRuleSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('identity'), text: z.string() }),
  z.strictObject({ kind: z.literal('element'), element: z.string().regex(/^[A-Z][a-z]?$/), text: z.string() }),
  z.strictObject({ kind: z.literal('electrons'), basisCouple: z.strictObject({ from: Formula, to: Formula }), text: z.string() }),
]);
export type ConversionRule = z.infer<typeof ConversionRuleSchema>;

const CoupleText = z.strictObject({ from: Formula, to: Formula });

/** Acid–base forms of a species (most protonated first) and the equilibria-table row (tables/equilibria.json) of their pKa. */
export const SpeciationSchema = z.strictObject({ forms: z.array(Formula).length(2), equilibrium: z.string().min(1) });
/**
 * The acid–base forms of a reaction product (arsenate: H3AsO4 … AsO4^3-), most protonated first,
 * with the equilibria rows of each dissociation in order (one fewer than forms).
 */
export const ProductSpeciationSchema = z
  .strictObject({ forms: z.array(Formula).min(2), equilibria: z.array(z.string().min(1)).min(1) })
  .refine((s) => s.equilibria.length === s.forms.length - 1, { message: 'give one equilibrium per dissociation: one fewer than forms', path: ['equilibria'] });

const NominalStrengthSchema = z.strictObject({
  label: z.string(),
  value: DecimalText,
  unit: z.enum(STRENGTH_UNITS),
  densityKgPerL: DecimalText.optional(),
  default: z.boolean().optional(),
  source: SourceId,
  note: Note.optional(),
});

export const OxidantRowSchema = z.strictObject({
  id: z.string().regex(/^[a-z0-9-]+$/),
  name: z.string(),
  form: z.enum(OXIDANT_FORMS),
  activeSpecies: Formula,
  reducedProduct: Formula,
  reducedProductNote: z.string(),
  doseBasis: Formula,
  basisRule: ConversionRuleSchema,
  productFormula: Formula,
  productRule: ConversionRuleSchema,
  feasibilityCouple: z.strictObject({ acid: CoupleText, base: CoupleText }),
  speciation: SpeciationSchema.optional(),
  hydrolysis: z.strictObject({ equation: z.string(), text: z.string(), source: SourceId }).optional(),
  strength: z.strictObject({
    /** 'product': strength is of productFormula (KMnO4, NaMnO4, H2O2); 'basis': of the dose basis (available chlorine as Cl2). */
    basis: z.enum(['product', 'basis']),
    text: z.string(),
    nominal: z.array(NominalStrengthSchema),
  }),
  purity: z
    .strictObject({ basis: z.enum(['product', 'basis']), defaultPercent: DecimalText, text: z.string(), source: SourceId, note: Note.optional() })
    .optional(),
  solubility: z
    .strictObject({
      unit: z.literal('g KMnO4 per 100 g water'),
      source: SourceId,
      note: Note.optional(),
      points: z.array(z.strictObject({ temperatureC: DecimalText, value: DecimalText })).min(2),
    })
    .optional(),
  storage: z.strictObject({ text: z.string(), source: SourceId }).optional(),
  chloriteFraction: z.strictObject({ low: DecimalText, high: DecimalText, default: DecimalText, text: z.string(), source: SourceId }).optional(),
  byproduct: z.strictObject({ text: z.string(), source: SourceId }).optional(),
  /** Chlorate carried in or formed by the product (hypochlorite stock, chlorine dioxide generation). */
  chlorate: z.strictObject({ text: z.string(), source: SourceId, note: Note.optional() }).optional(),
  cautions: z.array(z.string()),
  source: SourceId,
  note: Note.optional(),
});
export type OxidantRow = z.infer<typeof OxidantRowSchema>;

export const ContaminantRowSchema = z.strictObject({
  id: z.string().regex(/^[a-z0-9-]+$/),
  requestField: z.string(),
  name: z.string(),
  species: Formula,
  speciation: SpeciationSchema.optional(),
  products: z
    .array(z.strictObject({ id: z.string(), formula: Formula, default: z.boolean().optional(), text: z.string(), speciation: ProductSpeciationSchema.optional(), source: SourceId.optional(), note: Note.optional() }))
    .min(1),
  elementBasis: z.string().regex(/^[A-Z][a-z]?$/),
  reportedAs: z.string(),
  speciesNote: z.string().optional(),
  oxidants: z.array(z.string()),
  practiceNote: z.string().optional(),
  practiceSource: SourceId.optional(),
  notApplicable: z.strictObject({ oxidants: z.array(z.string()), text: z.string(), source: SourceId }).optional(),
  ratioOptions: z
    .strictObject({
      default: z.enum(['theoretical', 'practical']),
      theoretical: z.strictObject({ text: z.string() }),
      practical: z.strictObject({ valueText: DecimalText, rangeText: z.string(), unit: z.string(), text: z.string(), source: SourceId, note: Note.optional() }),
    })
    .optional(),
  finishedTarget: z.string().optional(),
  source: SourceId,
  note: Note.optional(),
});
export type ContaminantRow = z.infer<typeof ContaminantRowSchema>;

export const LimitRowSchema = z.strictObject({
  id: z.string(),
  parameter: z.string(),
  basis: z.string(),
  valueText: DecimalText,
  unit: z.literal('mg/L'),
  kind: z.enum(['SMCL', 'MCL', 'MRDL', 'guideline', 'parametric value']),
  authority: z.enum(['US EPA', 'WHO', 'European Union']),
  citation: z.string(),
  edition: z.string().optional(),
  source: SourceId,
  note: Note.optional(),
});
export type LimitRow = z.infer<typeof LimitRowSchema>;

export const CautionRowSchema = z.strictObject({
  id: z.string(),
  category: z.enum(['standing', 'hazard', 'incompatibility', 'ppe', 'exposure-limit', 'overdose']),
  standing: z.boolean().optional(),
  text: z.string(),
  source: SourceId,
  note: Note.optional(),
});
export type CautionRow = z.infer<typeof CautionRowSchema>;

export const OxygenSaturationRowSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    id: z.string(),
    kind: z.literal('point'),
    temperatureC: DecimalText,
    valueText: DecimalText,
    unit: z.literal('mg/L'),
    pressureKPa: DecimalText,
    salinity: DecimalText,
    source: SourceId,
    note: Note.optional(),
  }),
  z.strictObject({
    id: z.string(),
    kind: z.literal('equation'),
    text: z.string(),
    /** ln C* = c0 + c1/T + c2/T² + c3/T³ + c4/T⁴ (T in K, C* in mg/L). */
    coefficients: z.array(DecimalText).length(5),
    unit: z.literal('mg/L'),
    pressureKPa: DecimalText,
    salinity: DecimalText,
    source: SourceId,
    note: Note.optional(),
  }),
  z.strictObject({
    id: z.string(),
    kind: z.literal('vapour-pressure'),
    text: z.string(),
    /** Antoine: log10 p_w = A − B/(C + t), t in °C, p_w in mmHg (760 mmHg = 1 atm): water vapour over pure water. */
    coefficients: z.array(DecimalText).length(3),
    unit: z.literal('mmHg'),
    validFromC: z.number(),
    validToC: z.number(),
    source: SourceId,
    note: Note.optional(),
  }),
]);
export type OxygenSaturationRow = z.infer<typeof OxygenSaturationRowSchema>;

/**
 * Table specs in the shape of src/reference/schemas.ts TableSpec (built here without importing
 * schemas.ts, which imports this file): file, table name, row schema, id column, source columns.
 */
// ---------------------------------------------------------------- strength limits (tables/strength-limits.json)
// The strongest solution each product can be fed as: a solid's solubility, or the strongest trade
// grade with the strength above which a request is refused as a slip. Checked against
// tables/oxidants.json and tables/sources.json at start-up (src/dosing/strength-limits.ts).

/** An oxidant id of tables/oxidants.json (that the row exists is checked at start-up by src/dosing/strength-limits.ts). */
const LimitOxidantId = z.string().regex(/^[a-z0-9-]+$/);
const LimitSourceId = z.string().min(1);

const SolubilityLimitSchema = z.strictObject({
  oxidant: LimitOxidantId,
  kind: z.literal('solubility'),
  /** What the strength of a request is of, in words ("KMnO4", "available chlorine as Cl2"). */
  strengthOf: z.string().min(1),
  /** What the solubility figure is of (KMnO4, Ca(OCl)2). */
  of: z.string().min(1),
  gramsPer100gWater: DecimalText,
  temperatureC: DecimalText,
  /** The figure is the warmest point of the oxidant's solubility table in tables/oxidants.json (checked at start-up). */
  fromSolubilityTable: z.boolean(),
  why: z.string().min(1),
  source: LimitSourceId,
  fromMemory: z.boolean(),
  note: z.string().min(1),
});

const GradeLimitSchema = z.strictObject({
  oxidant: LimitOxidantId,
  kind: z.literal('grade'),
  strengthOf: z.string().min(1),
  /** The strongest strength row of tables/oxidants.json for the product (checked at start-up). */
  strongest: z.strictObject({ label: z.string().min(1), value: DecimalText, unit: z.enum(['% w/w', '% w/v', 'g/L']), densityKgPerL: DecimalText, source: LimitSourceId, fromMemory: z.boolean() }),
  /** Above this (on its scale; the other scale is converted with the strongest grade's density) the strength is refused. */
  refuseAbove: z.strictObject({ value: DecimalText, unit: z.enum(['% w/w', 'g/L']), why: z.string().min(1), source: LimitSourceId }),
});

const NoLimitSchema = z.strictObject({ oxidant: LimitOxidantId, kind: z.literal('none'), why: z.string().min(1) });

export const StrengthLimitSchema = z.discriminatedUnion('kind', [SolubilityLimitSchema, GradeLimitSchema, NoLimitSchema]);
export type StrengthLimit = z.infer<typeof StrengthLimitSchema>;
export type SolubilityLimit = z.infer<typeof SolubilityLimitSchema>;
export type GradeLimit = z.infer<typeof GradeLimitSchema>;

const spec = <Row>(file: string, table: string, row: z.ZodType<Row>) => ({ file, table, row, idColumn: 'id', sourceColumns: ['source'] as readonly string[] }) as const;

/** Registry entries of the dosing tables; spread into TABLE_REGISTRY. */
export const DOSING_TABLE_SPECS = {
  oxidants: spec('oxidants.json', 'oxidants', OxidantRowSchema),
  contaminants: spec('contaminants.json', 'contaminants', ContaminantRowSchema),
  limits: spec('limits.json', 'limits', LimitRowSchema),
  cautions: spec('cautions.json', 'cautions', CautionRowSchema),
  oxygenSaturation: spec('oxygen-saturation.json', 'oxygen-saturation', OxygenSaturationRowSchema),
  // sources sit in nested fields of some rows: resolved by checkStrengthLimits at start-up
  strengthLimits: { file: 'strength-limits.json', table: 'strength-limits', row: StrengthLimitSchema, idColumn: 'oxidant', sourceColumns: [] as readonly string[] },
} as const;

/**
 * Cross-table checks the row schemas cannot state: caution ids named by oxidants exist,
 * contaminant oxidant lists name real oxidants, limit ids exist, one default per choice list.
 * Returns problems as `file: row id: reason` sentences (empty when consistent).
 */
export function checkDosingTables(t: {
  oxidants: readonly OxidantRow[];
  contaminants: readonly ContaminantRow[];
  limits: readonly LimitRow[];
  cautions: readonly CautionRow[];
  /** Source ids of tables/sources.json; when given, nested source columns are checked too. */
  sourceIds?: ReadonlySet<string>;
  /** Row ids of tables/equilibria.json; when given, speciation columns are checked against them. */
  equilibriumIds?: ReadonlySet<string>;
}): string[] {
  const problems: string[] = [];
  if (t.equilibriumIds) {
    for (const row of [...t.oxidants, ...t.contaminants]) {
      const eq = row.speciation?.equilibrium;
      if (eq !== undefined && !t.equilibriumIds.has(eq)) problems.push(`${'doseBasis' in row ? 'oxidants' : 'contaminants'}.json: row ${row.id}: column speciation.equilibrium: "${eq}" is not a row of tables/equilibria.json`);
      for (const p of 'products' in row ? row.products : []) {
        for (const id of p.speciation?.equilibria ?? []) {
          if (!t.equilibriumIds.has(id)) problems.push(`contaminants.json: row ${row.id}: product ${p.id}: speciation.equilibria: "${id}" is not a row of tables/equilibria.json`);
        }
      }
    }
  }
  if (t.sourceIds) {
    const ids = t.sourceIds;
    const walk = (file: string, rowId: string, v: unknown, path: string): void => {
      if (Array.isArray(v)) v.forEach((x, i) => walk(file, rowId, x, `${path}.${i}`));
      else if (v && typeof v === 'object') {
        for (const [k, x] of Object.entries(v)) {
          if ((k === 'source' || k === 'practiceSource') && typeof x === 'string' && !ids.has(x)) {
            problems.push(`${file}: row ${rowId}: column ${path ? path.slice(1) + '.' : ''}${k}: source "${x}" is not an id in tables/sources.json`);
          } else walk(file, rowId, x, `${path}.${k}`);
        }
      }
    };
    for (const o of t.oxidants) walk('oxidants.json', o.id, o, '');
    for (const c of t.contaminants) walk('contaminants.json', c.id, c, '');
    for (const c of t.cautions) walk('cautions.json', c.id, c, '');
    for (const l of t.limits) walk('limits.json', l.id, l, '');
  }
  const oxidantIds = new Set(t.oxidants.map((o) => o.id));
  const cautionIds = new Set(t.cautions.map((c) => c.id));
  const limitIds = new Set(t.limits.map((l) => l.id));
  const dup = (file: string, ids: readonly string[]) => {
    const seen = new Set<string>();
    for (const id of ids) {
      if (seen.has(id)) problems.push(`${file}: row ${id}: duplicate id`);
      seen.add(id);
    }
  };
  dup('oxidants.json', t.oxidants.map((o) => o.id));
  dup('contaminants.json', t.contaminants.map((c) => c.id));
  dup('limits.json', t.limits.map((l) => l.id));
  dup('cautions.json', t.cautions.map((c) => c.id));
  for (const o of t.oxidants) {
    for (const c of o.cautions) if (!cautionIds.has(c)) problems.push(`oxidants.json: row ${o.id}: column cautions: unknown caution id "${c}"`);
    const defaults = o.strength.nominal.filter((n) => n.default).length;
    if (defaults > 1) problems.push(`oxidants.json: row ${o.id}: column strength.nominal: more than one default`);
  }
  for (const c of t.contaminants) {
    for (const id of c.oxidants) if (!oxidantIds.has(id)) problems.push(`contaminants.json: row ${c.id}: column oxidants: unknown oxidant "${id}"`);
    for (const id of c.notApplicable?.oxidants ?? []) if (!oxidantIds.has(id)) problems.push(`contaminants.json: row ${c.id}: column notApplicable: unknown oxidant "${id}"`);
    if (c.products.filter((p) => p.default).length !== 1) problems.push(`contaminants.json: row ${c.id}: column products: exactly one product must be the default`);
    if (c.finishedTarget !== undefined && !limitIds.has(c.finishedTarget)) problems.push(`contaminants.json: row ${c.id}: column finishedTarget: unknown limit "${c.finishedTarget}"`);
  }
  if (!t.cautions.some((c) => c.standing)) problems.push('cautions.json: no standing note (local regulations govern)');
  return problems;
}
