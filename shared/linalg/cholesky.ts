/**
 * Cholesky factorisation A = L L' of a symmetric positive definite matrix and the
 * triangular solves built on it (Golub and Van Loan, Matrix Computations, 4th ed.,
 * algorithm 4.2.1). Every linear system with a symmetric positive definite matrix in
 * the estimators, the incremental back-test and the bootstrap goes through here; no
 * explicit inverse is formed. The core routines work on flat row-major Float64Arrays
 * (`choleskyInto`, `forwardSolveInPlace`, `backSolveTInPlace`, `cholSolveInPlace`) so that
 * a caller in a hot loop allocates nothing; the `Mat` forms wrap them.
 *
 * Singularity: the policy of ./policy.ts (relative pivots): pivot j, A_jj - sum_k L_jk^2,
 * the part of variable j not explained by the variables before it, must exceed
 * PIVOT_TOL * A_jj; otherwise the error names the entry.
 */
import { DeflatorError, type ErrorCode } from '../errors.js';
import type { Mat } from './matrix.js';
import { choleskyPivotNegligible, unexplainedShare } from './policy.js';

export interface CholeskyOptions {
  /** Used in error messages: "the long-run covariance S", "d'Wd" ... */
  name: string;
  /** Labels of the rows (asset, factor or parameter names) for the error message. */
  labels?: readonly string[];
  /** Error code on failure (NOT_POSITIVE_DEFINITE by default; SINGULAR for design matrices). */
  code?: ErrorCode;
  /** What the user can do about it. */
  hint?: string;
}

/**
 * Factors the symmetric n x n matrix a (row-major; only the lower triangle is read) into
 * l (lower triangle; the upper triangle is zeroed). l may not be a.
 */
export function choleskyInto(A: Float64Array, n: number, L: Float64Array, opts: CholeskyOptions): void {
  const code = opts.code ?? 'NOT_POSITIVE_DEFINITE';
  for (let j = 0; j < n; j++) {
    const ajj = A[j * n + j];
    const label = opts.labels?.[j] ?? `row ${j + 1}`;
    if (!Number.isFinite(ajj)) throw new DeflatorError('INPUT_INVALID', `${opts.name}: entry (${label}, ${label}) is not a finite number`, 'check the input series for missing or infinite values');
    let d = ajj;
    const lj = j * n;
    for (let k = 0; k < j; k++) d -= L[lj + k] * L[lj + k];
    if (choleskyPivotNegligible(d, ajj)) {
      const why = ajj > 0 ? `${label} is (almost) a linear combination of the entries before it (unexplained share ${unexplainedShare(d, ajj)})` : `the diagonal entry of ${label} is ${ajj === 0 ? 'zero' : 'negative'}`;
      throw new DeflatorError(code, `${opts.name} is not positive definite: ${why}`, opts.hint ?? 'remove the redundant series or use a longer sample');
    }
    const ljj = Math.sqrt(d);
    L[lj + j] = ljj;
    for (let c = j + 1; c < n; c++) L[lj + c] = 0;
    // Column j below the diagonal, four rows at a time: four independent sums (the same
    // operations in the same order per entry as one row at a time), so the loop is not
    // bound by the latency of a single running sum.
    let i = j + 1;
    for (; i + 3 < n; i += 4) {
      const l0 = i * n;
      const l1 = l0 + n;
      const l2 = l1 + n;
      const l3 = l2 + n;
      let s0 = A[l0 + j];
      let s1 = A[l1 + j];
      let s2 = A[l2 + j];
      let s3 = A[l3 + j];
      for (let k = 0; k < j; k++) {
        const ljk = L[lj + k];
        s0 -= L[l0 + k] * ljk;
        s1 -= L[l1 + k] * ljk;
        s2 -= L[l2 + k] * ljk;
        s3 -= L[l3 + k] * ljk;
      }
      L[l0 + j] = s0 / ljj;
      L[l1 + j] = s1 / ljj;
      L[l2 + j] = s2 / ljj;
      L[l3 + j] = s3 / ljj;
    }
    for (; i < n; i++) {
      const li = i * n;
      let s = A[li + j];
      for (let k = 0; k < j; k++) s -= L[li + k] * L[lj + k];
      L[li + j] = s / ljj;
    }
  }
}

/** Lower-triangular L with A = L L'. Reads only the lower triangle of A. */
export function cholesky(a: Mat, opts: CholeskyOptions): Mat {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`cholesky: ${opts.name} is ${a.rows}x${a.cols}, not square`);
  const L = new Float64Array(n * n);
  choleskyInto(a.data, n, L, opts);
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

/**
 * Right-hand sides are solved in panels of up to PANEL columns held row-major, so that each
 * pass over L serves the whole panel and the innermost loop runs along a contiguous row of
 * the panel (a column at a time re-reads all of L per column: 16 MB per column for
 * n = 2,000); four rows of L are applied per pass over the panel row. Every entry is
 * computed with the same operations in the same order as the one-column substitutions
 * above, so the results are the same to the last bit.
 */
const PANEL = 64;

function gatherPanel(b: Mat, c0: number, w: number): Float64Array {
  const n = b.rows;
  const m = b.cols;
  const Y = new Float64Array(n * w);
  for (let i = 0; i < n; i++) for (let c = 0; c < w; c++) Y[i * w + c] = b.data[i * m + c0 + c];
  return Y;
}

function scatterPanel(Y: Float64Array, out: Float64Array, n: number, m: number, c0: number, w: number): void {
  for (let i = 0; i < n; i++) for (let c = 0; c < w; c++) out[i * m + c0 + c] = Y[i * w + c];
}

/** L Y = B in place on a panel (n x w, row-major); D is L's n x n row-major data. */
function forwardPanel(D: Float64Array, n: number, Y: Float64Array, w: number): void {
  for (let i = 0; i < n; i++) {
    const li = i * n;
    const yi = i * w;
    let k = 0;
    for (; k + 3 < i; k += 4) {
      const a0 = D[li + k];
      const a1 = D[li + k + 1];
      const a2 = D[li + k + 2];
      const a3 = D[li + k + 3];
      const y0 = k * w;
      const y1 = y0 + w;
      const y2 = y1 + w;
      const y3 = y2 + w;
      for (let c = 0; c < w; c++) {
        let y = Y[yi + c];
        y -= a0 * Y[y0 + c];
        y -= a1 * Y[y1 + c];
        y -= a2 * Y[y2 + c];
        y -= a3 * Y[y3 + c];
        Y[yi + c] = y;
      }
    }
    for (; k < i; k++) {
      const l = D[li + k];
      const yk = k * w;
      for (let c = 0; c < w; c++) Y[yi + c] -= l * Y[yk + c];
    }
    const lii = D[li + i];
    for (let c = 0; c < w; c++) Y[yi + c] /= lii;
  }
}

/** L' X = Y in place on a panel (n x w, row-major); D is L's n x n row-major data. */
function backPanel(D: Float64Array, n: number, Y: Float64Array, w: number): void {
  for (let i = n - 1; i >= 0; i--) {
    const yi = i * w;
    let k = i + 1;
    for (; k + 3 < n; k += 4) {
      const a0 = D[k * n + i];
      const a1 = D[(k + 1) * n + i];
      const a2 = D[(k + 2) * n + i];
      const a3 = D[(k + 3) * n + i];
      const y0 = k * w;
      const y1 = y0 + w;
      const y2 = y1 + w;
      const y3 = y2 + w;
      for (let c = 0; c < w; c++) {
        let y = Y[yi + c];
        y -= a0 * Y[y0 + c];
        y -= a1 * Y[y1 + c];
        y -= a2 * Y[y2 + c];
        y -= a3 * Y[y3 + c];
        Y[yi + c] = y;
      }
    }
    for (; k < n; k++) {
      const l = D[k * n + i];
      const yk = k * w;
      for (let c = 0; c < w; c++) Y[yi + c] -= l * Y[yk + c];
    }
    const lii = D[i * n + i];
    for (let c = 0; c < w; c++) Y[yi + c] /= lii;
  }
}

/** X = A^{-1} B from the factor L of A (B is not modified). */
export function cholSolveMat(L: Mat, b: Mat): Mat {
  const n = L.rows;
  if (b.rows !== n) throw new RangeError(`cholSolveMat: factor ${n}x${n}, right-hand side ${b.rows}x${b.cols}`);
  const m = b.cols;
  const out = new Float64Array(n * m);
  for (let c0 = 0; c0 < m; c0 += PANEL) {
    const w = Math.min(PANEL, m - c0);
    const Y = gatherPanel(b, c0, w);
    forwardPanel(L.data, n, Y, w);
    backPanel(L.data, n, Y, w);
    scatterPanel(Y, out, n, m, c0, w);
  }
  return { rows: n, cols: m, data: out };
}

/** Y = L^{-1} B (forward substitution on each column), used for whitened products. */
export function cholForwardMat(L: Mat, b: Mat): Mat {
  const n = L.rows;
  if (b.rows !== n) throw new RangeError(`cholForwardMat: factor ${n}x${n}, right-hand side ${b.rows}x${b.cols}`);
  const m = b.cols;
  const out = new Float64Array(n * m);
  for (let c0 = 0; c0 < m; c0 += PANEL) {
    const w = Math.min(PANEL, m - c0);
    const Y = gatherPanel(b, c0, w);
    forwardPanel(L.data, n, Y, w);
    scatterPanel(Y, out, n, m, c0, w);
  }
  return { rows: n, cols: m, data: out };
}

/**
 * In place on a flat n x m right-hand side B (row-major): L Y = B. With m <= PANEL the
 * panel is B itself; wider B is solved PANEL columns at a time. Same bits as forwardSubst
 * column by column.
 */
export function forwardSolveInPlace(L: Float64Array, n: number, B: Float64Array, m: number): void {
  solvePanels(L, n, B, m, false);
}

/** In place on a flat n x m B: (L L') X = B (forward, then back substitution). */
export function cholSolveInPlace(L: Float64Array, n: number, B: Float64Array, m: number): void {
  solvePanels(L, n, B, m, true);
}

/** In place on a flat n x m B: L' X = B (back substitution only). */
export function backSolveTInPlace(L: Float64Array, n: number, B: Float64Array, m: number): void {
  if (m <= PANEL) {
    backPanel(L, n, B, m);
    return;
  }
  for (let c0 = 0; c0 < m; c0 += PANEL) {
    const w = Math.min(PANEL, m - c0);
    const Y = gatherFlat(B, n, m, c0, w);
    backPanel(L, n, Y, w);
    scatterPanel(Y, B, n, m, c0, w);
  }
}

function gatherFlat(B: Float64Array, n: number, m: number, c0: number, w: number): Float64Array {
  const Y = new Float64Array(n * w);
  for (let i = 0; i < n; i++) for (let c = 0; c < w; c++) Y[i * w + c] = B[i * m + c0 + c];
  return Y;
}

function solvePanels(L: Float64Array, n: number, B: Float64Array, m: number, both: boolean): void {
  if (m <= PANEL) {
    forwardPanel(L, n, B, m);
    if (both) backPanel(L, n, B, m);
    return;
  }
  for (let c0 = 0; c0 < m; c0 += PANEL) {
    const w = Math.min(PANEL, m - c0);
    const Y = gatherFlat(B, n, m, c0, w);
    forwardPanel(L, n, Y, w);
    if (both) backPanel(L, n, Y, w);
    scatterPanel(Y, B, n, m, c0, w);
  }
}

/** log det A = 2 sum log L_ii. */
export function cholLogDet(L: Mat): number {
  let s = 0;
  for (let i = 0; i < L.rows; i++) s += Math.log(L.data[i * L.rows + i]);
  return 2 * s;
}

/**
 * The smallest relative pivot L_jj^2 / A_jj of a Cholesky factor: the share of entry j's
 * variance not explained by the entries before it, scale-free (unchanged when a row and
 * column are multiplied by a constant). The correlation form of A has a condition number
 * of at least 1 / that share (it is at least the unexplained share given all the other
 * entries, which is at least the smallest eigenvalue of the correlation matrix).
 */
export function smallestRelativePivot(L: Mat, a: Mat): { share: number; index: number } {
  const n = L.rows;
  let share = Infinity;
  let index = -1;
  for (let j = 0; j < n; j++) {
    const ljj = L.data[j * n + j];
    const r = (ljj * ljj) / a.data[j * n + j];
    if (r < share) {
      share = r;
      index = j;
    }
  }
  return { share, index };
}
