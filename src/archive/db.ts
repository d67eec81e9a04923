/**
 * Opening the archive: `<dataDir>/oxidant-dosing.sqlite`, made (with its folder) on first start.
 *
 * Connection settings: journal_mode=WAL (readers never block the writer), synchronous=FULL (a
 * commit is on disk when it returns, so a sheet answered 201 survives a crash or power loss),
 * foreign_keys=ON, busy_timeout (a writer waits for another process's write lock instead of failing).
 * Then the schema is migrated (migrations.ts) and the signer key loaded (signers.ts).
 *
 * The caller (the HTTP server, the CLI) resolves DATA_DIR; this module takes a folder.
 */
import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { DomainError } from '../core/errors.js';
import type { ArchiveContext } from './context.js';
import { exportCsv, type ExportCsvOptions } from './csv.js';
import { migrate, type Migration, type MigrationOutcome } from './migrations.js';
import { getPlant, listPlants, plantHistory, savePlant, seedPlant, type PlantVersion, type SavedPlant } from './plants.js';
import {
  addSigner,
  getDefaultSigner,
  getSigner,
  getSignerForUser,
  listSigners,
  loadSignerKey,
  type AddSignerInput,
  type SignerKey,
  type SignerSummary,
  type StoredSigner,
} from './signers.js';
import {
  appendSheet,
  chainHead,
  getSheet,
  getSheetPdf,
  listSheets,
  type AppendSheetInput,
  type SheetQuery,
  type SheetRecord,
  type SheetSummary,
} from './sheets.js';
import {
  authenticate,
  bootstrapAdmin,
  countUsers,
  createUser,
  deactivateUser,
  getUser,
  listUsers,
  reactivateUser,
  userEvents,
  type BootstrapOutcome,
  type ListedUser,
  type Role,
  type User,
} from './users.js';
import { verifyArchive, verifySheet, type ArchiveVerification, type PdfSignatureCheck, type SheetVerification, type VerifyArchiveOptions } from './verify.js';

export const ARCHIVE_FILE_NAME = 'oxidant-dosing.sqlite';
export const DEFAULT_BUSY_TIMEOUT_MS = 10_000;

export interface OpenArchiveOptions {
  /** The data folder (DATA_DIR, resolved by the caller); made if missing. */
  readonly dataDir: string;
  /** How long a writer waits for another connection's write lock (default 10 s). */
  readonly busyTimeoutMs?: number;
  /**
   * SIGNER_KEY_SECRET. Leave the property out to read process.env.SIGNER_KEY_SECRET; give undefined
   * (or '') to use <dataDir>/signer-secret.key regardless of the environment.
   */
  readonly signerKeySecret?: string | undefined;
  /** Clock for created_at (tests). */
  readonly now?: () => Date;
  /** Migrations to run (tests); default MIGRATIONS. */
  readonly migrations?: readonly Migration[];
}

/** An open archive. Every method is synchronous except verification (which may call an async signature check). */
export class Archive implements ArchiveContext {
  readonly db: Database.Database;
  readonly dataDir: string;
  readonly file: string;
  readonly migration: MigrationOutcome;
  readonly #now: () => Date;
  readonly #statements = new Map<string, Database.Statement>();
  readonly #signerKey: SignerKey;

  private constructor(db: Database.Database, dataDir: string, file: string, now: () => Date, migration: MigrationOutcome, signerKey: SignerKey) {
    this.db = db;
    this.dataDir = dataDir;
    this.file = file;
    this.#now = now;
    this.migration = migration;
    this.#signerKey = signerKey;
  }

  /** See openArchive. */
  static open(options: OpenArchiveOptions): Archive {
    const dataDir = resolve(options.dataDir);
    mkdirSync(dataDir, { recursive: true, mode: 0o750 });
    const file = join(dataDir, ARCHIVE_FILE_NAME);
    const now = options.now ?? (() => new Date());
    let db: Database.Database;
    try {
      db = new Database(file, { timeout: options.busyTimeoutMs ?? DEFAULT_BUSY_TIMEOUT_MS });
    } catch (e) {
      throw new DomainError('ARCHIVE_CORRUPT', {
        detail: `The archive ${file} cannot be opened: ${(e as Error).message}. Check the folder's permissions and free space.`,
        params: { file },
      });
    }
    try {
      db.pragma(`busy_timeout = ${Math.max(0, Math.trunc(options.busyTimeoutMs ?? DEFAULT_BUSY_TIMEOUT_MS))}`);
      const mode = db.pragma('journal_mode = WAL', { simple: true });
      if (mode !== 'wal') {
        throw new DomainError('ARCHIVE_CORRUPT', {
          detail: `The archive ${file} could not be put in WAL mode (got "${String(mode)}"); keep DATA_DIR on a local disk, not a network share.`,
          params: { file },
        });
      }
      db.pragma('synchronous = FULL');
      db.pragma('journal_size_limit = 67108864'); // truncate the WAL back to 64 MiB after a checkpoint
      db.pragma('foreign_keys = ON');
      const migration = migrate(db, { file, now, ...(options.migrations ? { migrations: options.migrations } : {}) });
      const secret = 'signerKeySecret' in options ? options.signerKeySecret : process.env['SIGNER_KEY_SECRET'];
      const signerKey = loadSignerKey(dataDir, secret);
      return new Archive(db, dataDir, file, now, migration, signerKey);
    } catch (e) {
      db.close();
      if (e instanceof DomainError) throw e;
      const code = (e as { code?: string }).code;
      if (code === 'SQLITE_NOTADB' || code === 'SQLITE_CORRUPT') {
        throw new DomainError('ARCHIVE_CORRUPT', {
          detail: `${file} is not a readable oxidant-dosing archive (${(e as Error).message}). Restore it from a backup, or point DATA_DIR at another folder.`,
          params: { file },
        });
      }
      throw e;
    }
  }

  now(): Date {
    return this.#now();
  }

  statement(sql: string): Database.Statement {
    let s = this.#statements.get(sql);
    if (!s) {
      s = this.db.prepare(sql);
      this.#statements.set(sql, s);
    }
    return s;
  }

  signerKey(): SignerKey {
    return this.#signerKey;
  }

  close(): void {
    this.#statements.clear();
    if (this.db.open) this.db.close();
  }

  // users
  createUser(input: { name: string; role: Role; createdBy: string }): { user: User; token: string } {
    return createUser(this, input);
  }
  authenticate(token: unknown): User | null {
    return authenticate(this, token);
  }
  countUsers(): number {
    return countUsers(this);
  }
  getUser(id: string): User | null {
    return getUser(this, id);
  }
  listUsers(): ListedUser[] {
    return listUsers(this);
  }
  deactivateUser(input: { userId: string; by: string; note?: string }): User {
    return deactivateUser(this, input);
  }
  reactivateUser(input: { userId: string; by: string; note?: string }): User {
    return reactivateUser(this, input);
  }
  userEvents(userId?: string): ReturnType<typeof userEvents> {
    return userEvents(this, userId);
  }
  bootstrapAdmin(options: { bootstrapToken?: string | undefined; name?: string } = {}): BootstrapOutcome {
    return bootstrapAdmin(this, options);
  }

  // plants
  savePlant<P>(profile: P, options: { createdBy: string }): SavedPlant<P> {
    return savePlant(this, profile, options);
  }
  seedPlant<P>(profile: P, options: { createdBy?: string } = {}): SavedPlant<P> {
    return seedPlant(this, profile, options);
  }
  getPlant<P = unknown>(plantId: string, version?: number): PlantVersion<P> {
    return getPlant<P>(this, plantId, version);
  }
  listPlants<P = unknown>(): PlantVersion<P>[] {
    return listPlants<P>(this);
  }
  plantHistory<P = unknown>(plantId: string): PlantVersion<P>[] {
    return plantHistory<P>(this, plantId);
  }

  // signers
  addSigner(input: AddSignerInput): SignerSummary {
    return addSigner(this, input)!;
  }
  /** Store a default signer unless one is stored already (one write transaction); null when one was. */
  addDefaultSignerIfNone(input: Omit<AddSignerInput, 'userId'>): SignerSummary | null {
    return addSigner(this, { ...input, userId: null }, { unlessDefaultExists: true });
  }
  getSigner(id: string): StoredSigner | null {
    return getSigner(this, id);
  }
  getDefaultSigner(): StoredSigner | null {
    return getDefaultSigner(this);
  }
  /** Whether a default signer is stored (without opening it, so an altered one does not stop a start). */
  hasDefaultSigner(): boolean {
    return this.statement('SELECT 1 FROM signers WHERE user_id IS NULL LIMIT 1').get() !== undefined;
  }
  getSignerForUser(userId: string, options: { fallbackToDefault?: boolean } = {}): StoredSigner | null {
    return getSignerForUser(this, userId, options);
  }
  listSigners(): SignerSummary[] {
    return listSigners(this);
  }

  // sheets
  appendSheet(input: AppendSheetInput): SheetSummary {
    return appendSheet(this, input);
  }
  getSheet<Req = unknown, Res = unknown>(id: string): SheetRecord<Req, Res> {
    return getSheet<Req, Res>(this, id);
  }
  getSheetPdf(id: string): Buffer {
    return getSheetPdf(this, id);
  }
  listSheets(query: SheetQuery = {}): SheetSummary[] {
    return listSheets(this, query);
  }
  chainHead(): ReturnType<typeof chainHead> {
    return chainHead(this);
  }
  exportCsv(options: ExportCsvOptions = {}): string {
    return exportCsv(this, options);
  }

  // verification
  verifySheet(id: string, options: { verifyPdfSignature: PdfSignatureCheck | null }): Promise<SheetVerification> {
    return verifySheet(this, id, options);
  }
  verifyArchive(options: VerifyArchiveOptions = {}): Promise<ArchiveVerification> {
    return verifyArchive(this, options);
  }
}

/**
 * Open (or create) the archive in `dataDir`: WAL, synchronous=FULL, foreign keys, busy timeout;
 * migrate; load the signer key. Throws ARCHIVE_TOO_NEW for an archive from a newer build,
 * ARCHIVE_CORRUPT for a file that is not a database, CONFIG_INVALID for a bad SIGNER_KEY_SECRET.
 */
export function openArchive(options: OpenArchiveOptions): Archive {
  return Archive.open(options);
}
