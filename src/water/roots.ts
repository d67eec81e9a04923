/** Bracketing root finders on plain numbers (pH, and anything else continuous over a bracket). */

/** Bisection on a bracket [a, b] with f(a)·f(b) < 0, to |b − a| ≤ tol. Returns the midpoint of the last bracket. */
export function bisect(f: (x: number) => number, a: number, b: number, tol = 1e-6, fa = f(a)): number {
  let lo = a, hi = b, flo = fa;
  while (hi - lo > tol) {
    const mid = (lo + hi) / 2;
    const fm = f(mid);
    if (fm === 0) return mid;
    if (Math.sign(fm) === Math.sign(flo)) { lo = mid; flo = fm; } else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Brent's method (Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4; as laid out in
 * Press et al., Numerical Recipes, §9.3): inverse quadratic interpolation with bisection as the fallback,
 * so the root stays bracketed. Needs f(a)·f(b) ≤ 0; returns x with the bracket narrowed to ≤ tol.
 */
export function brent(f: (x: number) => number, x1: number, x2: number, tol = 1e-6, f1 = f(x1), f2 = f(x2)): number {
  const EPS = Number.EPSILON;
  let a = x1, b = x2, c = x2;
  let fa = f1, fb = f2, fc = f2;
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (Math.sign(fa) === Math.sign(fb)) throw new RangeError('brent: the root is not bracketed');
  let d = b - a, e = d;
  for (let iter = 0; iter < 200; iter++) {
    if (Math.sign(fb) === Math.sign(fc)) {
      c = a; fc = fa; d = b - a; e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b; b = c; c = a;
      fa = fb; fb = fc; fc = fa;
    }
    const tol1 = 2 * EPS * Math.abs(b) + 0.5 * tol;
    const xm = 0.5 * (c - b);
    if (Math.abs(xm) <= tol1 || fb === 0) return b;
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number, q: number;
      if (a === c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const qq = fa / fc, r = fb / fc;
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = Math.abs(p);
      const min1 = 3 * xm * q - Math.abs(tol1 * q);
      const min2 = Math.abs(e * q);
      if (2 * p < Math.min(min1, min2)) {
        e = d; d = p / q; // interpolation accepted
      } else {
        d = xm; e = d; // bisection
      }
    } else {
      d = xm; e = d;
    }
    a = b; fa = fb;
    b += Math.abs(d) > tol1 ? d : xm >= 0 ? tol1 : -tol1;
    fb = f(b);
  }
  return b;
}

export interface ScanSettings {
  readonly min: number;
  readonly max: number;
  readonly step: number;
  readonly tolerance: number;
}

/** Every root of f over [min, max]: scan at `step` for sign changes, then Brent on each bracket to `tolerance`. Ascending. */
export function findRoots(f: (x: number) => number, scan: ScanSettings): number[] {
  const roots: number[] = [];
  const n = Math.max(1, Math.round((scan.max - scan.min) / scan.step));
  let x0 = scan.min;
  let f0 = f(x0);
  if (f0 === 0) roots.push(x0);
  for (let i = 1; i <= n; i++) {
    const x1 = i === n ? scan.max : scan.min + i * scan.step;
    const f1 = f(x1);
    if (f1 === 0) roots.push(x1);
    else if (f0 !== 0 && Math.sign(f0) !== Math.sign(f1)) roots.push(brent(f, x0, x1, scan.tolerance, f0, f1));
    x0 = x1;
    f0 = f1;
  }
  return roots;
}
