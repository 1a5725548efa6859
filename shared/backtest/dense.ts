/**
 * The few dense kernels the back-test's inner loop needs, on plain row-major
 * Float64Arrays so that nothing is allocated per window beyond what the caller keeps.
 * Sizes are moments x moments (N + K, at most a few hundred). Solves only: no inverse.
 */
import { DeflatorError } from '../errors.js';

/**
 * Cholesky factor of the symmetric matrix a (n x n, row-major; only the lower triangle
 * is read) written into l (lower triangle, upper zeroed). A pivot at or below
 * 1e-13 x the largest diagonal entry means the matrix is singular or not positive
 * definite to working precision: throws SINGULAR naming `what`.
 */
export function choleskyInto(a: Float64Array, n: number, l: Float64Array, what: string): void {
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(a[i * n + i]));
  const tol = 1e-13 * scale;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = 0; j <= i; j++) {
      const rj = j * n;
      let s = a[ri + j];
      for (let k = 0; k < j; k++) s -= l[ri + k] * l[rj + k];
      if (i === j) {
        if (!(s > tol)) {
          throw new DeflatorError(
            'SINGULAR',
            `${what} is singular or not positive definite (pivot ${i + 1} of ${n} is ${s.toExponential(3)}, largest diagonal ${scale.toExponential(3)})`,
            'check for collinear or constant series, fewer periods than moments, or too many Newey-West lags for the window',
          );
        }
        l[ri + i] = Math.sqrt(s);
      } else {
        l[ri + j] = s / l[rj + j];
      }
    }
    for (let j = i + 1; j < n; j++) l[ri + j] = 0;
  }
}

export function cholesky(a: Float64Array, n: number, what: string): Float64Array {
  const l = new Float64Array(n * n);
  choleskyInto(a, n, l, what);
  return l;
}

/** Solves (L L') X = B in place; B is n x m row-major. */
export function cholSolveInPlace(l: Float64Array, n: number, b: Float64Array, m: number): void {
  // forward: L Y = B
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    const bi = i * m;
    for (let k = 0; k < i; k++) {
      const lik = l[ri + k];
      if (lik === 0) continue;
      const bk = k * m;
      for (let c = 0; c < m; c++) b[bi + c] -= lik * b[bk + c];
    }
    const d = l[ri + i];
    for (let c = 0; c < m; c++) b[bi + c] /= d;
  }
  // backward: L' X = Y
  for (let i = n - 1; i >= 0; i--) {
    const bi = i * m;
    for (let k = i + 1; k < n; k++) {
      const lki = l[k * n + i];
      if (lki === 0) continue;
      const bk = k * m;
      for (let c = 0; c < m; c++) b[bi + c] -= lki * b[bk + c];
    }
    const d = l[i * n + i];
    for (let c = 0; c < m; c++) b[bi + c] /= d;
  }
}

/**
 * Solves A X = B (A n x n general, B n x m) by LU with partial pivoting, on copies.
 * Used for the small parameter-space systems (Newton steps, the first-stage
 * sandwich), whose matrices need not be symmetric. A pivot below 1e-13 x the largest
 * entry of A throws SINGULAR naming `what`.
 */
export function luSolve(a: Float64Array, n: number, b: Float64Array, m: number, what: string): Float64Array {
  const A = a.slice();
  const X = b.slice();
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(A[i]));
  const tol = 1e-13 * scale;
  for (let c = 0; c < n; c++) {
    let p = c;
    let best = Math.abs(A[c * n + c]);
    for (let r = c + 1; r < n; r++) {
      const v = Math.abs(A[r * n + c]);
      if (v > best) {
        best = v;
        p = r;
      }
    }
    if (!(best > tol)) {
      throw new DeflatorError('SINGULAR', `${what} is singular (column ${c + 1} of ${n} has no usable pivot)`, 'check for collinear factors or a factor with no variation in the window');
    }
    if (p !== c) {
      for (let j = 0; j < n; j++) {
        const t = A[c * n + j];
        A[c * n + j] = A[p * n + j];
        A[p * n + j] = t;
      }
      for (let j = 0; j < m; j++) {
        const t = X[c * m + j];
        X[c * m + j] = X[p * m + j];
        X[p * m + j] = t;
      }
    }
    const d = A[c * n + c];
    for (let r = c + 1; r < n; r++) {
      const f = A[r * n + c] / d;
      if (f === 0) continue;
      A[r * n + c] = 0;
      for (let j = c + 1; j < n; j++) A[r * n + j] -= f * A[c * n + j];
      for (let j = 0; j < m; j++) X[r * m + j] -= f * X[c * m + j];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    for (let j = 0; j < m; j++) {
      let s = X[r * m + j];
      for (let k = r + 1; k < n; k++) s -= A[r * n + k] * X[k * m + j];
      X[r * m + j] = s / A[r * n + r];
    }
  }
  return X;
}

/** Solves L Y = B in place for lower-triangular L (n x n); B is n x m. */
export function forwardSolveInPlace(l: Float64Array, n: number, b: Float64Array, m: number): void {
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    const bi = i * m;
    for (let k = 0; k < i; k++) {
      const lik = l[ri + k];
      if (lik === 0) continue;
      const bk = k * m;
      for (let c = 0; c < m; c++) b[bi + c] -= lik * b[bk + c];
    }
    const d = l[ri + i];
    for (let c = 0; c < m; c++) b[bi + c] /= d;
  }
}

/**
 * Thin Householder QR of A (r x p, r >= p): A = Q R with Q r x p orthonormal columns and
 * R p x p upper triangular. A diagonal entry of R at or below 1e-13 x the largest means
 * A has (numerically) dependent columns: throws SINGULAR naming `what`.
 */
export function qrThin(a: Float64Array, r: number, p: number, what: string): { Q: Float64Array; R: Float64Array } {
  if (r < p) throw new DeflatorError('UNDERIDENTIFIED', `${what}: ${r} moments for ${p} parameters`, 'use more test assets than factors');
  const A = a.slice();
  const vs: Float64Array[] = [];
  for (let c = 0; c < p; c++) {
    let norm = 0;
    for (let i = c; i < r; i++) norm += A[i * p + c] ** 2;
    norm = Math.sqrt(norm);
    const v = new Float64Array(r);
    if (norm === 0) {
      vs.push(v);
      continue;
    }
    const alpha = A[c * p + c] > 0 ? -norm : norm;
    for (let i = c; i < r; i++) v[i] = A[i * p + c];
    v[c] -= alpha;
    let vv = 0;
    for (let i = c; i < r; i++) vv += v[i] * v[i];
    if (vv > 0) {
      for (let j = c; j < p; j++) {
        let s = 0;
        for (let i = c; i < r; i++) s += v[i] * A[i * p + j];
        const f = (2 * s) / vv;
        for (let i = c; i < r; i++) A[i * p + j] -= f * v[i];
      }
      const inv = 1 / Math.sqrt(vv);
      for (let i = c; i < r; i++) v[i] *= inv;
    }
    vs.push(v);
  }
  const R = new Float64Array(p * p);
  let scale = 0;
  for (let i = 0; i < p; i++) for (let j = i; j < p; j++) R[i * p + j] = A[i * p + j];
  for (let i = 0; i < p; i++) scale = Math.max(scale, Math.abs(R[i * p + i]));
  for (let i = 0; i < p; i++) {
    if (!(Math.abs(R[i * p + i]) > 1e-13 * scale)) {
      throw new DeflatorError('SINGULAR', `${what} has linearly dependent columns (column ${i + 1} of ${p})`, 'check for collinear or constant factors in the window');
    }
  }
  // Q = H_0 H_1 ... H_{p-1} [I_p; 0]
  const Q = new Float64Array(r * p);
  for (let j = 0; j < p; j++) Q[j * p + j] = 1;
  for (let c = p - 1; c >= 0; c--) {
    const v = vs[c];
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let i = c; i < r; i++) s += v[i] * Q[i * p + j];
      if (s === 0) continue;
      for (let i = c; i < r; i++) Q[i * p + j] -= 2 * s * v[i];
    }
  }
  return { Q, R };
}

/** Solves R X = B for upper-triangular R (p x p); B is p x m. Returns X. */
export function backSolve(R: Float64Array, p: number, b: Float64Array, m: number): Float64Array {
  const X = b.slice();
  for (let i = p - 1; i >= 0; i--) {
    for (let c = 0; c < m; c++) {
      let s = X[i * m + c];
      for (let k = i + 1; k < p; k++) s -= R[i * p + k] * X[k * m + c];
      X[i * m + c] = s / R[i * p + i];
    }
  }
  return X;
}
