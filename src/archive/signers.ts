/**
 * Signers: a PKCS#12 file (itself password-protected) and its password, which is stored encrypted
 * with AES-256-GCM, never in clear.
 *
 * The 32-byte key comes from SIGNER_KEY_SECRET (64 hex digits, or base64/base64url of 32 bytes) or,
 * when that is unset, from `<dataDir>/signer-secret.key`, made with mode 0600 on first start (32
 * random bytes as hex). Anyone holding both the database and the key can read the passwords: keep
 * the key file out of backups that travel with the database, or set SIGNER_KEY_SECRET.
 *
 * password_enc = IV (12 bytes) || GCM tag (16 bytes) || ciphertext; the additional authenticated data
 * is "oxd-signer-password/1:<signer id>", so a ciphertext moved to another signer row fails to open.
 * key_fingerprint (first 16 hex digits of SHA-256 over "oxd-signer-key:" + key) names the key used,
 * so a changed key gives a clear message rather than a bare decryption failure.
 *
 * Signer rows are append-only; the latest signer of a user (or the latest default signer, user_id
 * NULL) is the one used. A signer is opened (getSigner, getDefaultSigner, getSignerForUser) only
 * after its row is checked against the registry log (registry.ts, registryRowProblem): a changed
 * name, role, certificate subject, PKCS#12 or password is refused with ARCHIVE_RECORD_ALTERED (409)
 * before anything is signed with it; appendSheet checks the row again when it records the signer.
 */
import { createCipheriv, createDecipheriv, createHash, randomBytes } from 'node:crypto';
import { chmodSync, existsSync, linkSync, readFileSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { DomainError } from '../core/errors.js';
import type { ArchiveContext } from './context.js';
import { newSignerId } from './ids.js';
import { logRegistryRow, registryRowProblem } from './registry.js';

export const SIGNER_KEY_FILE = 'signer-secret.key';

export interface SignerKey {
  readonly key: Buffer;
  readonly fingerprint: string;
  readonly source: 'SIGNER_KEY_SECRET' | 'key-file';
}

function fingerprintOf(key: Buffer): string {
  return createHash('sha256').update('oxd-signer-key:').update(key).digest('hex').slice(0, 16);
}

function badSecret(reason: string): DomainError {
  return new DomainError('CONFIG_INVALID', {
    detail: `SIGNER_KEY_SECRET ${reason}; give 32 bytes as 64 hex digits or as base64 (e.g. the output of "openssl rand -hex 32"), or unset it to use ${SIGNER_KEY_FILE} in the data folder.`,
    params: { setting: 'SIGNER_KEY_SECRET' },
  });
}

/** Parse SIGNER_KEY_SECRET: 64 hex digits, or base64/base64url of exactly 32 bytes. */
export function parseSignerKeySecret(text: string): Buffer {
  const t = text.trim();
  if (/^[0-9a-fA-F]{64}$/.test(t)) return Buffer.from(t, 'hex');
  if (/^[A-Za-z0-9+/_-]{43}=?$/.test(t)) {
    const key = Buffer.from(t.replace(/-/g, '+').replace(/_/g, '/'), 'base64');
    if (key.length === 32) return key;
  }
  throw badSecret(`is not 32 bytes in hex or base64 (it has ${t.length} characters)`);
}

/**
 * The signer key: from the secret when given, else from the key file (made with mode 0600 if absent;
 * a file readable by group or others is tightened to 0600).
 */
export function loadSignerKey(dataDir: string, secret: string | undefined): SignerKey {
  if (secret !== undefined && secret.trim() !== '') {
    const key = parseSignerKeySecret(secret);
    return { key, fingerprint: fingerprintOf(key), source: 'SIGNER_KEY_SECRET' };
  }
  const file = join(dataDir, SIGNER_KEY_FILE);
  if (!existsSync(file)) {
    // Write a temporary file, then hard-link it into place: the link either appears complete or
    // fails with EEXIST when another process won the race, so nobody reads a half-written key.
    const tmp = `${file}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`;
    writeFileSync(tmp, randomBytes(32).toString('hex') + '\n', { mode: 0o600, flag: 'wx' });
    try {
      linkSync(tmp, file);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    } finally {
      unlinkSync(tmp);
    }
  }
  if ((statSync(file).mode & 0o077) !== 0) chmodSync(file, 0o600);
  const text = readFileSync(file, 'utf8').trim();
  if (!/^[0-9a-fA-F]{64}$/.test(text)) {
    throw new DomainError('CONFIG_INVALID', {
      detail: `${file} does not hold a 32-byte key as 64 hex digits. Restore it from your backup (signer passwords stored under it cannot be read without it), or set SIGNER_KEY_SECRET.`,
      params: { setting: SIGNER_KEY_FILE, file },
    });
  }
  const key = Buffer.from(text, 'hex');
  return { key, fingerprint: fingerprintOf(key), source: 'key-file' };
}

function aad(signerId: string): Buffer {
  return Buffer.from(`oxd-signer-password/1:${signerId}`, 'utf8');
}

export function encryptPassword(key: Buffer, signerId: string, password: string): Buffer {
  const iv = randomBytes(12);
  const cipher = createCipheriv('aes-256-gcm', key, iv);
  cipher.setAAD(aad(signerId));
  const ct = Buffer.concat([cipher.update(password, 'utf8'), cipher.final()]);
  return Buffer.concat([iv, cipher.getAuthTag(), ct]);
}

export function decryptPassword(key: SignerKey, signerId: string, blob: Buffer, storedFingerprint: string): string {
  if (storedFingerprint !== key.fingerprint) {
    throw new DomainError('SIGNER_INVALID', {
      detail:
        `The password of signer ${signerId} was encrypted under key ${storedFingerprint}, but the key in use (${key.source}) is ${key.fingerprint}. ` +
        `Restore the original SIGNER_KEY_SECRET or ${SIGNER_KEY_FILE}, or import the signer's .p12 again.`,
      params: { signerId, storedFingerprint, currentFingerprint: key.fingerprint },
    });
  }
  try {
    const decipher = createDecipheriv('aes-256-gcm', key.key, blob.subarray(0, 12));
    decipher.setAAD(aad(signerId));
    decipher.setAuthTag(blob.subarray(12, 28));
    return Buffer.concat([decipher.update(blob.subarray(28)), decipher.final()]).toString('utf8');
  } catch {
    throw new DomainError('SIGNER_INVALID', {
      detail: `The stored password of signer ${signerId} fails its integrity check (altered or moved); import the signer's .p12 again.`,
      params: { signerId },
    });
  }
}

export interface SignerSummary {
  readonly id: string;
  readonly name: string;
  /** The signer's role as printed on the sheet (e.g. "Shift operator"). */
  readonly role: string;
  readonly certificateSubject: string;
  /** The user this signer belongs to, or null for the default signer. */
  readonly userId: string | null;
  /** True for the self-signed demo signer made on first start. */
  readonly demo: boolean;
  readonly createdAt: string;
  readonly createdBy: string;
}

export interface StoredSigner extends SignerSummary {
  /** The PKCS#12 bytes, as imported. */
  readonly p12: Buffer;
  /** The PKCS#12 password, decrypted. */
  readonly password: string;
}

interface SignerRow {
  id: string;
  name: string;
  role: string;
  certificate_subject: string;
  user_id: string | null;
  demo: number;
  p12: Buffer;
  password_enc: Buffer;
  key_fingerprint: string;
  created_at: string;
  created_by: string;
}

const SIGNER_COLUMNS = 'id, name, role, certificate_subject, user_id, demo, p12, password_enc, key_fingerprint, created_at, created_by';

function summary(row: SignerRow): SignerSummary {
  return {
    id: row.id,
    name: row.name,
    role: row.role,
    certificateSubject: row.certificate_subject,
    userId: row.user_id,
    demo: row.demo === 1,
    createdAt: row.created_at,
    createdBy: row.created_by,
  };
}

/** ARCHIVE_RECORD_ALTERED for a signer row that fails its registry check, else nothing. */
export function requireIntactSigner(ctx: ArchiveContext, signerId: string): void {
  const problem = registryRowProblem(ctx, 'signers', signerId);
  if (problem === null) return;
  throw new DomainError('ARCHIVE_RECORD_ALTERED', {
    detail:
      `The archive's record of signer ${signerId} fails its integrity check: ${problem}. Nothing is signed with it and no sheet records it. ` +
      "An admin should run GET /api/v1/archive/verification, restore the archive from a backup, or import the signer's .p12 again.",
    params: { table: 'signers', signerId, problems: [problem] },
  });
}

function open(ctx: ArchiveContext, row: SignerRow): StoredSigner {
  requireIntactSigner(ctx, row.id);
  return { ...summary(row), p12: row.p12, password: decryptPassword(ctx.signerKey(), row.id, row.password_enc, row.key_fingerprint) };
}

function requireText(value: unknown, pointer: string, what: string, max = 300): string {
  if (typeof value !== 'string' || value.trim() === '' || value.length > max) {
    throw new DomainError('SIGNER_INVALID', {
      detail: `The signer's ${what} must be 1 to ${max} characters.`,
      fields: [{ pointer, message: `1–${max} characters` }],
    });
  }
  return value;
}

export interface AddSignerInput {
  readonly name: string;
  readonly role: string;
  readonly certificateSubject: string;
  readonly p12: Uint8Array;
  readonly password: string;
  /** The user who signs with it; omit or null for the default signer. */
  readonly userId?: string | null;
  readonly demo?: boolean;
  /** User id or "system:…". */
  readonly createdBy: string;
}

/**
 * Store a signer. The password is encrypted before it reaches the database. With
 * `unlessDefaultExists`, a default signer (no user) is stored only when none is: the check and
 * the insert share one write transaction, so two processes starting on an empty archive store one
 * (the other gets null).
 */
export function addSigner(ctx: ArchiveContext, input: AddSignerInput, options: { unlessDefaultExists?: boolean } = {}): SignerSummary | null {
  const name = requireText(input.name, '/name', 'name');
  const role = requireText(input.role, '/role', 'role');
  const subject = requireText(input.certificateSubject, '/certificateSubject', 'certificate subject', 2000);
  if (!(input.p12 instanceof Uint8Array) || input.p12.length === 0) {
    throw new DomainError('SIGNER_INVALID', { detail: 'The PKCS#12 file is empty.', fields: [{ pointer: '/p12', message: 'empty' }] });
  }
  if (typeof input.password !== 'string') {
    throw new DomainError('SIGNER_INVALID', { detail: 'The PKCS#12 password must be text.', fields: [{ pointer: '/password', message: 'expected a string' }] });
  }
  const userId = input.userId ?? null;
  if (userId !== null && !ctx.statement('SELECT 1 FROM users WHERE id = ?').get(userId)) {
    throw new DomainError('SIGNER_INVALID', {
      detail: `No user with id ${JSON.stringify(userId)} to attach the signer to.`,
      fields: [{ pointer: '/userId', message: 'no such user' }],
    });
  }
  const key = ctx.signerKey();
  const id = newSignerId();
  const createdAt = ctx.now().toISOString();
  const enc = encryptPassword(key.key, id, input.password);
  const stored = ctx.db
    .transaction(() => {
      if (options.unlessDefaultExists && userId === null && ctx.statement('SELECT 1 FROM signers WHERE user_id IS NULL LIMIT 1').get()) return false;
      ctx
        .statement(`INSERT INTO signers (${SIGNER_COLUMNS}) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`)
        .run(id, name, role, subject, userId, input.demo ? 1 : 0, Buffer.from(input.p12), enc, key.fingerprint, createdAt, input.createdBy);
      logRegistryRow(ctx, 'signers', id, createdAt);
      return true;
    })
    .immediate();
  if (!stored) return null;
  return { id, name, role, certificateSubject: subject, userId, demo: input.demo === true, createdAt, createdBy: input.createdBy };
}

/** One signer by id, with its PKCS#12 and decrypted password, or null. */
export function getSigner(ctx: ArchiveContext, id: string): StoredSigner | null {
  const row = ctx.statement(`SELECT ${SIGNER_COLUMNS} FROM signers WHERE id = ?`).get(id) as SignerRow | undefined;
  return row ? open(ctx, row) : null;
}

/** The latest default signer (not tied to a user), or null when none is stored. */
export function getDefaultSigner(ctx: ArchiveContext): StoredSigner | null {
  const row = ctx.statement(`SELECT ${SIGNER_COLUMNS} FROM signers WHERE user_id IS NULL ORDER BY seq DESC LIMIT 1`).get() as SignerRow | undefined;
  return row ? open(ctx, row) : null;
}

/**
 * The signer for a user: the latest signer attached to that user, else (with fallbackToDefault, the
 * default) the default signer; null when there is none.
 */
export function getSignerForUser(ctx: ArchiveContext, userId: string, options: { fallbackToDefault?: boolean } = {}): StoredSigner | null {
  const row = ctx.statement(`SELECT ${SIGNER_COLUMNS} FROM signers WHERE user_id = ? ORDER BY seq DESC LIMIT 1`).get(userId) as SignerRow | undefined;
  if (row) return open(ctx, row);
  return options.fallbackToDefault === false ? null : getDefaultSigner(ctx);
}

/** Every signer, without secrets, oldest first. */
export function listSigners(ctx: ArchiveContext): SignerSummary[] {
  return (ctx.statement(`SELECT ${SIGNER_COLUMNS} FROM signers ORDER BY seq`).all() as SignerRow[]).map(summary);
}
