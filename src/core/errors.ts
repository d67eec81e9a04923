/**
 * The one error catalogue. Every error the service can report has a code here.
 * Codes are public (they appear in problem details as the `type` suffix and `code`)
 * and are never reused for a different meaning. Only `src/http/problem.ts`
 * maps the `kind` of an error to an HTTP status.
 *
 * kind:
 *   invalid       - the input is malformed or out of range (HTTP 400)
 *   unprocessable - well-formed input whose chemistry cannot be done (HTTP 422)
 *   not-found     - a referenced thing does not exist (HTTP 404)
 *   method-not-allowed - the path exists but not with this method (HTTP 405, with an Allow header)
 *   not-acceptable - no representation the Accept header allows (HTTP 406, RFC 9110 §15.5.7)
 *   conflict      - the request clashes with stored state (HTTP 409)
 *   unauthenticated / forbidden - access (HTTP 401 / 403)
 *   too-large / unsupported-media / rate-limited - HTTP 413 / 415 / 429
 *   unavailable   - a dependency refused (HTTP 503)
 *   internal      - a bug (HTTP 500)
 */
export type ErrorKind =
  | 'invalid'
  | 'unprocessable'
  | 'not-found'
  | 'method-not-allowed'
  | 'not-acceptable'
  | 'conflict'
  | 'unauthenticated'
  | 'forbidden'
  | 'too-large'
  | 'unsupported-media'
  | 'rate-limited'
  | 'unavailable'
  | 'internal';

export interface CatalogueEntry {
  readonly kind: ErrorKind;
  readonly title: string;
}

export const ERROR_CATALOGUE = {
  // request validation (HTTP shell)
  VALIDATION_FAILED: { kind: 'invalid', title: 'The request has invalid fields' },
  BODY_NOT_JSON: { kind: 'invalid', title: 'The request body is not valid JSON' },
  BODY_TOO_LARGE: { kind: 'too-large', title: 'The request body is too large' },
  MEDIA_TYPE_UNSUPPORTED: { kind: 'unsupported-media', title: 'The request body is not JSON' },
  ROUTE_NOT_FOUND: { kind: 'not-found', title: 'No such route' },
  METHOD_NOT_ALLOWED: { kind: 'method-not-allowed', title: 'The path does not take this method' },
  RATE_LIMITED: { kind: 'rate-limited', title: 'Too many requests' },
  NOT_ACCEPTABLE: { kind: 'not-acceptable', title: 'The requested representation is not available' },

  // formulas
  FORMULA_EMPTY: { kind: 'invalid', title: 'Empty formula' },
  FORMULA_SYNTAX: { kind: 'invalid', title: 'Malformed formula' },
  FORMULA_UNKNOWN_ELEMENT: { kind: 'invalid', title: 'Unknown element in formula' },
  FORMULA_AMBIGUOUS_CHARGE: { kind: 'invalid', title: 'Ambiguous charge in formula' },
  EQUATION_SYNTAX: { kind: 'invalid', title: 'Malformed equation' },

  // balancing
  BALANCE_IMPOSSIBLE: { kind: 'unprocessable', title: 'The species cannot be balanced' },
  BALANCE_NOT_UNIQUE: { kind: 'unprocessable', title: 'The balance is not unique' },
  BALANCE_WRONG_SIDE: { kind: 'unprocessable', title: 'A species would have to change sides to balance' },
  BALANCE_NOT_REDOX: { kind: 'unprocessable', title: 'The couple transfers no electrons' },
  BALANCE_COUPLE_DIRECTION: { kind: 'unprocessable', title: 'The couple runs the wrong way for its role' },
  BALANCE_TOO_LARGE: { kind: 'invalid', title: 'Too many species to balance' },

  // thermodynamics
  POTENTIAL_NOT_DERIVABLE: { kind: 'unprocessable', title: 'No combination of tabled reactions gives this half-reaction' },
  SITE_VALUE_MEDIUM_UNCLEAR: { kind: 'invalid', title: 'A site value reads as the E° of the other form of its couple' },
  ACTIVITY_INVALID: { kind: 'invalid', title: 'An activity or concentration is not usable' },
  CONDITIONS_OUT_OF_RANGE: { kind: 'invalid', title: 'Conditions outside the range the method covers' },

  // reference tables
  TABLE_INVALID: { kind: 'internal', title: 'A reference table failed validation' },
  TABLE_ROW_NOT_FOUND: { kind: 'not-found', title: 'No such table row' },

  // units and quantities
  UNIT_UNKNOWN: { kind: 'invalid', title: 'Unit not accepted for this quantity' },
  QUANTITY_OUT_OF_RANGE: { kind: 'invalid', title: 'Quantity out of range' },

  // dosing
  OXIDANT_UNKNOWN: { kind: 'invalid', title: 'Unknown oxidant product' },
  CONTAMINANT_UNKNOWN: { kind: 'invalid', title: 'Unknown contaminant' },
  PRODUCT_STRENGTH_REQUIRED: { kind: 'invalid', title: 'Product strength is needed for a solution feed rate' },
  PLANT_NOT_FOUND: { kind: 'not-found', title: 'No such plant profile' },
  PLANT_INVALID: { kind: 'invalid', title: 'The plant profile is not valid' },
  DOSE_INPUT_MISSING: { kind: 'invalid', title: 'A required input for the dose is missing' },
  READING_IMPLAUSIBLE: { kind: 'unprocessable', title: 'A reading is beyond what a raw water source holds' },
  DENSITY_NOT_TABLED: { kind: 'unprocessable', title: 'No tabled density for this product strength' },

  // jar tests
  JAR_TEST_INVALID: { kind: 'invalid', title: 'The jar test is not valid' },
  JAR_TEST_TOO_FEW_POINTS: { kind: 'unprocessable', title: 'Too few jars kept a measurable residual to fit a demand line' },

  // sheets, signing, archive
  SHEET_NOT_FOUND: { kind: 'not-found', title: 'No such sheet' },
  SHEET_SUPERSEDES_UNKNOWN: { kind: 'invalid', title: 'The sheet to supersede does not exist' },
  SHEET_ALREADY_SUPERSEDED: { kind: 'conflict', title: 'That sheet has already been superseded' },
  SHEET_SUPERSEDES_OTHER: { kind: 'invalid', title: 'A correction must be of the same kind and plant as the sheet it supersedes' },
  SIGNER_INVALID: { kind: 'invalid', title: 'The signing certificate cannot be used' },
  ARCHIVE_TOO_NEW: { kind: 'unavailable', title: 'The archive was written by a newer version' },
  ARCHIVE_CORRUPT: { kind: 'internal', title: 'The archive failed verification' },
  // a stored row the request depends on (the token's user, a signer, a plant profile version) fails its hash check: the service refuses to act on it
  ARCHIVE_RECORD_ALTERED: { kind: 'conflict', title: 'An archived record fails its integrity check' },
  ID_INVALID: { kind: 'invalid', title: 'The id is not valid' },
  CONFIG_INVALID: { kind: 'internal', title: 'A configuration setting is not valid' },

  // users and access
  AUTH_REQUIRED: { kind: 'unauthenticated', title: 'A valid bearer token is required' },
  AUTH_FORBIDDEN: { kind: 'forbidden', title: 'Your role does not allow this' },
  USER_EXISTS: { kind: 'conflict', title: 'A user with that name exists' },

  INTERNAL: { kind: 'internal', title: 'Internal error' },
} as const satisfies Record<string, CatalogueEntry>;

export type ErrorCode = keyof typeof ERROR_CATALOGUE;

/** One bad field: an RFC 6901 JSON pointer into the request and a sentence about it. */
export interface FieldProblem {
  readonly pointer: string;
  readonly message: string;
}

export interface DomainErrorOptions {
  /** Sentence for the operator: what is wrong and what is accepted. */
  readonly detail: string;
  /** Structured parameters (echoed in problem details). */
  readonly params?: Readonly<Record<string, unknown>>;
  /** Fields at fault, as JSON pointers relative to the domain input. */
  readonly fields?: readonly FieldProblem[];
  /** For text inputs (formulas, equations): the input and the 0-based character position at fault. */
  readonly text?: string;
  readonly position?: number;
}

/** A domain error is data: a catalogue code, a detail sentence, parameters and where the bad input is. */
export class DomainError extends Error {
  readonly code: ErrorCode;
  readonly detail: string;
  readonly params: Readonly<Record<string, unknown>>;
  readonly fields: readonly FieldProblem[];
  readonly text: string | undefined;
  readonly position: number | undefined;

  constructor(code: ErrorCode, options: DomainErrorOptions) {
    super(`${code}: ${options.detail}`);
    this.name = 'DomainError';
    this.code = code;
    this.detail = options.detail;
    this.params = options.params ?? {};
    this.fields = options.fields ?? [];
    this.text = options.text;
    this.position = options.position;
  }

  get title(): string {
    return ERROR_CATALOGUE[this.code].title;
  }

  /** Two lines that point at the bad character: the text, then a caret under position. */
  caret(): string | undefined {
    if (this.text === undefined || this.position === undefined) return undefined;
    return `${this.text}\n${' '.repeat(Math.max(0, this.position))}^`;
  }

  /** The same error with its fields rewritten (e.g. a module's own field names mapped to a request's). */
  withFields(map: (fields: readonly FieldProblem[]) => FieldProblem[], detail: string = this.detail): DomainError {
    return new DomainError(this.code, {
      detail,
      params: this.params,
      fields: map(this.fields),
      ...(this.text !== undefined ? { text: this.text } : {}),
      ...(this.position !== undefined ? { position: this.position } : {}),
    });
  }

  /** The same error with every field pointer placed under a prefix (e.g. '/oxidant/from'). */
  under(prefix: string): DomainError {
    const fields = this.fields.length > 0
      ? this.fields.map((f) => ({ pointer: prefix + f.pointer, message: f.message }))
      : [{ pointer: prefix, message: this.detail }];
    return new DomainError(this.code, {
      detail: this.detail,
      params: this.params,
      fields,
      ...(this.text !== undefined ? { text: this.text } : {}),
      ...(this.position !== undefined ? { position: this.position } : {}),
    });
  }
}

export function isDomainError(e: unknown): e is DomainError {
  return e instanceof DomainError;
}

/** Escape one JSON-pointer reference token (RFC 6901 §3). */
export function pointerToken(token: string | number): string {
  return String(token).replace(/~/g, '~0').replace(/\//g, '~1');
}

/** Build an RFC 6901 pointer from path segments. */
export function toPointer(path: readonly (string | number)[]): string {
  return path.map((p) => '/' + pointerToken(p)).join('');
}
