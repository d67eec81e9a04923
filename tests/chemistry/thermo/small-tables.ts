/**
 * Small explicit tables for the ledger tests: a row builder per table, so each test states
 * exactly the rows it combines. Values are copied from the tables/ rows they name.
 */
import type { LedgerTables } from '../../../src/chemistry/thermo/ledger.js';
import type { ConstantRow, EquilibriumRow, PotentialRow, SourceRow } from '../../../src/reference/schemas.js';

export const SOURCES: SourceRow[] = [
  { id: 'src-a', kind: 'handbook', author: 'test', title: 'preferred test source', publication: 'test', edition: '', tableOrEquation: 'test', year: 2000, preference: 1, access: 'read' },
  { id: 'src-b', kind: 'textbook', author: 'test', title: 'second test source', publication: 'test', edition: '', tableOrEquation: 'test', year: 2000, preference: 2, access: 'read' },
];

/** CODATA 2018 values as in tables/constants.json. */
export const CONSTANTS: ConstantRow[] = [
  { id: 'R', name: 'R', value: '8.314462618', unit: 'J/(mol·K)', exact: true, source: 'src-a' },
  { id: 'F', name: 'F', value: '96485.33212', unit: 'C/mol', exact: true, source: 'src-a' },
  { id: 'T0', name: 'T0', value: '273.15', unit: 'K', exact: true, source: 'src-a' },
  { id: 'T25', name: 'T25', value: '298.15', unit: 'K', exact: true, source: 'src-a' },
];

export function redox(id: string, halfReaction: string, electrons: number, potentialV: string, extra: Partial<PotentialRow> = {}): PotentialRow {
  return { id, halfReaction, electrons, medium: null, potentialV, dEdTmVPerK: null, uncertaintyV: null, source: 'src-a', note: '', ...extra };
}

export function equilibrium(id: string, reaction: string, extra: Partial<EquilibriumRow>): EquilibriumRow {
  return { id, reaction, kind: 'acid', source: 'src-a', note: '', ...extra };
}

export function tables(potentials: PotentialRow[], equilibria: EquilibriumRow[] = []): LedgerTables {
  return { sources: SOURCES, constants: CONSTANTS, potentials, equilibria };
}
