import { z } from 'zod';
import { unitsOf, type QuantityKind } from '../../core/quantity.js';
import { normalisedInput } from '../route.js';

/** A formula as text, e.g. "MnO4-", "Fe(OH)3(s)", "SO4^2-". The notation is in the README. */
export const Formula = z.string().min(1).max(120).describe('Chemical formula, e.g. "MnO4-", "Fe2+", "Fe(OH)3(s)", "SO4^2-"');

export const CoupleSchema = z.strictObject({
  from: Formula,
  to: Formula,
});

export const Medium = z.enum(['acid', 'base']);
/** Which form of a couple a site value of E° is for. */
export const SiteValueMedium = Medium.optional().describe(
  'The form of the couple the value is for: acid (default; written with H+, or with neither H+ nor OH-) or base (written with OH-). It is carried to the form the pH calls for through the ionisation of water.',
);

export const PH = z.number().min(0).max(14).describe('pH (0–14)');
/** Liquid water at about 1 atm. */
export const TemperatureC = z.number().min(0).max(100).describe('Temperature in °C (0–100, liquid water)');

/** {value, unit} with the closed unit list of one quantity kind. */
export function quantity(kind: QuantityKind, opts: { min?: number; exclusiveMin?: number; description?: string } = {}) {
  let value = z.number();
  if (opts.exclusiveMin !== undefined) value = value.gt(opts.exclusiveMin);
  if (opts.min !== undefined) value = value.min(opts.min);
  const units = unitsOf(kind) as [string, ...string[]];
  const s = z.strictObject({ value, unit: z.enum(units) });
  return opts.description ? s.describe(opts.description) : s;
}

export const QuantityOut = z.object({ value: z.number(), unit: z.string() });

export const SourceRef = z.object({
  id: z.string(),
  citation: z.string().optional(),
});

// ---------------------------------------------------------------------------------------------
// Date-times

const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'] as const;

/** Days in a month of the (proleptic) Gregorian calendar. */
export function daysInMonth(year: number, month: number): number {
  if (month === 2) return isLeapYear(year) ? 29 : 28;
  return [4, 6, 9, 11].includes(month) ? 30 : 31;
}

export function isLeapYear(year: number): boolean {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

/** The shape of a day (YYYY-MM-DD) or of a date-time with its zone, whatever the digits. */
const DATE_SHAPE = /^(\d{4})-(\d{2})-(\d{2})$/;
const DATETIME_SHAPE = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2})(?:\.\d{1,9})?)?(Z|[+-](\d{2}):(\d{2}))$/;

/**
 * Why a text written in the right form (YYYY-MM-DD, or YYYY-MM-DDThh:mm[:ss[.f]] with Z or ±hh:mm)
 * is still no day or no instant: 30 February, month 13, hour 24, an offset beyond ±14:00.
 * Undefined when the text is a real date (or date-time), or when its form is wrong (the caller's
 * own message about the form applies then).
 */
export function calendarProblem(text: string, accept: 'date-time' | 'date-or-date-time' = 'date-time'): string | undefined {
  const dt = DATETIME_SHAPE.exec(text);
  const d = dt ?? (accept === 'date-or-date-time' ? DATE_SHAPE.exec(text) : null);
  if (!d) return undefined;
  const [y, mo, day] = [Number(d[1]), Number(d[2]), Number(d[3])];
  if (mo < 1 || mo > 12) return `there is no such date: there is no month ${d[2]} (months are 01 to 12)`;
  const month = MONTHS[mo - 1]!;
  const days = daysInMonth(y, mo);
  if (day < 1) return `there is no such date: there is no day 00 (days of ${month} are 01 to ${days})`;
  if (day > days) {
    if (mo === 2 && day === 29) return `there is no such date: ${y} is not a leap year, so February ${y} has 28 days`;
    const why = mo === 2 ? `February has 28 or 29 days; February ${y} has ${days}` : `${month} has ${days} days`;
    return `there is no such date: ${day} ${month} ${y} does not exist (${why})`;
  }
  if (!dt) return undefined;
  const [h, mi, s] = [Number(dt[4]), Number(dt[5]), dt[6] === undefined ? 0 : Number(dt[6])];
  if (h > 23) return `there is no such time: hour ${dt[4]} does not exist (hours are 00 to 23; midnight ending a day is 00:00 of the next)`;
  if (mi > 59) return `there is no such time: minute ${dt[5]} does not exist (minutes are 00 to 59)`;
  if (s > 59) return `there is no such time: second ${dt[6]} does not exist (seconds are 00 to 59; a leap second is not accepted)`;
  if (dt[7] !== 'Z' && (Number(dt[8]) > 14 || Number(dt[9]) > 59)) return `there is no such time zone: the offset ${dt[7]} is beyond ±14:00 (offsets are ±hh:mm, hh at most 14, mm at most 59)`;
  return undefined;
}

// A day of the Gregorian calendar as JSON Schema can state it (so the compiled validator refuses
// 30 February too): 31-day months, 30-day months, February to the 28th, and 29 February of a leap
// year (divisible by 4 and not by 100, or by 400).
const DAY = '(?:\\d{4}-(?:(?:0[13578]|1[02])-(?:0[1-9]|[12]\\d|3[01])|(?:0[469]|11)-(?:0[1-9]|[12]\\d|30)|02-(?:0[1-9]|1\\d|2[0-8]))|(?:\\d{2}(?:0[48]|[2468][048]|[13579][26])|(?:[02468][048]|[13579][26])00)-02-29)';
const TIME_WITH_ZONE = 'T(?:[01]\\d|2[0-3]):[0-5]\\d(?::[0-5]\\d(?:\\.\\d{1,9})?)?(?:Z|[+-](?:0\\d|1[0-4]):[0-5]\\d)';
export const ISO_DATETIME_RE = new RegExp(`^${DAY}${TIME_WITH_ZONE}$`);
export const DATE_OR_DATETIME_RE = new RegExp(`^${DAY}(?:${TIME_WITH_ZONE})?$`);

const DATETIME_FORM = 'must be an ISO 8601 date and time with its zone, e.g. 2026-12-01T07:30:00+01:00 or 2026-12-01T06:30:00Z (a time without a zone is ambiguous)';
const DATE_OR_DATETIME_FORM =
  'must be a day YYYY-MM-DD (the day of the sample as written in its sampledAt) or an ISO 8601 date and time with its zone, e.g. 2026-12-01 or 2026-12-01T07:30:00+01:00';

/** An instant: ISO 8601 date and time with its zone (Z or ±hh:mm), a real calendar day and time of day. */
export const IsoDateTime = z
  .string()
  .regex(ISO_DATETIME_RE, { error: (iss) => (typeof iss.input === 'string' ? calendarProblem(iss.input) : undefined) ?? DATETIME_FORM })
  .describe('ISO 8601 date and time with a zone, e.g. 2026-12-01T07:30:00+01:00 (a real calendar date: 2026-02-30 is refused)');

/** A date-time whose zone sign is a space: a "+" sent unencoded in a query string, which reads "+" as a space. */
const PLUS_READ_AS_SPACE = /^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?) (\d{2}:\d{2})$/;

/**
 * Why a query-string date-time arrived with a space where its zone's "+" was: in a URL query "+"
 * means a space (application/x-www-form-urlencoded), so the "+" must be sent as %2B. Undefined
 * when the text has no such space.
 */
export function plusAsSpaceProblem(text: string): string | undefined {
  const m = PLUS_READ_AS_SPACE.exec(text);
  if (!m) return undefined;
  return `the zone's "+" arrived as a space: in a query string "+" stands for a space, so send it as %2B, e.g. ${m[1]}%2B${m[2]}`;
}

/** A day (YYYY-MM-DD) or an instant (ISO 8601 with its zone), for listing and export bounds (query strings). */
export const DateOrTime = z
  .string()
  .regex(DATE_OR_DATETIME_RE, {
    error: (iss) => (typeof iss.input === 'string' ? plusAsSpaceProblem(iss.input) ?? calendarProblem(iss.input, 'date-or-date-time') : undefined) ?? DATE_OR_DATETIME_FORM,
  })
  .describe('YYYY-MM-DD (the sample’s own day, as written with its offset in sampledAt) or an ISO 8601 date-time (an instant)');

// ---------------------------------------------------------------------------------------------
// Page size

export const PAGE_SIZES = ['A4', 'LETTER'] as const;
export type PageSizeName = (typeof PAGE_SIZES)[number];
/** The spellings accepted for a page size; each is read as its upper-case name. */
export const PAGE_SIZE_SPELLINGS = ['A4', 'a4', 'LETTER', 'Letter', 'letter'] as const;

const upperCase = (v: unknown): unknown => (typeof v === 'string' ? v.toUpperCase() : v);

/**
 * Paper size of a printed sheet: A4 (ISO 216) or US Letter, in any of the spellings of
 * PAGE_SIZE_SPELLINGS; the handler always receives "A4" or "LETTER" (normalised after validation
 * by route.ts, as zod's transform says).
 */
export const PageSize = normalisedInput(
  z
    .enum(PAGE_SIZE_SPELLINGS, { error: `page size must be A4 or LETTER (also written "a4", "Letter" or "letter")` })
    .transform((s) => s.toUpperCase() as PageSizeName)
    .describe('Paper size: A4 (ISO 216) or LETTER (US Letter, 8.5 × 11 in); "a4", "Letter" and "letter" are read as the same'),
  upperCase,
);
