import type { FastifyInstance } from 'fastify';
import { z } from 'zod';
import { ERROR_CATALOGUE } from '../../core/errors.js';
import { codeFromSlug, problem, problemType, sendProblem, statusOf } from '../problem.js';
import { defineRoute } from '../route.js';

const Health = z.object({ status: z.literal('ok') });

export async function systemRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'GET',
    url: '/health',
    summary: 'Liveness check',
    tags: ['system'],
    response: { 200: Health },
    handler: async () => ({ status: 'ok' as const }),
  });

  app.get('/openapi.json', { schema: { hide: true } }, async () => app.swagger());

  defineRoute(app, {
    method: 'GET',
    url: '/problems/:slug',
    summary: 'What a problem type means',
    tags: ['system'],
    params: z.object({ slug: z.string().regex(/^[a-z0-9-]{1,64}$/) }),
    response: { 200: z.object({ type: z.string(), code: z.string(), title: z.string(), status: z.number() }) },
    handler: async (req, reply) => {
      const code = codeFromSlug(req.params.slug);
      if (!code) return sendProblem(reply, problem('ROUTE_NOT_FOUND', `No problem type "${req.params.slug}".`));
      return { type: problemType(code), code, title: ERROR_CATALOGUE[code].title, status: statusOf(code) };
    },
  });
}
