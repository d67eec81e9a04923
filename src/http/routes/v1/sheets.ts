import type { FastifyInstance } from 'fastify';
import { z } from 'zod';
import { DomainError, isDomainError } from '../../../core/errors.js';
import { isIntact, isValidSheetId, type SheetSummary } from '../../../archive/index.js';
import { issueDoseSheet } from '../../issue-sheet.js';
import { verifySignedPdf } from '../../../sheets/verify.js';
import { Created, DateOrTime, Integrity, PrintedDose, SheetBody, SheetId, SheetStatus } from '../../schemas/sheets.js';
import { defineRoute } from '../../route.js';
import { requireRole } from '../../auth.js';
import { findPlant } from './dosing.js';
import type { Services } from '../../services.js';

const Summary = z.object({
  id: z.string(),
  seq: z.number().int(),
  kind: z.string(),
  plantId: z.string().nullable(),
  plantVersion: z.number().nullable(),
  sampledAt: z.string(),
  createdAt: z.string(),
  createdBy: z.string(),
  signer: z.object({ id: z.string(), name: z.string(), role: z.string(), subject: z.string() }),
  sha256: z.string(),
  pdfBytes: z.number().int(),
  contentSha256: z.string(),
  supersedes: z.string().nullable(),
  supersededBy: z.string().nullable(),
  prevHash: z.string(),
  recordHash: z.string(),
  pdfUrl: z.string(),
  verificationUrl: z.string(),
  status: SheetStatus,
  integrity: Integrity,
  oxidant: z.string().nullable().describe('Oxidant product id'),
  dose: PrintedDose.describe('The dose the sheet prints ({value, unit, basis} with the printed text); a jar-test evaluation’s recommended dose; null when there is none'),
  correctionReason: z.string().nullable().describe('Why this sheet corrects the one in supersedes, as given; null when none was given'),
});

const verificationUrlOf = (id: string) => `/api/v1/sheets/${id}/verification`;

/** The integrity found on this read, with a sentence for whoever reads the record and where to check it fully. */
export function integrityOut(s: SheetSummary) {
  const url = verificationUrlOf(s.id);
  const i = s.integrity;
  const message = isIntact(i)
    ? (i.checked === 'record hash'
        ? `The record hash was recomputed on this read and matches (the PDF bytes were not hashed here; GET /api/v1/sheets/${s.id} hashes them). `
        : 'The record hash and the PDF hash were recomputed on this read and match. ') +
      `The PDF signature and the record's link in the chain are checked at ${url}.`
    : `ALTERED: this record was changed after it was archived (${i.problems.join('; ')}). Its figures are not what was signed; do not use them. ` +
      `Check it at ${url} and the whole archive at /api/v1/archive/verification; the signed PDF is evidence of what was issued.`;
  return { recordHashMatches: i.recordHashMatches, pdfHashMatches: i.pdfHashMatches, checked: i.checked, problems: [...i.problems], message, verificationUrl: url };
}

function summaryOut(s: SheetSummary) {
  return {
    id: s.id,
    seq: s.seq,
    kind: s.kind,
    plantId: s.plantId,
    plantVersion: s.plantVersion,
    sampledAt: s.sampledAt,
    createdAt: s.createdAt,
    createdBy: s.createdBy,
    signer: s.signer,
    sha256: s.pdfSha256,
    pdfBytes: s.pdfBytes,
    contentSha256: s.contentSha256,
    supersedes: s.supersedes,
    supersededBy: s.supersededBy,
    prevHash: s.prevHash,
    recordHash: s.recordHash,
    pdfUrl: `/api/v1/sheets/${s.id}/pdf`,
    verificationUrl: verificationUrlOf(s.id),
    status: s.status,
    integrity: integrityOut(s),
    oxidant: s.oxidant,
    dose: s.dose,
    correctionReason: s.correctionReason,
  } satisfies z.input<typeof Summary>;
}

/** Header beside every read of one record: "record hash matches" or "altered". */
export const INTEGRITY_HEADER = 'x-sheet-integrity';
export const integrityHeader = (s: SheetSummary) => (s.status === 'altered' ? 'altered' : 'record hash matches');

function requireSheet(services: Services, id: string) {
  if (!isValidSheetId(id)) throw new DomainError('ID_INVALID', { detail: `"${id}" is not a sheet id.`, fields: [{ pointer: '/id', message: 'not a sheet id' }] });
  const s = services.archive.getSheet(id);
  if (!s) throw new DomainError('SHEET_NOT_FOUND', { detail: `No sheet ${id} in the archive.`, fields: [{ pointer: '/id', message: 'no such sheet' }] });
  return s;
}

const Query = z.strictObject({
  plantId: z
    .string()
    .regex(/^[a-z0-9][a-z0-9-]{0,63}$/, { error: 'not a plant id: lowercase letters, digits and hyphens, starting with a letter or digit, at most 64 characters (e.g. demo-groundwater)' })
    .optional(),
  from: DateOrTime.optional(),
  to: DateOrTime.optional(),
});

const Hash = z.string().regex(/^[0-9a-f]{64}$/, 'a SHA-256 in 64 lowercase hex digits');
/** Query strings arrive as text (no type coercion): a count is checked as digits and converted in the handler. */
const Count = z.string().regex(/^(0|[1-9][0-9]{0,14})$/, 'a whole number ≥ 0 in digits');
const ExpectedHeads = z.strictObject({
  expectRecords: Count.optional().describe('Sheet records recorded earlier (head.lastSeq of an earlier walk): fewer now is reported'),
  expectRecordHash: Hash.optional().describe('head.recordHash of an earlier walk: it must still be in the chain'),
  expectRegistryEntries: Count.optional().describe('registryHead.entries of an earlier walk'),
  expectRegistryHash: Hash.optional().describe('registryHead.recordHash of an earlier walk: it must still be in the registry log'),
});

const countOf = (digits: string | undefined): number | undefined => (digits === undefined ? undefined : Number(digits));

export async function sheetRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'POST',
    url: '/sheets',
    summary: 'Compute the dose, render the dosing sheet, sign it with the caller’s certificate and append it to the archive',
    tags: ['sheets'],
    auth: true,
    body: SheetBody,
    response: { 201: Created },
    preHandler: requireRole('operator'),
    handler: async (req, reply) => {
      const out = await issueDoseSheet(app.services, req.user!, req.body);
      reply.code(201).header('location', `/api/v1/sheets/${out.id}`);
      return out;
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/sheets',
    summary: 'List archived sheets by plant and sample date, with each one’s oxidant, printed dose, status and the integrity of its record as found on this read',
    tags: ['sheets'],
    querystring: Query,
    response: {
      200: z.object({
        sheets: z.array(Summary),
        notes: z.array(z.string()).describe('Why a list may be empty, e.g. a plantId with no stored plant profile'),
      }),
    },
    handler: async (req) => {
      const sheets = app.services.archive.listSheets(req.query).map(summaryOut);
      const notes: string[] = [];
      // An empty list for a mistyped plant id must not read as "no sheets were issued".
      if (req.query.plantId !== undefined) {
        let stored: ReturnType<typeof findPlant> | 'altered';
        try {
          stored = findPlant(app.services, req.query.plantId);
        } catch (e) {
          if (!isDomainError(e) || e.code !== 'ARCHIVE_RECORD_ALTERED') throw e;
          stored = 'altered';
        }
        if (stored === 'altered') notes.push(`The latest stored profile of plant "${req.query.plantId}" fails its integrity check (GET /api/v1/plants/${req.query.plantId} says why); the sheets listed were archived with their own records.`);
        else if (!stored) notes.push(`No plant profile "${req.query.plantId}" is stored, so no sheet can name it; GET /api/v1/plants lists the stored ones.`);
      }
      return { sheets, notes };
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/sheets/export.csv',
    summary: 'Dose history as CSV (one row per sheet, units in the header), for a monthly operating report',
    tags: ['sheets'],
    querystring: Query,
    produces: ['text/csv'],
    handler: async (req, reply) => {
      const csv = app.services.archive.exportCsv({ ...req.query, kind: 'dose' });
      const name = `dose-history${req.query.plantId ? '-' + req.query.plantId : ''}${req.query.from ? '-from-' + req.query.from.slice(0, 10) : ''}${req.query.to ? '-to-' + req.query.to.slice(0, 10) : ''}.csv`;
      reply.header('content-type', 'text/csv; charset=utf-8').header('content-disposition', `attachment; filename="${name}"`);
      return csv;
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/sheets/:id',
    summary: 'A sheet’s archive record (metadata, hashes, chain link), with the request and result it was made from; its record hash and PDF hash are recomputed on every read (integrity, status)',
    tags: ['sheets'],
    params: z.object({ id: SheetId }),
    response: { 200: Summary.extend({ request: z.unknown(), result: z.unknown() }) },
    handler: async (req, reply) => {
      const s = requireSheet(app.services, req.params.id);
      reply.header(INTEGRITY_HEADER, integrityHeader(s));
      return { ...summaryOut(s), request: s.request, result: s.result };
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/sheets/:id/pdf',
    summary: 'The signed PDF as archived',
    tags: ['sheets'],
    params: z.object({ id: SheetId }),
    produces: ['application/pdf'],
    handler: async (req, reply) => {
      const s = requireSheet(app.services, req.params.id);
      const pdf = app.services.archive.getSheetPdf(req.params.id);
      // the bytes as stored (evidence, even when altered); the header says what the read found
      reply.header(INTEGRITY_HEADER, integrityHeader(s));
      reply.header('content-type', 'application/pdf').header('content-disposition', `inline; filename="${req.params.id}.pdf"`);
      return pdf;
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/sheets/:id/verification',
    summary: 'Check one sheet: PDF hash, PDF signature (and that its certificate is the signer the record names), record hash and its link in the chain',
    tags: ['sheets'],
    params: z.object({ id: SheetId }),
    response: {
      200: z.object({
        id: z.string(),
        valid: z.boolean(),
        hashMatches: z.boolean(),
        signatureValid: z.boolean(),
        chainValid: z.boolean(),
        recordHashMatches: z.boolean(),
        signerSubjectMatches: z
          .boolean()
          .nullable()
          .describe('The signer certificate subject the record names is the subject of the certificate inside the PDF signature; null when the signature is unreadable'),
        problems: z.array(z.string()),
      }),
    },
    handler: async (req) => {
      requireSheet(app.services, req.params.id);
      const v = await app.services.archive.verifySheet(req.params.id, { verifyPdfSignature: verifySignedPdf });
      return { id: v.id, valid: v.valid, hashMatches: v.hashMatches, signatureValid: v.signatureValid === true, chainValid: v.chainValid, recordHashMatches: v.recordHashMatches, signerSubjectMatches: v.signerSubjectMatches, problems: [...v.problems] };
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/archive/verification',
    summary: 'Walk the whole archive: every record hash, chain link and PDF signature, plant profile hashes and the registry log of users and signers; the first broken link',
    description:
      'A cut tail or a chain rewritten from scratch can only be caught against heads written down earlier (a monthly report): ' +
      'pass head.recordHash and registryHead.recordHash of an earlier walk as expectRecordHash and expectRegistryHash.',
    tags: ['sheets'],
    querystring: ExpectedHeads,
    response: {
      200: z.object({
        valid: z.boolean(),
        records: z.number().int(),
        firstBrokenId: z.string().nullable(),
        signaturesChecked: z.number().int(),
        plantVersions: z.number().int().describe('Plant profile versions checked against their SHA-256'),
        registryEntries: z.number().int().describe('Registry log entries walked (users, user events, signers)'),
        head: z.object({ lastId: z.string().nullable(), lastSeq: z.number(), recordHash: z.string() }).describe('The sheet chain as found: write it down'),
        registryHead: z.object({ entries: z.number().int(), lastSeq: z.number().int(), recordHash: z.string() }).describe('The registry log as found: write it down'),
        problems: z.array(z.object({ id: z.string().nullable(), seq: z.number().nullable(), check: z.string(), message: z.string() })),
      }),
    },
    handler: async (req) => {
      const q = req.query;
      const v = await app.services.archive.verifyArchive({
        verifyPdfSignature: verifySignedPdf,
        expectedHead: { records: countOf(q.expectRecords), recordHash: q.expectRecordHash },
        expectedRegistryHead: { entries: countOf(q.expectRegistryEntries), recordHash: q.expectRegistryHash },
      });
      return {
        valid: v.valid,
        records: v.records,
        firstBrokenId: v.firstBrokenId,
        signaturesChecked: v.signaturesChecked,
        plantVersions: v.plantVersions,
        registryEntries: v.registryEntries,
        head: v.head,
        registryHead: v.registryHead,
        problems: [...v.problems],
      };
    },
  });
}
