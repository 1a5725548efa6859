/**
 * mulberry32 (Tommy Ettinger, public domain): a small 32-bit generator with good mixing,
 * used for seeded inputs (demo data, benchmarks, property tests) so that every run sees the
 * same numbers. Not for the bootstrap, which uses xoshiro128** (shared/bootstrap/rng.ts).
 * Returns uniforms in [0, 1).
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
