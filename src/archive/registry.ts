/**
 * The registry log: a second hash chain over the rows that say who may act and who signs
 * (users, user events, signers) and over the plant profile versions doses are computed with.
 * Sheets have their own chain (sheets.ts). Without this log a user's token hash, role or a
 * signer's certificate could be changed in the file and nothing would notice, and a plant
 * profile rewritten together with its own SHA-256 would pass its check.
 *
 * Each insert into a registered table appends, in the same transaction, one log entry:
 *   row_sha256  = SHA-256 of the canonical JSON of {format, row} where row holds the columns that
 *                 the entry's format lists for its table (BLOB columns enter as
 *                 "sha256:<hex of the bytes>");
 *   record_hash = SHA-256 of the canonical JSON of
 *                 {format, seq, table, key, rowSha256, loggedAt, prevHash};
 *   prev_hash   = record_hash of the entry before (64 zeros for the first).
 * Verification walks the log (sequence, links, record hashes), re-hashes every logged row, and
 * reports rows that are missing, changed, or present without an entry.
 */
import { DomainError } from '../core/errors.js';
import { ZERO_HASH, canonicalJson, sha256Hex } from './canonical.js';
import type { ArchiveContext } from './context.js';

/** The format new entries are written in. */
export const REGISTRY_FORMAT = 1;

/** The registered tables and the column that identifies a row. */
export const REGISTRY_TABLES = {
  users: 'id',
  user_events: 'seq',
  signers: 'id',
  /** Composite key (plant id, version) as one text: "demo-groundwater#3" (plant ids hold no "#"). */
  plant_versions: "plant_id || '#' || version",
} as const;
export type RegistryTable = keyof typeof REGISTRY_TABLES;

/**
 * The columns each format hashes, per table. A migration that adds a column to a registered table
 * adds a format here with the longer list; entries written earlier keep their own format, so
 * they stay checkable.
 */
export const REGISTRY_COLUMNS: Readonly<Record<number, Readonly<Record<RegistryTable, readonly string[]>>>> = {
  1: {
    users: ['id', 'name', 'role', 'token_sha256', 'created_at', 'created_by'],
    user_events: ['seq', 'user_id', 'event', 'at', 'actor', 'note'],
    signers: ['seq', 'id', 'name', 'role', 'certificate_subject', 'user_id', 'demo', 'p12', 'password_enc', 'key_fingerprint', 'created_at', 'created_by'],
    // logged from schema version 3 on (plant versions stored earlier are logged as found by that migration)
    plant_versions: ['plant_id', 'version', 'profile_json', 'sha256', 'created_at', 'created_by'],
  },
};

/** The registry key of a plant profile version. */
export function plantVersionKey(plantId: string, version: number): string {
  return `${plantId}#${version}`;
}

interface LogRow {
  seq: number;
  format: number;
  table_name: RegistryTable;
  row_key: string;
  row_sha256: string;
  logged_at: string;
  prev_hash: string;
  record_hash: string;
}

/** The columns a format lists for a table that the stored row does not have (a rebuilt table); empty when all are there. */
export function missingColumns(table: RegistryTable, row: Record<string, unknown>, format = REGISTRY_FORMAT): string[] {
  return (REGISTRY_COLUMNS[format]?.[table] ?? []).filter((k) => !Object.prototype.hasOwnProperty.call(row, k));
}

/**
 * SHA-256 of a stored row in a format: canonical JSON of the format's columns, BLOBs by their own
 * SHA-256. Null for an unknown format. A listed column the row does not have is refused (never
 * hashed as null): the caller reports it.
 */
export function rowDigest(table: RegistryTable, row: Record<string, unknown>, format = REGISTRY_FORMAT): string | null {
  const columns = REGISTRY_COLUMNS[format]?.[table];
  if (!columns) return null;
  const missing = missingColumns(table, row, format);
  if (missing.length) throw new DomainError('INTERNAL', { detail: `registry: ${table} has no column ${missing.join(', ')}, which format ${format} hashes` });
  const plain: Record<string, unknown> = {};
  for (const k of columns) {
    const v = row[k];
    plain[k] = v === null ? null : Buffer.isBuffer(v) || v instanceof Uint8Array ? `sha256:${sha256Hex(v)}` : typeof v === 'bigint' ? v.toString() : v;
  }
  return sha256Hex(canonicalJson({ format, row: plain }));
}

export function registryRecordHash(e: Pick<LogRow, 'format' | 'seq' | 'table_name' | 'row_key' | 'row_sha256' | 'logged_at' | 'prev_hash'>): string {
  return sha256Hex(
    canonicalJson({ format: e.format, seq: e.seq, table: e.table_name, key: e.row_key, rowSha256: e.row_sha256, loggedAt: e.logged_at, prevHash: e.prev_hash }),
  );
}

/** The connection, and the cached statements of an open archive when there is one (a migration has only the connection). */
export type RegistryContext = Pick<ArchiveContext, 'db'> & Partial<Pick<ArchiveContext, 'statement'>>;

function prepare(ctx: RegistryContext, sql: string) {
  return ctx.statement ? ctx.statement(sql) : ctx.db.prepare(sql);
}

function readRow(ctx: RegistryContext, table: RegistryTable, key: string): Record<string, unknown> | undefined {
  const column = REGISTRY_TABLES[table];
  return prepare(ctx, `SELECT * FROM ${table} WHERE ${column} = ?`).get(column === 'seq' ? Number(key) : key) as Record<string, unknown> | undefined;
}

/**
 * Append the log entry for a row just inserted. Call inside the transaction that inserted it
 * (the entry and the row commit together, or neither does).
 */
export function logRegistryRow(ctx: RegistryContext, table: RegistryTable, key: string | number, at: string, format = REGISTRY_FORMAT): void {
  const k = String(key);
  const row = readRow(ctx, table, k);
  if (!row) throw new DomainError('INTERNAL', { detail: `registry: no ${table} row ${k} to log` });
  const last = prepare(ctx, 'SELECT seq, record_hash FROM registry_log ORDER BY seq DESC LIMIT 1').get() as { seq: number; record_hash: string } | undefined;
  const entry = {
    seq: (last?.seq ?? 0) + 1,
    format,
    table_name: table,
    row_key: k,
    row_sha256: rowDigest(table, row, format) ?? unknownFormat(format),
    logged_at: at,
    prev_hash: last?.record_hash ?? ZERO_HASH,
  };
  prepare(ctx, 'INSERT INTO registry_log (seq, format, table_name, row_key, row_sha256, logged_at, prev_hash, record_hash) VALUES (?, ?, ?, ?, ?, ?, ?, ?)').run(entry.seq, entry.format, entry.table_name, entry.row_key, entry.row_sha256, entry.logged_at, entry.prev_hash, registryRecordHash(entry));
}

function unknownFormat(format: number): never {
  throw new DomainError('INTERNAL', { detail: `registry: format ${format} is not one this build knows` });
}

/**
 * Log every row of the given tables that has no entry yet, in the given format. A migration
 * passes the tables and format it was written for (never the live constants, which later
 * builds extend), so it does the same thing on every build.
 */
export function logUnloggedRows(
  ctx: RegistryContext,
  at: string,
  scope: { readonly tables: readonly RegistryTable[]; readonly format: number; readonly order: Readonly<Partial<Record<RegistryTable, string>>> },
): number {
  let n = 0;
  for (const table of scope.tables) {
    const column = REGISTRY_TABLES[table];
    const keys = ctx.db
      .prepare(`SELECT ${column} AS k FROM ${table} WHERE CAST(${column} AS TEXT) NOT IN (SELECT row_key FROM registry_log WHERE table_name = ?) ORDER BY ${scope.order[table] ?? column}`)
      .all(table) as { k: string | number }[];
    for (const { k } of keys) {
      logRegistryRow(ctx, table, k, at, scope.format);
      n++;
    }
  }
  return n;
}

/**
 * The check of one registered row before the service acts on it (a token's user, a signer):
 * the row hashes to the SHA-256 its log entry holds, the entry hashes to its record_hash, and
 * the entry is linked to its neighbours in the log (prev_hash of the next entry, record_hash of
 * the one before). A few indexed reads; the archive walk (verifyRegistry) checks the whole log.
 * Returns what failed, in words, or null when the row is as it was logged. A rewrite of the whole
 * log from that entry on is caught only against a registry head written down earlier.
 */
export function registryRowProblem(ctx: RegistryContext, table: RegistryTable, key: string | number, stored?: Record<string, unknown>): string | null {
  const k = String(key);
  const row = stored ?? readRow(ctx, table, k);
  if (!row) return `${table} row ${k} is not stored`;
  const e = prepare(ctx, 'SELECT * FROM registry_log WHERE table_name = ? AND row_key = ?').get(table, k) as LogRow | undefined;
  if (!e) return `${table} row ${k} has no registry entry (inserted outside the service, or its key was changed)`;
  if (registryRecordHash(e) !== e.record_hash) return `registry entry ${e.seq} (${table} row ${k}) does not hash to its record_hash (the entry was changed)`;
  if (!REGISTRY_COLUMNS[e.format]) return `registry entry ${e.seq} (${table} row ${k}) has format ${e.format}, which this build cannot check`;
  const missing = missingColumns(table, row, e.format);
  if (missing.length) return `${table} has lost column(s) ${missing.join(', ')} that registry entry ${e.seq} hashes`;
  if (rowDigest(table, row, e.format) !== e.row_sha256) return `${table} row ${k} does not hash to its logged SHA-256 (a column was changed)`;
  const before = e.seq > 1 ? (prepare(ctx, 'SELECT record_hash FROM registry_log WHERE seq = ?').get(e.seq - 1) as { record_hash: string } | undefined) : { record_hash: ZERO_HASH };
  if (!before || before.record_hash !== e.prev_hash) return `registry entry ${e.seq} (${table} row ${k}) is not linked to the entry before it`;
  const after = prepare(ctx, 'SELECT prev_hash FROM registry_log WHERE seq = ?').get(e.seq + 1) as { prev_hash: string } | undefined;
  if (after && after.prev_hash !== e.record_hash) return `registry entry ${e.seq + 1} does not link to entry ${e.seq} (${table} row ${k}): the entry was rewritten`;
  return null;
}

export interface RegistryProblem {
  /** "table:key" of the row concerned; "registry_log" for the log's tail and head checks. */
  readonly id: string;
  readonly check:
    | 'registry-sequence' | 'registry-chain' | 'registry-record-hash' | 'registry-format' | 'registry-row-missing' | 'registry-row-hash'
    | 'registry-unlogged' | 'registry-tail' | 'registry-head';
  readonly message: string;
}

/** The last entry of the registry log: write it down with the sheet chain's head to detect a rewritten log later. */
export interface RegistryHead {
  readonly entries: number;
  readonly lastSeq: number;
  readonly recordHash: string;
}

/** A registry head recorded earlier: its entry must still be in the log, with at least that many entries. */
export interface ExpectedRegistryHead {
  readonly entries?: number;
  readonly recordHash?: string;
}

/** Walk the registry log; every problem names the table and row (or the log entry). */
export function verifyRegistry(ctx: RegistryContext, expected: ExpectedRegistryHead = {}): { entries: number; head: RegistryHead; problems: RegistryProblem[] } {
  const problems: RegistryProblem[] = [];
  let prevSeq = 0;
  let prevHash = ZERO_HASH;
  let entries = 0;
  const logged = new Set<string>();
  const hashes = new Set<string>([ZERO_HASH]); // the head of an empty log
  for (const e of ctx.db.prepare('SELECT * FROM registry_log ORDER BY seq').iterate() as IterableIterator<LogRow>) {
    entries++;
    const id = `${e.table_name}:${e.row_key}`;
    logged.add(id);
    hashes.add(e.record_hash);
    if (e.seq !== prevSeq + 1) problems.push({ id, check: 'registry-sequence', message: `registry entry ${e.seq} follows ${prevSeq}: ${e.seq - prevSeq - 1} entr(ies) are missing` });
    if (e.prev_hash !== prevHash) problems.push({ id, check: 'registry-chain', message: `registry entry ${e.seq}: prev_hash does not match the entry before` });
    if (registryRecordHash(e) !== e.record_hash) problems.push({ id, check: 'registry-record-hash', message: `registry entry ${e.seq} does not hash to its record_hash (the entry was changed)` });
    const known = Object.prototype.hasOwnProperty.call(REGISTRY_TABLES, e.table_name);
    const row = known ? readRow(ctx, e.table_name, e.row_key) : undefined;
    if (!known) problems.push({ id, check: 'registry-format', message: `registry entry ${e.seq} names table ${e.table_name}, which this build does not register` });
    else if (!row) problems.push({ id, check: 'registry-row-missing', message: `${e.table_name} row ${e.row_key} is logged but no longer stored (deleted or its key changed)` });
    else if (!REGISTRY_COLUMNS[e.format]) problems.push({ id, check: 'registry-format', message: `registry entry ${e.seq} has format ${e.format}, which this build cannot check` });
    else {
      const missing = missingColumns(e.table_name, row, e.format);
      if (missing.length) problems.push({ id, check: 'registry-format', message: `${e.table_name} has lost column(s) ${missing.join(', ')} that registry entry ${e.seq} (format ${e.format}) hashes` });
      else if (rowDigest(e.table_name, row, e.format) !== e.row_sha256) problems.push({ id, check: 'registry-row-hash', message: `${e.table_name} row ${e.row_key} does not hash to its logged SHA-256 (a column was changed)` });
    }
    prevSeq = e.seq;
    prevHash = e.record_hash;
  }
  for (const table of Object.keys(REGISTRY_TABLES) as RegistryTable[]) {
    const column = REGISTRY_TABLES[table];
    for (const { k } of ctx.db.prepare(`SELECT ${column} AS k FROM ${table}`).all() as { k: string | number }[]) {
      const id = `${table}:${k}`;
      if (!logged.has(id)) problems.push({ id, check: 'registry-unlogged', message: `${table} row ${k} has no registry entry (inserted outside the service, or its key was changed)` });
    }
  }
  const counter = ctx.db.prepare("SELECT seq FROM sqlite_sequence WHERE name = 'registry_log'").get() as { seq: number } | undefined;
  if (counter && counter.seq > prevSeq) {
    problems.push({ id: 'registry_log', check: 'registry-tail', message: `the registry counter reached ${counter.seq} but the last entry is ${prevSeq}: the last ${counter.seq - prevSeq} entr(ies) are missing` });
  }
  if (expected.recordHash !== undefined && !hashes.has(expected.recordHash)) {
    problems.push({ id: 'registry_log', check: 'registry-head', message: `the recorded registry head ${expected.recordHash} is not in the log: entries were removed or rewritten` });
  }
  if (expected.entries !== undefined && entries < expected.entries) {
    problems.push({ id: 'registry_log', check: 'registry-head', message: `the registry log holds ${entries} entries, fewer than the ${expected.entries} recorded earlier` });
  }
  return { entries, head: { entries, lastSeq: prevSeq, recordHash: prevHash }, problems };
}
