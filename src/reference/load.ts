/**
 * The one loader of the reference tables (and the only file of src/reference that reads files).
 *
 * Reads every registered table file in tables/, validates it with its zod schema, checks that
 * ids are unique and that every source id resolves in sources.json, and fails fast with a
 * TABLE_INVALID error naming the file, the row (index and id), the column and the reason.
 * Equations are not parsed here (reference must not import chemistry): the ledger
 * (src/chemistry/thermo/ledger.ts) parses them and names the row when one does not parse.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { z } from 'zod';
import { DomainError, toPointer } from '../core/errors.js';
import { TABLE_REGISTRY, tableFileSchema, type ReferenceTables, type TableName, type TableSpec } from './schemas.js';

/** The repository's tables/ folder. */
export const DEFAULT_TABLES_DIR = resolve(dirname(fileURLToPath(import.meta.url)), '../../tables');

interface Where {
  readonly file: string;
  readonly rowIndex?: number;
  readonly rowId?: string;
  readonly column?: string;
}

function tableError(where: Where, reason: string): DomainError {
  const parts = [`tables/${where.file}`];
  if (where.rowIndex !== undefined) parts.push(`row ${where.rowIndex}${where.rowId !== undefined ? ` (id "${where.rowId}")` : ''}`);
  if (where.column !== undefined) parts.push(`column "${where.column}"`);
  const path: (string | number)[] = [];
  if (where.rowIndex !== undefined) path.push('rows', where.rowIndex);
  if (where.column !== undefined) path.push(...where.column.split('.'));
  return new DomainError('TABLE_INVALID', {
    detail: `${parts.join(', ')}: ${reason}. Fix the table file; every row needs valid columns and a source id listed in tables/sources.json.`,
    params: {
      file: where.file,
      ...(where.rowIndex !== undefined ? { row: where.rowIndex } : {}),
      ...(where.rowId !== undefined ? { id: where.rowId } : {}),
      ...(where.column !== undefined ? { column: where.column } : {}),
      reason,
    },
    fields: [{ pointer: toPointer(path), message: reason }],
  });
}

function rowIdOf(spec: TableSpec, raw: unknown, index: number): string | undefined {
  if (spec.idColumn === undefined || typeof raw !== 'object' || raw === null) return undefined;
  const rows = (raw as { rows?: unknown }).rows;
  if (!Array.isArray(rows)) return undefined;
  const row = rows[index];
  if (typeof row !== 'object' || row === null) return undefined;
  const id = (row as Record<string, unknown>)[spec.idColumn];
  return typeof id === 'string' ? id : undefined;
}

/** Turn the first zod issue into a TABLE_INVALID naming file, row, column and reason. */
function issueError(spec: TableSpec, raw: unknown, issue: z.core.$ZodIssue): DomainError {
  const path = issue.path.map((p) => (typeof p === 'symbol' ? String(p) : p));
  let reason = issue.message;
  let extraColumn: string | undefined;
  if (issue.code === 'unrecognized_keys') {
    extraColumn = issue.keys[0];
    reason = `unknown column${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')}`;
  }
  if (path[0] === 'rows' && typeof path[1] === 'number') {
    const rowIndex = path[1];
    const colPath = path.slice(2).map(String);
    if (extraColumn !== undefined) colPath.push(extraColumn);
    const rowId = rowIdOf(spec, raw, rowIndex);
    return tableError(
      {
        file: spec.file,
        rowIndex,
        ...(rowId !== undefined ? { rowId } : {}),
        ...(colPath.length > 0 ? { column: colPath.join('.') } : {}),
      },
      reason,
    );
  }
  const column = [...path.map(String), ...(extraColumn !== undefined ? [extraColumn] : [])].join('.');
  return tableError({ file: spec.file, ...(column !== '' ? { column } : {}) }, reason);
}

/** Validate one table's parsed JSON against its spec. Exported for tests and for tables built in memory. */
export function validateTable<Row>(spec: TableSpec<Row>, raw: unknown): Row[] {
  const result = tableFileSchema(spec).safeParse(raw);
  if (!result.success) throw issueError(spec, raw, result.error.issues[0]!);
  const rows = result.data.rows as Row[];
  if (spec.idColumn !== undefined) {
    const seen = new Map<string, number>();
    rows.forEach((row, i) => {
      const id = String((row as Record<string, unknown>)[spec.idColumn!]);
      const first = seen.get(id);
      if (first !== undefined) {
        throw tableError({ file: spec.file, rowIndex: i, rowId: id, column: spec.idColumn! }, `duplicate id, already used by row ${first}`);
      }
      seen.set(id, i);
    });
  }
  return rows;
}

function readJson(dir: string, file: string): unknown {
  const path = join(dir, file);
  if (!existsSync(path)) throw tableError({ file }, `file not found in ${dir}`);
  const text = readFileSync(path, 'utf8');
  try {
    return JSON.parse(text) as unknown;
  } catch (e) {
    throw tableError({ file }, `not valid JSON (${(e as Error).message})`);
  }
}

/** Check every source column of every row resolves in sources.json. */
export function checkSources(tables: Partial<Record<TableName, readonly unknown[]>>, registry: Record<string, TableSpec> = TABLE_REGISTRY): void {
  const sourceIds = new Set((tables.sources ?? []).map((r) => (r as { id: string }).id));
  for (const [name, spec] of Object.entries(registry)) {
    const rows = tables[name as TableName];
    if (!rows) continue;
    rows.forEach((row, i) => {
      for (const column of spec.sourceColumns) {
        const value = (row as Record<string, unknown>)[column];
        if (value === undefined) continue;
        if (typeof value !== 'string' || !sourceIds.has(value)) {
          const rowId = spec.idColumn !== undefined ? String((row as Record<string, unknown>)[spec.idColumn]) : undefined;
          throw tableError(
            { file: spec.file, rowIndex: i, ...(rowId !== undefined ? { rowId } : {}), column },
            `source "${String(value)}" is not an id in tables/sources.json`,
          );
        }
      }
    });
  }
}

/**
 * Read, validate and cross-check every registered table in `dir` (default: the repository's tables/).
 * Throws DomainError TABLE_INVALID on the first problem.
 */
export function loadReferenceTables(dir: string = DEFAULT_TABLES_DIR): ReferenceTables {
  return loadTables(Object.keys(TABLE_REGISTRY) as TableName[], dir) as ReferenceTables;
}

/**
 * Read and check only some registered tables (sources.json is always read, to resolve source ids).
 * For tools and tests that need a few tables.
 */
export function loadTables<N extends TableName>(names: readonly N[], dir: string = DEFAULT_TABLES_DIR): Pick<ReferenceTables, N | 'sources'> {
  const out: Partial<Record<TableName, readonly unknown[]>> = {};
  const wanted = new Set<TableName>(['sources', ...names]);
  for (const [name, spec] of Object.entries(TABLE_REGISTRY) as [TableName, TableSpec][]) {
    if (!wanted.has(name)) continue;
    out[name] = validateTable(spec, readJson(dir, spec.file));
  }
  checkSources(out);
  return out as Pick<ReferenceTables, N | 'sources'>;
}
