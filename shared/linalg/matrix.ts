/**
 * Dense matrices for the estimators: row-major Float64Array storage and the few products
 * GMM needs. Most are moments x parameters; the q x q ones (S, Var(g), E[RR']) reach a few
 * thousand rows with thousands of test assets, so every hot loop runs along contiguous
 * rows, and allocation is explicit.
 */
import { gram, seriesDot } from './gramKernel.js';

/** A dense row-major matrix: entry (i, j) is data[i * cols + j]. */
export interface Mat {
  readonly rows: number;
  readonly cols: number;
  readonly data: Float64Array;
}

export function zeros(rows: number, cols: number): Mat {
  return { rows, cols, data: new Float64Array(rows * cols) };
}

export function identity(n: number): Mat {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m.data[i * n + i] = 1;
  return m;
}

/** Builds a matrix from an array of equal-length rows. */
export function fromRows(rows: ArrayLike<number>[]): Mat {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const m = zeros(r, c);
  for (let i = 0; i < r; i++) {
    if (rows[i].length !== c) throw new RangeError(`fromRows: row ${i} has ${rows[i].length} entries, expected ${c}`);
    for (let j = 0; j < c; j++) m.data[i * c + j] = rows[i][j];
  }
  return m;
}

/** The rows as plain arrays (for JSON and tests). */
export function toRows(a: Mat): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < a.rows; i++) out.push(Array.from(a.data.subarray(i * a.cols, (i + 1) * a.cols)));
  return out;
}

export function get(a: Mat, i: number, j: number): number {
  return a.data[i * a.cols + j];
}

export function clone(a: Mat): Mat {
  return { rows: a.rows, cols: a.cols, data: a.data.slice() };
}

export function transpose(a: Mat): Mat {
  const t = zeros(a.cols, a.rows);
  for (let i = 0; i < a.rows; i++) for (let j = 0; j < a.cols; j++) t.data[j * a.rows + i] = a.data[i * a.cols + j];
  return t;
}

/** A B. */
export function mul(a: Mat, b: Mat): Mat {
  if (a.cols !== b.rows) throw new RangeError(`mul: ${a.rows}x${a.cols} times ${b.rows}x${b.cols}`);
  return { rows: a.rows, cols: b.cols, data: matMulFlat(a.data, b.data, a.rows, a.cols, b.cols) };
}

/** A' B, without forming A'. */
export function mulAtB(a: Mat, b: Mat): Mat {
  if (a.rows !== b.rows) throw new RangeError(`mulAtB: (${a.rows}x${a.cols})' times ${b.rows}x${b.cols}`);
  return { rows: a.cols, cols: b.cols, data: crossProducts(a.data, b.data, a.rows, a.cols, b.cols) };
}

/** A x. */
export function mulVec(a: Mat, x: ArrayLike<number>): Float64Array {
  if (a.cols !== x.length) throw new RangeError(`mulVec: ${a.rows}x${a.cols} times vector of ${x.length}`);
  const y = new Float64Array(a.rows);
  for (let i = 0; i < a.rows; i++) {
    let s = 0;
    const o = i * a.cols;
    for (let j = 0; j < a.cols; j++) s += a.data[o + j] * x[j];
    y[i] = s;
  }
  return y;
}

/** A' x. */
export function mulTVec(a: Mat, x: ArrayLike<number>): Float64Array {
  if (a.rows !== x.length) throw new RangeError(`mulTVec: (${a.rows}x${a.cols})' times vector of ${x.length}`);
  const y = new Float64Array(a.cols);
  for (let i = 0; i < a.rows; i++) {
    const xi = x[i];
    if (xi === 0) continue;
    const o = i * a.cols;
    for (let j = 0; j < a.cols; j++) y[j] += a.data[o + j] * xi;
  }
  return y;
}

/** x' A x for a square A. */
export function quadForm(a: Mat, x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.rows; i++) {
    let r = 0;
    const o = i * a.cols;
    for (let j = 0; j < a.cols; j++) r += a.data[o + j] * x[j];
    s += x[i] * r;
  }
  return s;
}

export function add(a: Mat, b: Mat): Mat {
  const c = clone(a);
  for (let i = 0; i < c.data.length; i++) c.data[i] += b.data[i];
  return c;
}

export function sub(a: Mat, b: Mat): Mat {
  const c = clone(a);
  for (let i = 0; i < c.data.length; i++) c.data[i] -= b.data[i];
  return c;
}

export function scale(a: Mat, s: number): Mat {
  const c = clone(a);
  for (let i = 0; i < c.data.length; i++) c.data[i] *= s;
  return c;
}

/** (A + A') / 2, to remove rounding asymmetry before a symmetric factorisation. */
export function symmetrize(a: Mat): Mat {
  const n = a.rows;
  const c = clone(a);
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const v = 0.5 * (a.data[i * n + j] + a.data[j * n + i]);
      c.data[i * n + j] = v;
      c.data[j * n + i] = v;
    }
  return c;
}

export function diag(a: Mat): Float64Array {
  const n = Math.min(a.rows, a.cols);
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = a.data[i * a.cols + i];
  return d;
}

/** The sub-block rows r0..r1-1, cols c0..c1-1. */
export function block(a: Mat, r0: number, r1: number, c0: number, c1: number): Mat {
  const b = zeros(r1 - r0, c1 - c0);
  for (let i = r0; i < r1; i++) for (let j = c0; j < c1; j++) b.data[(i - r0) * b.cols + (j - c0)] = a.data[i * a.cols + j];
  return b;
}

export function dot(x: ArrayLike<number>, y: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * y[i];
  return s;
}

/**
 * sum_t x[t] y[t] over two series of equal length, with four partial sums (the hot loop
 * of every covariance and second-moment matrix; about twice as fast as one accumulator).
 * Defined in ./gramKernel.ts with the Gram kernel, whose every entry equals it bit for bit.
 */
export { seriesDot };

/**
 * The symmetric q x q matrix with entries (a, b) and (b, a) equal to seriesDot(x[a], y[b])
 * for b >= a (x = y gives a Gram matrix; the long-run covariance passes its filtered and
 * plain series). Unscaled: the caller divides by T as it did per entry. Computed by the
 * kernel layer's Gram kernel (./gramKernel.ts: WebAssembly SIMD, register- and
 * cache-blocked, where the engine has it; plain JavaScript elsewhere), every entry equal
 * to seriesDot's to the last bit on either route.
 */
export function seriesProductsUpper(x: readonly Float64Array[], y: readonly Float64Array[]): Float64Array {
  return gram(x, y);
}

/** Largest absolute entry (0 for an empty matrix). */
export function maxAbs(x: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < x.length; i++) {
    const v = Math.abs(x[i]);
    if (v > m) m = v;
  }
  return m;
}

/*
 * Flat forms, for hot loops that keep their own row-major Float64Arrays (the incremental
 * back-test, the bootstrap): sizes are passed, nothing is allocated but the result.
 */

/** X'Y for X (r x p) and Y (r x q), both row-major: the p x q cross products. */
export function crossProducts(X: Float64Array, Y: Float64Array, r: number, p: number, q: number): Float64Array {
  const out = new Float64Array(p * q);
  for (let i = 0; i < r; i++) {
    const xi = i * p;
    const yi = i * q;
    for (let a = 0; a < p; a++) {
      const x = X[xi + a];
      if (x === 0) continue;
      const oa = a * q;
      for (let b = 0; b < q; b++) out[oa + b] += x * Y[yi + b];
    }
  }
  return out;
}

/** A B for A (r x k) and B (k x c), both row-major. */
export function matMulFlat(A: Float64Array, B: Float64Array, r: number, k: number, c: number): Float64Array {
  const out = new Float64Array(r * c);
  for (let i = 0; i < r; i++) {
    const oi = i * c;
    for (let l = 0; l < k; l++) {
      const a = A[i * k + l];
      if (a === 0) continue;
      const bl = l * c;
      for (let j = 0; j < c; j++) out[oi + j] += a * B[bl + j];
    }
  }
  return out;
}

/** The transpose (c x r) of A (r x c), row-major. */
export function transposeFlat(A: Float64Array, r: number, c: number): Float64Array {
  const t = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) t[j * r + i] = A[i * c + j];
  return t;
}

/** The p x p identity, row-major. */
export function identityFlat(p: number): Float64Array {
  const I = new Float64Array(p * p);
  for (let i = 0; i < p; i++) I[i * p + i] = 1;
  return I;
}
