/**
 * shared/linalg against numpy.linalg 1.24 (fixture made by fixtures/make_linalg.py: the
 * exact calls and versions are in the fixture), plus the decompositions' own identities.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { cholesky, cholSolveVec } from '../../../shared/linalg/cholesky.js';
import { symmetricEigen } from '../../../shared/linalg/eigen.js';
import { fromRows, transpose, type Mat } from '../../../shared/linalg/matrix.js';
import { projectedCovariancePinvForm, symmetricPinv } from '../../../shared/linalg/pinv.js';
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
  eigenSuite: { rule: string; n: number; eigenvalues: number[]; numpyResidual: number; numpyOrthogonality: number; rank?: number; cluster?: { from: number; to: number; vectors: number[][] } }[];
  projectedPinv: { q: number; p: number; kind: string; S: number[][]; D: number[][]; A: number[][]; x: number[]; xOff: number[]; form: number; formOff: number }[];
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

/** The matrices of the fixture's eigenSuite, rebuilt from the rules in make_linalg.py (0-based i, j). */
function suiteMatrix(rule: string, n: number): Float64Array {
  const A = new Float64Array(n * n);
  if (rule === 'dense') {
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = Math.sin(0.7 * (i + 1) * (j + 1) + 0.3 * (i + j)) + (i === j ? 0.01 * i : 0);
  } else if (rule === 'clustered') {
    // Q' diag(lambda) Q with Q the orthonormal DCT-II matrix.
    const Q = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) Q[i * n + j] = Math.sqrt(2 / n) * Math.cos((Math.PI * (2 * j + 1) * i) / (2 * n)) / (i === 0 ? Math.SQRT2 : 1);
    const lam = Array.from({ length: n }, (_, k) => (k < 20 ? 1 + k * 1e-9 : k < 40 ? 5 : 10 + k / 10));
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += Q[k * n + i] * lam[k] * Q[k * n + j];
      A[i * n + j] = s;
    }
  } else if (rule === 'rank-deficient') {
    // B B' with B_ik = cos(0.37 (i+1)(k+1)), k < 60: rank 60.
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < 60; k++) s += Math.cos(0.37 * (i + 1) * (k + 1)) * Math.cos(0.37 * (j + 1) * (k + 1));
      A[i * n + j] = s;
    }
  } else if (rule === 'wilkinson') {
    for (let i = 0; i < n; i++) {
      A[i * n + i] = Math.abs(10 - i);
      if (i + 1 < n) A[i * n + i + 1] = A[(i + 1) * n + i] = 1;
    }
  } else throw new Error(`unknown rule ${rule}`);
  return A;
}

function frobenius(x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * x[i];
  return Math.sqrt(s);
}

describe('symmetric eigen-decomposition: clustered, repeated, rank-deficient, Wilkinson W21+ and larger matrices against numpy.linalg.eigh', () => {
  for (const c of fx.eigenSuite)
    it(`${c.rule}, n = ${c.n}: eigenvalues, ||AV - V diag(lambda)||, ||V'V - I||`, () => {
      const n = c.n;
      const A = suiteMatrix(c.rule, n);
      const { values, vectors } = symmetricEigen({ rows: n, cols: n, data: A });
      const V = vectors!.data;
      const top = Math.max(...c.eigenvalues.map(Math.abs));
      c.eigenvalues.forEach((v, k) => expectClose(values[k], v, 1e-12, `lambda[${k}]`, top)); // numpy.linalg.eigh (LAPACK syevd)
      // Residual and orthogonality (||.||_F, the residual relative to ||A||_F): at most 1e-12, or
      // three times numpy.linalg.eigh's own on the same matrix where rounding in A V alone is
      // about that large (n = 300: 1.3e-12 for numpy, as the fixture records).
      const R = new Float64Array(n * n);
      const G = new Float64Array(n * n);
      for (let i = 0; i < n; i++)
        for (let k = 0; k < n; k++) {
          const aik = A[i * n + k];
          for (let j = 0; j < n; j++) R[i * n + j] += aik * V[k * n + j];
        }
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) R[i * n + j] -= V[i * n + j] * values[j];
      for (let k = 0; k < n; k++)
        for (let i = 0; i < n; i++) {
          const vki = V[k * n + i];
          for (let j = 0; j < n; j++) G[i * n + j] += vki * V[k * n + j];
        }
      for (let i = 0; i < n; i++) G[i * n + i] -= 1;
      const res = frobenius(R) / frobenius(A);
      const orth = frobenius(G);
      const resTol = Math.max(1e-12, 3 * c.numpyResidual);
      const orthTol = Math.max(1e-12, 3 * c.numpyOrthogonality);
      expect(res, `||AV - V diag(lambda)||_F / ||A||_F = ${res.toExponential(3)}, numpy ${c.numpyResidual.toExponential(3)}, tolerance ${resTol.toExponential(3)}`).toBeLessThan(resTol); // numpy.linalg.eigh's residual
      expect(orth, `||V'V - I||_F = ${orth.toExponential(3)}, numpy ${c.numpyOrthogonality.toExponential(3)}, tolerance ${orthTol.toExponential(3)}`).toBeLessThan(orthTol); // numpy.linalg.eigh's orthogonality
      // Eigenvalues alone (no accumulated transforms) are those of the full decomposition.
      const only = symmetricEigen({ rows: n, cols: n, data: A }, { valuesOnly: true });
      expect(only.vectors).toBeUndefined();
      values.forEach((v, k) => expectClose(only.values[k], v, 1e-14, `values-only lambda[${k}]`, top));
      if (c.cluster) {
        // The invariant subspace of the repeated eigenvalue: projector V_c V_c' against numpy's.
        const { from, to, vectors: Vn } = c.cluster;
        let worst = 0;
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            let p = 0;
            let pn = 0;
            for (let k = from; k < to; k++) {
              p += V[i * n + k] * V[j * n + k];
              pn += Vn[i][k - from] * Vn[j][k - from];
            }
            worst = Math.max(worst, Math.abs(p - pn));
          }
        expect(worst, `max |P - P(numpy)| over the cluster's projector = ${worst.toExponential(3)}, tolerance 1e-12`).toBeLessThan(1e-12); // numpy.linalg.eigh
      }
      if (c.rank !== undefined) {
        // numpy.linalg.matrix_rank's default cut-off: largest * n * 2^-52.
        const cut = top * n * 2 ** -52;
        expect(Array.from(values).filter((v) => v > cut).length).toBe(c.rank); // numpy.linalg.matrix_rank
        for (let k = 0; k < n - c.rank; k++) expect(Math.abs(values[k]), `|lambda[${k}]| of the null space, cut-off ${cut.toExponential(3)}`).toBeLessThan(cut);
      }
    });
});

describe("x' pinv(M S M') x by projections (projectedCovariancePinvForm) against numpy.linalg.pinv(hermitian = True)", () => {
  for (const c of fx.projectedPinv)
    it(`q = ${c.q}, p = ${c.p}, A ${c.kind === 'fixed' ? "= D'W" : c.kind === 'efficient' ? "= D'S^-1" : 'generic'}`, () => {
      const S = fromRows(c.S);
      const D = fromRows(c.D);
      const L = cholesky(S, { name: 'S' });
      const At = transpose(fromRows(c.A));
      expectClose(projectedCovariancePinvForm(c.x, D, L, At), c.form, 1e-10, "x' pinv(MSM') x, x in null(A)"); // numpy.linalg.pinv
      // A small part of x outside null(A) is ignored, as the pseudo-inverse ignores it.
      expectClose(projectedCovariancePinvForm(c.xOff, D, L, At), c.formOff, 1e-10, "x' pinv(MSM') x, x with a part outside null(A)"); // numpy.linalg.pinv
      // Any basis of the row space of A serves: 3 A' + (the columns rotated).
      const p = c.p;
      const B = fromRows(c.A[0].map((_, i) => c.A.map((_, k) => 3 * c.A[k][i] + c.A[(k + 1) % p][i])));
      expectClose(projectedCovariancePinvForm(c.xOff, D, L, B), c.formOff, 1e-10, 'same with another basis of the row space of A'); // numpy.linalg.pinv
    });

  it('agrees with the eigen-decomposition route (symmetricPinv at rank q - p)', () => {
    const c = fx.projectedPinv[2];
    const q = c.q;
    const D = fromRows(c.D);
    const A = fromRows(c.A);
    const S = fromRows(c.S);
    // M S M' by plain products, then x' V^+ x through symmetricPinv.
    const AD = Array.from({ length: c.p }, (_, a) => Array.from({ length: c.p }, (_, b) => c.A[a].reduce((s, v, i) => s + v * c.D[i][b], 0)));
    const Lad = cholesky(fromRows(AD.map((r, a) => r.map((_, b) => AD.reduce((s, row) => s + row[a] * row[b], 0)))), { name: "(AD)'(AD)" });
    // H = (AD)^{-1} A = ((AD)'(AD))^{-1} (AD)' A.
    const rhs = fromRows(Array.from({ length: c.p }, (_, a) => Array.from({ length: q }, (_, j) => AD.reduce((s, row, k) => s + row[a] * c.A[k][j], 0))));
    const H = cholSolveMatRows(Lad, rhs);
    const M = Array.from({ length: q }, (_, i) => Array.from({ length: q }, (_, j) => (i === j ? 1 : 0) - c.D[i].reduce((s, v, k) => s + v * H[k][j], 0)));
    const MS = M.map((r) => Array.from({ length: q }, (_, j) => r.reduce((s, v, l) => s + v * c.S[l][j], 0)));
    const V = fromRows(MS.map((r) => Array.from({ length: q }, (_, j) => r.reduce((s, v, l) => s + v * M[j][l], 0))));
    const { pinv } = symmetricPinv(V, { name: 'V', rank: q - c.p });
    let viaEigen = 0;
    for (let i = 0; i < q; i++) for (let j = 0; j < q; j++) viaEigen += c.x[i] * pinv.data[i * q + j] * c.x[j];
    expectClose(projectedCovariancePinvForm(c.x, D, cholesky(S, { name: 'S' }), transpose(A)), viaEigen, 1e-10, 'projections vs eigen-decomposition');
  });
});

function cholSolveMatRows(L: Mat, b: Mat): number[][] {
  const cols = Array.from({ length: b.cols }, (_, j) => cholSolveVec(L, Array.from({ length: b.rows }, (_, i) => b.data[i * b.cols + j])));
  return Array.from({ length: b.rows }, (_, i) => cols.map((col) => col[i]));
}
