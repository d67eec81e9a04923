/** The archive: append-only, hash-chained store of signed sheets, users, signers and plant profiles. */
export { ARCHIVE_FILE_NAME, Archive, openArchive, type OpenArchiveOptions } from './db.js';
export { MIGRATIONS, latestVersion, migrate, schemaVersion, type Migration, type MigrationOutcome } from './migrations.js';
export { ZERO_HASH, canonicalJson, isSha256Hex, sha256Hex } from './canonical.js';
export {
  SHEET_KINDS,
  isSheetKind,
  isValidPlantId,
  isValidSheetId,
  localSampleTime,
  newSheetId,
  normalizeTimestamp,
  type LocalSampleTime,
  SHEET_ID_RE,
  type SheetKind,
} from './ids.js';
export { ROLES, TOKEN_PREFIX, isRole, newToken, type BootstrapOutcome, type Role, type User } from './users.js';
export { type PlantVersion, type SavedPlant } from './plants.js';
export { SIGNER_KEY_FILE, type AddSignerInput, type SignerSummary, type StoredSigner } from './signers.js';
export {
  CORRECTION_REASON_LENGTH,
  HASHED_COLUMNS,
  RECORD_FORMAT,
  checkIntegrity,
  isIntact,
  type IntegrityCheck,
  type SheetDose,
  type SheetIntegrity,
  type SheetStatus,
  recordHash,
  recordHashText,
  sheetContentSha256,
  prepareSheetContent,
  type PreparedContent,
  type AppendSheetInput,
  type SheetContent,
  type SheetQuery,
  type SheetRecord,
  type SheetSummary,
} from './sheets.js';
export { BASE_CSV_COLUMNS, DOSE_CSV_COLUMNS, csvField, csvLine, quantityIn, type CsvColumn, type CsvSheet, type CsvValue, type ExportCsvOptions } from './csv.js';
export { type ArchiveProblem, type ArchiveVerification, type PdfSignatureCheck, type PdfSignatureOutcome, type SheetVerification, type VerifyArchiveOptions } from './verify.js';
