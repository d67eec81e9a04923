/** What every archive module works on: the open connection and a few settings (see db.ts). */
import type Database from 'better-sqlite3';

export interface ArchiveContext {
  /** The better-sqlite3 connection (WAL, synchronous=FULL, foreign_keys=ON). */
  readonly db: Database.Database;
  /** The data folder and the database file inside it. */
  readonly dataDir: string;
  readonly file: string;
  /** The clock used for created_at (injectable for tests). */
  now(): Date;
  /** A prepared statement, cached per connection. */
  statement(sql: string): Database.Statement;
  /** The 32-byte key that encrypts signer passwords, and its public fingerprint. */
  signerKey(): { readonly key: Buffer; readonly fingerprint: string; readonly source: 'SIGNER_KEY_SECRET' | 'key-file' };
}
