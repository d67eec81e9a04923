import type { Species } from '../formula/types.js';

export type Side = 'reactant' | 'product';
export type Medium = 'acid' | 'base';

export interface Term {
  readonly species: Species;
  /** Whole, positive, lowest terms across the reaction. */
  readonly coefficient: bigint;
  readonly side: Side;
}

export interface Reaction {
  readonly terms: readonly Term[];
  /** Plain-text equation, e.g. "MnO4- + 3Fe2+ + 7H2O → MnO2 + 3Fe(OH)3 + 5H+". */
  readonly equation: string;
  /** Electrons transferred by the reaction as written (0 for a non-redox reaction). */
  readonly electrons: number;
}

/** A half-reaction written as a reduction: oxidised form + n e- (+ H+/H2O/OH-) → reduced form. */
export interface HalfReaction extends Reaction {
  readonly oxidised: Species;
  readonly reduced: Species;
  readonly medium: Medium;
  /** Set when the couple alone does not fix the balance and a convention chose it (e.g. O3/O2: one O3 to one O2). */
  readonly convention?: string;
}

export interface Couple {
  readonly from: Species;
  readonly to: Species;
}

export interface RedoxReaction extends Reaction {
  readonly medium: Medium;
  /** The oxidant couple as a reduction half-reaction. */
  readonly reduction: HalfReaction;
  /** The reductant couple, also written as a reduction (its reverse is the oxidation). */
  readonly oxidation: HalfReaction;
  /** How many times each half-reaction was taken so the electrons match (least common multiple). */
  readonly multipliers: { readonly oxidant: bigint; readonly reductant: bigint };
}
