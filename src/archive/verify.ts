/**
 * Verification of one sheet and of the whole archive.
 *
 * Per record: the PDF bytes hash to pdf_sha256 (hashMatches); the row hashes to record_hash
 * (recordHashMatches, see sheets.ts for the serialisation); prev_hash equals the record_hash of the
 * record with the previous seq, and seq follows it without a gap (chainValid); the PDF signature
 * checks out (signatureValid, through the function passed in: the archive does not parse PDFs), and
 * the signer subject the record names is the subject of the certificate inside that signature
 * (signerSubjectMatches, when the check says which certificate signed).
 *
 * The archive walk also reports a cut tail: the AUTOINCREMENT counter (sqlite_sequence) remembers
 * the highest seq ever stored, so deleting the last records leaves the counter ahead of the last
 * row. Someone who can rewrite the file can reset that counter too, or recompute a whole chain; the
 * only defence against that is a head written down elsewhere (a monthly report, a printed hash):
 * pass it as `expectedHead` (sheets) and `expectedRegistryHead` (users, user events, signers).
 */
import { ZERO_HASH, sha256Hex } from './canonical.js';
import type { ArchiveContext } from './context.js';
import { requireSheetId } from './ids.js';
import { verifyRegistry, type ExpectedRegistryHead, type RegistryHead, type RegistryProblem } from './registry.js';
import { RECORD_FORMAT, recordHash, type SheetRow } from './sheets.js';
import { DomainError } from '../core/errors.js';

/**
 * What a PDF signature check answers: a boolean, or an object with `signatureValid` (the shape of
 * src/sheets/verify.ts verifySignedPdf) or `valid`; `coversWholeFile: false` and `problems` are
 * honoured when present.
 */
export type PdfSignatureOutcome =
  | boolean
  | {
      readonly signatureValid?: boolean;
      readonly valid?: boolean;
      readonly coversWholeFile?: boolean;
      readonly problems?: readonly string[];
      /** The subject of the certificate inside the signature ("CN=…, O=…"); compared with the subject the record names. */
      readonly signerSubject?: string | null;
    };
/** A PDF signature check, e.g. `verifySignedPdf` from src/sheets/verify.ts (passed in: the archive does not parse PDFs). */
export type PdfSignatureCheck = (pdf: Buffer) => PdfSignatureOutcome | Promise<PdfSignatureOutcome>;

export interface SheetVerification {
  readonly id: string;
  readonly seq: number;
  /** All checks passed (signatureValid counts only when a verifier was given). */
  readonly valid: boolean;
  /** SHA-256 of the stored PDF equals pdf_sha256. */
  readonly hashMatches: boolean;
  /** The stored columns hash to record_hash. */
  readonly recordHashMatches: boolean;
  /** prev_hash equals the previous record's record_hash and seq follows it. */
  readonly chainValid: boolean;
  /** The PDF signature is valid; null when no verifier was passed. */
  readonly signatureValid: boolean | null;
  /**
   * The signer subject the record names equals the subject of the certificate inside the PDF
   * signature; null when the verifier does not say which certificate signed (or none was passed).
   */
  readonly signerSubjectMatches: boolean | null;
  readonly problems: readonly string[];
}

async function checkSignature(check: PdfSignatureCheck, pdf: Buffer): Promise<{ ok: boolean; error?: string; subject?: string | null }> {
  try {
    const r = await check(pdf);
    if (typeof r === 'boolean') return { ok: r };
    const ok = (r.signatureValid ?? r.valid) === true && r.coversWholeFile !== false;
    const subject = r.signerSubject !== undefined ? { subject: r.signerSubject } : {};
    return ok ? { ok, ...subject } : { ok, ...subject, ...(r.problems && r.problems.length > 0 ? { error: r.problems.join('; ') } : {}) };
  } catch (e) {
    return { ok: false, error: e instanceof Error ? e.message : String(e) };
  }
}

/**
 * Whether the record's signer subject is the certificate's that signed (null when the check did
 * not say which certificate signed, e.g. an unreadable signature, which is reported as such).
 */
function subjectCheck(recorded: string, s: { subject?: string | null }): { matches: boolean | null; problem?: string } {
  if (typeof s.subject !== 'string') return { matches: null };
  if (s.subject === recorded) return { matches: true };
  return {
    matches: false,
    problem: `the record names the signer certificate ${JSON.stringify(recorded)}, but the PDF was signed with the certificate ${JSON.stringify(s.subject)}`,
  };
}

/**
 * Verify one sheet. `verifyPdfSignature` is required on purpose: pass null only where the
 * signature is checked elsewhere (then signatureValid is null).
 */
export async function verifySheet(
  ctx: ArchiveContext,
  id: string,
  options: { verifyPdfSignature: PdfSignatureCheck | null },
): Promise<SheetVerification> {
  requireSheetId(id, '/id');
  const { row, prev } = ctx.db
    .transaction(() => {
      const r = ctx.statement('SELECT * FROM sheets WHERE id = ?').get(id) as SheetRow | undefined;
      if (!r) {
        throw new DomainError('SHEET_NOT_FOUND', { detail: `No sheet with id ${id} in the archive.`, params: { id }, fields: [{ pointer: '/id', message: 'no such sheet' }] });
      }
      const p = ctx.statement('SELECT seq, record_hash FROM sheets WHERE seq < ? ORDER BY seq DESC LIMIT 1').get(r.seq) as
        | { seq: number; record_hash: string }
        | undefined;
      return { row: r, prev: p };
    })
    .deferred();

  const problems: string[] = [];
  const pdfDigest = sha256Hex(row.pdf);
  const hashMatches = pdfDigest === row.pdf_sha256;
  if (!hashMatches) problems.push(`the stored PDF hashes to ${pdfDigest}, not to the recorded ${row.pdf_sha256}`);
  const recordHashMatches = row.record_format === RECORD_FORMAT && recordHash(row, pdfDigest) === row.record_hash;
  if (!recordHashMatches) problems.push('the stored record does not hash to its record_hash (a column was changed)');
  let chainValid: boolean;
  if (prev === undefined) {
    chainValid = row.seq === 1 && row.prev_hash === ZERO_HASH;
    if (!chainValid) problems.push(row.seq !== 1 ? `no record before seq ${row.seq}: earlier records are missing` : 'the first record does not start the chain (prev_hash is not 64 zeros)');
  } else {
    const linked = row.prev_hash === prev.record_hash;
    const consecutive = prev.seq === row.seq - 1;
    chainValid = linked && consecutive;
    if (!consecutive) problems.push(`the record before seq ${row.seq} has seq ${prev.seq}: records are missing`);
    if (!linked) problems.push(`prev_hash does not match the record_hash of seq ${prev.seq}`);
  }
  let signatureValid: boolean | null = null;
  let signerSubjectMatches: boolean | null = null;
  if (options.verifyPdfSignature) {
    const s = await checkSignature(options.verifyPdfSignature, row.pdf);
    signatureValid = s.ok;
    if (!s.ok) problems.push(`the PDF signature is not valid${s.error ? `: ${s.error}` : ''}`);
    const subject = subjectCheck(row.signer_subject, s);
    signerSubjectMatches = subject.matches;
    if (subject.problem) problems.push(subject.problem);
  }
  return {
    id: row.id,
    seq: row.seq,
    valid: hashMatches && recordHashMatches && chainValid && signatureValid !== false && signerSubjectMatches !== false,
    hashMatches,
    recordHashMatches,
    chainValid,
    signatureValid,
    signerSubjectMatches,
    problems,
  };
}

export type ArchiveCheck =
  | 'sequence' | 'chain' | 'pdf-hash' | 'record-hash' | 'record-format' | 'supersedes' | 'signature' | 'signer-subject' | 'tail' | 'head' | 'plant-hash' | 'plant-version'
  | RegistryProblem['check'];

export interface ArchiveProblem {
  /**
   * The sheet id; "plant@vN" for a plant profile version; "table:key" for a registry row and
   * "registry_log" for the registry log's tail and head checks; null for the sheet chain's tail
   * and head checks.
   */
  readonly id: string | null;
  /** The sheet's seq; null for everything that is not a sheet (firstBrokenId names sheets only). */
  readonly seq: number | null;
  readonly check: ArchiveCheck;
  readonly message: string;
}

export interface ArchiveVerification {
  readonly valid: boolean;
  /** Number of sheet records walked. */
  readonly records: number;
  /** The first sheet (in seq order) that fails any check, or null. */
  readonly firstBrokenId: string | null;
  readonly problems: readonly ArchiveProblem[];
  /** More problems were found than listed. */
  readonly problemsTruncated: boolean;
  /** The head of the chain as found: write it down to detect a cut tail later. */
  readonly head: { readonly lastId: string | null; readonly lastSeq: number; readonly recordHash: string };
  /** Number of PDF signatures checked (0 without a verifier). */
  readonly signaturesChecked: number;
  readonly plantVersions: number;
  /** Entries of the registry log walked (users, user events, signers; see registry.ts). */
  readonly registryEntries: number;
  /** The head of the registry log as found: write it down beside `head`. */
  readonly registryHead: RegistryHead;
}

export interface VerifyArchiveOptions {
  /** Check every PDF signature too (slower). */
  readonly verifyPdfSignature?: PdfSignatureCheck | null;
  /** A head recorded earlier: its record must still be in the chain, with at least that many records. */
  readonly expectedHead?: { readonly records?: number; readonly recordHash?: string };
  /** A registry head recorded earlier (see `registryHead`). */
  readonly expectedRegistryHead?: ExpectedRegistryHead;
  /** Most problems listed (default 1000). */
  readonly maxProblems?: number;
}

/** Walk the whole chain in seq order (in one read transaction, a consistent snapshot). */
export async function verifyArchive(ctx: ArchiveContext, options: VerifyArchiveOptions = {}): Promise<ArchiveVerification> {
  const maxProblems = options.maxProblems ?? 1000;
  const problems: ArchiveProblem[] = [];
  let truncated = false;
  let firstBrokenSeq: number | null = null;
  let firstBrokenId: string | null = null;
  const add = (p: ArchiveProblem): void => {
    if (p.seq !== null && p.id !== null && (firstBrokenSeq === null || p.seq < firstBrokenSeq)) {
      firstBrokenSeq = p.seq;
      firstBrokenId = p.id;
    }
    if (problems.length < maxProblems) problems.push(p);
    else truncated = true;
  };

  const walk = ctx.db
    .transaction(() => {
      let records = 0;
      let prevSeq = 0;
      let prevHash = ZERO_HASH;
      let lastId: string | null = null;
      const hashes = new Set<string>([ZERO_HASH]); // the head of an empty archive, written down before the first sheet
      const seen = new Set<string>();
      const ids: { id: string; seq: number }[] = [];
      for (const row of ctx.db.prepare('SELECT * FROM sheets ORDER BY seq').iterate() as IterableIterator<SheetRow>) {
        records++;
        const at = { id: row.id, seq: row.seq };
        if (row.seq !== prevSeq + 1) {
          add({ ...at, check: 'sequence', message: prevSeq === 0 ? `the chain starts at seq ${row.seq}: records 1–${row.seq - 1} are missing` : `seq ${row.seq} follows seq ${prevSeq}: ${row.seq - prevSeq - 1} record(s) are missing` });
        }
        if (row.prev_hash !== prevHash) {
          add({ ...at, check: 'chain', message: prevSeq === 0 ? 'the first record does not start the chain (prev_hash is not 64 zeros)' : `prev_hash does not match the record_hash of seq ${prevSeq}` });
        }
        const pdfDigest = sha256Hex(row.pdf);
        if (pdfDigest !== row.pdf_sha256) add({ ...at, check: 'pdf-hash', message: `the stored PDF hashes to ${pdfDigest}, not to the recorded ${row.pdf_sha256}` });
        if (row.record_format !== RECORD_FORMAT) {
          add({ ...at, check: 'record-format', message: `record_format ${row.record_format} is not one this build can check (${RECORD_FORMAT})` });
        } else if (recordHash(row, pdfDigest) !== row.record_hash) {
          add({ ...at, check: 'record-hash', message: 'the stored record does not hash to its record_hash (a column was changed)' });
        }
        if (row.supersedes !== null && !seen.has(row.supersedes)) {
          add({ ...at, check: 'supersedes', message: `supersedes ${row.supersedes}, which is not an earlier record of the chain` });
        }
        seen.add(row.id);
        hashes.add(row.record_hash);
        ids.push(at);
        prevSeq = row.seq;
        prevHash = row.record_hash;
        lastId = row.id;
      }
      const counter = ctx.db.prepare("SELECT seq FROM sqlite_sequence WHERE name = 'sheets'").get() as { seq: number } | undefined;
      if (counter && counter.seq > prevSeq) {
        add({ id: null, seq: null, check: 'tail', message: `the sequence counter reached ${counter.seq} but the last record is seq ${prevSeq}: the last ${counter.seq - prevSeq} record(s) are missing` });
      }
      const head = options.expectedHead;
      if (head?.recordHash !== undefined && !hashes.has(head.recordHash)) {
        add({ id: null, seq: null, check: 'head', message: `the recorded head ${head.recordHash} is not in the chain: records were removed or rewritten` });
      }
      if (head?.records !== undefined && records < head.records) {
        add({ id: null, seq: null, check: 'head', message: `the archive holds ${records} records, fewer than the ${head.records} recorded earlier` });
      }
      // Plant profile versions: each hashes to its sha256, versions run 1..n without gaps.
      let plantVersions = 0;
      let plant: string | null = null;
      let expected = 1;
      for (const p of ctx.db.prepare('SELECT plant_id, version, profile_json, sha256 FROM plant_versions ORDER BY plant_id, version').iterate() as IterableIterator<{
        plant_id: string;
        version: number;
        profile_json: string;
        sha256: string;
      }>) {
        plantVersions++;
        if (p.plant_id !== plant) {
          plant = p.plant_id;
          expected = 1;
        }
        const pid = `${p.plant_id}@v${p.version}`;
        if (p.version !== expected) add({ id: pid, seq: null, check: 'plant-version', message: `plant ${p.plant_id} goes from version ${expected - 1} to ${p.version}: versions are missing` });
        if (sha256Hex(p.profile_json) !== p.sha256) add({ id: pid, seq: null, check: 'plant-hash', message: `plant ${p.plant_id} version ${p.version} does not hash to its sha256 (the profile was changed)` });
        expected = p.version + 1;
      }
      // Users, user events and signers: the registry log (registry.ts).
      const registry = verifyRegistry(ctx, options.expectedRegistryHead);
      for (const p of registry.problems) add({ id: p.id, seq: null, check: p.check, message: p.message });
      return { records, ids, plantVersions, registryEntries: registry.entries, registryHead: registry.head, head: { lastId, lastSeq: prevSeq, recordHash: prevHash } };
    })
    .deferred();

  let signaturesChecked = 0;
  if (options.verifyPdfSignature) {
    for (const at of walk.ids) {
      const row = ctx.statement('SELECT pdf, signer_subject FROM sheets WHERE seq = ?').get(at.seq) as { pdf: Buffer; signer_subject: string } | undefined;
      if (!row) continue;
      const s = await checkSignature(options.verifyPdfSignature, row.pdf);
      signaturesChecked++;
      if (!s.ok) add({ ...at, check: 'signature', message: `the PDF signature is not valid${s.error ? `: ${s.error}` : ''}` });
      const subject = subjectCheck(row.signer_subject, s);
      if (subject.problem) add({ ...at, check: 'signer-subject', message: subject.problem });
    }
  }
  return {
    valid: problems.length === 0 && !truncated,
    records: walk.records,
    firstBrokenId,
    problems,
    problemsTruncated: truncated,
    head: walk.head,
    signaturesChecked,
    plantVersions: walk.plantVersions,
    registryEntries: walk.registryEntries,
    registryHead: walk.registryHead,
  };
}
