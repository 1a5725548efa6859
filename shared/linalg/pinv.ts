/**
 * Moore-Penrose pseudo-inverse of a symmetric positive semi-definite matrix through its
 * eigen-decomposition: A^+ = sum over kept eigenvalues of v v' / lambda (Golub and Van
 * Loan, 4th ed., section 5.5.2). Used only where the method calls for it: the
 * covariance of the pricing errors has rank (moments - parameters) by construction
 * (METHODS 3), so the test statistic g' Var(g)^+ g needs a generalised inverse.
 */
import { DeflatorError } from '../errors.js';
import { symmetricEigen } from './eigen.js';
import type { Mat } from './matrix.js';

export interface PinvOptions {
  name: string;
  /**
   * Keep exactly this many of the largest eigenvalues (the rank the theory gives). Without it,
   * eigenvalues above `relTol * largest` are kept.
   */
  rank?: number;
  /** Relative cut-off when `rank` is not given (default n * 2^-52, as LAPACK-based pinv routines use). */
  relTol?: number;
}

export interface SymmetricPinv {
  pinv: Mat;
  /** Number of eigenvalues kept. */
  rank: number;
  /** Kept eigenvalue / largest eigenvalue for the smallest kept one (its conditioning). */
  smallestKeptRatio: number;
  /** Largest dropped eigenvalue / largest eigenvalue (0 when none dropped). */
  largestDroppedRatio: number;
}

/**
 * Pseudo-inverse of a symmetric PSD matrix. With `rank` given, a kept eigenvalue that is
 * not clearly positive (below 1e-12 of the largest) means the matrix has lower rank than
 * the theory says: a SINGULAR error naming the matrix.
 */
export function symmetricPinv(a: Mat, opts: PinvOptions): SymmetricPinv {
  const n = a.rows;
  const { values, vectors } = symmetricEigen(a, { name: opts.name });
  const V = vectors!.data;
  const top = n > 0 ? Math.max(Math.abs(values[n - 1]), Math.abs(values[0])) : 0;
  if (!(top > 0)) throw new DeflatorError('SINGULAR', `${opts.name} is zero`, 'check that the moments vary over the sample');
  let keep: number;
  if (opts.rank !== undefined) {
    keep = opts.rank;
    if (keep > 0 && values[n - keep] <= 1e-12 * top)
      throw new DeflatorError(
        'SINGULAR',
        `${opts.name} has rank below ${keep}: its ${keep}-th largest eigenvalue is ${values[n - keep].toExponential(3)} against a largest of ${top.toExponential(3)}`,
        'two test assets may be (almost) the same portfolio; drop one of them',
      );
  } else {
    const tol = (opts.relTol ?? n * EPS) * top;
    keep = 0;
    for (let k = 0; k < n; k++) if (values[k] > tol) keep++;
  }
  const out = new Float64Array(n * n);
  for (let k = n - keep; k < n; k++) {
    const inv = 1 / values[k];
    for (let i = 0; i < n; i++) {
      const vi = V[i * n + k] * inv;
      if (vi === 0) continue;
      const oi = i * n;
      for (let j = 0; j < n; j++) out[oi + j] += vi * V[j * n + k];
    }
  }
  return {
    pinv: { rows: n, cols: n, data: out },
    rank: keep,
    smallestKeptRatio: keep > 0 ? values[n - keep] / top : 0,
    largestDroppedRatio: keep < n ? Math.max(0, values[n - keep - 1]) / top : 0,
  };
}

const EPS = 2 ** -52;
