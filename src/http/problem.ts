/**
 * RFC 9457 problem details. The only place that maps error kinds to HTTP statuses.
 */
import type { FastifyReply } from 'fastify';
import { DomainError, ERROR_CATALOGUE, type ErrorCode, type ErrorKind, type FieldProblem } from '../core/errors.js';
import { calendarProblem } from './schemas/common.js';

export const PROBLEM_CONTENT_TYPE = 'application/problem+json';

const STATUS_OF_KIND: Record<ErrorKind, number> = {
  invalid: 400,
  unauthenticated: 401,
  forbidden: 403,
  'not-found': 404,
  'method-not-allowed': 405,
  'not-acceptable': 406,
  conflict: 409,
  'too-large': 413,
  'unsupported-media': 415,
  unprocessable: 422,
  'rate-limited': 429,
  internal: 500,
  unavailable: 503,
};

export function statusOf(code: ErrorCode): number {
  return STATUS_OF_KIND[ERROR_CATALOGUE[code].kind];
}

/** Problem type URI, relative to the service; GET on it describes the code. */
export function problemType(code: ErrorCode): string {
  return `/problems/${code.toLowerCase().replace(/_/g, '-')}`;
}

export function codeFromSlug(slug: string): ErrorCode | undefined {
  const code = slug.toUpperCase().replace(/-/g, '_');
  return Object.prototype.hasOwnProperty.call(ERROR_CATALOGUE, code) ? (code as ErrorCode) : undefined;
}

export interface Problem {
  type: string;
  title: string;
  status: number;
  detail: string;
  code: ErrorCode;
  instance?: string;
  errors?: FieldProblem[];
  /** For formula and equation errors: the text and a caret line under the bad character. */
  text?: string;
  position?: number;
  caret?: string;
  params?: Record<string, unknown>;
}

export function problem(code: ErrorCode, detail: string, extra: Partial<Problem> = {}): Problem {
  return {
    type: problemType(code),
    title: ERROR_CATALOGUE[code].title,
    status: statusOf(code),
    detail,
    code,
    ...extra,
  };
}

export function problemFromDomainError(e: DomainError, instance?: string): Problem {
  const p = problem(e.code, e.detail, {});
  if (instance) p.instance = instance;
  if (e.fields.length > 0) p.errors = [...e.fields];
  if (e.text !== undefined) p.text = e.text;
  if (e.position !== undefined) p.position = e.position;
  const caret = e.caret();
  if (caret !== undefined) p.caret = caret;
  if (Object.keys(e.params).length > 0) p.params = jsonSafe(e.params) as Record<string, unknown>;
  return p;
}

function jsonSafe(x: unknown): unknown {
  return JSON.parse(JSON.stringify(x, (_k, v) => (typeof v === 'bigint' ? v.toString() : v)));
}

export function sendProblem(reply: FastifyReply, p: Problem): FastifyReply {
  return reply.code(p.status).header('content-type', PROBLEM_CONTENT_TYPE).send(JSON.stringify(p));
}

/** An ajv error as Fastify hands it over (only the fields we read). */
export interface AjvLikeError {
  instancePath?: string;
  keyword?: string;
  message?: string;
  params?: Record<string, unknown>;
  schemaPath?: string;
}

function describeValue(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (typeof v === 'number' && !Number.isFinite(v)) return Number.isNaN(v) ? 'not a number' : `a number beyond ${v > 0 ? '+' : '−'}1.8e308`;
  const s = JSON.stringify(v);
  return s.length > 40 ? s.slice(0, 37) + '...' : s;
}

export function valueAt(root: unknown, pointer: string): unknown {
  if (pointer === '') return root;
  let cur: unknown = root;
  for (const raw of pointer.split('/').slice(1)) {
    const key = raw.replace(/~1/g, '/').replace(/~0/g, '~');
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<string, unknown>)[key];
  }
  return cur;
}

function escapeToken(t: string): string {
  return t.replace(/~/g, '~0').replace(/\//g, '~1');
}

/**
 * Turn ajv errors into field problems with proper RFC 6901 pointers (ajv's instancePath
 * already is one; a missing or unknown property is appended to it) and sentences
 * that say what is accepted.
 */
export function fieldProblemsFromAjv(errors: readonly AjvLikeError[], data: unknown, prefix = ''): FieldProblem[] {
  const out: FieldProblem[] = [];
  const seen = new Set<string>();
  // anyOf/oneOf produce a summary error plus one per branch; keep the most specific ones.
  for (const err of errors) {
    const base = err.instancePath ?? '';
    const params = err.params ?? {};
    let pointer = base;
    let message: string;
    const got = valueAt(data, base);
    switch (err.keyword) {
      case 'required': {
        const missing = String(params['missingProperty'] ?? '');
        pointer = `${base}/${escapeToken(missing)}`;
        message = `"${missing}" is required`;
        break;
      }
      case 'additionalProperties': {
        const extra = String(params['additionalProperty'] ?? '');
        pointer = `${base}/${escapeToken(extra)}`;
        message = `"${extra}" is not a known field here (check its spelling)`;
        break;
      }
      case 'enum': {
        const allowed = (params['allowedValues'] as unknown[] | undefined) ?? [];
        message = `must be one of ${allowed.map((a) => JSON.stringify(a)).join(', ')}; got ${describeValue(got)}`;
        break;
      }
      case 'const':
        message = `must be ${JSON.stringify(params['allowedValue'])}; got ${describeValue(got)}`;
        break;
      case 'type':
        message = `must be of type ${String(params['type'])}; got ${describeValue(got)}`;
        break;
      case 'minimum':
      case 'maximum':
      case 'exclusiveMinimum':
      case 'exclusiveMaximum': {
        const op = { minimum: '>=', maximum: '<=', exclusiveMinimum: '>', exclusiveMaximum: '<' }[err.keyword];
        message = `must be ${op} ${String(params['limit'])}; got ${describeValue(got)}`;
        break;
      }
      case 'minLength':
      case 'maxLength':
        message = `${err.message ?? 'has the wrong length'}; got ${describeValue(got)}`;
        break;
      case 'pattern':
      case 'format':
        message = `${err.message ?? 'has the wrong format'}; got ${describeValue(got)}`;
        break;
      case 'anyOf':
      case 'oneOf':
        message = `does not match any accepted form; got ${describeValue(got)}`;
        break;
      default:
        message = `${err.message ?? 'is not valid'}; got ${describeValue(got)}`;
    }
    const full = prefix + pointer;
    const key = `${full}|${message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    out.push({ pointer: full, message });
  }
  // If both a summary anyOf error and specific branch errors exist at the same pointer, the
  // branch errors are more useful; drop the summary only when something more specific exists.
  const specific = new Set(out.filter((p) => !p.message.startsWith('does not match any accepted form')).map((p) => p.pointer));
  return out.filter((p) => !(p.message.startsWith('does not match any accepted form') && [...specific].some((s) => s.startsWith(p.pointer + '/') || s === p.pointer)));
}

export function validationProblem(fields: FieldProblem[], where: string): Problem {
  const first = fields[0];
  const detail =
    fields.length === 1 && first
      ? `${where} field ${first.pointer || '(root)'}: ${first.message}`
      : `${fields.length} ${where} fields are invalid: ${fields.map((f) => f.pointer || '(root)').join(', ')}`;
  return problem('VALIDATION_FAILED', detail, { errors: fields });
}

interface ZodLikeIssue {
  path: readonly PropertyKey[];
  message: string;
  code?: string;
  keys?: readonly string[];
  errors?: readonly (readonly ZodLikeIssue[])[];
}

/** Field problems from zod issues (the failure path only), with RFC 6901 pointers. */
export function fieldProblemsFromZod(issues: readonly ZodLikeIssue[], data: unknown, prefix = ''): FieldProblem[] {
  const out: FieldProblem[] = [];
  const push = (path: readonly PropertyKey[], message: string) => {
    const pointer = prefix + path.map((p) => '/' + escapeToken(String(p))).join('');
    const got = valueAt(data, path.map((p) => '/' + escapeToken(String(p))).join(''));
    const suffix = got !== undefined && typeof got !== 'object' ? `; got ${describeValue(got)}` : '';
    out.push({ pointer, message: message + suffix });
  };
  for (const iss of issues) {
    if (iss.code === 'unrecognized_keys' && iss.keys) {
      // Keep the list of accepted fields when the schema's own message states it.
      const accepted = /accepted: (.+)$/.exec(iss.message)?.[1];
      for (const k of iss.keys) {
        const pointer = prefix + [...iss.path, k].map((p) => '/' + escapeToken(String(p))).join('');
        out.push({ pointer, message: `"${k}" is not a known field here (check its spelling)${accepted ? `; accepted: ${accepted}` : ''}` });
      }
      continue;
    }
    if (iss.code === 'invalid_union' && iss.errors && iss.errors.length) {
      // Report the branch with the fewest problems: the form the caller most likely meant.
      const best = [...iss.errors].sort((a, b) => a.length - b.length)[0]!;
      for (const sub of best) push([...iss.path, ...sub.path], sub.message);
      continue;
    }
    if (iss.code === 'invalid_type' && valueAt(data, iss.path.map((p) => '/' + escapeToken(String(p))).join('')) === undefined) {
      push(iss.path, `"${String(iss.path[iss.path.length - 1] ?? '')}" is required`);
      continue;
    }
    push(iss.path, iss.message);
  }
  return out;
}

/**
 * What a JSON number beyond the double range (1e400, which JSON.parse reads as Infinity) means to
 * the caller: the figure is too large, not a missing number.
 */
export const NON_FINITE_MESSAGE = 'the number is too large: it is beyond ±1.8e308, the largest a JSON number can hold here (not a finite number); check the reading and its unit';

/** The message for a request (or body) that is missing or is not the JSON object the route takes. */
export function bodyNotObjectMessage(body: unknown): string {
  if (body === undefined) return 'the request body is missing: this route takes a JSON object, sent with content-type application/json';
  const what = body === null ? 'null' : Array.isArray(body) ? 'an array' : typeof body === 'string' ? 'a string' : typeof body;
  return `the request body must be a JSON object {…}; got ${what}`;
}

/**
 * Field problems restated from the value the caller sent, whichever check found them (ajv, zod or
 * the domain): a number beyond the double range is "too large", and a date or date-time written in
 * the right form but naming no real day ("2026-02-30T07:30:00Z") says there is no such date instead
 * of "not ISO 8601". `data` are the inputs to look the pointer up in (body, then query).
 */
export function explainFieldValues(fields: readonly FieldProblem[], ...data: unknown[]): { fields: FieldProblem[]; changed: boolean } {
  let changed = false;
  const out = fields.map((f) => {
    for (const root of data) {
      const v = valueAt(root, f.pointer);
      if (typeof v === 'number' && !Number.isFinite(v)) {
        changed = true;
        return { pointer: f.pointer, message: NON_FINITE_MESSAGE };
      }
      if (typeof v === 'string') {
        const why = calendarProblem(v, /YYYY-MM-DD/.test(f.message) ? 'date-or-date-time' : 'date-time');
        if (why && !f.message.startsWith(why)) {
          changed = true;
          return { pointer: f.pointer, message: `${why}; got ${describeValue(v)}` };
        }
        if (why) return f;
      }
      if (v !== undefined) return f;
    }
    return f;
  });
  return { fields: out, changed };
}
