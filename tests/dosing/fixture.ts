/** The repository's tables, loaded once per test file, and a dosing context built from them. */
import { loadReferenceTables } from '../../src/reference/load.js';
import { buildDosingContext } from '../../src/dosing/index.js';

export const tables = loadReferenceTables();
/** Result memo off, so every call computes (the memo has its own test). */
export const context = buildDosingContext(tables, { resultMemoSize: 0 });
export const atomicWeights: ReadonlyMap<string, string> = new Map(tables.atomicWeights.map((r) => [r.symbol, r.atomicWeight]));
export const oxidant = (id: string) => tables.oxidants.find((o) => o.id === id)!;
export const contaminant = (id: string) => tables.contaminants.find((c) => c.id === id)!;
