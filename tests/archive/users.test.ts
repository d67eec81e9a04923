import { createHash } from 'node:crypto';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import type { Archive } from '../../src/archive/index.js';
import { openTestArchive, tempDataDir, caught } from './fixtures/archive-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): { archive: Archive; dir: string } {
  const t = tempDataDir('users');
  const archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  return { archive, dir: t.dir };
}
/** Every byte the archive wrote (database, WAL), to look for secrets. */
function allBytes(dir: string): Buffer {
  return Buffer.concat(readdirSync(dir).filter((f) => f.startsWith('oxidant-dosing.sqlite')).map((f) => readFileSync(join(dir, f))));
}
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex');

describe('tokens', () => {
  it('are "oxd_" + 43 base64url characters (32 random bytes), different each time', () => {
    const { archive } = fresh();
    const a = archive.createUser({ name: 'operator-a', role: 'operator', createdBy: 'system:test' });
    const b = archive.createUser({ name: 'operator-b', role: 'operator', createdBy: 'system:test' });
    expect(a.token).toMatch(/^oxd_[A-Za-z0-9_-]{43}$/);
    expect(Buffer.from(a.token.slice(4), 'base64url')).toHaveLength(32);
    expect(a.token).not.toBe(b.token);
  });

  it('are stored only as SHA-256: the token text is nowhere in the database files, its hash is', () => {
    const { archive, dir } = fresh();
    const { user, token } = archive.createUser({ name: 'engineer-1', role: 'engineer', createdBy: 'system:test' });
    const row = archive.db.prepare('SELECT * FROM users WHERE id = ?').get(user.id) as Record<string, unknown>;
    expect(row['token_sha256']).toBe(sha256(token));
    expect(Object.values(row)).not.toContain(token);
    archive.db.pragma('wal_checkpoint(FULL)');
    const bytes = allBytes(dir);
    expect(bytes.includes(Buffer.from(token))).toBe(false);
    expect(bytes.includes(Buffer.from(token.slice(4)))).toBe(false);
    expect(bytes.includes(Buffer.from(sha256(token)))).toBe(true);
  });
});

describe('authenticate', () => {
  it('finds the user of a valid token, with its role', () => {
    const { archive } = fresh();
    const { user, token } = archive.createUser({ name: 'admin-2', role: 'admin', createdBy: 'system:test' });
    expect(archive.authenticate(token)).toEqual({ ...user, active: true });
  });

  it.each([
    ['empty string', ''],
    ['not a string', 12345],
    ['undefined', undefined],
    ['a token of another archive', 'oxd_' + 'A'.repeat(43)],
    ['the stored hash itself', 'HASH'],
    ['a very long string', 'x'.repeat(10_000)],
  ])('returns null for %s', (_name, token) => {
    const { archive } = fresh();
    const { token: real } = archive.createUser({ name: 'op', role: 'operator', createdBy: 'system:test' });
    const presented = token === 'HASH' ? sha256(real) : token;
    expect(archive.authenticate(presented)).toBeNull();
  });

  it('a token differing in one character is refused', () => {
    const { archive } = fresh();
    const { token } = archive.createUser({ name: 'op', role: 'operator', createdBy: 'system:test' });
    const last = token.at(-1) === 'A' ? 'B' : 'A';
    expect(archive.authenticate(token.slice(0, -1) + last)).toBeNull();
  });

  it('a deactivated user is refused until reactivated; both are audited', () => {
    const { archive } = fresh();
    const { user, token } = archive.createUser({ name: 'op', role: 'operator', createdBy: 'usr_admin' });
    archive.deactivateUser({ userId: user.id, by: 'usr_admin', note: 'left the plant' });
    expect(archive.authenticate(token)).toBeNull();
    expect(archive.getUser(user.id)?.active).toBe(false);
    archive.reactivateUser({ userId: user.id, by: 'usr_admin' });
    expect(archive.authenticate(token)?.id).toBe(user.id);
    expect(archive.userEvents(user.id).map((e) => [e.event, e.actor, e.note])).toEqual([
      ['created', 'usr_admin', null],
      ['deactivated', 'usr_admin', 'left the plant'],
      ['reactivated', 'usr_admin', null],
    ]);
  });
});

describe('createUser', () => {
  it('refuses a second user with the same name (USER_EXISTS, /name)', () => {
    const { archive } = fresh();
    archive.createUser({ name: 'op', role: 'operator', createdBy: 'system:test' });
    const e = caught(() => archive.createUser({ name: 'op', role: 'engineer', createdBy: 'system:test' }));
    expect(e.code).toBe('USER_EXISTS');
    expect(e.fields[0]?.pointer).toBe('/name');
    expect(archive.countUsers()).toBe(1);
  });

  it.each([
    ['role', { name: 'x', role: 'superuser' }, '/role'],
    ['empty name', { name: '', role: 'operator' }, '/name'],
    ['name with a newline', { name: 'a\nb', role: 'operator' }, '/name'],
    ['name with trailing space', { name: 'abc ', role: 'operator' }, '/name'],
  ])('refuses a bad %s naming the field', (_n, input, pointer) => {
    const { archive } = fresh();
    const e = caught(() => archive.createUser({ ...(input as { name: string; role: 'operator' }), createdBy: 'system:test' }));
    expect(e.code).toBe('VALIDATION_FAILED');
    expect(e.fields[0]?.pointer).toBe(pointer);
  });
});

describe('bootstrapAdmin', () => {
  it('with BOOTSTRAP_TOKEN: makes an admin with that token and does not hand the token back', () => {
    const { archive } = fresh();
    const token = 'site-chosen-bootstrap-token-0123456789';
    const out = archive.bootstrapAdmin({ bootstrapToken: token });
    expect(out).toMatchObject({ created: true, token: null, tokenSource: 'BOOTSTRAP_TOKEN' });
    expect(archive.authenticate(token)).toMatchObject({ role: 'admin', name: 'admin', createdBy: 'system:bootstrap' });
  });

  it('without: makes an admin with a random token returned once for printing', () => {
    const { archive } = fresh();
    const out = archive.bootstrapAdmin({});
    expect(out.created).toBe(true);
    expect(out.tokenSource).toBe('random');
    expect(out.token).toMatch(/^oxd_[A-Za-z0-9_-]{43}$/);
    expect(archive.authenticate(out.token)?.role).toBe('admin');
  });

  it('does nothing when there are users already', () => {
    const { archive } = fresh();
    archive.createUser({ name: 'op', role: 'operator', createdBy: 'system:test' });
    expect(archive.bootstrapAdmin({ bootstrapToken: 'another-long-enough-token-0123456789' })).toEqual({ created: false, user: null, token: null, tokenSource: null });
    expect(archive.countUsers()).toBe(1);
  });

  it.each([
    ['too short', 'short-token'],
    ['with a space', 'a token with spaces in it that is long'],
  ])('refuses a BOOTSTRAP_TOKEN %s (CONFIG_INVALID) and makes nobody', (_n, token) => {
    const { archive } = fresh();
    const e = caught(() => archive.bootstrapAdmin({ bootstrapToken: token }));
    expect(e.code).toBe('CONFIG_INVALID');
    expect(e.detail).toContain('BOOTSTRAP_TOKEN');
    expect(archive.countUsers()).toBe(0);
  });
});
