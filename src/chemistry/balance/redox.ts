/**
 * A whole redox reaction from an oxidant couple and a reductant couple by the half-reaction
 * method: both couples completed as reductions in the same medium, electrons matched by their
 * least common multiple, the reductant's half reversed and added, every species on both sides
 * cancelled, and the result reduced to lowest whole terms. Exact BigInt arithmetic throughout.
 */
import { DomainError, type FieldProblem } from '../../core/errors.js';
import { gcdBig, lcmBig } from '../../core/rational.js';
import { formatFormula, speciesKey } from '../formula/format.js';
import type { Species } from '../formula/types.js';
import { HYDROXIDE, PROTON, WATER, halfReaction } from './half-reaction.js';
import { equationText } from './reaction.js';
import type { Couple, HalfReaction, Medium, RedoxReaction, Term } from './types.js';

/** Basic medium (OH-, H2O) when pH > 7, acidic (H+, H2O) otherwise. */
export function mediumForPH(pH: number): Medium {
  if (!Number.isFinite(pH)) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `The pH must be a finite number (e.g. 7.5); got ${String(pH)}`,
      params: { pH },
      fields: [{ pointer: '/pH', message: 'not a finite number' }],
    });
  }
  return pH > 7 ? 'base' : 'acid';
}

type Role = 'oxidant' | 'reductant';

/** A halfReaction error re-addressed to the redox input (from/to of the oxidant or reductant). */
function underRole(e: DomainError, role: Role, couple: Couple, medium: Medium): DomainError {
  // the oxidant's half is from → to; the reductant's half is to → from (its reduced form is "from")
  const map: Record<string, string> =
    role === 'oxidant'
      ? { '/oxidised': '/oxidant/from', '/reduced': '/oxidant/to' }
      : { '/oxidised': '/reductant/to', '/reduced': '/reductant/from' };
  const from = formatFormula(couple.from);
  const to = formatFormula(couple.to);
  let detail = `The ${role} couple (from "${from}" to "${to}"): ${e.detail}`;
  let fields: FieldProblem[] = e.fields.map((f) => ({ pointer: map[f.pointer] ?? `/${role}${f.pointer}`, message: f.message }));
  if (e.code === 'BALANCE_COUPLE_DIRECTION') {
    if (role === 'oxidant') {
      detail =
        `The oxidant couple from "${from}" to "${to}" releases electrons (${String(e.params['equation'])}): that is an oxidation, but an oxidant is reduced. ` +
        `Give the oxidant from its oxidised form to its reduced form (from "${to}" to "${from}"), or use this couple as the reductant`;
    } else {
      let shown = '';
      try {
        shown = ` (${halfReaction({ oxidised: couple.from, reduced: couple.to, medium }).equation})`;
      } catch {
        shown = '';
      }
      detail =
        `The reductant couple from "${from}" to "${to}" takes up electrons${shown}: that is a reduction, but a reductant is oxidised. ` +
        `Give the reductant from its reduced form to its oxidised form (from "${to}" to "${from}"), or use this couple as the oxidant`;
    }
    fields = [
      { pointer: `/${role}/from`, message: `"${from}" is the ${role === 'oxidant' ? 'reduced' : 'oxidised'} form of this couple` },
      { pointer: `/${role}/to`, message: `"${to}" is the ${role === 'oxidant' ? 'oxidised' : 'reduced'} form of this couple` },
    ];
  }
  return new DomainError(e.code, { detail, params: { ...e.params, role }, fields });
}

function half(role: Role, couple: Couple, medium: Medium): HalfReaction {
  try {
    return role === 'oxidant'
      ? halfReaction({ oxidised: couple.from, reduced: couple.to, medium })
      : halfReaction({ oxidised: couple.to, reduced: couple.from, medium });
  } catch (e) {
    if (e instanceof DomainError) throw underRole(e, role, couple, medium);
    throw e;
  }
}

/**
 * Balance oxidant.from → oxidant.to against reductant.from → reductant.to in the medium.
 * Terms: reactants, then products; on each side the oxidant's species first, then the
 * reductant's, then the rest (water, H+, OH-) in the order the half-reactions give them.
 * `electrons` is the number transferred by the reaction as written (after reduction to lowest terms).
 * `multipliers` are the factors applied to each half-reaction to match electrons.
 */
export function balanceRedox(input: { readonly oxidant: Couple; readonly reductant: Couple; readonly medium: Medium }): RedoxReaction {
  const { oxidant, reductant, medium } = input;
  const reduction = half('oxidant', oxidant, medium);
  const oxidation = half('reductant', reductant, medium);

  const nRed = BigInt(reduction.electrons);
  const nOx = BigInt(oxidation.electrons);
  const l = lcmBig(nRed, nOx);
  const mOx = l / nRed; // times the oxidant's half
  const mRed = l / nOx; // times the reductant's half

  const net = new Map<string, { species: Species; c: bigint }>();
  const put = (t: Term, factor: bigint): void => {
    const k = speciesKey(t.species);
    const signed = (t.side === 'product' ? t.coefficient : -t.coefficient) * factor;
    const cur = net.get(k);
    if (cur) cur.c += signed;
    else net.set(k, { species: t.species, c: signed });
  };
  for (const t of reduction.terms) put(t, mOx);
  for (const t of oxidation.terms) put(t, -mRed); // reversed: the reductant is oxidised
  for (const [k, x] of net) if (x.c === 0n) net.delete(k);

  const couples = `${formatFormula(oxidant.from)} → ${formatFormula(oxidant.to)} with ${formatFormula(reductant.from)} → ${formatFormula(reductant.to)}`;
  if (net.size === 0) {
    const detail = `Nothing is left after cancelling (${couples}): the reductant couple is the oxidant couple run backwards. Give two different couples`;
    throw new DomainError('BALANCE_IMPOSSIBLE', {
      detail,
      params: {},
      fields: [{ pointer: '/oxidant', message: detail }, { pointer: '/reductant', message: detail }],
    });
  }

  let g = 0n;
  for (const x of net.values()) g = gcdBig(g, x.c);
  // keep the electron count whole: divide by the common factor that also divides the electrons
  const d = gcdBig(g, l);
  // order: the oxidant's species, the reductant's, other species, then on the reactant side
  // H+/OH- before water and on the product side water before H+/OH- (as half-reactions are written)
  const auxiliaries = [WATER, PROTON, HYDROXIDE].map(speciesKey);
  const first = [oxidant.from, oxidant.to, reductant.from, reductant.to].map(speciesKey).filter((k) => !auxiliaries.includes(k));
  const inserted = [...net.keys()];
  const water = speciesKey(WATER);
  const rank = (k: string, side: 'reactant' | 'product'): number => {
    const i = first.indexOf(k);
    if (i >= 0) return i;
    if (!auxiliaries.includes(k)) return first.length + inserted.indexOf(k);
    const waterFirst = side === 'product';
    return 1000 + ((k === water) === waterFirst ? 0 : 1);
  };
  const terms: Term[] = [];
  for (const side of ['reactant', 'product'] as const) {
    const keys = [...net.keys()].sort((a, b) => rank(a, side) - rank(b, side));
    for (const k of keys) {
      const x = net.get(k) as { species: Species; c: bigint };
      if ((x.c < 0n) !== (side === 'reactant')) continue;
      terms.push({ species: x.species, coefficient: (x.c < 0n ? -x.c : x.c) / d, side });
    }
  }
  return {
    terms,
    equation: equationText(terms),
    electrons: Number(l / d),
    medium,
    reduction,
    oxidation,
    multipliers: { oxidant: mOx, reductant: mRed },
  };
}
