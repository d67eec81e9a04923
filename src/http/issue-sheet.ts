/**
 * Issue a dosing sheet: compute the dose, render the sheet, sign it with the user's
 * certificate, append it to the archive. One function for the route and the benchmark.
 */
import { z } from 'zod';
import { DomainError, isDomainError } from '../core/errors.js';
import { localSampleTime, newSheetId, normalizeTimestamp, prepareSheetContent, type SheetRecord, type User } from '../archive/index.js';
import { doseSheetDocument } from '../sheets/dose-sheet.js';
import { renderSignedSheet } from '../sheets/sign.js';
import { doseWithPlantVersion } from './routes/v1/dosing.js';
import type { SheetBody } from './schemas/sheets.js';
import type { Services } from './services.js';

/**
 * A correction says why (a dose sheet's or a jar-test evaluation's): a reason without the sheet it
 * corrects is a 400 naming /correctionReason; a correction without a reason is stored, with a warning.
 */
export function correctionWarnings(supersedes: string | undefined, correctionReason: string | undefined, what: 'sheet' | 'evaluation'): string[] {
  if (correctionReason !== undefined && supersedes === undefined) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `correctionReason says why ${what === 'sheet' ? 'a sheet' : 'an evaluation'} is corrected; give it together with supersedes (the id of the ${what} this one corrects), or leave it out.`,
      fields: [{ pointer: '/correctionReason', message: 'only with supersedes' }],
    });
  }
  if (supersedes === undefined || correctionReason !== undefined) return [];
  return [
    `This ${what} corrects ${supersedes} without a correctionReason: the record will not say why it was corrected, which a supervisor or regulator reviewing it will expect. ` +
      `A reason cannot be added to an archived ${what} later; to record one, issue a further correction with supersedes and correctionReason.`,
  ];
}

/** A sample more than this long before the sheet is unusual for a daily record (a late entry, or a mistyped year). */
export const SAMPLED_AT_OLD_DAYS = 90;

/** A warning for a sample time long before now (a sample after now is refused by the archive). */
export function sampleAgeWarnings(sampledAt: string, now: Date): string[] {
  const days = (now.getTime() - Date.parse(sampledAt)) / 86_400_000;
  if (!(days > SAMPLED_AT_OLD_DAYS)) return [];
  const { month } = localSample(sampledAt, new Date(Date.parse(sampledAt)).toISOString());
  return [
    `The sample time ${sampledAt} is ${Math.floor(days)} days before now: the sheet is filed in the report for ${month}, not in this month's. ` +
      'Check the date (a mistyped year files a sheet silently outside every recent report); a late entry of an old sample is allowed.',
  ];
}

/** The local calendar month (YYYY-MM) and day of a sample, as its sampledAt was written (with its offset). */
function localSample(written: unknown, utc: string): { day: string; month: string } {
  const day = localSampleTime(written, utc).day;
  return { day, month: day.slice(0, 7) };
}

/**
 * What a correction changes that a reviewer should see: another oxidant than the sheet it
 * supersedes, or a sample in another calendar month (local date, as the monthly report and the
 * from/to filter count it), which takes a row out of one month's report and puts it in another's.
 * Each names both values. Legal (a correction may put right a wrong oxidant or date), so warnings.
 */
export function correctionChangeWarnings(
  original: Pick<SheetRecord, 'id' | 'oxidant' | 'sampledAt' | 'request'>,
  correction: { readonly oxidant: string; readonly sampledAt: string },
): string[] {
  const warnings: string[] = [];
  if (original.oxidant !== null && original.oxidant !== correction.oxidant) {
    warnings.push(
      `This correction is for ${correction.oxidant}; the sheet it corrects, ${original.id}, is for ${original.oxidant}. ` +
        'A correction replaces that sheet in the plant’s record with a dose of another product: check that the oxidant is the one dosed.',
    );
  }
  const before = localSample((original.request as { sampledAt?: unknown } | null)?.sampledAt, original.sampledAt);
  const after = localSample(correction.sampledAt, normalizeTimestamp(correction.sampledAt) ?? correction.sampledAt);
  if (before.month !== after.month) {
    warnings.push(
      `This correction's sample is dated ${after.day} (local), in ${after.month}; the sheet it corrects, ${original.id}, was sampled on ${before.day}, in ${before.month}. ` +
        `The monthly report for ${before.month} loses this row and the one for ${after.month} gains it: check sampledAt.`,
    );
  }
  return warnings;
}

export async function issueDoseSheet(services: Services, user: User, body: z.output<typeof SheetBody>) {
  const { sampledAt, supersedes, correctionReason, samplingPoint, sampleLabel, pageSize, ...doseRequest } = body;
  // The reason is stored in the request (request_json, so inside both hashes; see src/archive/sheets.ts).
  const warnings = correctionWarnings(supersedes, correctionReason, 'sheet');
  // archive.getSheet throws SHEET_NOT_FOUND (404, pointer /id); a correction naming an unknown
  // sheet is a bad request field instead (400, /supersedes). The append re-checks both rules.
  let original: SheetRecord | undefined;
  if (supersedes !== undefined) {
    try {
      original = services.archive.getSheet(supersedes);
    } catch (e) {
      if (!isDomainError(e) || e.code !== 'SHEET_NOT_FOUND') throw e;
      throw new DomainError('SHEET_SUPERSEDES_UNKNOWN', {
        detail: `Sheet ${supersedes} is not in the archive; a correction must name an existing sheet.`,
        fields: [{ pointer: '/supersedes', message: 'no such sheet' }],
      });
    }
  }
  if (original && original.status === 'altered') {
    // a correction builds on the record it names: one that fails its integrity check is not corrected but restored
    throw new DomainError('ARCHIVE_RECORD_ALTERED', {
      detail:
        `Sheet ${original.id} fails its integrity check (it was changed in the archive file), so it is not corrected by a new sheet: ` +
        'an admin checks the archive at /api/v1/archive/verification and restores it from a backup; a correction can then be issued.',
      params: { table: 'sheets', id: original.id },
      fields: [{ pointer: '/supersedes', message: `sheet ${original.id} fails its integrity check` }],
    });
  }
  warnings.push(...sampleAgeWarnings(sampledAt, new Date()));
  // the plant version is read once, with the profile the dose is computed from, so the sheet names that version
  const { result, plantVersion: computedWith } = doseWithPlantVersion(services, doseRequest);
  if (original) warnings.push(...correctionChangeWarnings(original, { oxidant: result.oxidant.id, sampledAt }));
  const id = newSheetId('dose');
  const plantId = result.plant?.id ?? null;
  const plantVersion = plantId ? computedWith : null;
  const content = { id, kind: 'dose' as const, plantId, plantVersion, sampledAt, supersedes: supersedes ?? null, request: body, result };
  const prepared = prepareSheetContent(content);
  const { contentSha256 } = prepared;
  // Paper: the request's pageSize, else US Letter when the sheet leads with US units (the request's
  // options.units, else the plant profile's preferredUnits), else A4.
  const paper = pageSize ?? (result.units.preferred === 'US' ? 'LETTER' : 'A4');
  const { stored, signer } = services.signerFor(user.id);
  const now = new Date();
  const doc = doseSheetDocument({
    id,
    request: doseRequest,
    result,
    sampledAt,
    issuedAt: now.toISOString(),
    preparedBy: { name: user.name, role: user.role },
    contentSha256,
    ...(samplingPoint ? { samplingPoint } : {}),
    ...(sampleLabel ? { sampleLabel } : {}),
    ...(supersedes ? { supersedes } : {}),
    ...(supersedes && correctionReason ? { correctionReason } : {}),
    // printed as "Reason for correction"; the content hash in the footer covers it too (it is in the stored request)
    pageSize: paper,
  });
  const { pdf } = await renderSignedSheet(doc, signer, { signingTime: now, contentSha256 });
  const saved = services.archive.appendSheet({ ...content, createdBy: user.id, signerId: stored.id, signedAs: { name: stored.name, role: stored.role }, pdf, prepared, contentSha256 });
  return {
    id,
    sha256: saved.pdfSha256,
    contentSha256: saved.contentSha256,
    recordHash: saved.recordHash,
    prevHash: saved.prevHash,
    pdfUrl: `/api/v1/sheets/${id}/pdf`,
    verificationUrl: `/api/v1/sheets/${id}/verification`,
    createdAt: saved.createdAt,
    signer: { name: saved.signer.name, role: saved.signer.role, subject: saved.signer.subject },
    supersedes: saved.supersedes,
    dose: result.dose,
    correctionReason: saved.correctionReason,
    pageSize: paper,
    warnings,
  };
}
