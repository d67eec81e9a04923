/** Public surface of the thermodynamic ledger. */
export {
  buildLedger,
  nernstSlopeV,
  rowStandardPotentialV,
  vectorEquation,
  type Ledger,
  type LedgerRow,
  type LedgerClass,
  type LedgerConstants,
  type LedgerTables,
  type ReactionVector,
} from './ledger.js';
export {
  standardPotential,
  reactionLog10K,
  deriveCombination,
  targetVector,
  FLAG_THRESHOLD_V,
  MAX_ROWS,
  type PotentialResult,
  type PotentialOptions,
  type DerivationStep,
  type TabledCheck,
  type Alternative,
  type Log10KResult,
  type Target,
} from './derive.js';
export { rowAtTemperature, checkTemperatureC, TEMPERATURE_RANGE_C } from './temperature.js';
export { consistencyReport, type ConsistencyReport, type ConsistencyEntry, type DuplicateEntry } from './consistency.js';
