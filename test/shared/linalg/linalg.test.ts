/**
 * shared/linalg against numpy.linalg 1.24 (fixture made by fixtures/make_linalg.py: the
 * exact calls and versions are in the fixture), plus the decompositions' own identities.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { cholesky, cholSolveVec } from '../../../shared/linalg/cholesky.js';
import { symmetricEigen } from '../../../shared/linalg/eigen.js';
import { fromRows, type Mat } from '../../../shared/linalg/matrix.js';
import { symmetricPinv } from '../../../shared/linalg/pinv.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { expectClose } from '../estimation/helpers.js';

interface Case {
  n: number;
  spd: number[][];
  chol: number[][];
  b: number[];
  solve: number[];
  sym: number[][];
  eigenvalues: number[];
  eigenvectors: number[][];
  spdEigenvalues: number[];
}
const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/linalg_reference.json'), 'utf8')) as {
  cases: Case[];
  pinv: { n: number; rank: number; a: number[][]; pinv: number[][] }[];
  repeated: { a: number[][]; eigenvalues: number[] };
  formula100: { n: number; eigenvalues: number[] };
};

const entry = (m: Mat, i: number, j: number) => m.data[i * m.cols + j];

describe('Cholesky and solve against numpy.linalg.cholesky / solve', () => {
  for (const c of fx.cases)
    it(`n = ${c.n}`, () => {
      const L = cholesky(fromRows(c.spd), { name: 'A' });
      const scale = Math.max(...c.chol.flat().map(Math.abs));
      for (let i = 0; i < c.n; i++) for (let j = 0; j < c.n; j++) expectClose(entry(L, i, j), c.chol[i][j], 1e-11, `L[${i}][${j}]`, scale); // numpy.linalg.cholesky
      const x = cholSolveVec(L, c.b);
      const xs = Math.max(...c.solve.map(Math.abs));
      c.solve.forEach((v, i) => expectClose(x[i], v, 1e-10, `x[${i}]`, xs)); // numpy.linalg.solve
    });

  it('names the entry that makes a matrix singular', () => {
    const a = fromRows([
      [1, 2, 3],
      [2, 5, 8],
      [3, 8, 13],
    ]); // determinant 0: rank 2
    try {
      cholesky(a, { name: 'the test matrix', labels: ['x', 'y', 'z'] });
      expect.unreachable('a rank-2 matrix must not factor');
    } catch (e) {
      expect(isDeflatorError(e) && e.code).toBe('NOT_POSITIVE_DEFINITE');
      expect((e as Error).message).toMatch(/the test matrix.*z is \(almost\) a linear combination/);
    }
  });
});

describe('symmetric eigen-decomposition against numpy.linalg.eigh', () => {
  for (const c of fx.cases)
    it(`n = ${c.n}`, () => {
      const A = fromRows(c.sym);
      const { values, vectors } = symmetricEigen(A);
      const scale = Math.max(...c.eigenvalues.map(Math.abs));
      c.eigenvalues.forEach((v, k) => expectClose(values[k], v, 1e-12, `lambda[${k}]`, scale)); // numpy.linalg.eigh
      // Eigenvectors agree up to sign: |v_k . v_k(numpy)| = 1 (the eigenvalues of a random matrix are distinct).
      for (let k = 0; k < c.n; k++) {
        let d = 0;
        for (let i = 0; i < c.n; i++) d += entry(vectors!, i, k) * c.eigenvectors[i][k];
        expectClose(Math.abs(d), 1, 1e-8, `|v_${k} . v_${k}(numpy)|`); // numpy.linalg.eigh
      }
      const spd = symmetricEigen(fromRows(c.spd), { valuesOnly: true }).values;
      const s2 = Math.max(...c.spdEigenvalues);
      c.spdEigenvalues.forEach((v, k) => expectClose(spd[k], v, 1e-12, `spd lambda[${k}]`, s2)); // numpy.linalg.eigvalsh
    });

  it('repeated eigenvalues (1, 1, 2, 2, 2, 5): values and an orthonormal basis that diagonalises A', () => {
    const A = fromRows(fx.repeated.a);
    const { values, vectors } = symmetricEigen(A);
    fx.repeated.eigenvalues.forEach((v, k) => expectClose(values[k], v, 1e-13, `lambda[${k}]`, 5)); // numpy.linalg.eigvalsh
    const n = 6;
    for (let a = 0; a < n; a++)
      for (let b = 0; b < n; b++) {
        let vtv = 0;
        let vtav = 0;
        for (let i = 0; i < n; i++) {
          vtv += entry(vectors!, i, a) * entry(vectors!, i, b);
          for (let j = 0; j < n; j++) vtav += entry(vectors!, i, a) * fx.repeated.a[i][j] * entry(vectors!, j, b);
        }
        expect(Math.abs(vtv - (a === b ? 1 : 0))).toBeLessThan(1e-13);
        expect(Math.abs(vtav - (a === b ? values[a] : 0))).toBeLessThan(1e-12);
      }
  });

  it('n = 100 from a formula: eigenvalues against numpy.linalg.eigvalsh, and A v = lambda v', () => {
    const n = fx.formula100.n;
    const rows = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => Math.cos(0.37 * (i + 1) * (j + 1)) + (i === j ? (i + 1) / 10 : 0)));
    const t0 = performance.now();
    const { values, vectors } = symmetricEigen(fromRows(rows));
    const ms = performance.now() - t0;
    const scale = Math.max(...fx.formula100.eigenvalues.map(Math.abs));
    fx.formula100.eigenvalues.forEach((v, k) => expectClose(values[k], v, 1e-12, `lambda[${k}]`, scale)); // numpy.linalg.eigvalsh
    let worst = 0;
    for (let k = 0; k < n; k++)
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += rows[i][j] * entry(vectors!, j, k);
        worst = Math.max(worst, Math.abs(s - values[k] * entry(vectors!, i, k)));
      }
    expect(worst).toBeLessThan(1e-11 * scale);
    expect(ms).toBeLessThan(2000); // generous: about 10 ms on a 2-core machine
  });
});

describe('pseudo-inverse against numpy.linalg.pinv(hermitian = True)', () => {
  for (const c of fx.pinv)
    it(`n = ${c.n}, rank ${c.rank}`, () => {
      const { pinv, rank } = symmetricPinv(fromRows(c.a), { name: 'P', rank: c.rank });
      expect(rank).toBe(c.rank);
      const scale = Math.max(...c.pinv.flat().map(Math.abs));
      for (let i = 0; i < c.n; i++) for (let j = 0; j < c.n; j++) expectClose(entry(pinv, i, j), c.pinv[i][j], 1e-9, `pinv[${i}][${j}]`, scale); // numpy.linalg.pinv
      const auto = symmetricPinv(fromRows(c.a), { name: 'P' });
      expect(auto.rank).toBe(c.rank);
    });

  it('refuses a rank the matrix does not have', () => {
    const c = fx.pinv[0];
    expect(() => symmetricPinv(fromRows(c.a), { name: 'P', rank: c.rank + 1 })).toThrow(/rank below/);
  });
});
