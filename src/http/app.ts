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
  bodyNotObjectMessage,
  explainFieldValues,
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

  // Every route's method and URL pattern, so that a path that exists answers 405 with an Allow
  // header for a method it does not take (RFC 9110 §15.5.6), and only a path no route has is a 404.
  const routeTable = new RouteTable();
  app.addHook('onRoute', (route) => routeTable.add(route.method, route.url));

  const services = options.services ?? (await createServices(options));
  app.decorate('services', services);
  app.addHook('onClose', async () => {
    if (!options.services) services.close();
  });

  app.setErrorHandler((err: FastifyError, req, reply) => {
    if (isDomainError(err)) {
      const p = problemFromDomainError(err, req.url);
      // a field the domain refused, restated from the value sent (no such date, a number too large)
      if (p.errors) {
        const explained = explainFieldValues(p.errors, req.body, req.query);
        if (explained.changed) {
          p.errors = explained.fields;
          p.detail = explained.fields.map((f) => `${f.pointer || '(root)'}: ${f.message}`).join('; ') + '.';
        }
      }
      return sendProblem(reply, p);
    }
    if (err.validation) {
      const where = err.validationContext ?? 'body';
      const data = where === 'body' ? req.body : where === 'querystring' ? req.query : where === 'params' ? req.params : undefined;
      const bodySchema = (req.routeOptions.schema as { body?: { type?: unknown } } | undefined)?.body;
      if (where === 'body' && bodySchema?.type === 'object' && (data === undefined || data === null || typeof data !== 'object' || Array.isArray(data))) {
        // no body at all, or JSON that is no object: say so, not '"" is required' at the root
        const message = bodyNotObjectMessage(data);
        const detail = data === undefined
          ? 'The request has no body: this route takes a JSON object (content-type application/json); see /docs for its fields.'
          : `The request body must be a JSON object with the fields of this route; ${message.replace(/^the request body must be a JSON object \{…\}; /, '')} (see /docs).`;
        return sendProblem(reply, { ...problem('VALIDATION_FAILED', detail, { errors: [{ pointer: '', message }] }), instance: req.url });
      }
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
      fields = explainFieldValues(fields, data).fields;
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
    if (err.code === 'FST_ERR_CTP_EMPTY_JSON_BODY') {
      return sendProblem(reply, {
        ...problem('BODY_NOT_JSON', 'The request body is empty although its content-type is application/json: send the JSON object this route takes (see /docs).', {
          errors: [{ pointer: '', message: bodyNotObjectMessage(undefined) }],
        }),
        instance: req.url,
      });
    }
    if (err.code === 'FST_ERR_CTP_INVALID_JSON_BODY' || err instanceof SyntaxError || err.statusCode === 400) {
      // the parser's own reason (JSON.parse's SyntaxError) says where the text stops being JSON
      const cause = (err as { cause?: unknown }).cause;
      const why = cause instanceof SyntaxError ? cause.message : err instanceof SyntaxError ? err.message : null;
      const blank = why !== null && /end of (JSON )?input/i.test(why);
      return sendProblem(reply, {
        ...problem(
          'BODY_NOT_JSON',
          blank
            ? 'The request body holds no JSON (it is empty, white space or cut short) although its content-type is application/json: send the JSON object this route takes (see /docs).'
            : `The request body is not valid JSON although its content-type is application/json${why ? ` (${why})` : ''}: send one JSON object, as this route's schema in /docs shows.`,
        ),
        instance: req.url,
      });
    }
    if (err.statusCode === 429) {
      const limit = (err as { rateLimit?: Record<string, number> }).rateLimit;
      return sendProblem(reply, {
        ...problem('RATE_LIMITED', err.message || 'Too many requests for this token; wait and try again.', limit ? { params: limit } : {}),
        instance: req.url,
      });
    }
    if (err.statusCode && err.statusCode >= 400 && err.statusCode < 500) {
      return sendProblem(reply, { ...problem('VALIDATION_FAILED', err.message), status: err.statusCode, title: 'Bad request' });
    }
    req.log.error({ err }, 'unhandled error');
    return sendProblem(reply, problem('INTERNAL', 'The service failed on this request; it has been logged. No data was changed.'));
  });

  app.setNotFoundHandler((req, reply) => {
    const path = req.url.split('?')[0] ?? '/';
    const allowed = routeTable.methodsOf(path);
    if (allowed.length > 0 && !allowed.includes(req.method.toUpperCase())) {
      const list = allowed.join(', ');
      reply.header('allow', list);
      return sendProblem(reply, {
        ...problem('METHOD_NOT_ALLOWED', `${path} does not take ${req.method}; it takes ${list} (see the Allow header and /docs).`, { params: { method: req.method, allow: allowed } }),
        instance: req.url,
      });
    }
    return sendProblem(reply, { ...problem('ROUTE_NOT_FOUND', `No route ${req.method} ${path}; see /docs for the routes.`), instance: req.url });
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
      // the window is one minute; ctx.after (and ttl) is the time left in it, not the window
      const retryAfterSeconds = Math.max(1, Math.ceil(ctx.ttl / 1000));
      const e = new Error(`Rate limit of ${ctx.max} requests per minute reached for this token; try again in ${retryAfterSeconds} s.`) as Error & {
        statusCode: number;
        rateLimit: { limit: number; windowSeconds: number; retryAfterSeconds: number };
      };
      e.statusCode = 429;
      e.rateLimit = { limit: ctx.max, windowSeconds: 60, retryAfterSeconds };
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

/** Methods in the order an Allow header lists them (then any other, alphabetically). */
const METHOD_ORDER = ['GET', 'HEAD', 'POST', 'PUT', 'PATCH', 'DELETE', 'OPTIONS'];

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/**
 * A route's URL pattern as a regular expression over the request path, as the router reads it:
 * ":name" (with an optional "(regex)") is one segment or part of one, "*" is the rest of the path,
 * "::" a literal colon; a trailing slash is ignored (ignoreTrailingSlash).
 */
export function urlPatternRegExp(url: string): RegExp {
  let re = '';
  for (let i = 0; i < url.length; ) {
    const c = url[i]!;
    if (c === ':' && url[i + 1] === ':') {
      re += ':';
      i += 2;
    } else if (c === ':') {
      const m = /^:[A-Za-z0-9_$]+(\((?:\\.|[^)])*\))?/.exec(url.slice(i));
      re += '[^/]+?';
      i += m ? m[0].length : 1;
    } else if (c === '*') {
      re += '.*';
      i += 1;
    } else {
      re += escapeRegExp(c);
      i += 1;
    }
  }
  return new RegExp(`^${re.replace(/\/+$/, '')}/?$`);
}

/** The routes an app has, by URL pattern, with their methods (filled by an onRoute hook). */
export class RouteTable {
  private readonly routes = new Map<string, { pattern: RegExp; methods: Set<string> }>();

  add(method: string | readonly string[], url: string): void {
    let entry = this.routes.get(url);
    if (!entry) {
      entry = { pattern: urlPatternRegExp(url), methods: new Set() };
      this.routes.set(url, entry);
    }
    for (const m of typeof method === 'string' ? [method] : method) entry.methods.add(m.toUpperCase());
  }

  /** Every method some route takes on this path, in Allow-header order; empty when no route matches the path. */
  methodsOf(path: string): string[] {
    let decoded = path;
    try {
      decoded = decodeURI(path);
    } catch {
      // a malformed escape: match the path as sent
    }
    const found = new Set<string>();
    for (const { pattern, methods } of this.routes.values()) {
      if (pattern.test(path) || pattern.test(decoded)) for (const m of methods) found.add(m);
    }
    const rank = (m: string) => (METHOD_ORDER.includes(m) ? METHOD_ORDER.indexOf(m) : METHOD_ORDER.length);
    return [...found].sort((a, b) => rank(a) - rank(b) || a.localeCompare(b));
  }
}
