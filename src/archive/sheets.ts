/**
 * Sheets: the append-only, hash-chained record of every signed dosing sheet.
 *
 * ## The record hash (record_format 1)
 *
 * record_hash = lowercase hex SHA-256 of the UTF-8 bytes of the canonical JSON (canonical.ts: keys
 * sorted, no whitespace) of this object, built from the stored row:
 *
 *   {
 *     "content_sha256": <text>,            "created_at": <text>,        "created_by": <text>,
 *     "format": "oxd-sheet-record/1",      "id": <text>,                "kind": <text>,
 *     "pdf": <hex SHA-256 of the pdf BLOB bytes, computed from the bytes>,
 *     "pdf_sha256": <text, the stored column>,
 *     "plant_id": <text|null>,             "plant_version": <integer|null>,
 *     "prev_hash": <text>,                 "record_format": <integer>,
 *     "request_json": <the stored text, as a JSON string>,
 *     "result_json": <the stored text, as a JSON string>,
 *     "sampled_at": <text>,                "seq": <integer>,
 *     "signer_id": <text>, "signer_name": <text>, "signer_role": <text>, "signer_subject": <text>,
 *     "supersedes": <text|null>
 *   }
 *
 * That is every column of the sheets table except record_hash itself (tests/archive check this
 * against PRAGMA table_info, so a new column cannot be left out silently). prev_hash is the previous
 * record's record_hash in seq order; the first record's prev_hash is 64 zeros. Because seq is in
 * the hash and each prev_hash names its predecessor, changing, deleting, inserting or reordering a
 * row breaks either that row's hash or the next link.
 *
 * content_sha256 (see sheetContentSha256) covers what the sheet says (id, kind, plant, sample time,
 * request, result, supersedes); it is known before the PDF is rendered, so the PDF footer can print it.
 *
 * ## Reading: the integrity of every record served
 * Every read (getSheet, listSheets, the CSV export) recomputes the record hash of each row it
 * returns from the stored columns and the SHA-256 of the stored PDF bytes, and hashes the bytes
 * against pdf_sha256 (`checked: "record hash and PDF hash"`), so recordHashMatches means the same
 * on every route (about 60 KB hashed per sheet: a list page or a month's CSV is cheap). A row that
 * fails is given `status: "altered"`, never "current" or "superseded". The chain link and the PDF
 * signature are checked by verifySheet / verifyArchive only (verify.ts). (checkIntegrity still
 * takes a null digest, `checked: "record hash"`, for a caller that cannot read the bytes; no read
 * of the service uses it.)
 *
 * ## The reason for a correction
 * A correction's reason is the request's own `correctionReason` member (POST /api/v1/sheets, or any
 * issuer that stores its request body). It is therefore inside request_json, so content_sha256 and
 * record_hash both cover it, and it needs no column (and no new record_format): records without it
 * hash exactly as before. appendSheet refuses a `correctionReason` that is not text of 3–500
 * characters, or one given without `supersedes`; SheetSummary.correctionReason reads it back.
 *
 * ## Appending
 * One BEGIN IMMEDIATE transaction reads the last (seq, record_hash), checks supersedes, and inserts.
 * The write lock is taken at BEGIN, so two appends (in one process or several) cannot read the same
 * predecessor; prev_hash is also UNIQUE in the schema, so a fork could not be stored even by a bug.
 * The PDF is hashed before the transaction, so the lock is held for microseconds.
 */
import { DomainError } from '../core/errors.js';
import { roundSig } from '../core/decimal.js';
import { ZERO_HASH, canonicalJson, sha256Hex } from './canonical.js';
import type { ArchiveContext } from './context.js';
import { requireIntactSigner } from './signers.js';
import { dayOf, isSheetKind, rangeBound, requirePlantId, requireSheetId, requireTimestamp, SHEET_KINDS, type SheetKind } from './ids.js';

export const RECORD_FORMAT = 1;
const RECORD_FORMAT_TAG = 'oxd-sheet-record/1';
/** A sample time may be at most this far after the sheet's creation (clock skew between lab and server). */
export const SAMPLED_AT_MAX_AHEAD_MS = 24 * 3600 * 1000;

/** A stored sheets row, as better-sqlite3 returns it. */
export interface SheetRow {
  seq: number;
  id: string;
  record_format: number;
  kind: string;
  plant_id: string | null;
  plant_version: number | null;
  sampled_at: string;
  created_at: string;
  created_by: string;
  signer_id: string;
  signer_name: string;
  signer_role: string;
  signer_subject: string;
  request_json: string;
  result_json: string;
  pdf: Buffer;
  pdf_sha256: string;
  content_sha256: string;
  supersedes: string | null;
  prev_hash: string;
  record_hash: string;
}

/** The columns that enter the record hash, in table order (every column but record_hash). */
export const HASHED_COLUMNS = [
  'seq',
  'id',
  'record_format',
  'kind',
  'plant_id',
  'plant_version',
  'sampled_at',
  'created_at',
  'created_by',
  'signer_id',
  'signer_name',
  'signer_role',
  'signer_subject',
  'request_json',
  'result_json',
  'pdf',
  'pdf_sha256',
  'content_sha256',
  'supersedes',
  'prev_hash',
] as const satisfies readonly (keyof SheetRow)[];

/** The canonical text whose SHA-256 is record_hash (format 1). `pdfDigest` is SHA-256 of the pdf bytes. */
export function recordHashText(row: Omit<SheetRow, 'record_hash' | 'pdf'>, pdfDigest: string): string {
  return canonicalJson({
    format: RECORD_FORMAT_TAG,
    seq: row.seq,
    id: row.id,
    record_format: row.record_format,
    kind: row.kind,
    plant_id: row.plant_id,
    plant_version: row.plant_version,
    sampled_at: row.sampled_at,
    created_at: row.created_at,
    created_by: row.created_by,
    signer_id: row.signer_id,
    signer_name: row.signer_name,
    signer_role: row.signer_role,
    signer_subject: row.signer_subject,
    request_json: row.request_json,
    result_json: row.result_json,
    pdf: pdfDigest,
    pdf_sha256: row.pdf_sha256,
    content_sha256: row.content_sha256,
    supersedes: row.supersedes,
    prev_hash: row.prev_hash,
  });
}

export function recordHash(row: Omit<SheetRow, 'record_hash' | 'pdf'>, pdfDigest: string): string {
  return sha256Hex(recordHashText(row, pdfDigest));
}

export interface SheetContent {
  readonly id: string;
  readonly kind: SheetKind;
  readonly plantId?: string | null;
  readonly plantVersion?: number | null;
  /** ISO 8601 with a zone; normalised to UTC milliseconds before hashing. */
  readonly sampledAt: string;
  readonly supersedes?: string | null;
  readonly request: unknown;
  readonly result: unknown;
}

/**
 * SHA-256 of what a sheet says: canonical JSON of
 * {"id","kind","plantId","plantVersion","request","result","sampledAt" (UTC, ms),"supersedes"}.
 * Computable before rendering, so the PDF can print it; appendSheet recomputes it.
 */
export function sheetContentSha256(content: SheetContent): string {
  return prepareSheetContent(content).contentSha256;
}

/** The canonical request and result texts of a sheet and its content hash, computed once. */
export interface PreparedContent {
  readonly requestJson: string;
  readonly resultJson: string;
  readonly contentSha256: string;
}

/**
 * Canonical JSON of the content object, assembled from the canonical texts of the request
 * and the result (keys in sorted order: id, kind, plantId, plantVersion, request, result,
 * sampledAt, supersedes), so the two large members are serialised once for both the content
 * hash and the stored columns. Equal to canonicalJson of the whole object.
 */
export function prepareSheetContent(content: SheetContent): PreparedContent {
  const requestJson = canonicalJson(content.request);
  const resultJson = canonicalJson(content.result);
  const text =
    '{"id":' + JSON.stringify(content.id) +
    ',"kind":' + JSON.stringify(content.kind) +
    ',"plantId":' + JSON.stringify(content.plantId ?? null) +
    ',"plantVersion":' + JSON.stringify(content.plantVersion ?? null) +
    ',"request":' + requestJson +
    ',"result":' + resultJson +
    ',"sampledAt":' + JSON.stringify(requireTimestamp(content.sampledAt, '/sampledAt')) +
    ',"supersedes":' + JSON.stringify(content.supersedes ?? null) +
    '}';
  return { requestJson, resultJson, contentSha256: sha256Hex(text) };
}

export interface AppendSheetInput extends SheetContent {
  /** The user who created the sheet (the token's user). */
  readonly createdBy: string;
  /** The stored signer whose certificate signed the PDF. */
  readonly signerId: string;
  /**
   * Name and role printed in the signature (default: the stored signer's). A user without a
   * certificate of their own signs with the default certificate under their own name.
   */
  readonly signedAs?: { readonly name: string; readonly role: string };
  /** The signed PDF. */
  readonly pdf: Uint8Array;
  /** The content prepared by prepareSheetContent for the same content (saves serialising it again). */
  readonly prepared?: PreparedContent;
  /** When given (e.g. printed in the PDF), must equal sheetContentSha256 of the same content. */
  readonly contentSha256?: string;
}

/** What was checked when a record was read (see "Reading" above). */
export type IntegrityCheck = 'record hash' | 'record hash and PDF hash';

/** The integrity of a record as found on the read that returned it. */
export interface SheetIntegrity {
  /** The stored columns hash to record_hash (recomputed on this read). */
  readonly recordHashMatches: boolean;
  /** The PDF bytes hash to pdf_sha256; null only when a read did not hash the bytes (no read of the service). */
  readonly pdfHashMatches: boolean | null;
  readonly checked: IntegrityCheck;
  /** What failed, in words (empty when nothing did). */
  readonly problems: readonly string[];
}

/**
 * "altered" when the record fails its integrity check on this read (whatever its place in a
 * correction), else "superseded" when a later sheet corrects it, else "current".
 */
export type SheetStatus = 'current' | 'superseded' | 'altered';

/** The dose a sheet prints: a dose sheet's dose, a jar-test evaluation's recommended dose. */
export interface SheetDose {
  readonly value: number;
  readonly unit: string;
  readonly basis: string;
  /** As printed (3 significant figures). */
  readonly rounded: string;
  readonly what: 'dose' | 'recommended dose';
}

export interface SheetSummary {
  readonly seq: number;
  readonly id: string;
  readonly kind: string;
  readonly plantId: string | null;
  readonly plantVersion: number | null;
  readonly sampledAt: string;
  readonly createdAt: string;
  readonly createdBy: string;
  readonly signer: { readonly id: string; readonly name: string; readonly role: string; readonly subject: string };
  readonly pdfSha256: string;
  readonly pdfBytes: number;
  readonly contentSha256: string;
  readonly supersedes: string | null;
  /** The sheet that corrects this one, if any. */
  readonly supersededBy: string | null;
  readonly prevHash: string;
  readonly recordHash: string;
  readonly recordFormat: number;
  /** The record hash and the PDF hash recomputed on this read. */
  readonly integrity: SheetIntegrity;
  readonly status: SheetStatus;
  /** The request's correctionReason (see "The reason for a correction"), or null. */
  readonly correctionReason: string | null;
  /** The oxidant product id the sheet is for, or null. */
  readonly oxidant: string | null;
  /** The dose the sheet prints (null for a jar-test plan, or a result without one). */
  readonly dose: SheetDose | null;
}

export interface SheetRecord<Req = unknown, Res = unknown> extends SheetSummary {
  readonly request: Req;
  readonly result: Res;
}

export type SummaryRow = Omit<SheetRow, 'pdf' | 'request_json' | 'result_json'> & { pdf_bytes: number; superseded_by: string | null };
/** A summary row with the stored request and result texts (all that the record hash needs but the PDF bytes). */
export type ReadRow = SummaryRow & { request_json: string; result_json: string };

export const SUMMARY_COLUMNS = `s.seq, s.id, s.record_format, s.kind, s.plant_id, s.plant_version, s.sampled_at, s.created_at, s.created_by,
  s.signer_id, s.signer_name, s.signer_role, s.signer_subject, length(s.pdf) AS pdf_bytes, s.pdf_sha256, s.content_sha256,
  s.supersedes, s.prev_hash, s.record_hash,
  (SELECT n.id FROM sheets n WHERE n.supersedes = s.id) AS superseded_by`;
/** SUMMARY_COLUMNS and the request and result texts. */
export const READ_COLUMNS = `${SUMMARY_COLUMNS}, s.request_json, s.result_json`;

/**
 * Recompute a stored row's record hash. `pdfDigest` is the SHA-256 of its PDF bytes, or null when
 * the bytes were not read: the stored pdf_sha256 then stands in for it (every column but the
 * bytes is covered).
 */
export function checkIntegrity(row: Omit<SheetRow, 'pdf'>, pdfDigest: string | null): SheetIntegrity {
  const problems: string[] = [];
  const pdfHashMatches = pdfDigest === null ? null : pdfDigest === row.pdf_sha256;
  if (pdfHashMatches === false) problems.push(`the stored PDF hashes to ${pdfDigest}, not to the recorded ${row.pdf_sha256}`);
  let recordHashMatches = false;
  if (row.record_format !== RECORD_FORMAT) problems.push(`record_format ${row.record_format} is not one this build can check (${RECORD_FORMAT})`);
  else {
    recordHashMatches = recordHash(row, pdfDigest ?? row.pdf_sha256) === row.record_hash;
    if (!recordHashMatches) problems.push('the stored record does not hash to its record_hash (a column was changed)');
  }
  return { recordHashMatches, pdfHashMatches, checked: pdfDigest === null ? 'record hash' : 'record hash and PDF hash', problems };
}

/** True when the read found the record as it was archived (as far as `checked` goes). */
export function isIntact(integrity: SheetIntegrity): boolean {
  return integrity.recordHashMatches && integrity.pdfHashMatches !== false;
}

function member(value: unknown, ...path: string[]): unknown {
  let v = value;
  for (const k of path) {
    if (typeof v !== 'object' || v === null || Array.isArray(v)) return undefined;
    v = (v as Record<string, unknown>)[k];
  }
  return v;
}
const textOrNull = (v: unknown): string | null => (typeof v === 'string' ? v : null);
const finite = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** The oxidant of a stored sheet: the request's `oxidant` id, else the result's `oxidant.id`. */
export function sheetOxidant(request: unknown, result: unknown): string | null {
  return textOrNull(member(request, 'oxidant')) ?? textOrNull(member(result, 'oxidant', 'id'));
}

/**
 * The dose a stored sheet prints. A dose sheet: the result's `dose` {value, unit, basis, rounded}
 * (POST /api/v1/doses). A jar-test evaluation: its recommended dose (result
 * `evaluation.recommendedDose.doseMgPerL`, in mg/L on the result's `oxidant.basis`), rounded to 3
 * significant figures as the sheets print it; null when it recommends none. Null otherwise.
 */
export function sheetDose(kind: string, result: unknown): SheetDose | null {
  if (kind === 'dose') {
    const d = member(result, 'dose');
    const value = member(d, 'value');
    const unit = member(d, 'unit');
    const basis = member(d, 'basis');
    if (!finite(value) || typeof unit !== 'string' || typeof basis !== 'string') return null;
    const rounded = member(d, 'rounded');
    return { value, unit, basis, rounded: typeof rounded === 'string' ? rounded : roundSig(value, 3), what: 'dose' };
  }
  if (kind === 'jar-test-evaluation') {
    const value = member(result, 'evaluation', 'recommendedDose', 'doseMgPerL');
    const basis = member(result, 'oxidant', 'basis');
    if (!finite(value) || typeof basis !== 'string') return null;
    return { value, unit: 'mg/L', basis, rounded: roundSig(value, 3), what: 'recommended dose' };
  }
  return null;
}

/** JSON.parse that answers undefined for text that is not JSON (a damaged row must still be reported, not crash the read). */
function parseStored(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return undefined;
  }
}

export interface ReadSheet {
  readonly summary: SheetSummary;
  readonly request: unknown;
  readonly result: unknown;
}

/** A stored row as served: summary (with the integrity found on this read), request and result. */
export function readSheet(row: ReadRow, pdfDigest: string | null): ReadSheet {
  const request = parseStored(row.request_json);
  const result = parseStored(row.result_json);
  const integrity = checkIntegrity(row, pdfDigest);
  const status: SheetStatus = !isIntact(integrity) ? 'altered' : row.superseded_by !== null ? 'superseded' : 'current';
  const reason = member(request, 'correctionReason');
  const summary: SheetSummary = {
    seq: row.seq,
    id: row.id,
    kind: row.kind,
    plantId: row.plant_id,
    plantVersion: row.plant_version,
    sampledAt: row.sampled_at,
    createdAt: row.created_at,
    createdBy: row.created_by,
    signer: { id: row.signer_id, name: row.signer_name, role: row.signer_role, subject: row.signer_subject },
    pdfSha256: row.pdf_sha256,
    pdfBytes: row.pdf_bytes,
    contentSha256: row.content_sha256,
    supersedes: row.supersedes,
    supersededBy: row.superseded_by,
    prevHash: row.prev_hash,
    recordHash: row.record_hash,
    recordFormat: row.record_format,
    integrity,
    status,
    correctionReason: typeof reason === 'string' ? reason : null,
    oxidant: sheetOxidant(request, result),
    dose: sheetDose(row.kind, result),
  };
  return { summary, request, result };
}

/** The summary of a stored row (see readSheet). */
export function toSummary(row: ReadRow, pdfDigest: string | null = null): SheetSummary {
  return readSheet(row, pdfDigest).summary;
}

function invalid(pointer: string, detail: string, message = detail): DomainError {
  return new DomainError('VALIDATION_FAILED', { detail, fields: [{ pointer, message }] });
}

function notFound(id: string): DomainError {
  return new DomainError('SHEET_NOT_FOUND', {
    detail: `No sheet with id ${id} in the archive.`,
    params: { id },
    fields: [{ pointer: '/id', message: 'no such sheet' }],
  });
}

/** Shortest and longest correction reason (characters). */
export const CORRECTION_REASON_LENGTH = { min: 3, max: 500 } as const;

/** A request's correctionReason: absent, or text of 3–500 characters on a correction (supersedes given). */
function requireCorrectionReason(request: unknown, supersedes: string | null): void {
  const reason = member(request, 'correctionReason');
  if (reason === undefined) return;
  const pointer = '/request/correctionReason';
  const { min, max } = CORRECTION_REASON_LENGTH;
  if (typeof reason !== 'string' || reason.trim().length < min || reason.length > max) {
    throw invalid(pointer, `correctionReason is text of ${min} to ${max} characters saying why the sheet is corrected.`, `${min} to ${max} characters`);
  }
  if (supersedes === null) {
    throw invalid(pointer, 'correctionReason is given only with supersedes: it says why the sheet named there is corrected.', 'only with supersedes');
  }
}

/**
 * Append a signed sheet. Validates the input, checks the supersede rules (the named sheet exists
 * and has not been superseded yet), and links the record to the chain, all in one BEGIN IMMEDIATE
 * transaction. Appending the same id again with identical content and PDF returns the stored record
 * (a retried request); with different content it is refused.
 */
export function appendSheet(ctx: ArchiveContext, input: AppendSheetInput): SheetSummary {
  const id = requireSheetId(input.id, '/id');
  if (!isSheetKind(input.kind)) throw invalid('/kind', `${JSON.stringify(input.kind)} is not a sheet kind; accepted: ${SHEET_KINDS.join(', ')}.`);
  const plantId = input.plantId ?? null;
  if (plantId !== null) requirePlantId(plantId, '/plantId');
  const plantVersion = input.plantVersion ?? null;
  if (plantVersion !== null && (!Number.isSafeInteger(plantVersion) || plantVersion < 1 || plantId === null)) {
    throw invalid('/plantVersion', 'plantVersion is a whole number from 1, given together with plantId.');
  }
  const sampledAt = requireTimestamp(input.sampledAt, '/sampledAt');
  const supersedes = input.supersedes ?? null;
  if (supersedes !== null) requireSheetId(supersedes, '/supersedes');
  requireCorrectionReason(input.request, supersedes);
  if (!(input.pdf instanceof Uint8Array) || input.pdf.length < 5 || Buffer.from(input.pdf.subarray(0, 5)).toString('latin1') !== '%PDF-') {
    throw new DomainError('INTERNAL', { detail: 'The sheet to archive has no PDF (the bytes do not start with "%PDF-").' });
  }
  const prepared = input.prepared ?? prepareSheetContent({ ...input, plantId, plantVersion, supersedes });
  const { requestJson, resultJson, contentSha256 } = prepared;
  const pdf = Buffer.from(input.pdf.buffer, input.pdf.byteOffset, input.pdf.byteLength);
  const pdfSha256 = sha256Hex(pdf);
  if (input.contentSha256 !== undefined && input.contentSha256 !== contentSha256) {
    throw new DomainError('INTERNAL', {
      detail: `The content hash given with sheet ${id} (${input.contentSha256}) differs from the hash of its request and result (${contentSha256}); the PDF was made from other content.`,
      params: { id },
    });
  }

  return ctx.db
    .transaction((): SheetSummary => {
      const existing = ctx.statement(`SELECT ${READ_COLUMNS}, s.pdf FROM sheets s WHERE s.id = ?`).get(id) as (ReadRow & { pdf: Buffer }) | undefined;
      if (existing) {
        // a retry (rare): the stored record as getSheet reads it, its PDF bytes hashed too
        if (existing.content_sha256 === contentSha256 && existing.pdf_sha256 === pdfSha256) return toSummary(existing, sha256Hex(existing.pdf));
        throw new DomainError('ID_INVALID', {
          detail: `Sheet id ${id} is already in the archive with other content; make a new id for a new sheet.`,
          params: { id },
          fields: [{ pointer: '/id', message: 'already used' }],
        });
      }
      const signer = ctx.statement('SELECT id, name, role, certificate_subject FROM signers WHERE id = ?').get(input.signerId) as
        | { id: string; name: string; role: string; certificate_subject: string }
        | undefined;
      if (!signer) {
        throw new DomainError('SIGNER_INVALID', {
          detail: `No stored signer with id ${JSON.stringify(input.signerId)}.`,
          fields: [{ pointer: '/signerId', message: 'no such signer' }],
        });
      }
      // the subject, name and role recorded below are the signer row's: believed only when it is as logged
      requireIntactSigner(ctx, signer.id);
      if (!ctx.statement('SELECT 1 FROM users WHERE id = ?').get(input.createdBy)) {
        throw new DomainError('AUTH_REQUIRED', { detail: `No user with id ${JSON.stringify(input.createdBy)} to record as the sheet's creator.` });
      }
      if (plantId !== null && plantVersion !== null) {
        if (!ctx.statement('SELECT 1 FROM plant_versions WHERE plant_id = ? AND version = ?').get(plantId, plantVersion)) {
          throw new DomainError('PLANT_NOT_FOUND', {
            detail: `Plant ${plantId} has no version ${plantVersion}.`,
            params: { plantId, version: plantVersion },
            fields: [{ pointer: '/plantVersion', message: 'no such plant profile version' }],
          });
        }
      }
      if (supersedes !== null) {
        if (!ctx.statement('SELECT 1 FROM sheets WHERE id = ?').get(supersedes)) {
          throw new DomainError('SHEET_SUPERSEDES_UNKNOWN', {
            detail: `The sheet to supersede, ${supersedes}, is not in the archive; check the id on the sheet being corrected.`,
            params: { supersedes },
            fields: [{ pointer: '/supersedes', message: 'no such sheet' }],
          });
        }
        const target = ctx.statement('SELECT kind, plant_id FROM sheets WHERE id = ?').get(supersedes) as { kind: string; plant_id: string | null };
        if (target.kind !== input.kind || target.plant_id !== plantId) {
          const what = (kind: string, plant: string | null) => `a ${kind} sheet ${plant === null ? 'with no plant' : `of plant ${plant}`}`;
          throw new DomainError('SHEET_SUPERSEDES_OTHER', {
            detail: `Sheet ${supersedes} is ${what(target.kind, target.plant_id)}; this correction is ${what(input.kind, plantId)}. A correction replaces a sheet of the same kind and plant, so that each plant's history stays its own.`,
            params: { supersedes, kind: target.kind, plantId: target.plant_id },
            fields: [{ pointer: '/supersedes', message: `is ${what(target.kind, target.plant_id)}` }],
          });
        }
        const by = ctx.statement('SELECT id FROM sheets WHERE supersedes = ?').get(supersedes) as { id: string } | undefined;
        if (by) {
          throw new DomainError('SHEET_ALREADY_SUPERSEDED', {
            detail: `Sheet ${supersedes} was already superseded by ${by.id}; to correct it again, supersede ${by.id} instead.`,
            params: { supersedes, supersededBy: by.id },
            fields: [{ pointer: '/supersedes', message: `already superseded by ${by.id}` }],
          });
        }
      }
      const now = ctx.now();
      if (Date.parse(sampledAt) > now.getTime() + SAMPLED_AT_MAX_AHEAD_MS) {
        throw invalid('/sampledAt', `The sample time ${sampledAt} is more than a day after now (${now.toISOString()}); check the date.`, 'in the future');
      }
      const last = ctx.statement('SELECT seq, record_hash FROM sheets ORDER BY seq DESC LIMIT 1').get() as
        | { seq: number; record_hash: string }
        | undefined;
      const row: Omit<SheetRow, 'record_hash' | 'pdf'> = {
        seq: (last?.seq ?? 0) + 1,
        id,
        record_format: RECORD_FORMAT,
        kind: input.kind,
        plant_id: plantId,
        plant_version: plantVersion,
        sampled_at: sampledAt,
        created_at: now.toISOString(),
        created_by: input.createdBy,
        signer_id: signer.id,
        signer_name: input.signedAs?.name ?? signer.name,
        signer_role: input.signedAs?.role ?? signer.role,
        signer_subject: signer.certificate_subject,
        request_json: requestJson,
        result_json: resultJson,
        pdf_sha256: pdfSha256,
        content_sha256: contentSha256,
        supersedes,
        prev_hash: last?.record_hash ?? ZERO_HASH,
      };
      const hash = recordHash(row, pdfSha256);
      ctx
        .statement(
          `INSERT INTO sheets (seq, id, record_format, kind, plant_id, plant_version, sampled_at, created_at, created_by,
             signer_id, signer_name, signer_role, signer_subject, request_json, result_json, pdf, pdf_sha256, content_sha256,
             supersedes, prev_hash, record_hash)
           VALUES (@seq, @id, @record_format, @kind, @plant_id, @plant_version, @sampled_at, @created_at, @created_by,
             @signer_id, @signer_name, @signer_role, @signer_subject, @request_json, @result_json, @pdf, @pdf_sha256, @content_sha256,
             @supersedes, @prev_hash, @record_hash)`,
        )
        .run({ ...row, pdf, record_hash: hash });
      return toSummary({ ...row, record_hash: hash, pdf_bytes: pdf.length, superseded_by: null }, pdfSha256);
    })
    .immediate();
}

/**
 * One sheet's metadata with its request and result; throws ID_INVALID or SHEET_NOT_FOUND. The
 * record hash and the PDF hash are recomputed (`integrity`, `status`).
 */
export function getSheet<Req = unknown, Res = unknown>(ctx: ArchiveContext, id: string): SheetRecord<Req, Res> {
  requireSheetId(id, '/id');
  const row = ctx.statement(`SELECT ${READ_COLUMNS}, s.pdf FROM sheets s WHERE s.id = ?`).get(id) as (ReadRow & { pdf: Buffer }) | undefined;
  if (!row) throw notFound(id);
  const read = readSheet(row, sha256Hex(row.pdf));
  return { ...read.summary, request: read.request as Req, result: read.result as Res };
}

/** The stored PDF bytes of one sheet; throws ID_INVALID or SHEET_NOT_FOUND. */
export function getSheetPdf(ctx: ArchiveContext, id: string): Buffer {
  requireSheetId(id, '/id');
  const row = ctx.statement('SELECT pdf FROM sheets WHERE id = ?').get(id) as { pdf: Buffer } | undefined;
  if (!row) throw notFound(id);
  return row.pdf;
}

export interface SheetQuery {
  readonly plantId?: string;
  /** YYYY-MM-DD (the sample's local day as written in its sampledAt, inclusive) or an ISO date-time (inclusive, compared with sampled_at). */
  readonly from?: string;
  readonly to?: string;
  readonly kind?: SheetKind;
  /** listSheets only: at most this many (1–10000), the earliest first. */
  readonly limit?: number;
}

/** UTC offsets run from −12:00 to +14:00. */
const MAX_UTC_OFFSET_MS = 14 * 3_600_000;
/**
 * The local day of a sample: the date part of the sampledAt its request wrote (with its own
 * offset), else (no sampledAt in the request, or not in YYYY-MM-DD… form) the UTC day.
 */
const LOCAL_SAMPLE_DAY = `(CASE WHEN json_extract(s.request_json, '$.sampledAt') GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9][T ]*'
  THEN substr(json_extract(s.request_json, '$.sampledAt'), 1, 10) ELSE substr(s.sampled_at, 1, 10) END)`;

/** The WHERE clause and parameters for a query on sampled_at (shared with the CSV export). */
export function sheetFilter(query: SheetQuery): { where: string; params: unknown[] } {
  const clauses: string[] = [];
  const params: unknown[] = [];
  if (query.plantId !== undefined) {
    requirePlantId(query.plantId, '/plantId');
    clauses.push('s.plant_id = ?');
    params.push(query.plantId);
  }
  if (query.kind !== undefined) {
    if (!isSheetKind(query.kind)) throw invalid('/kind', `${JSON.stringify(query.kind)} is not a sheet kind; accepted: ${SHEET_KINDS.join(', ')}.`);
    clauses.push('s.kind = ?');
    params.push(query.kind);
  }
  let fromIso: string | undefined;
  // A date-only bound is the sample's own day, as written with its offset in the request's
  // sampledAt (a 00:30+01:00 sample belongs to that local day, for a monthly report): the indexed
  // UTC column is first widened by the largest UTC offset, then the local day is compared.
  const dayBound = (b: { op: string; iso: string }, day: string, which: 'from' | 'to') => {
    const widened = new Date(Date.parse(b.iso) + (which === 'from' ? -1 : 1) * MAX_UTC_OFFSET_MS).toISOString();
    clauses.push(`s.sampled_at ${b.op} ?`, `${LOCAL_SAMPLE_DAY} ${which === 'from' ? '>=' : '<='} ?`);
    params.push(widened, day);
  };
  if (query.from !== undefined) {
    const b = rangeBound(query.from, 'from', '/from');
    const day = dayOf(query.from);
    if (day !== null) dayBound(b, day, 'from');
    else {
      clauses.push(`s.sampled_at ${b.op} ?`);
      params.push(b.iso);
    }
    fromIso = b.iso;
  }
  if (query.to !== undefined) {
    const b = rangeBound(query.to, 'to', '/to');
    if (fromIso !== undefined && (b.op === '<' ? b.iso <= fromIso : b.iso < fromIso)) {
      throw invalid('/to', `to=${query.to} is before from=${query.from}.`);
    }
    const day = dayOf(query.to);
    if (day !== null) dayBound(b, day, 'to');
    else {
      clauses.push(`s.sampled_at ${b.op} ?`);
      params.push(b.iso);
    }
  }
  return { where: clauses.length ? `WHERE ${clauses.join(' AND ')}` : '', params };
}

/** Sheets by sample time (then seq), without the PDF bytes; each record hash and PDF hash recomputed (`integrity`, checked: "record hash and PDF hash"). */
export function listSheets(ctx: ArchiveContext, query: SheetQuery = {}): SheetSummary[] {
  const { where, params } = sheetFilter(query);
  let limit = '';
  if (query.limit !== undefined) {
    if (!Number.isSafeInteger(query.limit) || query.limit < 1 || query.limit > 10_000) throw invalid('/limit', 'limit is a whole number from 1 to 10000.');
    limit = ` LIMIT ${query.limit}`;
  }
  const out: SheetSummary[] = [];
  // one row at a time: each PDF is hashed and dropped, never all of them held at once
  for (const r of ctx.statement(`SELECT ${READ_COLUMNS}, s.pdf FROM sheets s ${where} ORDER BY s.sampled_at, s.seq${limit}`).iterate(...params) as IterableIterator<ReadRow & { pdf: Buffer }>) {
    out.push(toSummary(r, sha256Hex(r.pdf)));
  }
  return out;
}

/** Number of sheets and the head of the chain (write these down to detect a truncated tail later). */
export function chainHead(ctx: ArchiveContext): { records: number; lastId: string | null; lastSeq: number; recordHash: string } {
  const last = ctx.statement('SELECT seq, id, record_hash FROM sheets ORDER BY seq DESC LIMIT 1').get() as
    | { seq: number; id: string; record_hash: string }
    | undefined;
  const n = (ctx.statement('SELECT count(*) AS n FROM sheets').get() as { n: number }).n;
  return { records: n, lastId: last?.id ?? null, lastSeq: last?.seq ?? 0, recordHash: last?.record_hash ?? ZERO_HASH };
}
