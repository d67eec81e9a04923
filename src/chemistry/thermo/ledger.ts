/**
 * The thermodynamic ledger: every tabled redox and equilibrium row parsed once into a
 * reaction vector over species keys (products +, reactants −, electrons under "e-") with
 * its standard Gibbs energy, so that any half-reaction that is a linear combination of
 * tabled reactions can be given a standard potential by adding ΔG° (derive.ts).
 *
 * Units. Each row carries g = −ΔG°/F in volts (volt-electrons per reaction as written):
 *   a potential row   g = n·E°            (n = electrons taken up as written; exact rational)
 *   a log K row       g = (RT ln10 / F)·log10 K
 *   a pε° row         g = (RT ln10 / F)·n·pε°
 * so for a combination  E°(reduction) = Σ cᵢ gᵢ / n(target)  and ΔG° = −F·Σ cᵢ gᵢ.
 *
 * Rows that state the same reaction (up to any multiple) form one class; the class lists
 * its rows in the preferred source order (sources.json `preference`, then table order).
 */
import { DomainError } from '../../core/errors.js';
import { Rational } from '../../core/rational.js';
import type { DeltaH, EquilibriumRow, PotentialRow, ReferenceTables, SourceRow, TemperatureExpression } from '../../reference/schemas.js';
import { reactionVector } from '../balance/reaction.js';
import { parseEquation, type ParsedEquation } from '../formula/equation.js';
import { formatFormula, speciesKey } from '../formula/format.js';
import { parseFormula } from '../formula/parse.js';
import type { Species } from '../formula/types.js';

export type LedgerRowKind = 'redox' | 'equilibrium';
export type ReactionVector = ReadonlyMap<string, Rational>;

/** Species keys present in almost every aqueous reaction; the search treats them as free. */
export const KEY_ELECTRON = 'e-';
export const KEY_PROTON = speciesKey(parseFormula('H+'));
export const KEY_HYDROXIDE = speciesKey(parseFormula('OH-'));
export const KEY_WATER = speciesKey(parseFormula('H2O'));
export const UBIQUITOUS_KEYS: ReadonlySet<string> = new Set([KEY_ELECTRON, KEY_PROTON, KEY_HYDROXIDE, KEY_WATER]);

export interface LedgerConstants {
  /** J/(mol·K) */
  readonly R: number;
  /** C/mol */
  readonly F: number;
  /** 273.15 K */
  readonly T0: number;
  /** 298.15 K, the temperature of the tables */
  readonly T25: number;
  readonly F_exact: Rational;
  readonly sources: { readonly R: string; readonly F: string };
}

export interface LedgerRow {
  readonly id: string;
  readonly table: 'potentials' | 'equilibria';
  readonly file: string;
  readonly index: number;
  readonly kind: LedgerRowKind;
  readonly equation: string;
  readonly vector: ReactionVector;
  /** Signed electron coefficient of the vector (negative: taken up, i.e. a reduction as written). */
  readonly electronCoefficient: Rational;
  /** What the source printed, e.g. "E° = 1.507 V", "log K = -13.02", "pε° = 20.8", "pK(T) expression". */
  readonly valueText: string;
  /** g = −ΔG°/F at 25 °C as an exact rational (potential rows only). */
  readonly gExact: Rational | null;
  /** log10 K at 25 °C (log K, pK, pε° and expression rows). */
  readonly log10K25: number | null;
  /** dE°/dT in V/K (potential rows where a table gives it). */
  readonly dEdTVPerK: number | null;
  readonly dEdTSource: string | null;
  /** Temperature expression for log K (equilibria, and logK potential rows where given). */
  readonly temperature: TemperatureExpression | null;
  /** Whether the expression value replaces the printed log K (no printed log K) or only shifts it. */
  readonly expressionIsAbsolute: boolean;
  /** Reaction enthalpy in J/mol for van 't Hoff, where given. */
  readonly deltaHJPerMol: number | null;
  readonly uncertaintyV: number | null;
  readonly source: string;
  readonly sourcePreference: number;
  readonly note: string;
  readonly classKey: string;
}

export interface LedgerClass {
  readonly key: string;
  /** The reference vector of the class: that of its first (preferred) row. */
  readonly vector: ReactionVector;
  readonly kind: LedgerRowKind;
  /** Rows in preferred order, each with λ such that row.vector = λ · class.vector. */
  readonly members: readonly { readonly row: LedgerRow; readonly lambda: Rational }[];
  /** Species keys other than H+, OH-, H2O and e-. */
  readonly specificKeys: readonly string[];
}

export interface Ledger {
  readonly rows: readonly LedgerRow[];
  readonly byId: ReadonlyMap<string, LedgerRow>;
  readonly classes: ReadonlyMap<string, LedgerClass>;
  /** Specific species key → keys of the classes that contain it. */
  readonly classesBySpecies: ReadonlyMap<string, readonly string[]>;
  /** One parsed species per key, for writing derived equations. */
  readonly species: ReadonlyMap<string, Species>;
  readonly constants: LedgerConstants;
  readonly sources: ReadonlyMap<string, SourceRow>;
  /** Derivation cache (derive.ts); per ledger, no global state. */
  readonly cache: Map<string, unknown>;
}

export type LedgerTables = Pick<ReferenceTables, 'potentials' | 'equilibria' | 'sources' | 'constants'> &
  Partial<Pick<ReferenceTables, 'atomicWeights'>>;

function rowError(file: string, index: number, id: string, column: string, reason: string): DomainError {
  return new DomainError('TABLE_INVALID', {
    detail: `tables/${file}, row ${index} (id "${id}"), column "${column}": ${reason}. Fix the table row.`,
    params: { file, row: index, id, column, reason },
    fields: [{ pointer: `/rows/${index}/${column}`, message: reason }],
  });
}

function kcalOrKj(d: DeltaH): number {
  const v = Number(d.value);
  return d.unit === 'kcal/mol' ? v * 4184 : v * 1000;
}

/** Canonical key of a vector up to any non-zero multiple: divide by the coefficient of the first key in sorted order. */
export function classKeyOf(v: ReactionVector): { key: string; scale: Rational } {
  const keys = [...v.keys()].sort();
  if (keys.length === 0) return { key: '', scale: Rational.ONE };
  const scale = v.get(keys[0]!)!;
  return { key: keys.map((k) => `${v.get(k)!.div(scale).toString()} ${k}`).join(' | '), scale };
}

/** Check a parsed reaction conserves every element and the charge. Returns a reason or null. */
function imbalance(eq: ParsedEquation): string | null {
  const totals = new Map<string, Rational>();
  const add = (k: string, c: Rational): void => {
    totals.set(k, (totals.get(k) ?? Rational.ZERO).add(c));
  };
  for (const [terms, sign] of [
    [eq.reactants, -1n],
    [eq.products, 1n],
  ] as const) {
    for (const t of terms) {
      const c = t.coefficient.mul(Rational.of(sign));
      for (const [el, n] of Object.entries(t.species.composition)) add(el, c.mul(Rational.of(n)));
      add('charge', c.mul(Rational.of(t.species.charge)));
    }
  }
  const off = [...totals].filter(([, v]) => !v.isZero());
  if (off.length === 0) return null;
  return `the equation is not balanced (${off.map(([k, v]) => `${k} ${v.sign() > 0 ? '+' : ''}${v.toString()}`).join(', ')} from reactants to products)`;
}

function constantsFrom(tables: LedgerTables): LedgerConstants {
  const get = (id: string) => {
    const row = tables.constants.find((r) => r.id === id);
    if (!row) {
      throw new DomainError('TABLE_ROW_NOT_FOUND', {
        detail: `tables/constants.json has no row "${id}"; the ledger needs R, F, T0 and T25.`,
        params: { table: 'constants', id },
      });
    }
    return row;
  };
  const R = get('R');
  const F = get('F');
  return {
    R: Number(R.value),
    F: Number(F.value),
    T0: Number(get('T0').value),
    T25: Number(get('T25').value),
    F_exact: Rational.fromDecimalString(F.value),
    sources: { R: R.source, F: F.source },
  };
}

/** RT ln10 / F at temperature T (K), in volts. */
export function nernstSlopeV(constants: Pick<LedgerConstants, 'R' | 'F'>, temperatureK: number): number {
  return (constants.R * temperatureK * Math.LN10) / constants.F;
}

/** Value of the temperature expression (log10 K or pK as the row says) at T in K. */
export function expressionValue(t: TemperatureExpression, temperatureK: number): number {
  const c = (name: 'A1' | 'A2' | 'A3' | 'A4' | 'A5' | 'A6'): number => Number(t.coefficients[name] ?? '0');
  const T = temperatureK;
  return c('A1') + c('A2') * T + c('A3') / T + c('A4') * Math.log10(T) + c('A5') / (T * T) + c('A6') * T * T;
}

/** log10 K from the expression (sign per its quantity). */
export function expressionLog10K(t: TemperatureExpression, temperatureK: number): number {
  const v = expressionValue(t, temperatureK);
  return t.quantity === 'pK' ? -v : v;
}

interface ParsedRow {
  readonly eq: ParsedEquation;
  readonly vector: Map<string, Rational>;
}

function parseRow(file: string, index: number, id: string, column: string, text: string, elements: ReadonlySet<string> | undefined): ParsedRow {
  let eq: ParsedEquation;
  try {
    eq = parseEquation(text, elements ? { elements } : {});
  } catch (e) {
    if (e instanceof DomainError) {
      const at = e.position !== undefined ? ` at position ${e.position}` : '';
      throw rowError(file, index, id, column, `the equation "${text}" does not parse${at}: ${e.detail}`);
    }
    throw e;
  }
  const bad = imbalance(eq);
  if (bad) throw rowError(file, index, id, column, bad);
  return { eq, vector: reactionVector(eq) };
}

/**
 * Parse every potentials and equilibria row once and group rows stating the same reaction.
 * Throws TABLE_INVALID naming the file, row, column and reason for a row that does not parse,
 * is not balanced, has the wrong electron count, or contradicts its kind.
 */
export function buildLedger(tables: LedgerTables): Ledger {
  const constants = constantsFrom(tables);
  const sources = new Map(tables.sources.map((s) => [s.id, s]));
  const elements = tables.atomicWeights ? new Set(tables.atomicWeights.map((r) => r.symbol)) : undefined;
  const species = new Map<string, Species>();
  const rows: LedgerRow[] = [];
  const byId = new Map<string, LedgerRow>();

  const remember = (eq: ParsedEquation): void => {
    for (const t of [...eq.reactants, ...eq.products]) {
      const k = speciesKey(t.species);
      if (!species.has(k)) species.set(k, t.species);
    }
  };
  const preferenceOf = (source: string): number => sources.get(source)?.preference ?? Number.MAX_SAFE_INTEGER;

  tables.potentials.forEach((r: PotentialRow, index) => {
    const file = 'potentials.json';
    const { eq, vector } = parseRow(file, index, r.id, 'halfReaction', r.halfReaction, elements);
    const e = vector.get(KEY_ELECTRON) ?? Rational.ZERO;
    if (e.isZero()) throw rowError(file, index, r.id, 'halfReaction', 'a half-reaction must transfer electrons (write "e-"); put non-redox reactions in equilibria.json');
    if (!e.abs().equals(Rational.of(r.electrons))) {
      throw rowError(file, index, r.id, 'electrons', `the equation transfers ${e.abs().toString()} electrons but the row says ${r.electrons}`);
    }
    if ((r.potentialV !== undefined || r.peStandard !== undefined) && e.sign() > 0) {
      throw rowError(file, index, r.id, 'halfReaction', 'a potential (or pε°) row must be written as a reduction, electrons on the left');
    }
    const n = e.neg(); // electrons taken up (positive for a reduction)
    let gExact: Rational | null = null;
    let log10K25: number | null = null;
    let valueText: string;
    if (r.potentialV !== undefined) {
      gExact = n.mul(Rational.fromDecimalString(r.potentialV));
      valueText = `E° = ${r.potentialV} V`;
    } else if (r.peStandard !== undefined) {
      log10K25 = n.toNumber() * Number(r.peStandard);
      valueText = `pε° = ${r.peStandard}`;
    } else {
      log10K25 = Number(r.logK);
      valueText = `log K = ${r.logK}`;
    }
    const row: LedgerRow = {
      id: r.id,
      table: 'potentials',
      file,
      index,
      kind: 'redox',
      equation: eq.text,
      vector,
      electronCoefficient: e,
      valueText,
      gExact,
      log10K25,
      dEdTVPerK: r.dEdTmVPerK !== null ? Number(r.dEdTmVPerK) / 1000 : null,
      dEdTSource: r.dEdTSource ?? null,
      temperature: null,
      expressionIsAbsolute: false,
      deltaHJPerMol: r.deltaH ? kcalOrKj(r.deltaH) : null,
      uncertaintyV: r.uncertaintyV !== null ? Number(r.uncertaintyV) : null,
      source: r.source,
      sourcePreference: preferenceOf(r.source),
      note: r.note,
      classKey: classKeyOf(vector).key,
    };
    remember(eq);
    rows.push(row);
  });

  tables.equilibria.forEach((r: EquilibriumRow, index) => {
    const file = 'equilibria.json';
    const { eq, vector } = parseRow(file, index, r.id, 'reaction', r.reaction, elements);
    if (vector.has(KEY_ELECTRON)) throw rowError(file, index, r.id, 'reaction', 'an equilibrium row must not contain electrons; put redox steps in potentials.json');
    let log10K25: number;
    let valueText: string;
    if (r.logK !== undefined) {
      log10K25 = Number(r.logK);
      valueText = `log K = ${r.logK}`;
    } else if (r.pK !== undefined) {
      log10K25 = -Number(r.pK);
      valueText = `pK = ${r.pK}`;
    } else {
      log10K25 = expressionLog10K(r.temperature!, constants.T25);
      valueText = `${r.temperature!.quantity === 'pK' ? 'pK' : 'log K'}(T) = ${r.temperature!.form} (${Object.entries(r.temperature!.coefficients)
        .map(([k, v]) => `${k} = ${v}`)
        .join(', ')})`;
    }
    const row: LedgerRow = {
      id: r.id,
      table: 'equilibria',
      file,
      index,
      kind: 'equilibrium',
      equation: eq.text,
      vector,
      electronCoefficient: Rational.ZERO,
      valueText,
      gExact: null,
      log10K25,
      dEdTVPerK: null,
      dEdTSource: null,
      temperature: r.temperature ?? null,
      expressionIsAbsolute: r.logK === undefined && r.pK === undefined,
      deltaHJPerMol: r.deltaH ? kcalOrKj(r.deltaH) : null,
      uncertaintyV: null,
      source: r.source,
      sourcePreference: preferenceOf(r.source),
      note: r.note,
      classKey: classKeyOf(vector).key,
    };
    remember(eq);
    rows.push(row);
  });

  for (const row of rows) {
    const other = byId.get(row.id);
    if (other) throw rowError(row.file, row.index, row.id, 'id', `the id is also used by tables/${other.file} row ${other.index}; ids must be unique across potentials and equilibria`);
    byId.set(row.id, row);
  }

  // Group rows into classes, preferred first (source preference, then table order).
  const ordered = rows.map((row, order) => ({ row, order })).sort((a, b) => a.row.sourcePreference - b.row.sourcePreference || a.order - b.order);
  const groups = new Map<string, LedgerRow[]>();
  for (const { row } of ordered) {
    const g = groups.get(row.classKey);
    if (g) g.push(row);
    else groups.set(row.classKey, [row]);
  }
  const classes = new Map<string, LedgerClass>();
  const classesBySpecies = new Map<string, string[]>();
  for (const [key, members] of groups) {
    const first = members[0]!;
    const kinds = new Set(members.map((m) => m.kind));
    if (kinds.size > 1) {
      const eqRow = members.find((m) => m.kind === 'equilibrium')!;
      throw rowError(eqRow.file, eqRow.index, eqRow.id, 'reaction', `states the same reaction as potentials row "${members.find((m) => m.kind === 'redox')!.id}"`);
    }
    const [k0] = [...first.vector.keys()].sort();
    const ref = first.vector.get(k0!)!;
    const cls: LedgerClass = {
      key,
      vector: first.vector,
      kind: first.kind,
      members: members.map((row) => ({ row, lambda: row.vector.get(k0!)!.div(ref) })),
      specificKeys: [...first.vector.keys()].filter((k) => !UBIQUITOUS_KEYS.has(k)).sort(),
    };
    classes.set(key, cls);
    for (const s of cls.specificKeys) {
      const list = classesBySpecies.get(s);
      if (list) list.push(key);
      else classesBySpecies.set(s, [key]);
    }
  }

  return { rows, byId, classes, classesBySpecies, species, constants, sources, cache: new Map() };
}

/** g = −ΔG°/F (V) of a row at 25 °C, as a plain number. */
export function rowG25(row: LedgerRow, constants: Pick<LedgerConstants, 'R' | 'F' | 'T25'>): number {
  if (row.gExact) return row.gExact.toNumber();
  return nernstSlopeV(constants, constants.T25) * row.log10K25!;
}

/** E° of the reduction for a redox row at 25 °C (V): g / electrons taken up. */
export function rowStandardPotentialV(row: LedgerRow, constants: Pick<LedgerConstants, 'R' | 'F' | 'T25'>): number {
  if (row.kind !== 'redox') throw new RangeError(`row ${row.id} is not a redox row`);
  if (row.gExact) return row.gExact.div(row.electronCoefficient.neg()).toNumber();
  return rowG25(row, constants) / row.electronCoefficient.neg().toNumber();
}

/** Plain-text equation for a vector: reactants (negative) = products (positive), coefficients as rationals. */
export function vectorEquation(v: ReactionVector, ledger: Pick<Ledger, 'species'>): string {
  const side = (sign: 1 | -1): string =>
    [...v]
      .filter(([, c]) => c.sign() === sign)
      .sort(([a], [b]) => (a === KEY_ELECTRON ? 1 : 0) - (b === KEY_ELECTRON ? 1 : 0))
      .map(([k, c]) => {
        const a = c.abs();
        const coef = a.equals(Rational.ONE) ? '' : a.isInteger() ? a.toString() : `${a.toString()} `;
        const sp = ledger.species.get(k);
        return coef + (k === KEY_ELECTRON ? 'e-' : sp ? formatFormula(sp) : k);
      })
      .join(' + ');
  return `${side(-1)} = ${side(1)}`;
}
