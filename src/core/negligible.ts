/**
 * Rounding noise: a standard error of 1e-16 mg/L from a perfect fit is zero, not a figure to print.
 * Shared by the jar-test messages and plot (src/jar-tests) and the sheets (src/sheets).
 */

/** At or below this fraction of the figures it goes with, a value is rounding noise. */
export const NEGLIGIBLE_RELATIVE = 1e-9;

/**
 * Whether `x` is rounding noise against `scale` (the size of the figures it goes with):
 * zero, or at most `NEGLIGIBLE_RELATIVE` of |scale|. A non-finite x is not negligible.
 */
export function isNegligible(x: number, scale: number): boolean {
  if (!Number.isFinite(x)) return false;
  if (x === 0) return true;
  const s = Number.isFinite(scale) ? Math.abs(scale) : 0;
  return Math.abs(x) <= NEGLIGIBLE_RELATIVE * s;
}
