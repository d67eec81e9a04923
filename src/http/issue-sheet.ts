/**
 * Issue a dosing sheet: compute the dose, render the sheet, sign it with the user's
 * certificate, append it to the archive. One function for the route and the benchmark.
 */
import { z } from 'zod';
import { DomainError, isDomainError } from '../core/errors.js';
import { newSheetId, prepareSheetContent, type User } from '../archive/index.js';
import { doseSheetDocument } from '../sheets/dose-sheet.js';
import { renderSignedSheet } from '../sheets/sign.js';
import { doseFor } from './routes/v1/dosing.js';
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

export async function issueDoseSheet(services: Services, user: User, body: z.output<typeof SheetBody>) {
  const { sampledAt, supersedes, correctionReason, samplingPoint, sampleLabel, pageSize, ...doseRequest } = body;
  // The reason is stored in the request (request_json, so inside both hashes; see src/archive/sheets.ts).
  const warnings = correctionWarnings(supersedes, correctionReason, 'sheet');
  // archive.getSheet throws SHEET_NOT_FOUND (404, pointer /id); a correction naming an unknown
  // sheet is a bad request field instead (400, /supersedes). The append re-checks both rules.
  if (supersedes !== undefined) {
    try {
      services.archive.getSheet(supersedes);
    } catch (e) {
      if (!isDomainError(e) || e.code !== 'SHEET_NOT_FOUND') throw e;
      throw new DomainError('SHEET_SUPERSEDES_UNKNOWN', {
        detail: `Sheet ${supersedes} is not in the archive; a correction must name an existing sheet.`,
        fields: [{ pointer: '/supersedes', message: 'no such sheet' }],
      });
    }
  }
  const result = doseFor(services, doseRequest);
  const id = newSheetId('dose');
  const plantId = result.plant?.id ?? null;
  const plantVersion = plantId ? (services.archive.getPlant(plantId)?.version ?? null) : null;
  const content = { id, kind: 'dose' as const, plantId, plantVersion, sampledAt, supersedes: supersedes ?? null, request: body, result };
  const prepared = prepareSheetContent(content);
  const { contentSha256 } = prepared;
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
    ...(pageSize ? { pageSize } : {}),
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
    warnings,
  };
}
