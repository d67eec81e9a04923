/**
 * Building the ledger: every row parsed once, checked (balance, electrons, kind) and grouped
 * with the rows that state the same reaction. Errors name the table row.
 */
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { Rational } from '../../../src/core/rational.js';
import { buildLedger, classKeyOf, rowStandardPotentialV } from '../../../src/chemistry/thermo/ledger.js';
import { loadTables } from '../../../src/reference/load.js';
import { equilibrium, redox, tables } from './small-tables.js';

function buildError(t: ReturnType<typeof tables>): DomainError {
  try {
    buildLedger(t);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected TABLE_INVALID');
}

describe('buildLedger rejects rows the chemistry cannot use, naming the row', () => {
  it.each([
    ['unbalanced (charge)', tables([redox('bad', 'Fe3+ + 2e- = Fe2+', 2, '0.771')]), { file: 'potentials.json', row: 0, id: 'bad', column: 'halfReaction' }, 'not balanced'],
    ['unbalanced (oxygen)', tables([redox('bad', 'MnO4- + 8H+ + 5e- = Mn2+ + 3H2O', 5, '1.507')]), { column: 'halfReaction' }, 'O'],
    ['electron count differs', tables([redox('bad', 'Fe3+ + e- = Fe2+', 2, '0.771')]), { column: 'electrons' }, 'transfers 1 electrons but the row says 2'],
    ['no electrons in a potential row', tables([redox('bad', 'H2O = H+ + OH-', 1, '0.1')]), { column: 'halfReaction' }, 'must transfer electrons'],
    ['potential written as an oxidation', tables([redox('bad', 'Fe2+ = Fe3+ + e-', 1, '-0.771')]), { column: 'halfReaction' }, 'written as a reduction'],
    ['equation does not parse', tables([redox('bad', 'Fe3+ + e- = Fe2+ +', 1, '0.771')]), { column: 'halfReaction' }, 'does not parse'],
    ['electrons in an equilibrium row', tables([], [equilibrium('bad', 'Fe2+ = Fe3+ + e-', { logK: '-13.02' })]), { file: 'equilibria.json', row: 0, column: 'reaction' }, 'must not contain electrons'],
    ['same id in both tables', tables([redox('x', 'Fe3+ + e- = Fe2+', 1, '0.771')], [equilibrium('x', 'H2O = H+ + OH-', { pK: '14.00' })]), { file: 'equilibria.json', column: 'id' }, 'also used'],
  ] as const)('%s', (_case, t, params, reason) => {
    const err = buildError(t);
    expect(err.code).toBe('TABLE_INVALID');
    expect(err.params).toMatchObject(params);
    expect(err.detail).toContain(reason);
  });

  it('refuses an element missing from the atomic-weights table', () => {
    const t = { ...tables([redox('u', 'UO2^2+ + 2e- = UO2(s)', 2, '0.1')]), atomicWeights: [] };
    const err = buildError(t);
    expect(err.params).toMatchObject({ id: 'u', column: 'halfReaction' });
  });
});

describe('classes: rows stating the same reaction up to a multiple', () => {
  const fe = redox('a', 'Fe3+ + e- = Fe2+', 1, '0.771');
  const cl = redox('a', 'Cl2(g) + 2e- = 2Cl-', 2, '1.35827');
  it.each([
    ['same text', fe, redox('b', 'Fe3+ + e- = Fe2+', 1, '0.770')],
    ['doubled', fe, redox('b', '2Fe3+ + 2e- = 2Fe2+', 2, '0.770')],
    ['reversed (a log K row)', fe, { ...redox('b', 'Fe2+ = Fe3+ + e-', 1, '0'), potentialV: undefined, logK: '-13.02' }],
    ['halved', cl, redox('b', '1/2Cl2(g) + e- = Cl-', 1, '1.359')],
  ])('%s', (_case, a, b) => {
    const l = buildLedger(tables([a, b]));
    expect(l.classes.size).toBe(1);
    expect([...l.classes.values()][0]!.members.map((m) => m.row.id)).toEqual(['a', 'b']);
  });

  it('a different reaction is a different class', () => {
    const l = buildLedger(tables([fe, redox('b', 'Fe2+ + 2e- = Fe(s)', 2, '-0.447')]));
    expect(l.classes.size).toBe(2);
  });

  it('orders a class by source preference', () => {
    const l = buildLedger(tables([redox('b-row', 'Fe3+ + e- = Fe2+', 1, '0.770', { source: 'src-b' }), redox('a-row', 'Fe3+ + e- = Fe2+', 1, '0.771')]));
    const cls = [...l.classes.values()][0]!;
    expect(cls.members.map((m) => m.row.id)).toEqual(['a-row', 'b-row']);
  });

  it('canonical key ignores the multiple and the sign', () => {
    const v = new Map([
      ['Fe^3+', Rational.of(-2)],
      ['e-', Rational.of(-2)],
      ['Fe^2+', Rational.of(2)],
    ]);
    const w = new Map([...v].map(([k, c]) => [k, c.neg().div(Rational.of(4))]));
    expect(classKeyOf(v).key).toBe(classKeyOf(w).key);
  });
});

describe('the repository tables build into a ledger', () => {
  const l = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));

  it.each([
    // [row, E° of the reduction, how the row states it]
    ['crc-mno4-mn2', 1.507, 'E° printed'],
    ['phreeqc-fe2-fe3', 0.7703, 'log K = -13.02 of the oxidation (phreeqc.dat)'],
    ['sm-o2-h2o', 1.2276, 'pε° = 20.75 (Stumm & Morgan)'],
  ])('%s reduces to E° ≈ %f V (%s)', (id, v) => {
    expect(rowStandardPotentialV(l.byId.get(id)!, l.constants)).toBeCloseTo(v, 4);
  });

  it('uses R and F from constants.json', () => {
    expect(l.constants.R).toBe(8.314462618);
    expect(l.constants.F).toBe(96485.33212);
  });
});
