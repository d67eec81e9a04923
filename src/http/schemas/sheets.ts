import { z } from 'zod';
import { SHEET_ID_RE } from '../../archive/index.js';
import { DoseBody } from './dosing.js';

export const SheetId = z
  .string()
  .regex(SHEET_ID_RE, { error: 'not a sheet id: a sheet id is DS- (dose) or JT- (jar test), the date YYYYMMDD, a hyphen and 10 letters or digits, e.g. DS-20261201-7K2M9Q4X1B' })
  .describe('Sheet id, e.g. DS-20261201-…');
export const IsoDateTime = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:\d{2})$/, {
    error: 'must be an ISO 8601 date and time with its zone, e.g. 2026-12-01T07:30:00+01:00 or 2026-12-01T06:30:00Z (a time without a zone is ambiguous)',
  })
  .describe('ISO 8601 date and time with a zone, e.g. 2026-12-01T07:30:00+01:00');
export const DateOrTime = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:\d{2}))?$/, {
    error: 'must be a day YYYY-MM-DD (the day of the sample as written in its sampledAt) or an ISO 8601 date and time with its zone, e.g. 2026-12-01 or 2026-12-01T07:30:00+01:00',
  })
  .describe('YYYY-MM-DD (the sample’s own day, as written with its offset in sampledAt) or an ISO 8601 date-time (an instant)');

export const SheetBody = DoseBody.extend({
  sampledAt: IsoDateTime,
  supersedes: SheetId.optional().describe('Id of the sheet this one corrects'),
  samplingPoint: z.string().min(1).max(200).optional(),
  sampleLabel: z.string().min(1).max(200).optional(),
  pageSize: z.enum(['A4', 'LETTER']).optional(),
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
});

