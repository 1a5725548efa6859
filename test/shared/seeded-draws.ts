/**
 * Seeded draws for built test cases: uniform from a 32-bit linear congruential generator
 * (the Numerical Recipes constants 1664525 and 1013904223) and normal by Box-Muller. The
 * same seed gives the same numbers in vitest and in the browser suite.
 */
export function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s * 1664525 + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

export const normal = (r: () => number): number => Math.sqrt(-2 * Math.log(r() + 1e-300)) * Math.cos(2 * Math.PI * r());
