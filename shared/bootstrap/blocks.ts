/**
 * Moving-block bootstrap of time periods (Kunsch, 1989, Annals of Statistics 17;
 * Lahiri, "Resampling Methods for Dependent Data", 2003, ch. 2). A replication is built
 * from ceil(T / l) blocks of l consecutive periods whose starting points are drawn
 * uniformly from 0..T-l, concatenated and cut to T periods. All series of a panel are
 * resampled with the same indices, so the cross-section and the factor-return link
 * within each block are kept.
 */
import { DeflatorError } from '../errors.js';
import { Xoshiro128 } from './rng.js';

/**
 * Block length rule: a number given by the user, or 'auto' = ceil(T^(1/3)).
 * T^(1/3) is the rate-optimal order of the block length for bias and variance
 * estimation (Hall, Horowitz and Jing, 1995, Biometrika 82); the constant 1 is common practice.
 */
export function blockLength(T: number, block: number | 'auto'): number {
  if (!Number.isInteger(T) || T < 2) throw new DeflatorError('SAMPLE_TOO_SHORT', `bootstrap: the sample has ${T} period(s); at least 2 are needed`, 'use a longer sample');
  const l = block === 'auto' ? Math.ceil(Math.cbrt(T) - 1e-12) : block;
  if (!Number.isInteger(l) || l < 1) throw new DeflatorError('SPEC_INVALID', `bootstrap.block: expected a positive integer or "auto", got ${String(block)}`, 'set "block" to a number of periods or "auto"');
  if (l > T) throw new DeflatorError('SPEC_INVALID', `bootstrap.block: block length ${l} exceeds the sample length T = ${T}`, 'choose a block length of at most T periods, or "auto"');
  return l;
}

/** Period indices of one moving-block replication (length T), drawn from `rng`. */
export function movingBlockIndices(T: number, l: number, rng: Xoshiro128): Int32Array {
  const idx = new Int32Array(T);
  const starts = T - l + 1;
  let k = 0;
  while (k < T) {
    const s = rng.nextInt(starts);
    for (let j = 0; j < l && k < T; j++) idx[k++] = s + j;
  }
  return idx;
}

/** Indices of replication r (0-based) of a run seeded with `seed`: its own stream, so chunks agree. */
export function replicationIndices(T: number, l: number, seed: number, r: number): Int32Array {
  return movingBlockIndices(T, l, new Xoshiro128(seed, r + 1));
}
