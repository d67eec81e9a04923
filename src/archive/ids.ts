/**
 * Ids and timestamps of the archive. Every id that reaches SQL or a URL is checked against a strict
 * regular expression first (no path tricks, no wildcards, nothing that needs escaping).
 */
import { randomBytes } from 'node:crypto';
import { DomainError } from '../core/errors.js';

/** Crockford base32 (no I, L, O, U): unambiguous when read aloud or typed from paper. */
const CROCKFORD = '0123456789ABCDEFGHJKMNPQRSTVWXYZ';

function randomCrockford(length: number): string {
  const bytes = randomBytes(length);
  let out = '';
  for (const b of bytes) out += CROCKFORD[b & 31]; // 256 is a multiple of 32: uniform
  return out;
}

/**
 * Sheet ids: `DS-20260314-7K3M9QXA2B` for dose sheets, `JT-…` for jar-test sheets.
 * The date is the UTC day of creation; the tail is 10 random Crockford base32 characters (50 bits).
 * The id is made before the PDF is rendered (the PDF shows it), so it cannot be the sequence number.
 */
export const SHEET_ID_RE = /^(DS|JT)-(\d{4})(\d{2})(\d{2})-[0-9A-HJKMNP-TV-Z]{10}$/;

export const SHEET_KINDS = ['dose', 'jar-test-plan', 'jar-test-evaluation'] as const;
export type SheetKind = (typeof SHEET_KINDS)[number];

export function isSheetKind(kind: unknown): kind is SheetKind {
  return typeof kind === 'string' && (SHEET_KINDS as readonly string[]).includes(kind);
}

export function isValidSheetId(id: unknown): id is string {
  if (typeof id !== 'string') return false;
  const m = SHEET_ID_RE.exec(id);
  if (!m) return false;
  const month = Number(m[3]);
  const day = Number(m[4]);
  return month >= 1 && month <= 12 && day >= 1 && day <= 31;
}

export function newSheetId(kind: SheetKind, now: Date = new Date()): string {
  const prefix = kind === 'dose' ? 'DS' : 'JT';
  const day = now.toISOString().slice(0, 10).replace(/-/g, '');
  return `${prefix}-${day}-${randomCrockford(10)}`;
}

/** Plant ids: lowercase letters, digits and inner hyphens, 1–64 characters ("demo-riverside-wtp"). */
export const PLANT_ID_RE = /^[a-z0-9](?:[a-z0-9-]{0,62}[a-z0-9])?$/;
export function isValidPlantId(id: unknown): id is string {
  return typeof id === 'string' && PLANT_ID_RE.test(id);
}

/** User ids `usr_` + 16 Crockford characters; signer ids `sig_` + 16. */
export const USER_ID_RE = /^usr_[0-9A-HJKMNP-TV-Z]{16}$/;
export const SIGNER_ID_RE = /^sig_[0-9A-HJKMNP-TV-Z]{16}$/;
export function isValidUserId(id: unknown): id is string {
  return typeof id === 'string' && USER_ID_RE.test(id);
}
export function isValidSignerId(id: unknown): id is string {
  return typeof id === 'string' && SIGNER_ID_RE.test(id);
}
export function newUserId(): string {
  return `usr_${randomCrockford(16)}`;
}
export function newSignerId(): string {
  return `sig_${randomCrockford(16)}`;
}

export function invalidId(what: string, id: unknown, pointer: string, accepted: string): DomainError {
  const shown = typeof id === 'string' ? JSON.stringify(id.length > 80 ? id.slice(0, 80) + '…' : id) : String(id);
  return new DomainError('ID_INVALID', {
    detail: `${shown} is not a valid ${what}; expected ${accepted}.`,
    params: { what },
    fields: [{ pointer, message: `not a valid ${what}; expected ${accepted}` }],
  });
}

export function requireSheetId(id: unknown, pointer = '/id'): string {
  if (!isValidSheetId(id)) throw invalidId('sheet id', id, pointer, 'DS-YYYYMMDD-XXXXXXXXXX or JT-YYYYMMDD-XXXXXXXXXX');
  return id;
}

export function requirePlantId(id: unknown, pointer = '/id'): string {
  if (!isValidPlantId(id)) throw invalidId('plant id', id, pointer, '1–64 lowercase letters, digits and inner hyphens');
  return id;
}

// ---------------------------------------------------------------------------------------------
// Timestamps

/** ISO 8601 date-time with a zone (Z or ±hh:mm), seconds and fraction optional. */
const DATETIME_RE = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,9}))?)?(Z|[+-]\d{2}:\d{2})$/;
const DATE_RE = /^(\d{4})-(\d{2})-(\d{2})$/;

function validDate(y: number, m: number, d: number): boolean {
  if (y < 1900 || y > 9999 || m < 1 || m > 12 || d < 1) return false;
  const days = new Date(Date.UTC(y, m, 0)).getUTCDate();
  return d <= days;
}

/**
 * Parse an ISO 8601 date-time that names its zone and return it as UTC `YYYY-MM-DDTHH:MM:SS.sssZ`
 * (millisecond precision), or null when the text is not one. A time without a zone is refused:
 * "08:30" means different instants at different plants.
 */
export function normalizeTimestamp(text: unknown): string | null {
  if (typeof text !== 'string') return null;
  const m = DATETIME_RE.exec(text);
  if (!m) return null;
  const [y, mo, d, h, mi, s] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number) as [number, number, number, number, number, number];
  if (!validDate(y, mo, d) || h > 23 || mi > 59 || s > 59) return null;
  const zone = m[8]!;
  if (zone !== 'Z') {
    const zh = Number(zone.slice(1, 3));
    const zm = Number(zone.slice(4, 6));
    if (zh > 14 || zm > 59) return null;
  }
  const ms = Date.parse(text);
  if (!Number.isFinite(ms)) return null;
  const iso = new Date(ms).toISOString();
  return /^\d{4}-/.test(iso) ? iso : null;
}

export function requireTimestamp(text: unknown, pointer: string): string {
  const iso = normalizeTimestamp(text);
  if (iso === null) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `${JSON.stringify(text)} is not an ISO 8601 date-time with a time zone; write e.g. "2026-03-14T08:30:00+01:00" or "2026-03-14T07:30:00Z".`,
      fields: [{ pointer, message: 'expected an ISO 8601 date-time with a time zone (Z or ±hh:mm)' }],
    });
  }
  return iso;
}

/** The day of a date-only bound ("2026-03-01"), or null for a date-time or a text that is no date. */
export function dayOf(text: string): string | null {
  const dm = DATE_RE.exec(text);
  if (!dm) return null;
  const [y, mo, d] = [dm[1], dm[2], dm[3]].map(Number) as [number, number, number];
  return validDate(y, mo, d) ? text : null;
}

/**
 * A range bound for listings and exports, as an SQL comparison on the normalised sampled_at text.
 * A date-only bound is given here as a UTC day (`from=2026-03-01` starts at 2026-03-01T00:00Z,
 * `to=2026-03-31` includes the whole of 31 March, UTC); sheetFilter widens it by the largest UTC
 * offset and then compares the sample's own local day. A date-time bound is inclusive at that instant.
 */
export function rangeBound(text: string, which: 'from' | 'to', pointer: string): { op: '>=' | '<' | '<='; iso: string } {
  const dm = DATE_RE.exec(text);
  if (dm) {
    const [y, mo, d] = [dm[1], dm[2], dm[3]].map(Number) as [number, number, number];
    if (validDate(y, mo, d)) {
      const start = Date.UTC(y, mo - 1, d);
      if (which === 'from') return { op: '>=', iso: new Date(start).toISOString() };
      return { op: '<', iso: new Date(start + 86_400_000).toISOString() };
    }
  }
  const iso = normalizeTimestamp(text);
  if (iso === null) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `${which}=${JSON.stringify(text)} is neither a date (YYYY-MM-DD, the day of the sample as written) nor an ISO 8601 date-time with a time zone.`,
      fields: [{ pointer, message: 'expected YYYY-MM-DD or an ISO 8601 date-time with a time zone' }],
    });
  }
  return { op: which === 'from' ? '>=' : '<=', iso };
}

/** The local time of a sample as its issuer wrote it. */
export interface LocalSampleTime {
  /** The date and time as written, without the zone ("2026-12-01T00:30:00"). */
  readonly local: string;
  /** The UTC offset as written, "±hh:mm" ("Z" written as "+00:00"). */
  readonly offset: string;
  /** The sample's local day, YYYY-MM-DD: the day the from/to filter of a listing or export compares. */
  readonly day: string;
  /** False when no local time was written and the UTC time stands in (offset "+00:00"), as in the filter. */
  readonly written: boolean;
}

/**
 * The local time of a sample from the sampledAt its request wrote (with its own offset); the
 * stored UTC `sampled_at` stands in when the request wrote none. The day follows the rule of the
 * from/to filter (sheets.ts, LOCAL_SAMPLE_DAY): the first ten characters of a written
 * "YYYY-MM-DDT…", else the UTC day.
 */
export function localSampleTime(written: unknown, sampledAtUtc: string): LocalSampleTime {
  if (typeof written === 'string' && normalizeTimestamp(written) !== null) {
    const m = DATETIME_RE.exec(written)!;
    const zone = m[8]!;
    return { local: written.slice(0, written.length - zone.length), offset: zone === 'Z' ? '+00:00' : zone, day: written.slice(0, 10), written: true };
  }
  return { local: sampledAtUtc.replace(/Z$/, ''), offset: '+00:00', day: sampledAtUtc.slice(0, 10), written: false };
}
