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
 * |R_jj|. Under the kernel layer's singularity policy (./policy.ts: relative pivots,
 * R_jj^2 <= PIVOT_TOL ||x_j||^2) column j is then taken to be a linear combination of the
 * columns before it, and DeflatorError('SINGULAR') names it and the columns it depends on.
 * The same factorisation serves small square systems (`solveSquare`: Newton steps, the
 * first-stage sandwich of the back-test), where it replaces elimination with pivoting.
 */
import { DeflatorError } from '../errors.js';
import { qrPivotNegligible } from './policy.js';

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
  const f = factor(x, opts);
  if ('failed' in f) throw collinear(f.columns, f.originalNorm, f.failed, f.residualNorm, f.labels, opts.name);
  return f;
}

/** The same factorisation, or null where qrFactor would throw SINGULAR (for a caller with a fallback). */
export function tryQrFactor(x: DenseMatrix, opts: QrOptions): QrFactorization | null {
  const f = factor(x, opts);
  return 'failed' in f ? null : f;
}

type Failed = { failed: number; residualNorm: number; columns: Float64Array[]; originalNorm: number[]; labels: readonly string[] };

function factor(x: DenseMatrix, opts: QrOptions): QrFactorization | Failed {
  const n = x.rows;
  const p = x.cols;
  const labels = opts.labels ?? Array.from({ length: p }, (_, j) => `column ${j + 1}`);
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
    if (qrPivotNegligible(normx, originalNorm[j])) return { failed: j, residualNorm: normx, columns, originalNorm, labels };
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

function collinear(columns: Float64Array[], originalNorm: readonly number[], j: number, residualNorm: number, labels: readonly string[], name: string): DeflatorError {
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

/**
 * The thin Q (n x p, row-major, orthonormal columns) of the factorisation: Q = H_0 ... H_{p-1} [I_p; 0].
 * For products that need Q itself (a sandwich Q' Z Q); a solve needs only applyQt.
 */
export function formQ(qr: QrFactorization): Float64Array {
  const n = qr.rows;
  const p = qr.cols;
  const Q = new Float64Array(n * p);
  const e = new Float64Array(n);
  for (let c = 0; c < p; c++) {
    e.fill(0);
    e[c] = 1;
    const col = applyQ(qr, e);
    for (let i = 0; i < n; i++) Q[i * p + c] = col[i];
  }
  return Q;
}

/** R (p x p, row-major, upper triangular) of the factorisation. */
export function upperR(qr: QrFactorization): Float64Array {
  const p = qr.cols;
  const R = new Float64Array(p * p);
  for (let j = 0; j < p; j++) for (let i = 0; i <= j; i++) R[i * p + j] = qr.columns[j][i];
  return R;
}

/** Solves R X = B in place for the factorisation's upper-triangular R (p x p); B is p x m row-major. */
export function solveRInPlace(qr: QrFactorization, B: Float64Array, m: number): void {
  const p = qr.cols;
  for (let i = p - 1; i >= 0; i--) {
    const rii = qr.columns[i][i];
    for (let c = 0; c < m; c++) {
      let s = B[i * m + c];
      for (let k = i + 1; k < p; k++) s -= qr.columns[k][i] * B[k * m + c];
      B[i * m + c] = s / rii;
    }
  }
}

/**
 * X = A^{-1} B for a square, not necessarily symmetric A (n x n) and B (n x m), both flat
 * row-major, by Householder QR: each equation (row of A and B) is first divided by its
 * largest coefficient, so that neither the scale of the equations (row scaling) nor that
 * of the unknowns (column scaling: the policy's column-relative test) decides
 * singularity; then A = QR, X = R^{-1} Q'B. SINGULAR (naming `name`) under the policy of
 * ./policy.ts. Returns a new array.
 */
export function solveSquare(A: Float64Array, n: number, B: Float64Array, m: number, opts: QrOptions): Float64Array {
  const [As, Bs] = equilibrated(A, n, B, m);
  return solveWith(qrFactor({ rows: n, cols: n, data: As }, opts), Bs, m);
}

/** The same, or null when A is singular under the policy (for callers with a fallback). */
export function trySolveSquare(A: Float64Array, n: number, B: Float64Array, m: number, opts: QrOptions): Float64Array | null {
  const [As, Bs] = equilibrated(A, n, B, m);
  const qr = tryQrFactor({ rows: n, cols: n, data: As }, opts);
  return qr ? solveWith(qr, Bs, m) : null;
}

/** Copies of A and B with every row divided by the largest |coefficient| of A's row (a zero row stays zero). */
function equilibrated(A: Float64Array, n: number, B: Float64Array, m: number): [Float64Array, Float64Array] {
  const As = A.slice(0, n * n);
  const Bs = B.slice(0, n * m);
  for (let i = 0; i < n; i++) {
    let big = 0;
    for (let j = 0; j < n; j++) big = Math.max(big, Math.abs(As[i * n + j]));
    if (!(big > 0) || !Number.isFinite(big)) continue;
    for (let j = 0; j < n; j++) As[i * n + j] /= big;
    for (let c = 0; c < m; c++) Bs[i * m + c] /= big;
  }
  return [As, Bs];
}

function solveWith(qr: QrFactorization, B: Float64Array, m: number): Float64Array {
  const n = qr.rows;
  const X = new Float64Array(n * m);
  const col = new Float64Array(n);
  for (let c = 0; c < m; c++) {
    for (let i = 0; i < n; i++) col[i] = B[i * m + c];
    const z = applyQt(qr, col);
    for (let i = 0; i < n; i++) X[i * m + c] = z[i];
  }
  solveRInPlace(qr, X, m);
  return X;
}
