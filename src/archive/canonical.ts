/**
 * Canonical JSON and SHA-256 for the archive.
 *
 * Canonical JSON (the rules of RFC 8785, JSON Canonicalization Scheme, for the values we store):
 *   - no whitespace;
 *   - object members sorted by key, comparing UTF-16 code units (JavaScript's default string order);
 *   - members whose value is `undefined` are left out (as JSON.stringify does); `undefined` in an array is null;
 *   - strings and numbers written as ECMAScript JSON.stringify writes them (shortest round-trip numbers,
 *     -0 as 0, lone surrogates escaped), which is what RFC 8785 §3.2.2 prescribes;
 *   - NaN and ±Infinity are refused rather than silently turned into null;
 *   - an object with toJSON() (a Date) is replaced by what toJSON() returns.
 * The same value therefore always gives the same text, and the same text the same hash.
 */
import { createHash } from 'node:crypto';
import { DomainError } from '../core/errors.js';

/** prev_hash of the first record of a chain: 64 zeros. */
export const ZERO_HASH = '0'.repeat(64);

/** Lowercase hex SHA-256 of bytes or of a string's UTF-8. */
export function sha256Hex(data: Uint8Array | string): string {
  return createHash('sha256').update(data).digest('hex');
}

/** True for a lowercase hex SHA-256 digest. */
export function isSha256Hex(text: unknown): text is string {
  return typeof text === 'string' && /^[0-9a-f]{64}$/.test(text);
}

function refuse(trail: readonly (string | number)[], what: string): never {
  // RFC 6901 pointer of the value, built only when it is needed
  const path = trail.map((k) => '/' + String(k).replace(/~/g, '~0').replace(/\//g, '~1')).join('');
  throw new DomainError('INTERNAL', {
    detail: `Cannot store ${what} at ${path || '/'} as JSON; only null, booleans, finite numbers, strings, arrays and plain objects can be archived.`,
    params: { pointer: path },
  });
}

/** `trail` is the keys from the root to `value` (pushed and popped as the walk goes). */
function write(value: unknown, trail: (string | number)[], out: string[], seen: Set<object>): void {
  if (value === null) {
    out.push('null');
    return;
  }
  switch (typeof value) {
    case 'boolean':
      out.push(value ? 'true' : 'false');
      return;
    case 'number':
      if (!Number.isFinite(value)) refuse(trail, String(value));
      out.push(JSON.stringify(value));
      return;
    case 'string':
      out.push(JSON.stringify(value));
      return;
    case 'bigint':
      refuse(trail, 'a bigint');
    // eslint-disable-next-line no-fallthrough
    case 'undefined':
    case 'function':
    case 'symbol':
      refuse(trail, `a ${typeof value}`);
    // eslint-disable-next-line no-fallthrough
    default:
      break;
  }
  const obj = value as object;
  if (typeof (obj as { toJSON?: unknown }).toJSON === 'function') {
    write((obj as { toJSON: () => unknown }).toJSON(), trail, out, seen);
    return;
  }
  if (seen.has(obj)) refuse(trail, 'a circular reference');
  seen.add(obj);
  if (Array.isArray(obj)) {
    out.push('[');
    for (let i = 0; i < obj.length; i++) {
      if (i > 0) out.push(',');
      const item: unknown = obj[i];
      trail.push(i);
      write(item === undefined ? null : item, trail, out, seen);
      trail.pop();
    }
    out.push(']');
  } else if (ArrayBuffer.isView(obj)) {
    refuse(trail, 'binary data');
  } else {
    const record = obj as Record<string, unknown>;
    const keys = Object.keys(record)
      .filter((k) => record[k] !== undefined)
      .sort();
    out.push('{');
    for (let i = 0; i < keys.length; i++) {
      const k = keys[i]!;
      if (i > 0) out.push(',');
      out.push(JSON.stringify(k), ':');
      trail.push(k);
      write(record[k], trail, out, seen);
      trail.pop();
    }
    out.push('}');
  }
  seen.delete(obj);
}

/** Canonical JSON text of a JSON value (rules above). */
export function canonicalJson(value: unknown): string {
  const out: string[] = [];
  write(value, [], out, new Set());
  return out.join('');
}
