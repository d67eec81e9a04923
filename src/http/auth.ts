/**
 * Bearer tokens. A token is looked up by its SHA-256 in the archive; the user's role decides
 * what it may do: operator (computes, creates sheets), engineer (also jar tests and plant
 * profiles), admin (users; everything). The role is believed only after the user's record passes its
 * registry check (archive/users.ts): a record changed in the archive file is a 409
 * ARCHIVE_RECORD_ALTERED problem naming the user, thrown by authenticate, never a request acted on.
 */
import type { FastifyReply, FastifyRequest } from 'fastify';
import { DomainError } from '../core/errors.js';
import type { Role, User } from '../archive/index.js';

const RANK: Record<Role, number> = { operator: 1, engineer: 2, admin: 3 };

declare module 'fastify' {
  interface FastifyRequest {
    user?: User;
  }
}

export function bearerToken(req: FastifyRequest): string | undefined {
  const h = req.headers.authorization;
  if (!h) return undefined;
  const m = /^Bearer\s+(\S+)\s*$/i.exec(h);
  return m ? m[1] : '';
}

/** An access check that requires a valid token whose role is at least `role`. Runs as the request arrives (onRequest), before the body is read. */
export function requireRole(role: Role) {
  return async (req: FastifyRequest, reply: FastifyReply): Promise<void> => {
    const token = bearerToken(req);
    if (token === undefined || token === '') {
      reply.header('www-authenticate', 'Bearer realm="oxidant-dosing"');
      throw new DomainError('AUTH_REQUIRED', {
        detail: token === undefined ? 'Send "Authorization: Bearer <token>"; ask an admin for a token.' : 'The Authorization header must read "Bearer <token>".',
      });
    }
    const user = req.server.services.archive.authenticate(token);
    if (!user) {
      reply.header('www-authenticate', 'Bearer realm="oxidant-dosing", error="invalid_token"');
      throw new DomainError('AUTH_REQUIRED', { detail: 'The bearer token is not valid (unknown or deactivated).' });
    }
    if (RANK[user.role] < RANK[role]) {
      throw new DomainError('AUTH_FORBIDDEN', {
        detail: `This needs the ${role} role; your token belongs to ${user.name} (${user.role}).`,
        params: { needed: role, role: user.role },
      });
    }
    req.user = user;
  };
}
