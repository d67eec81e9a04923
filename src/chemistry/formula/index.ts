/** Public surface of the formula layer. */
export type { Phase, Species } from './types.js';
export { ELEMENT_SYMBOLS, IUPAC_ELEMENTS, type ElementSymbol } from './tokens.js';
export { parseFormula, parseFormulaAst, type FormulaAst, type ParseOptions } from './parse.js';
export {
  speciesKey,
  formatFormula,
  formatUnicode,
  formulaRuns,
  hillFormula,
  hillOrder,
  chargeSuffix,
  isElectron,
  runsToUnicode,
  type Run,
  type Script,
} from './format.js';
export { molarMass, atomicWeightValue } from './molar-mass.js';
export {
  parseEquation,
  equationRuns,
  formatEquationUnicode,
  EQUATION_ARROWS,
  type EquationTerm,
  type ParsedEquation,
} from './equation.js';
