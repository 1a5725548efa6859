/**
 * Moore-Penrose pseudo-inverse of a symmetric positive semi-definite matrix through its
 * eigen-decomposition: A^+ = sum over kept eigenvalues of v v' / lambda (Golub and Van
 * Loan, 4th ed., section 5.5.2). Used only where the method calls for it: the
 * covariance of the pricing errors has rank (moments - parameters) by construction
 * (METHODS 3), so the test statistic g' Var(g)^+ g needs a generalised inverse.
 */
import { DeflatorError } from '../errors.js';
import { cholForwardMat, forwardSubst } from './cholesky.js';
import { symmetricEigenRows } from './eigen.js';
import type { Mat } from './matrix.js';
import { applyQ, applyQt, qrFactor } from './qr.js';

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
  const { values, rows } = symmetricEigenRows(a, { name: opts.name });
  const E = rows!; // eigenvector k is row k
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
  // A^+ = sum_k v_k v_k' / lambda_k: row i gains (v_k[i] / lambda_k) v_k', a contiguous row of E.
  const out = new Float64Array(n * n);
  for (let k = n - keep; k < n; k++) {
    const inv = 1 / values[k];
    const rk = k * n;
    for (let i = 0; i < n; i++) {
      const vi = E[rk + i] * inv;
      if (vi === 0) continue;
      const oi = i * n;
      for (let j = 0; j < n; j++) out[oi + j] += vi * E[rk + j];
    }
  }
  return {
    pinv: { rows: n, cols: n, data: out },
    rank: keep,
    smallestKeptRatio: keep > 0 ? values[n - keep] / top : 0,
    largestDroppedRatio: keep < n ? Math.max(0, values[n - keep - 1]) / top : 0,
  };
}

/**
 * x' (M S M')^+ x for M = I - D (A D)^{-1} A, without forming M S M' or decomposing it.
 *
 * S (q x q) is positive definite with Cholesky factor `LS` (S = L L'), D (q x p) has full
 * column rank, A (p x q) is any matrix with A D invertible; `constraint` is a q x p matrix
 * whose columns span the row space of A (A' itself, or any basis of it). M is then the
 * projection onto null(A) along range(D), and M S M' is positive semi-definite of rank
 * q - p with range null(A). With X = M L, M S M' = X X' and, for x in null(A),
 * x' (X X')^+ x = ||X^+ x||^2, X^+ x being the shortest z with M L z = x; those z are
 * L^{-1}(x + D c) for any c (the null space of M is range(D)), and the shortest is the
 * residual of L^{-1} x regressed on Z = L^{-1} D. Hence
 *
 *   x' (M S M')^+ x = || (I - Z (Z'Z)^{-1} Z') L^{-1} P x ||^2,
 *
 * P the orthogonal projection onto null(A) (the pseudo-inverse ignores the part of x
 * outside the range of M S M'). Both projections are done with Householder QR. Cost
 * O(q^2 p) given L, against about 9 q^3 flops for the eigen-decomposition route of
 * `symmetricPinv`; the two agree to rounding (checked against numpy.linalg.pinv).
 * GMM uses it for the pricing-error statistic (shared/estimation/gmmInference.ts).
 */
export function projectedCovariancePinvForm(x: ArrayLike<number>, D: Mat, LS: Mat, constraint: Mat, opts: { labels?: readonly string[] } = {}): number {
  const q = D.rows;
  const p = D.cols;
  if (x.length !== q || LS.rows !== q || constraint.rows !== q || constraint.cols !== p)
    throw new RangeError(`projectedCovariancePinvForm: x of ${x.length}, D ${q}x${p}, L ${LS.rows}x${LS.cols}, constraint ${constraint.rows}x${constraint.cols}`);
  const qa = qrFactor(constraint, { name: 'the moment combinations the estimator sets to zero', labels: opts.labels });
  const z = applyQt(qa, x);
  for (let i = 0; i < p; i++) z[i] = 0;
  const w = forwardSubst(LS, applyQ(qa, z)); // L^{-1} P x
  const qz = qrFactor(cholForwardMat(LS, D), { name: 'the moment Jacobian whitened by the long-run covariance (L^-1 d)', labels: opts.labels });
  const r = applyQt(qz, w);
  let s = 0;
  for (let i = p; i < q; i++) s += r[i] * r[i];
  return s;
}

const EPS = 2 ** -52;
