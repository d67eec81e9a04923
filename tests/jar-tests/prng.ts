/**
 * A small seeded PRNG for synthetic jar-test results (not a test file).
 * mulberry32: a 32-bit generator with a period of 2^32, plenty for a few thousand draws;
 * normal deviates by the Box–Muller transform.
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates from a uniform source (Box–Muller). */
export function gaussian(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

/**
 * Synthetic residuals at one contact time from the model
 *   residual = max(0, dose − demand) + N(0, σ²), a reading never below 0.
 */
export function syntheticResiduals(doses: readonly number[], demandMgPerL: number, sigma: number, seed: number): number[] {
  const z = gaussian(mulberry32(seed));
  return doses.map((d) => Math.max(0, Math.max(0, d - demandMgPerL) + sigma * z()));
}
