/** Shared shapes of the dosing results. */
import type { Dec as DecT } from '../core/decimal.js';
import { roundSigNumber } from './round.js';

export type Severity = 'info' | 'warning' | 'danger';

/** One flag: a stable code, how serious, a sentence for the operator, and where the rule or limit comes from. */
export interface Flag {
  readonly code: string;
  readonly severity: Severity;
  readonly message: string;
  /** Source id (tables/sources.json) or a short citation, or "input" for a rule about the request itself. */
  readonly source: string;
}

/**
 * A reported number: `value` is the full value (as a JSON number), `rounded` the figure to
 * print: `value` rounded to significant figures, half to even (the rule of `roundSig`, applied
 * to the JSON number's shortest decimal form by `roundSigNumber`).
 */
export interface Reported {
  readonly value: number;
  readonly unit: string;
  readonly rounded: string;
}

export const REPORT_SIG_FIGS = 3;

export function reported(x: DecT | number, unit: string, sig = REPORT_SIG_FIGS): Reported {
  const value = typeof x === 'number' ? x : x.toNumber();
  return { value, unit, rounded: roundSigNumber(value, sig) };
}
