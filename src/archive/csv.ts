/**
 * CSV export of the sheet history (the figures a monthly operating report needs).
 *
 * Format: RFC 4180 — a header line, CRLF after every record, a field quoted with " when it holds a
 * comma, a double quote, CR or LF, and a double quote inside a field doubled. UTF-8, no byte-order
 * mark (pass `bom: true` for spreadsheet programs that need one). Headers carry their units
 * ("dose_mg_per_L", "flow_m3_per_d", "feed_kg_per_d"); times are UTC ISO 8601 (sampled_at_utc, created_at_utc), and
 * the sample's local time as its request wrote it (sampled_at_local, utc_offset "UTC+01:00"). Numbers are written
 * in full (String(number)), not rounded; the dose and feed as the sheet prints them (rounded) are
 * in the last columns, "dose_mg_per_L_as_printed" and "feed_kg_per_d_as_printed".
 *
 * Text that a spreadsheet would run as a formula (starting with = + - @ tab or CR) is prefixed with
 * an apostrophe (OWASP "CSV injection"); numbers are never altered.
 *
 * One row per sheet, superseded sheets included and marked: status "superseded" and the id of the
 * sheet that corrects it in superseded_by.
 *
 * Each row's record hash and PDF hash are recomputed from the stored bytes as it is exported (see
 * sheets.ts "Reading"): the `integrity` column says "record hash matches" (the record hash covers the
 * digest of the PDF bytes, so the bytes are checked too) or "altered", and an altered record has status "altered" (never "current" or "superseded"), with
 * verification_url naming where to check it. The local time of the sample as written, with its UTC
 * offset and its local day (the day the from/to filter compares), follows the UTC time's columns.
 */
import { DomainError } from '../core/errors.js';
import { fromBaseDec, isUnitOf, temperatureToC, toBase, type Quantity, type QuantityKind } from '../core/quantity.js';
import type { ArchiveContext } from './context.js';
import { sha256Hex } from './canonical.js';
import { localSampleTime } from './ids.js';
import { READ_COLUMNS, readSheet, sheetFilter, type ReadRow, type SheetQuery, type SheetSummary } from './sheets.js';

export type CsvValue = string | number | boolean | null | undefined;

export interface CsvSheet {
  readonly summary: SheetSummary;
  readonly request: unknown;
  readonly result: unknown;
}

/** One exported column: a header with its unit, and how to read the value from a stored sheet. */
export interface CsvColumn {
  readonly header: string;
  readonly value: (sheet: CsvSheet) => CsvValue;
}

const HEADER_RE = /^[A-Za-z][A-Za-z0-9_]*$/;

/** The columns every export starts with (identity, time and status of the sheet). */
export const BASE_CSV_COLUMNS: readonly CsvColumn[] = [
  { header: 'sheet_id', value: (s) => s.summary.id },
  { header: 'kind', value: (s) => s.summary.kind },
  { header: 'plant_id', value: (s) => s.summary.plantId },
  { header: 'plant_version', value: (s) => s.summary.plantVersion },
  { header: 'sampled_at_utc', value: (s) => s.summary.sampledAt },
  { header: 'created_at_utc', value: (s) => s.summary.createdAt },
  { header: 'signer_name', value: (s) => s.summary.signer.name },
  { header: 'status', value: (s) => s.summary.status },
  { header: 'superseded_by', value: (s) => s.summary.supersededBy },
  { header: 'supersedes', value: (s) => s.summary.supersedes },
  { header: 'pdf_sha256', value: (s) => s.summary.pdfSha256 },
  // added after the first columns, so that their places stay as they were
  { header: 'sampled_at_local', value: (s) => local(s).local },
  // "UTC+01:00": a bare "+01:00" would be defused as a formula (and read as a time by spreadsheets)
  { header: 'utc_offset', value: (s) => `UTC${local(s).offset}` },
  { header: 'sample_day_local', value: (s) => local(s).day },
  { header: 'integrity', value: (s) => (s.summary.status === 'altered' ? 'altered' : 'record hash matches') },
  { header: 'verification_url', value: (s) => `/api/v1/sheets/${s.summary.id}/verification` },
  { header: 'correction_reason', value: (s) => s.summary.correctionReason },
];

/** The sample's local time as its request wrote it (sampledAt with its offset), else the UTC time. */
function local(s: CsvSheet) {
  return localSampleTime(at(s.request, ['sampledAt']), s.summary.sampledAt);
}

// ---------------------------------------------------------------------------------------------
// Reading figures out of stored JSON

function at(value: unknown, path: readonly string[]): unknown {
  let v = value;
  for (const k of path) {
    if (typeof v !== 'object' || v === null || Array.isArray(v)) return undefined;
    v = (v as Record<string, unknown>)[k];
  }
  return v;
}

function asQuantity(v: unknown): Quantity | null {
  if (typeof v !== 'object' || v === null) return null;
  const q = v as { value?: unknown; unit?: unknown };
  return typeof q.value === 'number' && Number.isFinite(q.value) && typeof q.unit === 'string' ? { value: q.value, unit: q.unit } : null;
}

/** A quantity at one of `paths` (first found, in request or result), in the kind's base unit; null if absent or in a unit of another kind. */
export function quantityIn(kind: Exclude<QuantityKind, 'temperature'>, ...paths: readonly (readonly ['request' | 'result', ...string[]])[]): (s: CsvSheet) => number | null {
  return (s) => {
    for (const [where, ...path] of paths) {
      const q = asQuantity(at(where === 'request' ? s.request : s.result, path));
      if (q && isUnitOf(kind, q.unit)) return toBase(kind, q);
    }
    return null;
  };
}

function numberAt(where: 'request' | 'result', ...path: string[]): (s: CsvSheet) => number | null {
  return (s) => {
    const v = at(where === 'request' ? s.request : s.result, path);
    return typeof v === 'number' && Number.isFinite(v) ? v : null;
  };
}

function textAt(where: 'request' | 'result', ...path: string[]): (s: CsvSheet) => string | null {
  return (s) => {
    const v = at(where === 'request' ? s.request : s.result, path);
    return typeof v === 'string' ? v : null;
  };
}

const SAMPLE_CONCENTRATIONS = ['iron', 'manganese', 'sulfide', 'arsenite', 'nitrite', 'ammoniaN', 'bromide', 'toc'] as const;

/**
 * Columns for dose sheets, read from the request and result as the HTTP contract of the daily-dose
 * issue defines them (`POST /api/v1/doses`: oxidant, flow, sample {pH, temperatureC, iron, …};
 * answer: dose {value, unit, basis}, feed {massRate, solutionRate}, flags [{code, severity}]).
 * Quantities are converted to the unit in the header; an absent figure is an empty cell.
 */
export const DOSE_CSV_COLUMNS: readonly CsvColumn[] = [
  { header: 'oxidant', value: (s) => textAt('request', 'oxidant')(s) ?? textAt('result', 'oxidant', 'id')(s) },
  { header: 'flow_m3_per_d', value: quantityIn('flow', ['result', 'units', 'flow', 'si'], ['result', 'flow'], ['request', 'flow']) },
  { header: 'sample_pH', value: numberAt('request', 'sample', 'pH') },
  {
    header: 'sample_temperature_C',
    value: (s) => {
      const v = at(s.request, ['sample', 'temperatureC']);
      if (typeof v === 'number' && Number.isFinite(v)) return v;
      const q = asQuantity(at(s.request, ['sample', 'temperature']));
      return q && isUnitOf('temperature', q.unit) ? temperatureToC(q) : null;
    },
  },
  ...SAMPLE_CONCENTRATIONS.map((c): CsvColumn => ({
    header: `${c === 'ammoniaN' ? 'ammonia_as_N' : c}_mg_per_L`,
    value: quantityIn('concentration', ['request', 'sample', c]),
  })),
  { header: 'dose_mg_per_L', value: quantityIn('concentration', ['result', 'dose']) },
  { header: 'dose_basis', value: textAt('result', 'dose', 'basis') },
  { header: 'feed_kg_per_d', value: quantityIn('massRate', ['result', 'feed', 'massRate']) },
  {
    header: 'feed_lb_per_d',
    value: (s) => {
      const kg = quantityIn('massRate', ['result', 'feed', 'massRate'])(s);
      return kg === null ? null : fromBaseDec('massRate', kg, 'lb/d').toNumber();
    },
  },
  { header: 'solution_L_per_h', value: quantityIn('solutionRate', ['result', 'feed', 'solutionRate']) },
  {
    header: 'flags',
    value: (s) => {
      const flags = at(s.result, ['flags']);
      if (!Array.isArray(flags)) return null;
      return flags
        .map((f) => (typeof f === 'object' && f !== null ? (f as { code?: unknown; severity?: unknown }) : {}))
        .filter((f) => typeof f.code === 'string')
        .map((f) => (typeof f.severity === 'string' ? `${String(f.code)}(${f.severity})` : String(f.code)))
        .join(' ');
    },
  },
  // the figures as the signed sheet prints them (rounded there for presentation), beside the full values above
  { header: 'dose_mg_per_L_as_printed', value: printedIn(['result', 'dose'], 'mg/L') },
  { header: 'feed_kg_per_d_as_printed', value: printedIn(['result', 'feed', 'massRate'], 'kg/d') },
  // added later, at the end so that the columns above keep their places
  {
    // the residual the dose was computed for (from the request or the plant profile), on the dose basis
    header: 'target_residual_mg_per_L',
    value: (s) => {
      const terms = at(s.result, ['terms']);
      const residual = Array.isArray(terms) ? terms.find((t) => at(t, ['term']) === 'residual') : undefined;
      return basedIn('concentration', at(residual, ['value'])) ?? quantityIn('concentration', ['request', 'targetResidual'])(s);
    },
  },
  {
    header: 'contact_time_available_min',
    value: (s) => numberAt('result', 'contact', 'availableMinutes')(s) ?? quantityIn('time', ['request', 'contactTime'])(s),
  },
  // ASCII, so a spreadsheet that opens the file as a legacy code page reads it too ("contact volume / flow")
  { header: 'contact_time_from', value: (sh) => textAt('result', 'contact', 'availableFrom')(sh)?.replace(/÷/g, '/') ?? null },
  {
    // the product strength as given (request or plant profile), with its unit: "12.5 % w/v"
    header: 'product_strength_given',
    value: (s) => {
      const q = asQuantity(at(s.result, ['feed', 'strength', 'given'])) ?? asQuantity(at(s.request, ['product', 'strength']));
      return q ? `${q.value} ${q.unit}` : null;
    },
  },
  {
    header: 'product_strength_g_per_L',
    value: (s) => {
      const mgPerL = basedIn('concentration', at(s.result, ['feed', 'strength', 'gramsPerL']));
      return mgPerL === null ? null : fromBaseDec('concentration', mgPerL, 'g/L').toNumber();
    },
  },
  {
    header: 'product_strength_pct_w_w',
    value: (s) => {
      const q = asQuantity(at(s.result, ['feed', 'strength', 'massFraction']));
      return q && unitWithoutBasis(q.unit) === '% w/w' ? q.value : null;
    },
  },
  {
    header: 'product_strength_basis',
    value: (s) => {
      const formula = textAt('result', 'feed', 'strength', 'asFormula')(s);
      return formula === null ? null : `as ${formula}`;
    },
  },
  { header: 'alkalinity_mg_per_L_as_CaCO3', value: quantityIn('concentration', ['request', 'sample', 'alkalinity']) },
  { header: 'alkalinity_consumed_mg_per_L_as_CaCO3', value: (s) => basedIn('concentration', at(s.result, ['sideEffects', 'alkalinityConsumed']), 'as CaCO3') },
  { header: 'alkalinity_after_mg_per_L_as_CaCO3', value: (s) => basedIn('concentration', at(s.result, ['sideEffects', 'pH', 'alkalinityAfter']), 'as CaCO3') },
  { header: 'pH_after_dosing', value: numberAt('result', 'sideEffects', 'pH', 'after') },
];

/** "mg/L as KMnO4" → "mg/L" (a stored quantity may carry its basis in the unit). */
function unitWithoutBasis(unit: string): string {
  const i = unit.indexOf(' as ');
  return i < 0 ? unit : unit.slice(0, i);
}

/**
 * A stored quantity whose unit may carry a basis ("mg/L as CaCO3"), in the kind's base unit; null
 * when absent, of another kind, or (when `basis` is given) on another basis.
 */
function basedIn(kind: Exclude<QuantityKind, 'temperature'>, v: unknown, basis?: string): number | null {
  const q = asQuantity(v);
  if (!q) return null;
  const unit = unitWithoutBasis(q.unit);
  if (basis !== undefined && unit !== q.unit && q.unit.slice(unit.length + 1) !== basis) return null;
  return isUnitOf(kind, unit) ? toBase(kind, { value: q.value, unit }) : null;
}

/** The rounded text stored with a quantity ({value, unit, rounded}), when it is in `unit`. */
function printedIn(path: readonly ['request' | 'result', ...string[]], unit: string): (s: CsvSheet) => string | null {
  const [where, ...rest] = path;
  return (s) => {
    const q = at(where === 'request' ? s.request : s.result, rest) as { unit?: unknown; rounded?: unknown } | undefined;
    return q && typeof q === 'object' && q.unit === unit && typeof q.rounded === 'string' ? q.rounded : null;
  };
}

// ---------------------------------------------------------------------------------------------
// RFC 4180

/** One CSV field: formula-like text defused, quoted when needed. */
export function csvField(value: CsvValue): string {
  let text: string;
  if (value === null || value === undefined) text = '';
  else if (typeof value === 'number') text = Number.isFinite(value) ? String(value) : '';
  else if (typeof value === 'boolean') text = value ? 'true' : 'false';
  else text = /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function csvLine(values: readonly CsvValue[]): string {
  return values.map(csvField).join(',') + '\r\n';
}

export interface ExportCsvOptions extends SheetQuery {
  /** Columns after the base columns; default DOSE_CSV_COLUMNS. */
  readonly columns?: readonly CsvColumn[];
  readonly bom?: boolean;
}

/** The CSV text for the sheets matching the query, ordered by sample time. */
export function exportCsv(ctx: ArchiveContext, options: ExportCsvOptions = {}): string {
  const columns = [...BASE_CSV_COLUMNS, ...(options.columns ?? DOSE_CSV_COLUMNS)];
  const headers = new Set<string>();
  for (const c of columns) {
    if (!HEADER_RE.test(c.header) || headers.has(c.header)) {
      throw new DomainError('INTERNAL', { detail: `CSV header ${JSON.stringify(c.header)} is repeated or not of the form name_unit (letters, digits, underscores).` });
    }
    headers.add(c.header);
  }
  const { where, params } = sheetFilter(options);
  const out: string[] = [options.bom ? '\uFEFF' : '', csvLine(columns.map((c) => c.header))];
  // one row at a time: each PDF is hashed and dropped
  for (const r of ctx.statement(`SELECT ${READ_COLUMNS}, s.pdf FROM sheets s ${where} ORDER BY s.sampled_at, s.seq`).iterate(...params) as IterableIterator<ReadRow & { pdf: Buffer }>) {
    const sheet: CsvSheet = readSheet(r, sha256Hex(r.pdf));
    out.push(csvLine(columns.map((c) => c.value(sheet))));
  }
  return out.join('');
}
