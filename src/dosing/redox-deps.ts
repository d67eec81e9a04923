import type { RedoxDeps } from '../water/redox-service.js';
import type { DosingContext } from './index.js';

/** What the couple and cell service needs, taken from the dosing context built once from the tables. */
export function redoxDepsOf(dosing: DosingContext): RedoxDeps {
  return {
    ledger: dosing.ledger,
    constants: dosing.constants,
    kwAt: dosing.feasibilityDeps.kwAt,
    daviesAAt: dosing.feasibilityDeps.daviesAAt,
    molarMassOf: dosing.molarMassOf,
    citations: dosing.citations,
    elements: new Set(dosing.atomicWeights.keys()),
  };
}
