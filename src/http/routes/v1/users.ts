import type { FastifyInstance } from 'fastify';
import { z } from 'zod';
import { DomainError } from '../../../core/errors.js';
import { defineRoute } from '../../route.js';
import { requireRole } from '../../auth.js';
import { loadSigner } from '../../../sheets/sign.js';

const UserOut = z.object({ id: z.string(), name: z.string(), role: z.enum(['operator', 'engineer', 'admin']), active: z.boolean(), createdAt: z.string(), createdBy: z.string() });

const SignerOut = z.object({
  id: z.string(),
  name: z.string(),
  role: z.string(),
  certificateSubject: z.string(),
  userId: z.string().nullable(),
  demo: z.boolean(),
  createdAt: z.string(),
});

/** The common name (CN) of a one-line subject "CN=…, O=…", or null when it has none. */
export function commonNameOf(subject: string): string | null {
  const m = /(?:^|,\s*)CN=([^,]*)/.exec(subject);
  return m ? m[1]!.trim() : null;
}

const folded = (text: string) => text.normalize('NFKC').toLowerCase().replace(/\s+/g, ' ').trim();

/**
 * Warnings of a signer import: the sheets print the user's name as the signer while the PDF signature
 * names the certificate's holder, so a certificate whose CN does not contain the user's name
 * (compared case- and space-insensitively) is said, with both names.
 */
export function signerWarnings(userName: string, certificateSubject: string): string[] {
  const cn = commonNameOf(certificateSubject);
  if (cn !== null && folded(cn).includes(folded(userName))) return [];
  return [
    `The certificate is issued to ${cn === null ? `a subject with no common name (${certificateSubject})` : `"${cn}"`}, but it is imported for the user "${userName}": ` +
      `the sheets will print "${userName}" as the signer while the PDF signature names ${cn === null ? 'the certificate subject' : `"${cn}"`} (the sheet prints the certificate subject beside the name). ` +
      'If the certificate is not this person’s, import the right one; a user signs with their own certificate.',
  ];
}

export async function userRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'POST',
    url: '/users',
    summary: 'Create a user (admin). The answer shows the new bearer token once; only its hash is stored.',
    tags: ['users'],
    auth: true,
    body: z.strictObject({
      name: z.string().min(1).max(120).describe('Person’s name as it should appear on signed sheets'),
      role: z.enum(['operator', 'engineer', 'admin']).describe('operator: computes and creates sheets; engineer: also jar tests and plant profiles; admin: users'),
    }),
    response: { 201: UserOut.extend({ token: z.string(), tokenNote: z.string() }) },
    preHandler: requireRole('admin'),
    handler: async (req, reply) => {
      const { user, token } = app.services.archive.createUser({ name: req.body.name, role: req.body.role, createdBy: req.user!.id });
      reply.code(201);
      return { ...user, token, tokenNote: 'Shown this once. Store it safely: the service keeps only its SHA-256 and cannot show it again.' };
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/users',
    summary: 'List users (admin), each with the integrity of its record as found on this read',
    tags: ['users'],
    auth: true,
    response: {
      200: z.object({
        users: z.array(
          UserOut.extend({
            altered: z.boolean().describe('The user’s record fails its integrity check (changed in the archive file): its token is refused; check the archive (GET /api/v1/archive/verification) and restore it from a backup'),
            problems: z.array(z.string()).describe('What failed, in words (empty when nothing did)'),
          }),
        ),
      }),
    },
    preHandler: requireRole('admin'),
    handler: async () => ({ users: app.services.archive.listUsers() }),
  });

  defineRoute(app, {
    method: 'POST',
    url: '/signers',
    summary: 'Import a signing certificate (PKCS#12, base64) for a user. The password comes in the request or from an environment variable named in passwordEnv; it is kept only encrypted.',
    tags: ['users'],
    auth: true,
    bodyLimit: 256 * 1024,
    body: z.strictObject({
      userId: z.string().min(1).max(64).describe('The user who will sign with it (default: the caller)').optional(),
      role: z.string().min(1).max(120).describe('Role printed on the sheet, e.g. "Chief operator, grade III licence"'),
      p12Base64: z.string().min(100).max(200_000),
      password: z.string().max(512).optional(),
      passwordEnv: z.string().regex(/^[A-Z][A-Z0-9_]{0,63}$/).optional().describe('Name of an environment variable holding the password'),
    }),
    response: {
      201: SignerOut.extend({
        warnings: z
          .array(z.string())
          .describe('What the import was accepted with but should be checked, e.g. a certificate whose common name (CN) is not the user’s name'),
      }),
    },
    preHandler: requireRole('operator'),
    handler: async (req, reply) => {
      const b = req.body;
      const caller = req.user!;
      const userId = b.userId ?? caller.id;
      if (userId !== caller.id && caller.role !== 'admin') {
        throw new DomainError('AUTH_FORBIDDEN', { detail: 'Only an admin can import a certificate for another user.', fields: [{ pointer: '/userId', message: 'not your own user id' }] });
      }
      const user = app.services.archive.getUser(userId);
      if (!user) throw new DomainError('VALIDATION_FAILED', { detail: `No user "${userId}".`, fields: [{ pointer: '/userId', message: 'no such user' }] });
      let password = b.password;
      if (password === undefined && b.passwordEnv) {
        password = process.env[b.passwordEnv];
        if (password === undefined) throw new DomainError('VALIDATION_FAILED', { detail: `The environment variable ${b.passwordEnv} is not set on the server.`, fields: [{ pointer: '/passwordEnv', message: 'not set' }] });
      }
      if (password === undefined) {
        throw new DomainError('VALIDATION_FAILED', { detail: 'Give the PKCS#12 password, or passwordEnv naming a server environment variable that holds it.', fields: [{ pointer: '/password', message: 'password or passwordEnv is required' }] });
      }
      const p12 = Buffer.from(b.p12Base64, 'base64');
      let signer;
      try {
        signer = loadSigner(p12, password, { name: user.name, role: b.role });
      } catch (e) {
        if (!(e instanceof DomainError)) throw e;
        // the signer module calls the file /p12; here it is /p12Base64, and a wrong password may be the cause
        throw e.withFields((given) => {
          const fields = given.map((f) => ({ pointer: f.pointer === '/p12' ? '/p12Base64' : f.pointer, message: f.message }));
          if (/password/i.test(e.detail) && !fields.some((f) => f.pointer === '/password')) fields.push({ pointer: '/password', message: 'check the password set when the file was exported' });
          return fields.length ? fields : [{ pointer: '/p12Base64', message: e.detail }];
        });
      }
      const saved = app.services.archive.addSigner({
        name: user.name,
        role: b.role,
        certificateSubject: signer.identity.certificateSubject,
        p12,
        password,
        userId,
        createdBy: caller.id,
      });
      app.services.forgetSigner(userId);
      reply.code(201);
      return { ...saved, warnings: signerWarnings(user.name, signer.identity.certificateSubject) };
    },
  });
}
