/**
 * Typesetting runs for chemical formulas and equations, for the PDF only.
 *
 * Each formula goes first through the formula layer's `formulaRuns`
 * (src/chemistry/formula, the parser that decides what a formula means). Where it
 * refuses the text (an ambiguous charge such as "SO42-", "Fe+3") or would print other
 * characters than written (it drops a count of 1: "K1" is K₁, a constant, in free text),
 * a small splitter of our own decides what is lowered or raised, so that a sheet never
 * fails to print. Same run shape as the formula layer's runs.
 *
 * Rules of the fallback splitter, applied to one formula token:
 * - digits after an element symbol, ")" or "]" are subscripts (H2O, Fe(OH)3);
 * - digits at the start, or after "·" or "*", are coefficients (5H2O in CuSO4·5H2O);
 * - an explicit "^" starts the charge (SO4^2-, Fe^3+);
 * - otherwise a trailing sign is the charge; digits just before it belong to the
 *   charge only when the body is a single element symbol (Fe2+, Mn2+), so MnO4- is
 *   MnO₄⁻ and NH4+ is NH₄⁺; with two or more digits before a single sign the last
 *   digit is the charge (SO42- → SO₄²⁻); "+2"/"-2" after the body is also a charge;
 * - a phase suffix (s), (l), (g), (aq) stays on the base line;
 * - the minus of a charge is printed as U+2212 MINUS SIGN.
 */
import { formulaRuns as layerRuns } from '../chemistry/formula/index.js';

export type Script = 'base' | 'sub' | 'sup';

export interface FormulaRun {
  readonly text: string;
  readonly script: Script;
}

const MINUS = '\u2212';
const PHASE = /\((?:s|l|g|aq)\)$/;
const SINGLE_ELEMENT = /^[A-Z][a-z]?$/;

function push(runs: FormulaRun[], text: string, script: Script): void {
  if (text.length === 0) return;
  const last = runs[runs.length - 1];
  if (last && last.script === script) runs[runs.length - 1] = { text: last.text + text, script };
  else runs.push({ text, script });
}

function chargeText(charge: string): string {
  return charge.replace(/-/g, MINUS);
}

/** Body (no charge, no phase): subscripts after symbols and closing brackets. */
function bodyRuns(runs: FormulaRun[], body: string): void {
  let i = 0;
  let atStart = true;
  while (i < body.length) {
    const ch = body[i]!;
    if (/[0-9]/.test(ch)) {
      let j = i;
      while (j < body.length && /[0-9.]/.test(body[j]!)) j++;
      const digits = body.slice(i, j);
      push(runs, digits, atStart ? 'base' : 'sub');
      i = j;
      continue;
    }
    atStart = ch === '·' || ch === '*' || ch === ' ';
    push(runs, ch === '*' ? '·' : ch, 'base');
    i++;
  }
}

const cache = new Map<string, FormulaRun[]>();

/** What a run list prints, for comparison with the text written ("^" dropped, "-" as −, "*" and "." of hydrates as ·). */
function printed(runs: readonly FormulaRun[]): string {
  return runs.map((r) => r.text).join('');
}

function asWritten(text: string): string {
  return text.replace(/\^/g, '').replace(/-/g, MINUS).replace(/[*]/g, '·');
}

/** Runs for one formula: "MnO4-" → MnO, ₄, ⁻ (the formula layer's, else the fallback splitter's). */
export function formulaRuns(text: string): FormulaRun[] {
  const hit = cache.get(text);
  if (hit) return hit;
  let runs: FormulaRun[];
  try {
    const parsed = layerRuns(text.trim()).map((r) => ({ text: r.text, script: r.script }));
    runs = printed(parsed) === asWritten(text.trim()) ? parsed : splitFormula(text);
  } catch {
    runs = splitFormula(text);
  }
  if (cache.size > 5000) cache.clear();
  cache.set(text, runs);
  return runs;
}

/** The fallback splitter (rules above). */
export function splitFormula(text: string): FormulaRun[] {
  const runs: FormulaRun[] = [];
  let rest = text.trim();
  let phase = '';
  const phaseMatch = PHASE.exec(rest);
  if (phaseMatch) {
    phase = phaseMatch[0];
    rest = rest.slice(0, rest.length - phase.length);
  }
  if (rest === 'e-' || rest === 'e−') {
    push(runs, 'e', 'base');
    push(runs, MINUS, 'sup');
    push(runs, phase, 'base');
    return runs;
  }
  let body = rest;
  let charge = '';
  const caret = rest.indexOf('^');
  if (caret >= 0) {
    body = rest.slice(0, caret);
    charge = rest.slice(caret + 1);
  } else {
    const signThenDigits = /^(.*[A-Za-z)\]])([+\-−])([0-9]+)$/.exec(rest);
    const digitsThenSign = /^(.*?)([0-9]*)([+\-−]+)$/.exec(rest);
    if (signThenDigits) {
      body = signThenDigits[1]!;
      charge = signThenDigits[3]! + signThenDigits[2]!;
    } else if (digitsThenSign && digitsThenSign[1]!.length > 0) {
      const [, head, digits, signs] = digitsThenSign as unknown as [string, string, string, string];
      if (digits.length > 0 && SINGLE_ELEMENT.test(head)) {
        body = head;
        charge = digits + signs;
      } else if (digits.length >= 2 && signs.length === 1) {
        // SO42-, CO32-, Cr2O72-: the last digit is the charge (write SO4^2- to be explicit)
        body = head + digits.slice(0, -1);
        charge = digits.slice(-1) + signs;
      } else {
        body = head + digits;
        charge = signs;
      }
    }
  }
  bodyRuns(runs, body);
  push(runs, chargeText(charge), 'sup');
  push(runs, phase, 'base');
  return runs;
}

const OPERATORS: Readonly<Record<string, string>> = {
  '+': '+',
  '=': '→',
  '->': '→',
  '→': '→',
  '<=>': '⇌',
  '⇌': '⇌',
  '<->': '⇌',
};

/**
 * Runs for an equation written with spaces around "+" and the arrow, as the tables
 * and the balancer write them: "MnO4- + 8H+ + 5e- = Mn2+ + 4H2O". Coefficients stay
 * on the base line; "=" and "->" print as →, "<=>" as ⇌.
 */
export function equationRuns(text: string): FormulaRun[] {
  const runs: FormulaRun[] = [];
  const tokens = text.trim().split(/\s+/).filter((t) => t.length > 0);
  tokens.forEach((token, index) => {
    if (index > 0) push(runs, ' ', 'base');
    const op = OPERATORS[token];
    if (op !== undefined) {
      push(runs, op, 'base');
      return;
    }
    const coefficient = /^([0-9]+(?:[./][0-9]+)?)(?=[A-Z(\[e])/.exec(token);
    let formula = token;
    if (coefficient) {
      push(runs, coefficient[1]!, 'base');
      formula = token.slice(coefficient[1]!.length);
    }
    for (const r of formulaRuns(formula)) push(runs, r.text, r.script);
  });
  return runs;
}

/** The runs as one plain string with Unicode sub- and superscript digits (for text output). */
export function runsToUnicode(runs: readonly FormulaRun[]): string {
  const SUB: Record<string, string> = { '0': '₀', '1': '₁', '2': '₂', '3': '₃', '4': '₄', '5': '₅', '6': '₆', '7': '₇', '8': '₈', '9': '₉', '.': '.' };
  const SUP: Record<string, string> = { '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '+': '⁺', '-': '⁻', [MINUS]: '⁻' };
  return runs
    .map((r) => {
      if (r.script === 'base') return r.text;
      const table = r.script === 'sub' ? SUB : SUP;
      return [...r.text].map((c) => table[c] ?? c).join('');
    })
    .join('');
}
