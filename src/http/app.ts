/**
 * The service as a Fastify plugin. Only server.ts listens; tests build the same app and
 * call it with app.inject().
 */
import { createHash } from 'node:crypto';
import Fastify, { type FastifyError, type FastifyInstance } from 'fastify';
import swagger from '@fastify/swagger';
import swaggerUi from '@fastify/swagger-ui';
import rateLimit from '@fastify/rate-limit';
import { isDomainError } from '../core/errors.js';
import {
  fieldProblemsFromAjv,
  fieldProblemsFromZod,
  problem,
  problemFromDomainError,
  sendProblem,
  validationProblem,
  type AjvLikeError,
} from './problem.js';
import { systemRoutes } from './routes/system.js';
import { v1Routes } from './routes/v1/index.js';
import { createServices, type Services, type ServiceOptions } from './services.js';

export interface AppOptions extends ServiceOptions {
  logger?: boolean | Record<string, unknown>;
  /** Largest accepted request body in bytes (default 256 KiB). */
  bodyLimitBytes?: number;
  /** Requests per minute per bearer token on the routes that need one. */
  rateLimitPerMinute?: number;
  /** Already built services (tests share one set between apps). */
  services?: Services;
  /** Registers extra routes before the app is ready (the benchmark's echo routes). */
  configure?: (app: FastifyInstance) => Promise<void> | void;
}

declare module 'fastify' {
  interface FastifyInstance {
    services: Services;
  }
}

export const VERSION = '0.1.0';

export async function buildApp(options: AppOptions): Promise<FastifyInstance> {
  const app = Fastify({
    logger: options.logger ?? false,
    bodyLimit: options.bodyLimitBytes ?? 256 * 1024,
    ajv: {
      customOptions: {
        // No silent guesses: "7.2" is not the number 7.2, and unknown fields are refused.
        coerceTypes: false,
        removeAdditional: false,
        // Stop at the first error: a failed request is validated again by its zod schema,
        // which reports every bad field with the accepted range or units.
        allErrors: false,
        useDefaults: true,
      },
    },
    // a long path parameter reaches the route, whose id check answers a 400 problem (the router's
    // own limit would answer 414 in its own format)
    routerOptions: { ignoreTrailingSlash: true, maxParamLength: 2048 },
  });

  // Bodies are JSON only: a JSON text sent as text/plain is a 415 saying so, not a string that
  // fails validation as "expected object" (Fastify parses text/plain by default).
  app.removeContentTypeParser('text/plain');

  const services = options.services ?? (await createServices(options));
  app.decorate('services', services);
  app.addHook('onClose', async () => {
    if (!options.services) services.close();
  });

  app.setErrorHandler((err: FastifyError, req, reply) => {
    if (isDomainError(err)) {
      return sendProblem(reply, problemFromDomainError(err, req.url));
    }
    if (err.validation) {
      const where = err.validationContext ?? 'body';
      const data = where === 'body' ? req.body : where === 'querystring' ? req.query : where === 'params' ? req.params : undefined;
      let fields = fieldProblemsFromAjv(err.validation as AjvLikeError[], data);
      const zodSchemas = (req.routeOptions.config as { zod?: Record<string, { safeParse: (x: unknown) => { success: boolean; error?: { issues: unknown[] } } } | undefined> } | undefined)?.zod;
      const zs = zodSchemas?.[where];
      if (zs) {
        const parsed = zs.safeParse(data);
        if (!parsed.success && parsed.error) {
          const zf = fieldProblemsFromZod(parsed.error.issues as Parameters<typeof fieldProblemsFromZod>[0], data);
          if (zf.length) fields = zf;
        }
      }
      const label = where === 'querystring' ? 'query' : where === 'params' ? 'path' : 'request';
      const p = validationProblem(fields, label);
      p.instance = req.url;
      return sendProblem(reply, p);
    }
    if (err.code === 'FST_ERR_CTP_BODY_TOO_LARGE') {
      return sendProblem(reply, { ...problem('BODY_TOO_LARGE', `The body is larger than the ${app.initialConfig.bodyLimit} bytes this service accepts.`), instance: req.url });
    }
    if (err.code === 'FST_ERR_CTP_INVALID_MEDIA_TYPE') {
      return sendProblem(reply, { ...problem('MEDIA_TYPE_UNSUPPORTED', `The body was sent as ${String(req.headers['content-type'] ?? 'no content type')}; send it as application/json.`), instance: req.url });
    }
    if (err.code === 'FST_ERR_CTP_EMPTY_JSON_BODY' || err.code === 'FST_ERR_CTP_INVALID_JSON_BODY' || err instanceof SyntaxError || err.statusCode === 400) {
      return sendProblem(reply, problem('BODY_NOT_JSON', `The request body could not be read as JSON: ${err.message}`));
    }
    if (err.statusCode === 429) {
      return sendProblem(reply, problem('RATE_LIMITED', err.message || 'Too many requests for this token; wait and try again.'));
    }
    if (err.statusCode && err.statusCode >= 400 && err.statusCode < 500) {
      return sendProblem(reply, { ...problem('VALIDATION_FAILED', err.message), status: err.statusCode, title: 'Bad request' });
    }
    req.log.error({ err }, 'unhandled error');
    return sendProblem(reply, problem('INTERNAL', 'The service failed on this request; it has been logged. No data was changed.'));
  });

  app.setNotFoundHandler((req, reply) => {
    sendProblem(reply, { ...problem('ROUTE_NOT_FOUND', `No route ${req.method} ${req.url.split('?')[0]}; see /docs for the routes.`), instance: req.url });
  });

  await app.register(rateLimit, {
    global: false,
    max: options.rateLimitPerMinute ?? 120,
    timeWindow: '1 minute',
    keyGenerator: (req) => {
      const auth = req.headers.authorization;
      // keyed by a hash of the header: the limiter's memory never holds a token in clear
      return auth ? `token:${createHash('sha256').update(auth).digest('hex')}` : `ip:${req.ip}`;
    },
    errorResponseBuilder: (_req, ctx) => {
      const e = new Error(`Rate limit of ${ctx.max} requests per ${ctx.after} reached for this token; try again in ${ctx.after}.`) as Error & { statusCode: number };
      e.statusCode = 429;
      return e;
    },
  });

  await app.register(swagger, {
    openapi: {
      openapi: '3.1.0',
      info: {
        title: 'oxidant-dosing',
        version: VERSION,
        description:
          'Oxidant doses for iron, manganese, sulfide and arsenic removal from balanced redox reactions, ' +
          'feasibility at the water’s pH and temperature, feed rates, jar tests and signed dosing sheets. ' +
          'Every figure names its reaction, constant and source. Supports, and does not replace, the judgement ' +
          'of a licensed operator or engineer; local regulations, permits and codes govern.',
      },
      components: {
        securitySchemes: { bearer: { type: 'http', scheme: 'bearer' } },
      },
    },
  });
  await app.register(swaggerUi, { routePrefix: '/docs' });

  await app.register(systemRoutes);
  await app.register(v1Routes, { prefix: '/api/v1' });
  if (options.configure) await options.configure(app);
  return app;
}
