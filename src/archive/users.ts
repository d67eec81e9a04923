/**
 * Users, roles and bearer tokens.
 *
 * A token is "oxd_" + 32 random bytes in base64url (43 characters). It is returned once, when the
 * user is made, and only its SHA-256 is stored. `authenticate` hashes the presented token, finds the
 * row by that hash, and compares the two digests with crypto.timingSafeEqual. (The index lookup
 * works on the SHA-256 of the token, so its timing tells nothing useful about the token itself.)
 *
 * Users are never updated or deleted; deactivation is an appended user_events row and the latest
 * event decides.
 *
 * Nothing is acted on without its hash check: `authenticate` and `getUser` check the user's row
 * and each of its events against the registry log (registry.ts, registryRowProblem), and that no
 * logged event has been removed, before the role or the active state is believed. A row that fails
 * is refused with ARCHIVE_RECORD_ALTERED (409), naming the user and what failed; never acted on.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { DomainError } from '../core/errors.js';
import { sha256Hex } from './canonical.js';
import type { ArchiveContext } from './context.js';
import { newUserId } from './ids.js';
import { logRegistryRow, registryRowProblem } from './registry.js';

export const ROLES = ['operator', 'engineer', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const TOKEN_PREFIX = 'oxd_';
/** Shortest BOOTSTRAP_TOKEN accepted (an operator-chosen token should still be hard to guess). */
export const MIN_BOOTSTRAP_TOKEN_LENGTH = 24;
const MAX_TOKEN_LENGTH = 512;

export interface User {
  readonly id: string;
  readonly name: string;
  readonly role: Role;
  readonly createdAt: string;
  readonly createdBy: string;
  readonly active: boolean;
}

interface UserRow {
  id: string;
  name: string;
  role: Role;
  token_sha256: string;
  created_at: string;
  created_by: string;
  last_event: string | null;
}

const USER_SELECT = `
SELECT u.id, u.name, u.role, u.token_sha256, u.created_at, u.created_by,
       (SELECT e.event FROM user_events e WHERE e.user_id = u.id ORDER BY e.seq DESC LIMIT 1) AS last_event
FROM users u`;

function toUser(row: UserRow): User {
  return {
    id: row.id,
    name: row.name,
    role: row.role,
    createdAt: row.created_at,
    createdBy: row.created_by,
    active: row.last_event !== 'deactivated',
  };
}

/** A new random token: "oxd_" + base64url of 32 random bytes. */
export function newToken(): string {
  return TOKEN_PREFIX + randomBytes(32).toString('base64url');
}

export function isRole(role: unknown): role is Role {
  return typeof role === 'string' && (ROLES as readonly string[]).includes(role);
}

function checkName(name: unknown): string {
  // eslint-disable-next-line no-control-regex
  if (typeof name !== 'string' || name.trim() !== name || name.length < 1 || name.length > 100 || /[\u0000-\u001f\u007f]/.test(name)) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: 'A user name is 1 to 100 characters with no leading or trailing spaces and no control characters.',
      fields: [{ pointer: '/name', message: '1–100 characters, no leading/trailing spaces or control characters' }],
    });
  }
  return name;
}

function checkRole(role: unknown): Role {
  if (!isRole(role)) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `${JSON.stringify(role)} is not a role; accepted: ${ROLES.join(', ')}.`,
      fields: [{ pointer: '/role', message: `accepted: ${ROLES.join(', ')}` }],
    });
  }
  return role;
}

function insertUser(ctx: ArchiveContext, input: { name: string; role: Role; tokenSha256: string; createdBy: string }): User {
  const at = ctx.now().toISOString();
  const existing = ctx.statement('SELECT 1 FROM users WHERE name = ?').get(input.name);
  if (existing) {
    throw new DomainError('USER_EXISTS', {
      detail: `A user named ${JSON.stringify(input.name)} exists; choose another name.`,
      fields: [{ pointer: '/name', message: 'a user with this name exists' }],
    });
  }
  if (ctx.statement('SELECT 1 FROM users WHERE token_sha256 = ?').get(input.tokenSha256)) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: 'That token is already in use by another user; use a different token.',
      fields: [{ pointer: '/token', message: 'token already in use' }],
    });
  }
  const id = newUserId();
  ctx
    .statement('INSERT INTO users (id, name, role, token_sha256, created_at, created_by) VALUES (?, ?, ?, ?, ?, ?)')
    .run(id, input.name, input.role, input.tokenSha256, at, input.createdBy);
  logRegistryRow(ctx, 'users', id, at);
  const event = ctx.statement("INSERT INTO user_events (user_id, event, at, actor) VALUES (?, 'created', ?, ?)").run(id, at, input.createdBy);
  logRegistryRow(ctx, 'user_events', Number(event.lastInsertRowid), at);
  return { id, name: input.name, role: input.role, createdAt: at, createdBy: input.createdBy, active: true };
}

/**
 * Make a user with a fresh random token. The token is in the answer and nowhere else; only its
 * SHA-256 is stored. `createdBy` is the admin's user id (or "system:…").
 */
export function createUser(ctx: ArchiveContext, input: { name: string; role: Role; createdBy: string }): { user: User; token: string } {
  const name = checkName(input.name);
  const role = checkRole(input.role);
  const token = newToken();
  const user = ctx.db
    .transaction(() => insertUser(ctx, { name, role, tokenSha256: sha256Hex(token), createdBy: input.createdBy }))
    .immediate();
  return { user, token };
}

/**
 * What fails the integrity check of a user's record: its users row, each of its user_events rows,
 * and any logged user_events row no longer stored (it may have been this user's deactivation).
 * Empty when the record is as it was logged.
 */
export function userRecordProblems(ctx: ArchiveContext, userId: string): string[] {
  const problems: string[] = [];
  const own = registryRowProblem(ctx, 'users', userId);
  if (own) problems.push(own);
  for (const { seq } of ctx.statement('SELECT seq FROM user_events WHERE user_id = ? ORDER BY seq').all(userId) as { seq: number }[]) {
    const p = registryRowProblem(ctx, 'user_events', seq);
    if (p) problems.push(p);
  }
  const lost = ctx
    .statement(
      "SELECT l.row_key AS k FROM registry_log l WHERE l.table_name = 'user_events' AND NOT EXISTS (SELECT 1 FROM user_events e WHERE e.seq = CAST(l.row_key AS INTEGER)) LIMIT 5",
    )
    .all() as { k: string }[];
  if (lost.length) problems.push(`user event(s) ${lost.map((l) => l.k).join(', ')} are logged but no longer stored (a deactivation may have been removed)`);
  return problems;
}

function recordAltered(user: { id: string; name: string }, problems: readonly string[], use: string): DomainError {
  return new DomainError('ARCHIVE_RECORD_ALTERED', {
    detail:
      `The archive's record of user ${user.id} (${JSON.stringify(user.name)}) fails its integrity check: ${problems.join('; ')}. ` +
      `The service does not ${use} on it. An admin should run GET /api/v1/archive/verification and restore the archive from a backup.`,
    params: { table: 'users', userId: user.id, problems: [...problems] },
  });
}

/**
 * The user a bearer token belongs to, or null (unknown token, malformed, or user deactivated).
 * Throws ARCHIVE_RECORD_ALTERED when the user's record fails its integrity check.
 */
export function authenticate(ctx: ArchiveContext, token: unknown): User | null {
  if (typeof token !== 'string' || token.length === 0 || token.length > MAX_TOKEN_LENGTH) return null;
  const presented = Buffer.from(sha256Hex(token), 'hex');
  const row = ctx.statement(`${USER_SELECT} WHERE u.token_sha256 = ?`).get(presented.toString('hex')) as UserRow | undefined;
  if (!row) return null;
  const stored = Buffer.from(row.token_sha256, 'hex');
  if (stored.length !== presented.length || !timingSafeEqual(stored, presented)) return null;
  const problems = userRecordProblems(ctx, row.id);
  if (problems.length) throw recordAltered(row, problems, 'act');
  const user = toUser(row);
  return user.active ? user : null;
}

export function countUsers(ctx: ArchiveContext): number {
  return (ctx.statement('SELECT count(*) AS n FROM users').get() as { n: number }).n;
}

/** A user by id, or null; throws ARCHIVE_RECORD_ALTERED when the user's record fails its integrity check. */
export function getUser(ctx: ArchiveContext, id: string): User | null {
  const user = readUser(ctx, id);
  if (!user) return null;
  const problems = userRecordProblems(ctx, id);
  if (problems.length) throw recordAltered(user, problems, 'rely');
  return user;
}

/** A user by id without the integrity check (deactivating a user is allowed whatever its record says). */
function readUser(ctx: ArchiveContext, id: string): User | null {
  const row = ctx.statement(`${USER_SELECT} WHERE u.id = ?`).get(id) as UserRow | undefined;
  return row ? toUser(row) : null;
}

/** A listed user, with what its record's integrity check found (the list shows an altered record, marked, rather than hide it). */
export type ListedUser = User & { readonly altered: boolean; readonly problems: readonly string[] };

export function listUsers(ctx: ArchiveContext): ListedUser[] {
  return (ctx.statement(`${USER_SELECT} ORDER BY u.created_at, u.id`).all() as UserRow[]).map((row) => {
    const problems = userRecordProblems(ctx, row.id);
    return { ...toUser(row), altered: problems.length > 0, problems };
  });
}

function appendUserEvent(ctx: ArchiveContext, userId: string, event: 'deactivated' | 'reactivated', actor: string, note?: string): User {
  return ctx.db
    .transaction(() => {
      const user = readUser(ctx, userId);
      if (!user) {
        throw new DomainError('VALIDATION_FAILED', {
          detail: `No user with id ${JSON.stringify(userId)}.`,
          fields: [{ pointer: '/userId', message: 'no such user' }],
        });
      }
      const at = ctx.now().toISOString();
      const inserted = ctx.statement('INSERT INTO user_events (user_id, event, at, actor, note) VALUES (?, ?, ?, ?, ?)').run(userId, event, at, actor, note ?? null);
      logRegistryRow(ctx, 'user_events', Number(inserted.lastInsertRowid), at);
      return { ...user, active: event === 'reactivated' };
    })
    .immediate();
}

/** Deactivate a user (appends an audit event; the token stops working). */
export function deactivateUser(ctx: ArchiveContext, input: { userId: string; by: string; note?: string }): User {
  return appendUserEvent(ctx, input.userId, 'deactivated', input.by, input.note);
}

export function reactivateUser(ctx: ArchiveContext, input: { userId: string; by: string; note?: string }): User {
  return appendUserEvent(ctx, input.userId, 'reactivated', input.by, input.note);
}

/** The audit trail of one user (or all users), oldest first. */
export function userEvents(ctx: ArchiveContext, userId?: string): { seq: number; userId: string; event: string; at: string; actor: string; note: string | null }[] {
  const rows = (userId === undefined
    ? ctx.statement('SELECT seq, user_id, event, at, actor, note FROM user_events ORDER BY seq').all()
    : ctx.statement('SELECT seq, user_id, event, at, actor, note FROM user_events WHERE user_id = ? ORDER BY seq').all(userId)) as {
    seq: number;
    user_id: string;
    event: string;
    at: string;
    actor: string;
    note: string | null;
  }[];
  return rows.map((r) => ({ seq: r.seq, userId: r.user_id, event: r.event, at: r.at, actor: r.actor, note: r.note }));
}

export interface BootstrapOutcome {
  /** False when the archive already had users (nothing was done). */
  readonly created: boolean;
  readonly user: User | null;
  /** The new admin's token when it was generated here (print it once); null when BOOTSTRAP_TOKEN was used. */
  readonly token: string | null;
  readonly tokenSource: 'BOOTSTRAP_TOKEN' | 'random' | null;
}

/**
 * First start: when there are no users, make an admin named "admin". With `bootstrapToken`
 * (BOOTSTRAP_TOKEN) that token is the admin's; otherwise a random token is made and returned for the
 * caller to print once. Runs in one BEGIN IMMEDIATE transaction, so two processes starting together
 * make one admin.
 */
export function bootstrapAdmin(ctx: ArchiveContext, options: { bootstrapToken?: string | undefined; name?: string } = {}): BootstrapOutcome {
  const given = options.bootstrapToken;
  if (given !== undefined && given !== '') {
    if (given.length < MIN_BOOTSTRAP_TOKEN_LENGTH || given.length > MAX_TOKEN_LENGTH || !/^[\x21-\x7e]+$/.test(given)) {
      throw new DomainError('CONFIG_INVALID', {
        detail: `BOOTSTRAP_TOKEN must be ${MIN_BOOTSTRAP_TOKEN_LENGTH} to ${MAX_TOKEN_LENGTH} printable ASCII characters with no spaces (got ${given.length} characters); or leave it unset and a random admin token is printed once.`,
        params: { setting: 'BOOTSTRAP_TOKEN' },
      });
    }
  }
  const name = checkName(options.name ?? 'admin');
  return ctx.db
    .transaction((): BootstrapOutcome => {
      if (countUsers(ctx) > 0) return { created: false, user: null, token: null, tokenSource: null };
      const useGiven = given !== undefined && given !== '';
      const token = useGiven ? given : newToken();
      const user = insertUser(ctx, { name, role: 'admin', tokenSha256: sha256Hex(token), createdBy: 'system:bootstrap' });
      return useGiven
        ? { created: true, user, token: null, tokenSource: 'BOOTSTRAP_TOKEN' }
        : { created: true, user, token, tokenSource: 'random' };
    })
    .immediate();
}
