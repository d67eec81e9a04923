/**
 * Row and table schemas for the reference tables in tables/ (zod 4), and the registry the
 * loader walks. Pure: no file access here (src/reference/load.ts is the one file that reads).
 *
 * Every table file has the shape `{ "table": name, "description": text, "rows": [...] }`.
 * Every row names its `source`, an id in tables/sources.json. Published values are kept as
 * the text the source prints ("1.507", "-13.02", "4.891"), never as floats, so no digits are
 * invented or lost; the chemistry converts them (exact rationals or plain numbers) when it uses them.
 *
 * Adding a table (other helpers): write its row schema (here or in a file of your own under
 * src/reference/) and add ONE line to TABLE_REGISTRY below:
 *   'oxidants': defineTable('oxidants.json', 'oxidants', oxidantRow, { idColumn: 'id' }),
 * The loader then validates it, checks its ids are unique and its `source` ids resolve.
 */
import { z } from 'zod';
import { DomainError } from '../core/errors.js';
import { KineticsRowSchema } from './kinetics-schema.js';
import { DOSING_TABLE_SPECS } from './dosing-schemas.js';

/** A decimal number as published text: "1.507", "-0.56", "7.8981e-3". */
export const decimalText = z
  .string()
  .regex(/^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/, 'must be a decimal number written as text, e.g. "1.507" or "-13.02"');

/** Row ids: lower-case words joined by hyphens or underscores ("crc-mno4-mn2"). */
export const rowId = z
  .string()
  .regex(/^[a-z0-9]+(?:[-_][a-z0-9]+)*$/, 'must be lower-case letters and digits joined by "-" or "_", e.g. "crc-mno4-mn2"');

export const sourceId = z.string().min(1, 'must name a source id of tables/sources.json');

export const note = z.string();

// ---------------------------------------------------------------- sources

export const SOURCE_KINDS = ['handbook', 'journal', 'standard', 'textbook', 'software-package'] as const;

export const sourceRow = z
  .object({
    id: rowId,
    kind: z.enum(SOURCE_KINDS),
    author: z.string().min(1),
    title: z.string().min(1),
    /** Journal and pages, or publisher and place. */
    publication: z.string().min(1),
    edition: z.string(),
    tableOrEquation: z.string().min(1),
    year: z.number().int().min(1800).max(2100),
    /** Lower is preferred when two rows state the same reaction. */
    preference: z.number().int().min(1),
    /** How the values were taken: read from a copy, recalled from memory, or both. */
    access: z.enum(['read', 'memory', 'mixed']),
    note: note.optional(),
  })
  .strict();
export type SourceRow = z.infer<typeof sourceRow>;

// ---------------------------------------------------------------- atomic weights

export const atomicWeightRow = z
  .object({
    symbol: z.string().regex(/^[A-Z][a-z]{0,2}$/, 'must be an element symbol such as "Fe"'),
    name: z.string().min(1),
    atomicNumber: z.number().int().min(1).max(118),
    /** The value to compute with: abridged (five figures) or, for interval elements, conventional. */
    atomicWeight: decimalText,
    valueKind: z.enum(['abridged', 'conventional']),
    /** The standard atomic weight as CIAAW states it: "54.938043 ± 0.000002" or "[1.00784, 1.00811]". */
    standardAtomicWeight: z.string().min(1),
    interval: z.object({ low: decimalText, high: decimalText }).strict().optional(),
    abridgedUncertainty: decimalText.optional(),
    source: sourceId,
    note: note.optional(),
  })
  .strict()
  .superRefine((row, ctx) => {
    if (row.valueKind === 'conventional' && row.interval === undefined) {
      ctx.addIssue({ code: 'custom', path: ['interval'], message: 'a conventional value needs the interval it stands for' });
    }
    if (row.interval && Number(row.interval.low) > Number(row.interval.high)) {
      ctx.addIssue({ code: 'custom', path: ['interval'], message: 'low must not exceed high' });
    }
  });
export type AtomicWeightRow = z.infer<typeof atomicWeightRow>;

// ---------------------------------------------------------------- constants

export const constantRow = z
  .object({
    id: z.string().regex(/^[A-Za-z][A-Za-z0-9_]*$/, 'must be a short symbol such as "R"'),
    name: z.string().min(1),
    value: decimalText,
    unit: z.string().min(1),
    exact: z.boolean(),
    source: sourceId,
    note: note.optional(),
  })
  .strict();
export type ConstantRow = z.infer<typeof constantRow>;

// ---------------------------------------------------------------- shared pieces

export const deltaH = z
  .object({ value: decimalText, unit: z.enum(['kJ/mol', 'kcal/mol']) })
  .strict();
export type DeltaH = z.infer<typeof deltaH>;

/** The one temperature expression: value = A1 + A2*T + A3/T + A4*log10(T) + A5/T^2 + A6*T^2 (T in K). */
export const TEMPERATURE_FORM = 'A1 + A2*T + A3/T + A4*log10(T) + A5/T^2 + A6*T^2' as const;
export const COEFFICIENT_NAMES = ['A1', 'A2', 'A3', 'A4', 'A5', 'A6'] as const;

export const temperatureExpression = z
  .object({
    form: z.literal(TEMPERATURE_FORM),
    /** Whether the expression gives log10 K or pK (= -log10 K). */
    quantity: z.enum(['log10K', 'pK']),
    coefficients: z
      .object({
        A1: decimalText.optional(),
        A2: decimalText.optional(),
        A3: decimalText.optional(),
        A4: decimalText.optional(),
        A5: decimalText.optional(),
        A6: decimalText.optional(),
      })
      .strict(),
    validFromC: z.number().optional(),
    validToC: z.number().optional(),
  })
  .strict();
export type TemperatureExpression = z.infer<typeof temperatureExpression>;

// ---------------------------------------------------------------- potentials

export const potentialRow = z
  .object({
    id: rowId,
    /** Equation text as the formula parser reads it: "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O". */
    halfReaction: z.string().min(3),
    /** Electrons in the reaction as written (checked against the equation when the ledger is built). */
    electrons: z.number().int().min(1),
    medium: z.enum(['acid', 'base']).nullable(),
    /** E° in volts at 25 °C, as published. */
    potentialV: decimalText.optional(),
    /** log10 K of the reaction as written, as a geochemical database prints it. */
    logK: decimalText.optional(),
    /** pε° = log10 K per electron, as Stumm & Morgan print it. */
    peStandard: decimalText.optional(),
    /** Reaction enthalpy for a logK row (van 't Hoff temperature dependence). */
    deltaH: deltaH.optional(),
    /** Isothermal temperature coefficient dE°/dT in mV/K, or null. */
    dEdTmVPerK: decimalText.nullable(),
    dEdTSource: sourceId.optional(),
    /** Uncertainty of E° in volts where the source states one, else null. */
    uncertaintyV: decimalText.nullable(),
    source: sourceId,
    note: note,
  })
  .strict()
  .superRefine((row, ctx) => {
    const given = (['potentialV', 'logK', 'peStandard'] as const).filter((k) => row[k] !== undefined);
    if (given.length !== 1) {
      ctx.addIssue({
        code: 'custom',
        path: [given[1] ?? 'potentialV'],
        message: `give exactly one of potentialV, logK or peStandard (found ${given.length === 0 ? 'none' : given.join(' and ')})`,
      });
    }
    if (row.dEdTmVPerK !== null && row.dEdTSource === undefined) {
      ctx.addIssue({ code: 'custom', path: ['dEdTSource'], message: 'a dE°/dT value needs the source it comes from' });
    }
    if (row.dEdTmVPerK === null && row.dEdTSource !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['dEdTSource'], message: 'dEdTSource given without a dEdTmVPerK value' });
    }
    if (row.deltaH !== undefined && row.logK === undefined) {
      ctx.addIssue({ code: 'custom', path: ['deltaH'], message: 'deltaH belongs with a logK row (use dEdTmVPerK with potentialV)' });
    }
  });
export type PotentialRow = z.infer<typeof potentialRow>;

// ---------------------------------------------------------------- equilibria

export const EQUILIBRIUM_KINDS = ['water', 'acid', 'solubility', 'henry', 'complex'] as const;

export const equilibriumRow = z
  .object({
    id: rowId,
    /** Equation text: "HOCl = H+ + OCl-". No electrons: redox steps belong in potentials. */
    reaction: z.string().min(3),
    kind: z.enum(EQUILIBRIUM_KINDS),
    /** log10 K at 25 °C for the reaction as written. */
    logK: decimalText.optional(),
    /** pK = -log10 K at 25 °C, where the source prints pK. */
    pK: decimalText.optional(),
    temperature: temperatureExpression.optional(),
    deltaH: deltaH.optional(),
    source: sourceId,
    note: note,
  })
  .strict()
  .superRefine((row, ctx) => {
    if (row.logK !== undefined && row.pK !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['pK'], message: 'give logK or pK, not both' });
    }
    if (row.logK === undefined && row.pK === undefined && row.temperature === undefined) {
      ctx.addIssue({ code: 'custom', path: ['logK'], message: 'give logK, pK or a temperature expression' });
    }
  });
export type EquilibriumRow = z.infer<typeof equilibriumRow>;

// ---------------------------------------------------------------- registry

export interface TableSpec<Row = unknown> {
  /** File name inside tables/. */
  readonly file: string;
  /** The value of the file's "table" field. */
  readonly table: string;
  readonly row: z.ZodType<Row>;
  /** Column whose values must be unique (and name the row in errors). */
  readonly idColumn?: string;
  /** Columns holding source ids that must resolve in sources.json. */
  readonly sourceColumns: readonly string[];
}

export function defineTable<Row>(
  file: string,
  table: string,
  row: z.ZodType<Row>,
  options: { idColumn?: string; sourceColumns?: readonly string[] } = {},
): TableSpec<Row> {
  return {
    file,
    table,
    row,
    ...(options.idColumn !== undefined ? { idColumn: options.idColumn } : {}),
    sourceColumns: options.sourceColumns ?? ['source'],
  };
}

/** The schema of a whole table file. */
export function tableFileSchema<Row>(spec: TableSpec<Row>) {
  return z
    .object({
      table: z.literal(spec.table),
      description: z.string().min(1),
      rows: z.array(spec.row),
    })
    .strict();
}

/**
 * Every table the loader reads. Key = the name the rest of the code uses (tables.potentials).
 * One line per table; other helpers add theirs here.
 */
export const TABLE_REGISTRY = {
  sources: defineTable('sources.json', 'sources', sourceRow, { idColumn: 'id', sourceColumns: [] }),
  atomicWeights: defineTable('atomic-weights.json', 'atomic-weights', atomicWeightRow, { idColumn: 'symbol' }),
  constants: defineTable('constants.json', 'constants', constantRow, { idColumn: 'id' }),
  potentials: defineTable('potentials.json', 'potentials', potentialRow, { idColumn: 'id', sourceColumns: ['source', 'dEdTSource'] }),
  equilibria: defineTable('equilibria.json', 'equilibria', equilibriumRow, { idColumn: 'id' }),
  kineticsTypical: defineTable('kinetics-typical.json', 'kinetics-typical', KineticsRowSchema, { idColumn: 'id' }),
  ...DOSING_TABLE_SPECS,
} as const satisfies Record<string, TableSpec<any>>;

export type TableName = keyof typeof TABLE_REGISTRY;
type RowOf<S> = S extends TableSpec<infer R> ? R : never;

/** The loaded tables: rows of every registered table, by registry name. */
export type ReferenceTables = { readonly [K in TableName]: readonly RowOf<(typeof TABLE_REGISTRY)[K]>[] };

/** Atomic weights as the formula layer takes them: symbol → published text. */
export function atomicWeightMap(tables: Pick<ReferenceTables, 'atomicWeights'>): ReadonlyMap<string, string> {
  return new Map(tables.atomicWeights.map((r) => [r.symbol, r.atomicWeight]));
}

/** A constant's published text by id (R, F, T0, T25); throws if the table lacks it. */
export function constantText(tables: Pick<ReferenceTables, 'constants'>, id: string): string {
  const row = tables.constants.find((r) => r.id === id);
  if (!row) {
    throw new DomainError('TABLE_ROW_NOT_FOUND', {
      detail: `The constants table (tables/constants.json) has no row "${id}"; add it with its source.`,
      params: { table: 'constants', id },
    });
  }
  return row.value;
}
