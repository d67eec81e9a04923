/** Public surface of the exact balancer. */
export type { Couple, HalfReaction, Medium, Reaction, RedoxReaction, Side, Term } from './types.js';
export { rref, nullSpace, multiply, type Matrix, type Rref } from './matrix.js';
export { balanceReaction, reactionVector, equationText, MAX_SPECIES } from './reaction.js';
export { halfReaction, WATER, PROTON, HYDROXIDE, ELECTRON } from './half-reaction.js';
export { balanceRedox, mediumForPH } from './redox.js';
