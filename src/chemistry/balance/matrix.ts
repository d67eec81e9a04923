/**
 * Exact linear algebra over BigInt rationals: reduced row echelon form and null space.
 * No floating point: every entry is a Rational.
 */
import { Rational } from '../../core/rational.js';

export type Matrix = readonly (readonly Rational[])[];

export interface Rref {
  /** The reduced row echelon form (rows of zeros kept at the bottom). */
  readonly matrix: Rational[][];
  /** Pivot column of each non-zero row, in row order. */
  readonly pivots: number[];
  readonly rank: number;
}

/** Gauss–Jordan elimination to reduced row echelon form. `columns` is needed when the matrix has no rows. */
export function rref(m: Matrix, columns = m[0]?.length ?? 0): Rref {
  const a = m.map((row) => row.slice());
  const rows = a.length;
  const pivots: number[] = [];
  let r = 0;
  for (let c = 0; c < columns && r < rows; c++) {
    let p = -1;
    for (let i = r; i < rows; i++) {
      if (!(a[i] as Rational[])[c]!.isZero()) {
        p = i;
        break;
      }
    }
    if (p < 0) continue;
    if (p !== r) [a[p], a[r]] = [a[r] as Rational[], a[p] as Rational[]];
    const pivotRow = a[r] as Rational[];
    const pv = pivotRow[c] as Rational;
    if (!pv.equals(Rational.ONE)) {
      for (let j = c; j < columns; j++) pivotRow[j] = (pivotRow[j] as Rational).div(pv);
    }
    for (let i = 0; i < rows; i++) {
      if (i === r) continue;
      const row = a[i] as Rational[];
      const f = row[c] as Rational;
      if (f.isZero()) continue;
      for (let j = c; j < columns; j++) {
        const x = pivotRow[j] as Rational;
        if (!x.isZero()) row[j] = (row[j] as Rational).sub(f.mul(x));
      }
    }
    pivots.push(c);
    r++;
  }
  return { matrix: a, pivots, rank: pivots.length };
}

/**
 * A basis of the null space {x : m·x = 0}: one vector per free column, with that column = 1,
 * the other free columns = 0 and the pivot columns solved. Returns [] when only x = 0 solves it.
 */
export function nullSpace(m: Matrix, columns = m[0]?.length ?? 0): Rational[][] {
  const { matrix, pivots } = rref(m, columns);
  const isPivot = new Array<boolean>(columns).fill(false);
  for (const p of pivots) isPivot[p] = true;
  const basis: Rational[][] = [];
  for (let f = 0; f < columns; f++) {
    if (isPivot[f]) continue;
    const v = new Array<Rational>(columns).fill(Rational.ZERO);
    v[f] = Rational.ONE;
    pivots.forEach((p, row) => {
      v[p] = ((matrix[row] as Rational[])[f] as Rational).neg();
    });
    basis.push(v);
  }
  return basis;
}

/** m·x, for checks. */
export function multiply(m: Matrix, x: readonly Rational[]): Rational[] {
  return m.map((row) => row.reduce((acc, a, j) => acc.add(a.mul(x[j] ?? Rational.ZERO)), Rational.ZERO));
}
