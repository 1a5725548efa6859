/**
 * Householder QR factorisation X = Q R of a tall design matrix and the least-squares
 * solves built on it (Golub and Van Loan, Matrix Computations, 4th ed., algorithm
 * 5.2.1; the reflector convention of LAPACK's dgeqr2). Least squares by QR never forms
 * X'X, so a design with condition number kappa loses about log10(kappa) digits, not
 * 2 log10(kappa) as the normal equations do (the NIST Longley design, kappa ~ 1e9, is
 * solved to 1e-10 relative and better).
 *
 * Rank check (no pivoting, so the columns keep their order and names): after the
 * reflections for columns 1..j-1, the part of column j orthogonal to them has norm
 * |R_jj|. If |R_jj| <= tol * ||x_j|| (tol = 1e-7 by default, the same relative tolerance
 * as R's lm.fit), column j is taken to be a linear combination of the columns before
 * it, and DeflatorError('SINGULAR') names it and the columns it depends on.
 */
import { DeflatorError } from '../errors.js';

/** Row-major dense matrix; structurally the same as shared/linalg/matrix.ts `Mat`. */
export interface DenseMatrix {
  readonly rows: number;
  readonly cols: number;
  readonly data: Float64Array;
}

export interface QrOptions {
  /** Names the design in error messages, e.g. "time-series regression design [1, f]". */
  name: string;
  /** Column labels for error messages (e.g. "const", factor names). */
  labels?: readonly string[];
  /** Relative rank tolerance (see the file comment). */
  tol?: number;
}

/** A Householder QR factorisation, ready for repeated solves. */
export interface QrFactorization {
  readonly rows: number;
  readonly cols: number;
  /** Column-major: column j holds R[0..j, j] above the diagonal and R_jj on it; below it, the reflector v_j (v_j[j] = 1 implied). */
  readonly columns: Float64Array[];
  /** Reflector coefficients: H_j = I - tau_j v_j v_j'. */
  readonly tau: Float64Array;
  readonly name: string;
  readonly labels: readonly string[];
}

export const DEFAULT_RANK_TOL = 1e-7;

function euclid(v: Float64Array, from: number): number {
  // Scaled sum of squares (as LAPACK dnrm2) so that huge or tiny columns do not overflow.
  let scale = 0;
  let ssq = 1;
  for (let i = from; i < v.length; i++) {
    const a = Math.abs(v[i]);
    if (a === 0) continue;
    if (scale < a) {
      ssq = 1 + ssq * (scale / a) * (scale / a);
      scale = a;
    } else {
      ssq += (a / scale) * (a / scale);
    }
  }
  return scale * Math.sqrt(ssq);
}

/** Factorises the n x p design X (n >= p). Throws SINGULAR naming a collinear column. */
export function qrFactor(x: DenseMatrix, opts: QrOptions): QrFactorization {
  const n = x.rows;
  const p = x.cols;
  const labels = opts.labels ?? Array.from({ length: p }, (_, j) => `column ${j + 1}`);
  const tol = opts.tol ?? DEFAULT_RANK_TOL;
  if (n < p)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `${opts.name}: ${n} observations for ${p} coefficients (${labels.join(', ')}); least squares needs at least as many observations as coefficients`,
      'use a longer sample or fewer regressors',
    );
  const columns: Float64Array[] = [];
  for (let j = 0; j < p; j++) {
    const c = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const v = x.data[i * p + j];
      if (!Number.isFinite(v)) throw new DeflatorError('INPUT_INVALID', `${opts.name}: ${labels[j]} has a non-finite value in row ${i + 1}`, 'check the series for missing or infinite values');
      c[i] = v;
    }
    columns.push(c);
  }
  const originalNorm = columns.map((c) => euclid(c, 0));
  const tau = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    const a = columns[j];
    const normx = euclid(a, j);
    if (originalNorm[j] === 0 || normx <= tol * originalNorm[j]) throw collinear(columns, originalNorm, j, normx, labels, opts.name);
    const alpha = a[j];
    const beta = alpha >= 0 ? -normx : normx;
    const v0 = alpha - beta;
    for (let i = j + 1; i < n; i++) a[i] /= v0;
    tau[j] = (beta - alpha) / beta;
    a[j] = beta;
    // Apply H_j = I - tau v v' (v = [1, a[j+1..]]) to the remaining columns.
    for (let k = j + 1; k < p; k++) {
      const c = columns[k];
      let s = c[j];
      for (let i = j + 1; i < n; i++) s += a[i] * c[i];
      s *= tau[j];
      c[j] -= s;
      for (let i = j + 1; i < n; i++) c[i] -= s * a[i];
    }
  }
  return { rows: n, cols: p, columns, tau, name: opts.name, labels };
}

function collinear(columns: Float64Array[], originalNorm: number[], j: number, residualNorm: number, labels: readonly string[], name: string): DeflatorError {
  const label = `"${labels[j]}"`;
  if (originalNorm[j] === 0)
    return new DeflatorError('SINGULAR', `${name}: ${label} is zero in every period`, `drop ${labels[j]} or check that its series was imported`);
  // Regress column j on the earlier ones: R[0:j, 0:j] c = R[0:j, j] (already reflected).
  const c = new Float64Array(j);
  for (let i = j - 1; i >= 0; i--) {
    let s = columns[j][i];
    for (let k = i + 1; k < j; k++) s -= columns[k][i] * c[k];
    c[i] = s / columns[i][i];
  }
  const involved: string[] = [];
  for (let k = 0; k < j; k++) if (Math.abs(c[k]) * originalNorm[k] > 1e-6 * originalNorm[j]) involved.push(`"${labels[k]}"`);
  const share = (residualNorm / originalNorm[j]).toExponential(2);
  // Collinear with the intercept column alone: the series does not vary over the sample.
  const onlyConst = involved.length === 1 && involved[0] === '"const"';
  const what = onlyConst ? 'constant (it does not vary over the sample)' : `linear combination of ${involved.join(', ') || 'the columns before it'}`;
  return new DeflatorError(
    'SINGULAR',
    `${name}: ${label} is (almost) a ${what} (unexplained norm share ${share}); the columns ${[...involved, label].join(', ')} are collinear`,
    `drop one of ${[...involved, label].join(', ')}, or use a sample where they move independently`,
  );
}

/** Q'y (length n). */
export function applyQt(qr: QrFactorization, y: ArrayLike<number>): Float64Array {
  const n = qr.rows;
  if (y.length !== n) throw new RangeError(`applyQt: vector of ${y.length} for ${n} rows`);
  const z = Float64Array.from(y as ArrayLike<number>);
  for (let j = 0; j < qr.cols; j++) {
    const v = qr.columns[j];
    let s = z[j];
    for (let i = j + 1; i < n; i++) s += v[i] * z[i];
    s *= qr.tau[j];
    z[j] -= s;
    for (let i = j + 1; i < n; i++) z[i] -= s * v[i];
  }
  return z;
}

/** Q z (length n), the inverse of applyQt. */
export function applyQ(qr: QrFactorization, z: ArrayLike<number>): Float64Array {
  const n = qr.rows;
  const y = Float64Array.from(z as ArrayLike<number>);
  for (let j = qr.cols - 1; j >= 0; j--) {
    const v = qr.columns[j];
    let s = y[j];
    for (let i = j + 1; i < n; i++) s += v[i] * y[i];
    s *= qr.tau[j];
    y[j] -= s;
    for (let i = j + 1; i < n; i++) y[i] -= s * v[i];
  }
  return y;
}

/** Solves R b = z[0..p) by back substitution. */
export function solveR(qr: QrFactorization, z: ArrayLike<number>): Float64Array {
  const p = qr.cols;
  const b = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = z[i];
    for (let k = i + 1; k < p; k++) s -= qr.columns[k][i] * b[k];
    b[i] = s / qr.columns[i][i];
  }
  return b;
}

/**
 * Solves R' z = a by forward substitution. With X = QR, a'(X'X)^{-1}a = ||z||^2: the
 * quadratic form of the inverse cross-product matrix without forming it (used for
 * a' Sigma^{-1} a with Sigma = E'E / T, E a residual matrix).
 */
export function solveRt(qr: QrFactorization, a: ArrayLike<number>): Float64Array {
  const p = qr.cols;
  if (a.length !== p) throw new RangeError(`solveRt: vector of ${a.length} for ${p} columns`);
  const z = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let s = a[i];
    const col = qr.columns[i];
    for (let k = 0; k < i; k++) s -= col[k] * z[k];
    z[i] = s / col[i];
  }
  return z;
}

/** a'(X'X)^{-1}a from the factorisation of X. */
export function inverseQuadForm(qr: QrFactorization, a: ArrayLike<number>): number {
  const z = solveRt(qr, a);
  let s = 0;
  for (let i = 0; i < z.length; i++) s += z[i] * z[i];
  return s;
}

export interface LeastSquaresSolution {
  /** argmin ||y - X b||. */
  coefficients: Float64Array;
  /** y - X b, computed as Q [0; (Q'y)_(p..n)] (no cancellation from forming X b). */
  residuals: Float64Array;
  /** Residual sum of squares ||(Q'y)_(p..n)||^2. */
  rss: number;
}

/** Least-squares solution for one right-hand side. */
export function qrLeastSquares(qr: QrFactorization, y: ArrayLike<number>): LeastSquaresSolution {
  const z = applyQt(qr, y);
  const coefficients = solveR(qr, z);
  const tail = new Float64Array(qr.rows);
  let rss = 0;
  for (let i = qr.cols; i < qr.rows; i++) {
    tail[i] = z[i];
    rss += z[i] * z[i];
  }
  return { coefficients, residuals: applyQ(qr, tail), rss };
}

/**
 * (X'X)^{-1} = R^{-1} R^{-T}, the unscaled coefficient covariance. Formed from R by
 * triangular solves (the covariance itself is the output here, so no solve can stand in).
 */
export function qrUnscaledCovariance(qr: QrFactorization): DenseMatrix {
  const p = qr.cols;
  // Rinv upper triangular: solve R Rinv = I column by column.
  const rinv = new Float64Array(p * p);
  for (let c = 0; c < p; c++) {
    for (let i = c; i >= 0; i--) {
      let s = i === c ? 1 : 0;
      for (let k = i + 1; k <= c; k++) s -= qr.columns[k][i] * rinv[k * p + c];
      rinv[i * p + c] = s / qr.columns[i][i];
    }
  }
  const out = new Float64Array(p * p);
  for (let i = 0; i < p; i++)
    for (let j = i; j < p; j++) {
      let s = 0;
      for (let k = j; k < p; k++) s += rinv[i * p + k] * rinv[j * p + k];
      out[i * p + j] = s;
      out[j * p + i] = s;
    }
  return { rows: p, cols: p, data: out };
}
