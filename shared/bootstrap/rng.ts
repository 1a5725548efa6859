/**
 * Seeded pseudo-random numbers for the bootstrap: xoshiro128** (Blackman and Vigna,
 * "Scrambled linear pseudorandom number generators", ACM TOMS 47, 2021), its 128-bit
 * state filled by splitmix32 from (seed, stream). Each bootstrap replication r draws
 * from its own stream (seed, r), so a run split into chunks across workers gives the
 * same draws, and the same p-value, as one run in a single thread.
 */

/** One step of splitmix32 (a 32-bit variant of Steele, Lea and Flood's SplitMix). */
function splitmix32(state: { s: number }): number {
  state.s = (state.s + 0x9e3779b9) | 0;
  let z = state.s;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

export class Xoshiro128 {
  private a: number;
  private b: number;
  private c: number;
  private d: number;

  /** A generator for stream `stream` of seed `seed` (both non-negative integers below 2^32). */
  constructor(seed: number, stream = 0) {
    const st = { s: (seed >>> 0) ^ Math.imul(stream >>> 0, 0x632be5ab) };
    // Mix the stream index in twice so that neighbouring (seed, stream) pairs start far apart.
    st.s = (splitmix32(st) ^ (stream >>> 0)) | 0;
    this.a = splitmix32(st);
    this.b = splitmix32(st);
    this.c = splitmix32(st);
    this.d = splitmix32(st);
    if ((this.a | this.b | this.c | this.d) === 0) this.a = 1;
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.b, 5), 7), 9) >>> 0;
    const t = this.b << 9;
    this.c ^= this.a;
    this.d ^= this.b;
    this.b ^= this.c;
    this.a ^= this.d;
    this.c ^= t;
    this.d = rotl(this.d, 11);
    return result;
  }

  /** Uniform on [0, 1) with 53 random bits. */
  nextFloat(): number {
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Uniform integer in 0..n-1 (n >= 1), without modulo bias (rejection sampling). */
  nextInt(n: number): number {
    if (!Number.isInteger(n) || n < 1 || n > 2 ** 32) throw new RangeError(`nextInt: n must be an integer in 1..2^32, got ${n}`);
    const limit = Math.floor(2 ** 32 / n) * n;
    for (;;) {
      const x = this.nextUint32();
      if (x < limit) return x % n;
    }
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
