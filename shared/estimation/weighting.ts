/**
 * GMM weighting matrices as operators: W X and W x without forming W when W is the
 * inverse of a symmetric positive definite matrix (S^{-1}, or (E[RR'])^{-1} for the
 * Hansen-Jagannathan weight), applied through the Cholesky factor instead.
 */
import { cholesky, cholSolveMat, cholSolveVec, type CholeskyOptions } from '../linalg/cholesky.js';
import { type Mat, clone, seriesProductsUpper } from '../linalg/matrix.js';

export interface Weighting {
  readonly q: number;
  /** W X. */
  apply(x: Mat): Mat;
  /** W x. */
  applyVec(x: ArrayLike<number>): Float64Array;
  /** Set when W = A^{-1}: the Cholesky factor of A. */
  readonly inverseOf?: { a: Mat; chol: Mat };
}

export function identityWeighting(q: number): Weighting {
  return {
    q,
    apply: (x) => clone(x),
    applyVec: (x) => Float64Array.from(x),
  };
}

/** W = A^{-1} for a symmetric positive definite A (throws naming A if it is not). */
export function inverseWeighting(a: Mat, opts: CholeskyOptions): Weighting {
  const chol = cholesky(a, opts);
  return {
    q: a.rows,
    apply: (x) => cholSolveMat(chol, x),
    applyVec: (x) => cholSolveVec(chol, x),
    inverseOf: { a, chol },
  };
}

/** Second-moment matrix E[R R'] = (1/T) sum_t R_t R_t' of the given return series. */
export function secondMomentMatrix(returns: readonly Float64Array[]): Mat {
  const n = returns.length;
  const T = n ? returns[0].length : 0;
  if (T === 0) return { rows: n, cols: n, data: new Float64Array(n * n) };
  const out = seriesProductsUpper(returns, returns);
  for (let k = 0; k < out.length; k++) out[k] /= T;
  return { rows: n, cols: n, data: out };
}

/**
 * E[RR'] and its Cholesky factor are computed once per set of return series (the model's
 * `returns` array): the first stage with the HJ weight, the HJ distance and the HJ
 * bootstrap's full-sample estimate of one fit share them (an N x N x T product, the most
 * expensive step of a fit with thousands of assets). Keyed by the array object, so a
 * resampled draw (a new array) gets its own.
 */
const hjCache = new WeakMap<readonly Float64Array[], Weighting>();

/** The Hansen-Jagannathan weight W = (E[RR'])^{-1} on the test-asset moments (METHODS 3). */
export function hjWeighting(returns: readonly Float64Array[], assetNames: readonly string[]): Weighting {
  const hit = hjCache.get(returns);
  if (hit) return hit;
  const w = inverseWeighting(secondMomentMatrix(returns), {
    name: "the second-moment matrix E[RR'] of the test-asset returns (Hansen-Jagannathan weight)",
    labels: assetNames,
    hint: 'two test assets are (almost) the same portfolio; drop one of them',
  });
  hjCache.set(returns, w);
  return w;
}
