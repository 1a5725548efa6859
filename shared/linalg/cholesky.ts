/**
 * Cholesky factorisation A = L L' of a symmetric positive definite matrix and the
 * triangular solves built on it (Golub and Van Loan, Matrix Computations, 4th ed.,
 * algorithm 4.2.1). Every linear system with a symmetric positive definite matrix in
 * the estimators goes through here; no explicit inverse is formed.
 *
 * Near-singularity test: the pivot of row j, A_jj - sum_k L_jk^2, is the part of
 * variable j not explained by the variables before it. When it falls below
 * `relTol * A_jj` (default 1e-12, i.e. an R^2 of 1 - 1e-12 on the earlier columns)
 * the matrix is treated as singular, and the error names the entry.
 */
import { DeflatorError, type ErrorCode } from '../errors.js';
import type { Mat } from './matrix.js';

export interface CholeskyOptions {
  /** Used in error messages: "the long-run covariance S", "d'Wd" ... */
  name: string;
  /** Labels of the rows (asset, factor or parameter names) for the error message. */
  labels?: readonly string[];
  /** Relative pivot tolerance (see the file comment). */
  relTol?: number;
  /** Error code on failure (NOT_POSITIVE_DEFINITE by default; SINGULAR for design matrices). */
  code?: ErrorCode;
  /** What the user can do about it. */
  hint?: string;
}

export const DEFAULT_PIVOT_TOL = 1e-12;

/** Lower-triangular L with A = L L'. Reads only the lower triangle of A. */
export function cholesky(a: Mat, opts: CholeskyOptions): Mat {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`cholesky: ${opts.name} is ${a.rows}x${a.cols}, not square`);
  const tol = opts.relTol ?? DEFAULT_PIVOT_TOL;
  const code = opts.code ?? 'NOT_POSITIVE_DEFINITE';
  const A = a.data;
  const L = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const ajj = A[j * n + j];
    const label = opts.labels?.[j] ?? `row ${j + 1}`;
    if (!Number.isFinite(ajj)) throw new DeflatorError('INPUT_INVALID', `${opts.name}: entry (${label}, ${label}) is not a finite number`, 'check the input series for missing or infinite values');
    let d = ajj;
    const lj = j * n;
    for (let k = 0; k < j; k++) d -= L[lj + k] * L[lj + k];
    if (!(ajj > 0) || !(d > tol * ajj)) {
      const why =
        ajj > 0
          ? `${label} is (almost) a linear combination of the entries before it (unexplained share ${d / ajj > 0 ? (d / ajj).toExponential(2) : '0'})`
          : `the diagonal entry of ${label} is ${ajj === 0 ? 'zero' : 'negative'}`;
      throw new DeflatorError(code, `${opts.name} is not positive definite: ${why}`, opts.hint ?? 'remove the redundant series or use a longer sample');
    }
    const ljj = Math.sqrt(d);
    L[lj + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      const li = i * n;
      let s = A[li + j];
      for (let k = 0; k < j; k++) s -= L[li + k] * L[lj + k];
      L[li + j] = s / ljj;
    }
  }
  return { rows: n, cols: n, data: L };
}

/** Solves L y = b in place (forward substitution). */
export function forwardSubst(L: Mat, b: Float64Array): Float64Array {
  const n = L.rows;
  const D = L.data;
  for (let i = 0; i < n; i++) {
    let s = b[i];
    const li = i * n;
    for (let k = 0; k < i; k++) s -= D[li + k] * b[k];
    b[i] = s / D[li + i];
  }
  return b;
}

/** Solves L' x = y in place (back substitution). */
export function backSubst(L: Mat, y: Float64Array): Float64Array {
  const n = L.rows;
  const D = L.data;
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= D[k * n + i] * y[k];
    y[i] = s / D[i * n + i];
  }
  return y;
}

/** x = A^{-1} b from the factor L of A (b is not modified). */
export function cholSolveVec(L: Mat, b: ArrayLike<number>): Float64Array {
  const x = Float64Array.from(b);
  forwardSubst(L, x);
  backSubst(L, x);
  return x;
}

/** X = A^{-1} B from the factor L of A, column by column (B is not modified). */
export function cholSolveMat(L: Mat, b: Mat): Mat {
  const n = L.rows;
  if (b.rows !== n) throw new RangeError(`cholSolveMat: factor ${n}x${n}, right-hand side ${b.rows}x${b.cols}`);
  const m = b.cols;
  const out = new Float64Array(n * m);
  const col = new Float64Array(n);
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < n; i++) col[i] = b.data[i * m + j];
    forwardSubst(L, col);
    backSubst(L, col);
    for (let i = 0; i < n; i++) out[i * m + j] = col[i];
  }
  return { rows: n, cols: m, data: out };
}

/** Y = L^{-1} B (forward substitution on each column), used for whitened products. */
export function cholForwardMat(L: Mat, b: Mat): Mat {
  const n = L.rows;
  const m = b.cols;
  const out = new Float64Array(n * m);
  const col = new Float64Array(n);
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < n; i++) col[i] = b.data[i * m + j];
    forwardSubst(L, col);
    for (let i = 0; i < n; i++) out[i * m + j] = col[i];
  }
  return { rows: n, cols: m, data: out };
}

/** log det A = 2 sum log L_ii. */
export function cholLogDet(L: Mat): number {
  let s = 0;
  for (let i = 0; i < L.rows; i++) s += Math.log(L.data[i * L.rows + i]);
  return 2 * s;
}
