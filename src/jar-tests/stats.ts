/**
 * Small statistics for the jar-test evaluation: ordinary least squares of y on x
 * with standard errors, the inverse prediction x0 = −b/m with its first-order
 * standard error, and Student's t quantile (from the regularized incomplete beta
 * function) for confidence intervals. Plain floating point (intermediate physics).
 */

export interface LinearFit {
  readonly n: number;
  readonly slope: number;
  readonly intercept: number;
  /** Coefficient of determination, 1 − SSR/SST (NaN when all y are equal). */
  readonly r2: number;
  readonly degreesOfFreedom: number;
  /** s = √(SSR/(n − 2)); NaN when n = 2. */
  readonly residualStdError: number;
  /** s/√Sxx */
  readonly slopeStdError: number;
  /** s·√(1/n + x̄²/Sxx) */
  readonly interceptStdError: number;
  readonly meanX: number;
  readonly meanY: number;
  readonly sxx: number;
}

/** Least-squares line y = slope·x + intercept. Needs n ≥ 2 and at least two distinct x. */
export function olsFit(xs: readonly number[], ys: readonly number[]): LinearFit {
  const n = xs.length;
  if (n !== ys.length) throw new RangeError('olsFit: x and y differ in length');
  if (n < 2) throw new RangeError('olsFit: need at least 2 points');
  const meanX = xs.reduce((s, x) => s + x, 0) / n;
  const meanY = ys.reduce((s, y) => s + y, 0) / n;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = xs[i]! - meanX;
    const dy = ys[i]! - meanY;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (sxx === 0) throw new RangeError('olsFit: all x are equal');
  const slope = sxy / sxx;
  const intercept = meanY - slope * meanX;
  let ssr = 0;
  for (let i = 0; i < n; i++) {
    const e = ys[i]! - (slope * xs[i]! + intercept);
    ssr += e * e;
  }
  const df = n - 2;
  const s = df > 0 ? Math.sqrt(ssr / df) : NaN;
  return {
    n,
    slope,
    intercept,
    r2: syy === 0 ? NaN : 1 - ssr / syy,
    degreesOfFreedom: df,
    residualStdError: s,
    slopeStdError: s / Math.sqrt(sxx),
    interceptStdError: s * Math.sqrt(1 / n + (meanX * meanX) / sxx),
    meanX,
    meanY,
    sxx,
  };
}

/**
 * x where the fitted line crosses y = y0 (default 0): x0 = (y0 − b)/m, with the first-order
 * (delta-method) standard error of an inverse prediction from a calibration line,
 *   se(x0) = (s/|m|)·√(1/n + (x0 − x̄)²/Sxx),
 * treating y0 as exact (a zero residual is not a measurement).
 */
export function inversePrediction(fit: LinearFit, y0 = 0): { x: number; stdError: number } {
  const x = (y0 - fit.intercept) / fit.slope;
  const se = (fit.residualStdError / Math.abs(fit.slope)) * Math.sqrt(1 / fit.n + ((x - fit.meanX) ** 2) / fit.sxx);
  return { x, stdError: se };
}

// ---------------------------------------------------------------------------
// Student's t

/** ln Γ(x), Lanczos approximation (g = 7, 9 terms), x > 0. */
export function lnGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x);
  const z = x - 1;
  let a = c[0]!;
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction for the incomplete beta function (modified Lentz). */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 300; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return h;
}

/** Regularized incomplete beta I_x(a, b). */
export function regularizedBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const lnFront = lnGamma(a + b) - lnGamma(a) - lnGamma(b) + a * Math.log(x) + b * Math.log(1 - x);
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(lnFront) * betaContinuedFraction(a, b, x)) / a;
  return 1 - (Math.exp(lnFront) * betaContinuedFraction(b, a, 1 - x)) / b;
}

/** P(T ≤ t) for Student's t with df degrees of freedom. */
export function studentTCdf(t: number, df: number): number {
  const tail = 0.5 * regularizedBeta(df / (df + t * t), df / 2, 0.5);
  return t >= 0 ? 1 - tail : tail;
}

/** The t with P(T ≤ t) = p (0 < p < 1), by bisection on the CDF. */
export function studentTQuantile(p: number, df: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError('studentTQuantile: p must be in (0, 1)');
  if (!(df > 0)) throw new RangeError('studentTQuantile: df must be positive');
  if (p === 0.5) return 0;
  if (p < 0.5) return -studentTQuantile(1 - p, df);
  let lo = 0;
  let hi = 1;
  while (studentTCdf(hi, df) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * Math.max(1, hi); i++) {
    const mid = (lo + hi) / 2;
    if (studentTCdf(mid, df) < p) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}
