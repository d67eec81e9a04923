import { randomBytes } from 'node:crypto';
import { chmodSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import { SIGNER_KEY_FILE, openArchive, type AddSignerInput } from '../../src/archive/index.js';
import { rawTamper, tempDataDir } from './fixtures/archive-fixture.js';
import { decryptPassword } from '../../src/archive/signers.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function dir(): string {
  const t = tempDataDir('signers');
  cleanups.push(t.cleanup);
  return t.dir;
}
async function caught(fn: () => unknown): Promise<DomainError> {
  try {
    await fn();
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a DomainError');
}

const PASSWORD = 'correct horse battery staple (demo)';
function signerInput(overrides: Partial<AddSignerInput> = {}): AddSignerInput {
  return {
    name: 'Demo Engineer (invented)',
    role: 'Process engineer',
    certificateSubject: 'CN=Demo Engineer (invented),O=Example Water Works (invented),C=XX',
    p12: randomBytes(1500),
    password: PASSWORD,
    createdBy: 'system:test',
    ...overrides,
  };
}

describe('signer key', () => {
  it('without SIGNER_KEY_SECRET a 32-byte key file is made with mode 0600 and reused', () => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: undefined });
    const file = join(d, SIGNER_KEY_FILE);
    expect(statSync(file).mode & 0o777).toBe(0o600);
    const key = readFileSync(file, 'utf8').trim();
    expect(key).toMatch(/^[0-9a-f]{64}$/);
    const stored = a.addSigner(signerInput());
    a.close();
    const b = openArchive({ dataDir: d, signerKeySecret: undefined });
    expect(readFileSync(file, 'utf8').trim()).toBe(key);
    expect(b.getSigner(stored.id)?.password).toBe(PASSWORD);
    b.close();
  });

  it('a key file readable by others is tightened to 0600', () => {
    const d = dir();
    openArchive({ dataDir: d, signerKeySecret: undefined }).close();
    chmodSync(join(d, SIGNER_KEY_FILE), 0o644);
    openArchive({ dataDir: d, signerKeySecret: undefined }).close();
    expect(statSync(join(d, SIGNER_KEY_FILE)).mode & 0o777).toBe(0o600);
  });

  it('a damaged key file is refused with CONFIG_INVALID', async () => {
    const d = dir();
    writeFileSync(join(d, SIGNER_KEY_FILE), 'not a key\n', { mode: 0o600 });
    const e = await caught(() => openArchive({ dataDir: d, signerKeySecret: undefined }));
    expect(e.code).toBe('CONFIG_INVALID');
  });

  it.each([
    ['64 hex digits', 'A1'.repeat(32)],
    ['base64 of 32 bytes', Buffer.alloc(32, 7).toString('base64')],
    ['base64url of 32 bytes', Buffer.alloc(32, 0xfb).toString('base64url')],
  ])('SIGNER_KEY_SECRET as %s is accepted, and no key file is written', (_n, secret) => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: secret });
    expect(readdirSync(d)).not.toContain(SIGNER_KEY_FILE);
    const s = a.addSigner(signerInput());
    expect(a.getSigner(s.id)?.password).toBe(PASSWORD);
    a.close();
  });

  it.each([
    ['too short', 'abcd'],
    ['31 bytes of hex', 'ab'.repeat(31)],
    ['base64 of 16 bytes', Buffer.alloc(16, 1).toString('base64')],
  ])('SIGNER_KEY_SECRET %s is refused with CONFIG_INVALID', async (_n, secret) => {
    const e = await caught(() => openArchive({ dataDir: dir(), signerKeySecret: secret }));
    expect(e.code).toBe('CONFIG_INVALID');
    expect(e.detail).toContain('SIGNER_KEY_SECRET');
  });
});

describe('signers', () => {
  it('the password is stored encrypted (AES-256-GCM): not in clear anywhere in the database files', () => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    const s = a.addSigner(signerInput());
    const row = a.db.prepare('SELECT password_enc, key_fingerprint FROM signers WHERE id = ?').get(s.id) as { password_enc: Buffer; key_fingerprint: string };
    expect(row.password_enc.length).toBe(12 + 16 + Buffer.byteLength(PASSWORD)); // IV + tag + ciphertext
    a.db.pragma('wal_checkpoint(FULL)');
    const bytes = Buffer.concat(readdirSync(d).filter((f) => f.startsWith('oxidant-dosing.sqlite')).map((f) => readFileSync(join(d, f))));
    expect(bytes.includes(Buffer.from(PASSWORD))).toBe(false);
    const got = a.getSigner(s.id)!;
    expect(got.password).toBe(PASSWORD);
    expect(got.certificateSubject).toContain('CN=Demo Engineer');
    a.close();
  });

  it('two processes starting on one empty folder store one default signer, not two', () => {
    const d = dir();
    const first = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    const second = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    try {
      const made = first.addDefaultSignerIfNone(signerInput({ name: 'Demo signer A (invented)', demo: true }));
      const again = second.addDefaultSignerIfNone(signerInput({ name: 'Demo signer B (invented)', demo: true }));
      expect(made?.name).toBe('Demo signer A (invented)');
      expect(again).toBeNull();
      const defaults = second.db.prepare('SELECT name FROM signers WHERE user_id IS NULL').all();
      expect(defaults).toEqual([{ name: 'Demo signer A (invented)' }]);
      expect(second.getDefaultSigner()?.name).toBe('Demo signer A (invented)');
    } finally {
      second.close();
      first.close();
    }
  });

  it('the PKCS#12 bytes come back unchanged', () => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: 'cd'.repeat(32) });
    const p12 = randomBytes(2500);
    const s = a.addSigner(signerInput({ p12 }));
    expect(a.getSigner(s.id)!.p12.equals(p12)).toBe(true);
    a.close();
  });

  it('another key gives SIGNER_INVALID naming both key fingerprints', async () => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    const s = a.addSigner(signerInput());
    a.close();
    const b = openArchive({ dataDir: d, signerKeySecret: 'ef'.repeat(32) });
    const e = await caught(() => b.getSigner(s.id));
    expect(e.code).toBe('SIGNER_INVALID');
    expect(e.detail).toMatch(/encrypted under key [0-9a-f]{16}.*is [0-9a-f]{16}/);
    b.close();
  });

  it('a ciphertext moved to another signer row fails its integrity check (the signer id is authenticated data)', async () => {
    const d = dir();
    const a = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    const s1 = a.addSigner(signerInput({ password: 'first' }));
    const s2 = a.addSigner(signerInput({ password: 'second' }));
    a.close();
    await rawTamper(join(d, 'oxidant-dosing.sqlite'), ['signers'], (db) => {
      db.prepare('UPDATE signers SET password_enc = (SELECT password_enc FROM signers WHERE id = ?) WHERE id = ?').run(s1.id, s2.id);
    });
    const b = openArchive({ dataDir: d, signerKeySecret: 'cd'.repeat(32) });
    expect(b.getSigner(s1.id)?.password).toBe('first');
    // the registry check of the row refuses it before anything is decrypted …
    const e = await caught(() => b.getSigner(s2.id));
    expect(e.code).toBe('ARCHIVE_RECORD_ALTERED');
    expect(e.detail).toMatch(/integrity/);
    // … and the moved ciphertext would not open under the other signer's id anyway (AES-GCM additional data)
    const row = b.db.prepare('SELECT password_enc, key_fingerprint FROM signers WHERE id = ?').get(s2.id) as { password_enc: Buffer; key_fingerprint: string };
    const e2 = await caught(() => decryptPassword(b.signerKey(), s2.id, row.password_enc, row.key_fingerprint));
    expect(e2.code).toBe('SIGNER_INVALID');
    expect(e2.detail).toMatch(/integrity/);
    b.close();
  });

  it('a user signs with their own latest signer, else with the default signer', () => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: 'cd'.repeat(32) });
    const { user } = a.createUser({ name: 'op', role: 'operator', createdBy: 'system:test' });
    const { user: other } = a.createUser({ name: 'op2', role: 'operator', createdBy: 'system:test' });
    expect(a.getDefaultSigner()).toBeNull();
    expect(a.getSignerForUser(user.id)).toBeNull();
    const demo = a.addSigner(signerInput({ name: 'Demo signer', demo: true }));
    expect(a.getSignerForUser(user.id)?.id).toBe(demo.id);
    const own1 = a.addSigner(signerInput({ userId: user.id, name: 'Own 1' }));
    const own2 = a.addSigner(signerInput({ userId: user.id, name: 'Own 2' }));
    expect(own1.id).not.toBe(own2.id);
    expect(a.getSignerForUser(user.id)?.id).toBe(own2.id);
    expect(a.getSignerForUser(other.id)?.id).toBe(demo.id);
    expect(a.getSignerForUser(other.id, { fallbackToDefault: false })).toBeNull();
    expect(a.getDefaultSigner()?.demo).toBe(true);
    expect(a.listSigners().map((s) => s.name)).toEqual(['Demo signer', 'Own 1', 'Own 2']);
    a.close();
  });

  it.each([
    ['an empty PKCS#12', { p12: new Uint8Array() }, '/p12'],
    ['an unknown user', { userId: 'usr_0000000000000000' }, '/userId'],
    ['an empty name', { name: ' ' }, '/name'],
  ])('refuses %s (SIGNER_INVALID)', async (_n, overrides, pointer) => {
    const a = openArchive({ dataDir: dir(), signerKeySecret: 'cd'.repeat(32) });
    const e = await caught(() => a.addSigner(signerInput(overrides)));
    expect(e.code).toBe('SIGNER_INVALID');
    expect(e.fields[0]?.pointer).toBe(pointer);
    a.close();
  });
});
