/**
 * Consistency of the tables: every tabled redox row that can also be derived from other rows
 * (never from itself or from rows stating the same reaction), with the tabled value, the
 * derived value and the discrepancy; and every reaction that two or more rows state, with the
 * spread of their values. A discrepancy above 5 mV is flagged.
 *
 * When deriving a row, rows of the same source are preferred (a handbook is checked against
 * itself first), then the usual source order.
 */
import { deriveAllCombinations, deriveCombination, FLAG_THRESHOLD_V, MAX_ROWS, reductionPotentialV, steps, type Combination, type DerivationStep } from './derive.js';
import { rowStandardPotentialV, type Ledger } from './ledger.js';

export interface ConsistencyEntry {
  readonly rowId: string;
  readonly equation: string;
  readonly source: string;
  readonly tabledV: number;
  readonly derivedV: number;
  /** (tabled − derived) × 1000 */
  readonly discrepancyMV: number;
  readonly flagged: boolean;
  /** The other rows the derived value comes from, each with its coefficient and source. */
  readonly derivation: readonly DerivationStep[];
  /** Further derivations: other combinations of the same size, then of one row more. */
  readonly otherDerivations: readonly { readonly derivedV: number; readonly discrepancyMV: number; readonly derivation: readonly DerivationStep[] }[];
  /** Largest |tabled − derived| over all derivations listed, mV. */
  readonly maxDiscrepancyMV: number;
}

export interface DuplicateEntry {
  readonly equation: string;
  readonly rows: readonly { readonly rowId: string; readonly source: string; readonly valueV: number }[];
  /** Largest minus smallest value × 1000 */
  readonly spreadMV: number;
  readonly flagged: boolean;
}

export interface ConsistencyReport {
  /** Rows derivable a second way, largest |discrepancy| first. */
  readonly entries: readonly ConsistencyEntry[];
  /** Reactions stated by more than one row, largest spread first. */
  readonly duplicates: readonly DuplicateEntry[];
  /** Redox rows with no second derivation in the tables. */
  readonly underivable: readonly string[];
  readonly thresholdMV: number;
}

const stepsOf = steps;

export function consistencyReport(ledger: Ledger): ConsistencyReport {
  const cached = ledger.cache.get('consistency-report') as ConsistencyReport | undefined;
  if (cached) return cached;
  const entries: ConsistencyEntry[] = [];
  const underivable: string[] = [];
  for (const row of ledger.rows) {
    if (row.kind !== 'redox') continue;
    const tabledV = rowStandardPotentialV(row, ledger.constants);
    const other = deriveCombination(row.vector, ledger, { exclude: new Set([row.classKey]), preferSource: row.source });
    if (!other) {
      underivable.push(row.id);
      continue;
    }
    const derivedV = reductionPotentialV(other.combination, row.electronCoefficient);
    const d = tabledV - derivedV;
    const size = other.combination.parts.length;
    const more: Combination[] = other.alternatives.filter((a) => a.differs.startsWith('another combination')).map((a) => a.combination);
    if (size < MAX_ROWS) {
      more.push(...deriveAllCombinations(row.vector, ledger, { exclude: new Set([row.classKey]), preferSource: row.source, minSize: size + 1 }).combinations);
    }
    const otherDerivations = more.slice(0, 6).map((c) => ({
      derivedV: reductionPotentialV(c, row.electronCoefficient),
      discrepancyMV: (tabledV - reductionPotentialV(c, row.electronCoefficient)) * 1000,
      derivation: stepsOf(c),
    }));
    entries.push({
      rowId: row.id,
      equation: row.equation,
      source: row.source,
      tabledV,
      derivedV,
      discrepancyMV: d * 1000,
      flagged: Math.abs(d) > FLAG_THRESHOLD_V,
      derivation: stepsOf(other.combination),
      otherDerivations,
      maxDiscrepancyMV: Math.max(Math.abs(d * 1000), ...otherDerivations.map((o) => Math.abs(o.discrepancyMV))),
    });
  }
  entries.sort((a, b) => Math.abs(b.discrepancyMV) - Math.abs(a.discrepancyMV));

  const duplicates: DuplicateEntry[] = [];
  for (const cls of ledger.classes.values()) {
    if (cls.kind !== 'redox' || cls.members.length < 2) continue;
    const rows = cls.members.map((m) => ({ rowId: m.row.id, source: m.row.source, valueV: rowStandardPotentialV(m.row, ledger.constants) }));
    const values = rows.map((r) => r.valueV);
    const spread = Math.max(...values) - Math.min(...values);
    duplicates.push({ equation: cls.members[0]!.row.equation, rows, spreadMV: spread * 1000, flagged: spread > FLAG_THRESHOLD_V });
  }
  duplicates.sort((a, b) => b.spreadMV - a.spreadMV);
  const report = { entries, duplicates, underivable, thresholdMV: FLAG_THRESHOLD_V * 1000 };
  ledger.cache.set('consistency-report', report);
  return report;
}
