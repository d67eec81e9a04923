import { z } from 'zod';
import { CORRECTION_REASON_LENGTH, SHEET_ID_RE } from '../../archive/index.js';
import { DoseBody } from './dosing.js';
import { DateOrTime, IsoDateTime, PageSize } from './common.js';

export const SheetId = z
  .string()
  .regex(SHEET_ID_RE, { error: 'not a sheet id: a sheet id is DS- (dose) or JT- (jar test), the date YYYYMMDD, a hyphen and 10 characters of 0–9 and A–Z without I, L, O and U, e.g. DS-20261201-7K2M9Q4X1B' })
  .describe('Sheet id, e.g. DS-20261201-…');
export { DateOrTime, IsoDateTime };

/**
 * Why a sheet is corrected: 3–500 characters, not starting or ending with white space, no control
 * characters but tab and line breaks. One pattern (the compiled validator checks it; zod gives the message).
 */
export const CorrectionReason = z
  .string()
  .min(CORRECTION_REASON_LENGTH.min, { error: `a correction reason has at least ${CORRECTION_REASON_LENGTH.min} characters` })
  .max(CORRECTION_REASON_LENGTH.max, { error: `a correction reason has at most ${CORRECTION_REASON_LENGTH.max} characters` })
  .regex(/^[^\s\u0000-\u001F\u007F](?:[^\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]*[^\s\u0000-\u001F\u007F])?$/, {
    error: 'a correction reason does not start or end with white space and has no control characters (tab and line breaks are allowed)',
  })
  .describe(
    `Why the sheet named in supersedes is corrected (${CORRECTION_REASON_LENGTH.min}–${CORRECTION_REASON_LENGTH.max} characters), e.g. "iron reading re-run: lab reported 1.5 mg/L, not 0.15". ` +
      'Only with supersedes. Stored with the record, inside its hashed content; a correction without one is accepted with a warning.',
  );

export const SheetBody = DoseBody.extend({
  sampledAt: IsoDateTime,
  supersedes: SheetId.optional().describe('Id of the sheet this one corrects'),
  correctionReason: CorrectionReason.optional(),
  samplingPoint: z.string().min(1, { error: 'samplingPoint must not be empty' }).max(200, { error: 'samplingPoint is at most 200 characters (a tap or station name, e.g. "SP-02 filter inlet")' }).optional(),
  sampleLabel: z.string().min(1, { error: 'sampleLabel must not be empty' }).max(200, { error: 'sampleLabel is at most 200 characters' }).optional(),
  // default: LETTER when the sheet leads with US units (options.units, else the plant profile's preferredUnits), A4 otherwise
  pageSize: PageSize.optional(),
});

export const Created = z.object({
  id: z.string(),
  sha256: z.string().describe('SHA-256 of the signed PDF'),
  contentSha256: z.string().describe('SHA-256 of the stored request and result (printed in the PDF footer)'),
  recordHash: z.string(),
  prevHash: z.string(),
  pdfUrl: z.string(),
  verificationUrl: z.string(),
  createdAt: z.string(),
  signer: z.object({ name: z.string(), role: z.string(), subject: z.string() }),
  supersedes: z.string().nullable(),
  dose: z.object({ value: z.number(), unit: z.string(), basis: z.string(), rounded: z.string() }),
  correctionReason: z.string().nullable().describe('The reason given for the correction, as stored; null when none was given'),
  pageSize: z.enum(['A4', 'LETTER']).describe('The paper of the PDF: the request’s pageSize, else LETTER when the sheet leads with US units (options.units or the plant’s preferredUnits), else A4'),
  warnings: z
    .array(z.string())
    .describe('What the sheet was accepted with but should be checked: a correction without a reason, or one that changes the oxidant or the sample’s local month (each naming both values)'),
});

/** What a read of a record found (every GET recomputes it). */
export const Integrity = z
  .object({
    recordHashMatches: z.boolean().describe('The stored record hashes to its recordHash (recomputed on this read)'),
    pdfHashMatches: z.boolean().nullable().describe('The stored PDF bytes hash to sha256 (hashed on every read: one record, the list and the CSV)'),
    checked: z.enum(['record hash', 'record hash and PDF hash']),
    problems: z.array(z.string()),
    message: z.string(),
    verificationUrl: z.string().describe('The full check: PDF signature and the link in the chain too'),
  })
  .describe('The integrity of the record as found on this read');

export const SheetStatus = z
  .enum(['current', 'superseded', 'altered'])
  .describe('altered: the record failed its integrity check on this read (its figures are not what was signed); superseded: a later sheet corrects it');

export const PrintedDose = z
  .object({
    value: z.number(),
    unit: z.string(),
    basis: z.string(),
    rounded: z.string().describe('As printed on the sheet'),
    what: z.enum(['dose', 'recommended dose']).describe('dose: a dose sheet\'s dose; recommended dose: a jar-test evaluation\'s'),
  })
  .nullable();

