import { describe, expect, it } from 'vitest';
import { Rational } from '../../../src/core/rational.js';
import { multiply, nullSpace, rref } from '../../../src/chemistry/balance/matrix.js';

const R = (rows: number[][]) => rows.map((r) => r.map((x) => Rational.of(x)));
const show = (m: Rational[][]) => m.map((r) => r.map((x) => x.toString()));

describe('rref', () => {
  it('of an empty matrix has rank 0', () => {
    expect(rref([], 3).rank).toBe(0);
    expect(nullSpace([], 3).length).toBe(3);
  });
  it('of the zero matrix has rank 0 and every column free', () => {
    expect(nullSpace(R([[0, 0], [0, 0]])).length).toBe(2);
  });
  it('of an invertible matrix is the identity', () => {
    const r = rref(R([[2, 1], [1, 3]]));
    expect(show(r.matrix)).toEqual([['1', '0'], ['0', '1']]);
    expect(r.pivots).toEqual([0, 1]);
    expect(nullSpace(R([[2, 1], [1, 3]]))).toEqual([]);
  });
  it('keeps fractions exact (no floating point)', () => {
    // x + 3y = 0, 3x + y = 0 → rows reduce through thirds
    const r = rref(R([[3, 1, 1], [1, 3, 2]]));
    expect(show(r.matrix)).toEqual([['1', '0', '1/8'], ['0', '1', '5/8']]);
  });
  it('swaps rows to find a pivot', () => {
    const r = rref(R([[0, 1], [1, 0]]));
    expect(show(r.matrix)).toEqual([['1', '0'], ['0', '1']]);
  });
});

describe('nullSpace', () => {
  it('of the water-formation matrix (H2 + O2 → H2O) is one vector ∝ (2, 1, 2)', () => {
    // rows H, O; columns −H2, −O2, +H2O
    const m = R([[-2, 0, 2], [0, -2, 1]]);
    const basis = nullSpace(m);
    expect(basis.length).toBe(1);
    expect(basis[0]?.map(String)).toEqual(['1', '1/2', '1']);
    expect(multiply(m, basis[0] as Rational[]).every((x) => x.isZero())).toBe(true);
  });
  it('has one vector per free column, each solving m·x = 0', () => {
    const m = R([[1, 2, 3, 4], [2, 4, 6, 8]]);
    const basis = nullSpace(m);
    expect(basis.length).toBe(3);
    for (const v of basis) expect(multiply(m, v).every((x) => x.isZero())).toBe(true);
  });
});
