/**
 * Identity and typesetting of species: the matching key, plain text, Unicode text
 * with sub- and superscripts, and runs of base/sub/sup text for PDF typesetting.
 */
import { parseFormulaAst, type FormulaAst, type Item, type ParseOptions } from './parse.js';
import type { Species } from './types.js';

/** Element symbols in Hill order: C, then H, then the rest alphabetically; without carbon, all alphabetically. */
export function hillOrder(symbols: Iterable<string>): string[] {
  const all = [...new Set(symbols)];
  const hasCarbon = all.includes('C');
  const rest = all.filter((s) => !(hasCarbon && (s === 'C' || s === 'H'))).sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  if (!hasCarbon) return rest;
  return ['C', ...(all.includes('H') ? ['H'] : []), ...rest];
}

/** Composition in Hill order, e.g. {Fe:1,O:3,H:3} → "FeH3O3". Counts of zero are left out. */
export function hillFormula(composition: Readonly<Record<string, number>>): string {
  const symbols = Object.keys(composition).filter((s) => (composition[s] ?? 0) !== 0);
  return hillOrder(symbols)
    .map((s) => {
      const n = composition[s] ?? 0;
      return n === 1 ? s : `${s}${n}`;
    })
    .join('');
}

/** Charge in the unambiguous ^ form: "", "^+", "^2-". */
export function chargeSuffix(charge: number): string {
  if (charge === 0) return '';
  const magnitude = Math.abs(charge);
  return `^${magnitude === 1 ? '' : magnitude}${charge > 0 ? '+' : '-'}`;
}

export function isElectron(s: Species): boolean {
  return Object.keys(s.composition).length === 0 && s.charge === -1;
}

/**
 * The identity used to match species across tables and requests: composition in Hill
 * order, then the charge in ^ form, then "(g)" for a gas. Other phase labels do not change
 * the key ("Fe(OH)3(s)" and "Fe(OH)3" match; "O2(g)" and "O2" do not). The electron is "e-".
 * Hydrate water counts as composition ("CuSO4·5H2O" → "CuH10O9S").
 */
export function speciesKey(s: Species): string {
  if (isElectron(s)) return 'e-';
  return hillFormula(s.composition) + chargeSuffix(s.charge) + (s.phase === 'g' ? '(g)' : '');
}

/** Plain text of a species as written (phase kept). A species built without text gets its Hill formula and ^ charge. */
export function formatFormula(s: Species): string {
  const text = s.text.trim();
  if (text !== '') return text;
  if (isElectron(s)) return 'e-';
  return hillFormula(s.composition) + chargeSuffix(s.charge) + (s.phase ? `(${s.phase})` : '');
}

export type Script = 'base' | 'sub' | 'sup';
export interface Run {
  readonly text: string;
  readonly script: Script;
}

/** U+2212 MINUS SIGN, used in superscript charges of runs. */
const MINUS = '−';

function itemRuns(items: readonly Item[], out: Run[]): void {
  for (const item of items) {
    if (item.kind === 'element') {
      out.push({ text: item.symbol, script: 'base' });
    } else {
      out.push({ text: item.bracket, script: 'base' });
      itemRuns(item.items, out);
      out.push({ text: item.bracket === '(' ? ')' : ']', script: 'base' });
    }
    if (item.count !== 1) out.push({ text: String(item.count), script: 'sub' });
  }
}

/** Runs of a parsed formula; adjacent runs of the same script are merged. */
export function astRuns(ast: FormulaAst): Run[] {
  const out: Run[] = [];
  if (ast.electron) {
    out.push({ text: 'e', script: 'base' }, { text: MINUS, script: 'sup' });
    return out;
  }
  ast.parts.forEach((part, k) => {
    if (k > 0) out.push({ text: '·', script: 'base' });
    if (part.multiplier !== null) out.push({ text: String(part.multiplier), script: 'base' });
    itemRuns(part.items, out);
  });
  if (ast.charge !== 0) {
    const magnitude = Math.abs(ast.charge);
    out.push({ text: `${magnitude === 1 ? '' : magnitude}${ast.charge > 0 ? '+' : MINUS}`, script: 'sup' });
  }
  if (ast.phase !== null) out.push({ text: `(${ast.phaseLabel ?? ast.phase})`, script: 'base' });
  return mergeRuns(out);
}

export function mergeRuns(runs: readonly Run[]): Run[] {
  const out: Run[] = [];
  for (const r of runs) {
    if (r.text === '') continue;
    const last = out[out.length - 1];
    if (last && last.script === r.script) out[out.length - 1] = { text: last.text + r.text, script: r.script };
    else out.push(r);
  }
  return out;
}

/**
 * Runs of base, subscript and superscript text for typesetting a formula in a PDF:
 * "Fe(OH)3(s)" → [{Fe(OH), base}, {3, sub}, {(s), base}]; "SO4^2-" → [{SO, base}, {4, sub}, {2−, sup}].
 * Superscript charges use the minus sign U+2212; a hydrate dot is "·". Throws FORMULA_* for a bad formula.
 */
export function formulaRuns(text: string, options: ParseOptions = {}): Run[] {
  return astRuns(parseFormulaAst(text, options).ast);
}

const SUB: Record<string, string> = { '0': '₀', '1': '₁', '2': '₂', '3': '₃', '4': '₄', '5': '₅', '6': '₆', '7': '₇', '8': '₈', '9': '₉' };
const SUP: Record<string, string> = { '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '+': '⁺', '-': '⁻', [MINUS]: '⁻' };

/** Runs as one Unicode string with subscript and superscript characters. */
export function runsToUnicode(runs: readonly Run[]): string {
  return runs
    .map((r) => {
      if (r.script === 'base') return r.text;
      const table = r.script === 'sub' ? SUB : SUP;
      return [...r.text].map((c) => table[c] ?? c).join('');
    })
    .join('');
}

/** "MnO4-" → "MnO₄⁻", "Fe2+" → "Fe²⁺", "SO4^2-" → "SO₄²⁻", "Fe(OH)3(s)" → "Fe(OH)₃(s)", "CuSO4.5H2O" → "CuSO₄·5H₂O". */
export function formatUnicode(text: string, options: ParseOptions = {}): string {
  return runsToUnicode(formulaRuns(text, options));
}
