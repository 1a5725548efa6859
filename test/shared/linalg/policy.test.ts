/**
 * The kernel layer's singularity policy (shared/linalg/policy.ts): relative pivots, so a
 * well-posed problem in badly scaled units is never SINGULAR, and a collinear one is,
 * whatever its units. References: numpy.linalg.cholesky / solve (fixtures/linalg_reference.json,
 * made by fixtures/make_linalg.py) and R lm on the NIST Longley design
 * (../estimation/comparators/fixtures/longley_lm.json).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { cholesky, cholSolveVec } from '../../../shared/linalg/cholesky.js';
import { fromRows } from '../../../shared/linalg/matrix.js';
import { PIVOT_TOL } from '../../../shared/linalg/policy.js';
import { qrFactor, qrLeastSquares, solveSquare, trySolveSquare } from '../../../shared/linalg/qr.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { expectClose } from '../estimation/helpers.js';

const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/linalg_reference.json'), 'utf8')) as {
  cases: { n: number; spd: number[][]; chol: number[][]; b: number[]; solve: number[] }[];
};
const lm = JSON.parse(readFileSync(path.join(import.meta.dirname, '../estimation/comparators/fixtures/longley_lm.json'), 'utf8')) as { y: number[]; x: number[][]; coefficients: number[] };

/** Scales spanning 1e-8 .. 1e8 (units from fractions of a basis point to thousands of currency units, and beyond). */
const scales = (n: number): number[] => Array.from({ length: n }, (_, i) => 10 ** (-8 + (16 * i) / Math.max(1, n - 1)));

function code(fn: () => unknown): string | undefined {
  try {
    fn();
  } catch (e) {
    if (isDeflatorError(e)) return e.code;
    throw e;
  }
  return undefined;
}

describe('singularity policy: scale-aware (relative pivots)', () => {
  for (const c of fx.cases)
    it(`Cholesky of D A D (D from 1e-8 to 1e8, n = ${c.n}) factors to D L(numpy) and solves to D^-1 x(numpy)`, () => {
      const d = scales(c.n);
      const scaled = fromRows(c.spd.map((row, i) => row.map((v, j) => d[i] * v * d[j])));
      const L = cholesky(scaled, { name: 'D A D' });
      // L(D A D) = D L(A): row i of the factor scales by d_i (numpy.linalg.cholesky gives L(A))
      for (let i = 0; i < c.n; i++) for (let j = 0; j <= i; j++) expectClose(L.data[i * c.n + j] / d[i], c.chol[i][j], 1e-11, `L[${i}][${j}] / d_i`, Math.max(...c.chol[i].map(Math.abs)));
      // (D A D) y = D b  =>  y = D^-1 x with x = numpy.linalg.solve(A, b)
      const y = cholSolveVec(L, c.b.map((v, i) => v * d[i]));
      const xs = Math.max(...c.solve.map(Math.abs));
      c.solve.forEach((v, i) => expectClose(y[i] * d[i], v, 1e-9, `x[${i}]`, xs));
    });

  it('QR least squares on the Longley design with columns rescaled by 1e-6 .. 1e6 matches R lm (coefficients rescaled back)', () => {
    const d = [1e-6, 1e6, 1e-3, 1e3, 1, 1e-5, 1e5];
    const x = fromRows(lm.x.map((r) => [1, ...r].map((v, j) => v * d[j])));
    const sol = qrLeastSquares(qrFactor(x, { name: 'rescaled Longley design' }), lm.y);
    // R: coef(lm(y ~ x)) (fixtures/make_longley_lm.R); b(X D) = D^-1 b(X)
    for (let j = 0; j < 7; j++) expectClose(sol.coefficients[j] * d[j], lm.coefficients[j], 1e-9, `b${j} vs R lm`);
  });

  it('a square system with equations and unknowns in units 1e-8 .. 1e8 apart solves to numpy.linalg.solve', () => {
    const c = fx.cases[fx.cases.length - 1];
    const n = c.n;
    const r = scales(n);
    const s = scales(n).reverse();
    // (R A S) z = R b  =>  z = S^-1 x, x = numpy.linalg.solve(A, b)
    const A = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = r[i] * c.spd[i][j] * s[j];
    const z = solveSquare(A, n, Float64Array.from(c.b, (v, i) => v * r[i]), 1, { name: 'R A S' });
    const xs = Math.max(...c.solve.map(Math.abs));
    c.solve.forEach((v, i) => expectClose(z[i] * s[i], v, 1e-8, `x[${i}]`, xs));
  });

  it('collinear stays SINGULAR in any units: a combination of earlier columns, a duplicated equation, a zero column', () => {
    const d = [1e-7, 1, 1e7];
    // third variable = 2 x first - second, then rescaled
    const base = [
      [4, 1, 7],
      [1, 3, -1],
      [7, -1, 15],
    ];
    const gram = fromRows(base.map((row, i) => row.map((v, j) => d[i] * v * d[j])));
    expect(code(() => cholesky(gram, { name: 'scaled rank-2 Gram matrix' }))).toBe('NOT_POSITIVE_DEFINITE');
    const X = fromRows([
      [1e-7, 3e5, 2e-7 - 3e5],
      [2e-7, -1e5, 4e-7 + 1e5],
      [5e-7, 2e5, 1e-6 - 2e5],
      [-1e-7, 4e5, -2e-7 - 4e5],
    ]);
    expect(code(() => qrFactor(X, { name: 'design with x3 = 2 x1 - x2' }))).toBe('SINGULAR');
    const sq = Float64Array.from([1e8, 2e8, 3e-8, 6e-8]); // row 2 = 3e-16 x row 1
    expect(trySolveSquare(sq, 2, Float64Array.from([1, 1]), 1, { name: 'duplicated equation' })).toBeNull();
    expect(code(() => qrFactor(fromRows([[0, 1], [0, 2], [0, 3]]), { name: 'zero column' }))).toBe('SINGULAR');
  });

  it('the tolerance is the documented one: an unexplained variance share just above PIVOT_TOL factors, just below does not', () => {
    // A = [[1, r], [r, 1]]: pivot 2 is 1 - r^2, its unexplained share.
    const at = (share: number) => fromRows([[1e6, 1e6 * Math.sqrt(1 - share) * 1e-6], [1e6 * Math.sqrt(1 - share) * 1e-6, 1e-6]]);
    expect(code(() => cholesky(at(PIVOT_TOL * 10), { name: 'A' }))).toBeUndefined();
    expect(code(() => cholesky(at(PIVOT_TOL / 10), { name: 'A' }))).toBe('NOT_POSITIVE_DEFINITE');
  });
});
