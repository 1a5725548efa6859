/**
 * GMM inference (Hansen 1982, "Large sample properties of generalized method of moments
 * estimators", Econometrica 50, 1029-1054; Cochrane, Asset Pricing, rev. ed. 2005,
 * sections 11.1-11.5; METHODS 3). An estimator is written as a g_T = 0 with a (p x q):
 * a = d'W for a weighting matrix W, or the first stage of the demeaned linear model,
 * where the factor-mean moments are held at zero exactly:
 *
 *   a = [ d_AF' W_A   0 ]     (F: free parameters b, A: asset moments,
 *       [ 0           I ]      P: pinned parameters mu, X: factor-mean moments)
 *
 * With H = (a d)^{-1} a and M = I - d H:
 *   Var(theta) = (1/T) H S H',          Var(g_T) = (1/T) M S M'.
 * At the efficient stage (a = d'S^{-1}) these are (1/T)(d'S^{-1}d)^{-1} and
 * (1/T)(S - d (d'S^{-1}d)^{-1} d'), and Hansen's J = T g'S^{-1}g.
 * The test that all pricing errors are zero is g' Var(g)^+ g ~ chi2(q - p), the
 * Moore-Penrose inverse taken at the rank q - p the theory gives.
 */
import { DeflatorError } from '../errors.js';
import { cholesky, cholForwardMat, cholSolveMat, cholSolveVec } from '../linalg/cholesky.js';
import { type Mat, zeros } from '../linalg/matrix.js';
import { symmetricPinv } from '../linalg/pinv.js';
import type { MomentModel } from './momentModel.js';
import type { Weighting } from './weighting.js';

export type WeightingForInference =
  | { kind: 'efficient' }
  | { kind: 'fixed'; weight: Weighting }
  /** First stage of a model with a pinned block: W on the asset moments only. */
  | { kind: 'pinned'; weight: Weighting };

export interface GmmInference {
  /** (1/T) Var of sqrt(T)(theta - theta0): the covariance of the estimate. */
  covTheta: Mat;
  /** Covariance of g_T at the estimate. */
  covG: Mat;
  /** g' Var(g)^+ g and its degrees of freedom q - p. */
  pricingErrorStat: number;
  df: number;
  /** T g'S^{-1}g when S is positive definite (Hansen's J at the efficient stage). */
  J: number;
}

/**
 * Covariances and test statistics at theta, with S the long-run covariance that
 * inference uses. `g` and `d` are g_T and the Jacobian at theta.
 */
export function gmmInference(model: MomentModel, g: Float64Array, d: Mat, S: Mat, w: WeightingForInference): GmmInference {
  const { q, p, T } = model;
  const { covTheta, covG, LS } = gmmCovariances(model, d, S, w);
  const df = q - p;
  const pinv = symmetricPinv(covG, { name: 'the covariance of the pricing errors Var(g)', rank: df });
  let stat = 0;
  for (let i = 0; i < q; i++) {
    let r = 0;
    for (let j = 0; j < q; j++) r += pinv.pinv.data[i * q + j] * g[j];
    stat += g[i] * r;
  }
  const Sg = cholSolveVec(LS, g);
  let J = 0;
  for (let i = 0; i < q; i++) J += g[i] * Sg[i];
  J *= T;
  return { covTheta, covG, pricingErrorStat: Math.max(0, stat), df, J };
}

/** Var(theta) and Var(g_T) only (and the Cholesky factor of S), without the tests. */
export function gmmCovariances(model: MomentModel, d: Mat, S: Mat, w: WeightingForInference): { covTheta: Mat; covG: Mat; LS: Mat } {
  const { q, p, T } = model;
  const names = model.paramNames;
  const LS = cholesky(S, {
    name: 'the long-run covariance S of the moments',
    labels: model.momentNames,
    hint: 'two test assets may be (almost) the same portfolio, a series may be constant, or the sample is too short for this many moments; drop assets or lengthen the sample',
  });
  let covTheta: Mat;
  let covG: Mat;
  if (w.kind === 'efficient') {
    // Z = L^{-1} d, A = Z'Z = d'S^{-1}d.
    const Z = cholForwardMat(LS, d);
    const A = gram(Z);
    const LA = cholesky(A, { name: "d'S^{-1}d (the parameters' information matrix)", labels: names, code: 'SINGULAR', hint: 'the factors may be collinear or do not move the pricing errors; drop one of them' });
    const Ainv = cholSolveMat(LA, identityMat(p));
    covTheta = scaleInPlace(Ainv, 1 / T);
    // d A^{-1} d' = X'X with X = L_A^{-1} d'.
    const X = cholForwardMat(LA, transposeOf(d));
    covG = zeros(q, q);
    for (let i = 0; i < q; i++)
      for (let j = i; j < q; j++) {
        let s = 0;
        for (let k = 0; k < p; k++) s += X.data[k * q + i] * X.data[k * q + j];
        const v = (S.data[i * q + j] - s) / T;
        covG.data[i * q + j] = v;
        covG.data[j * q + i] = v;
      }
  } else {
    const H = w.kind === 'fixed' ? selectionFixed(model, d, w.weight) : selectionPinned(model, d, w.weight);
    covTheta = sandwich(H, S, T);
    // M = I - d H (q x q).
    const M = zeros(q, q);
    for (let i = 0; i < q; i++)
      for (let j = 0; j < q; j++) {
        let s = i === j ? 1 : 0;
        for (let k = 0; k < p; k++) s -= d.data[i * p + k] * H.data[k * q + j];
        M.data[i * q + j] = s;
      }
    covG = sandwich(M, S, T);
  }
  return { covTheta, covG, LS };
}

/** H = (d'Wd)^{-1} d'W. */
function selectionFixed(model: MomentModel, d: Mat, W: Weighting): Mat {
  const { q, p } = model;
  const Wd = W.apply(d); // q x p
  const A = zeros(p, p);
  for (let a = 0; a < p; a++)
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let i = 0; i < q; i++) s += d.data[i * p + a] * Wd.data[i * p + b];
      A.data[a * p + b] = s;
      A.data[b * p + a] = s;
    }
  const LA = cholesky(A, { name: "d'Wd (the parameters' information matrix)", labels: model.paramNames, code: 'SINGULAR', hint: 'the factors may be collinear or do not move the pricing errors; drop one of them' });
  return cholSolveMat(LA, transposeOf(Wd)); // p x q
}

/**
 * H = (a d)^{-1} a for the pinned first stage: rows of free parameters
 * [A^{-1} d_AF'W | A^{-1} d_AF'W d_AP], rows of pinned parameters [0 | -I]
 * (A = d_AF'W d_AF; the pinned moments have d_XF = 0, d_XP = -I).
 */
function selectionPinned(model: MomentModel, d: Mat, W: Weighting): Mat {
  const pin = model.pinned;
  if (!pin) throw new RangeError('selectionPinned: the model has no pinned block');
  const { q, p, nAssets: N } = model;
  const F = [...Array(p).keys()].filter((k) => !pin.params.includes(k));
  const P = pin.params;
  const X = pin.moments;
  for (let i = 0; i < X.length; i++)
    for (let k = 0; k < p; k++) {
      const expect = k === P[i] ? -1 : 0;
      if (d.data[X[i] * p + k] !== expect) throw new RangeError('selectionPinned: the pinned moments must have Jacobian [0, -I]');
    }
  const nf = F.length;
  const dAF = zeros(N, nf);
  const dAP = zeros(N, P.length);
  for (let i = 0; i < N; i++) {
    F.forEach((k, a) => (dAF.data[i * nf + a] = d.data[i * p + k]));
    P.forEach((k, a) => (dAP.data[i * P.length + a] = d.data[i * p + k]));
  }
  const WdAF = W.apply(dAF); // N x nf
  const A = zeros(nf, nf);
  for (let a = 0; a < nf; a++)
    for (let b = a; b < nf; b++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += dAF.data[i * nf + a] * WdAF.data[i * nf + b];
      A.data[a * nf + b] = s;
      A.data[b * nf + a] = s;
    }
  const LA = cholesky(A, {
    name: "d'Wd (the parameters' information matrix)",
    labels: F.map((k) => model.paramNames[k]),
    code: 'SINGULAR',
    hint: 'the factors may be collinear or do not move the pricing errors; drop one of them',
  });
  // Right-hand side [ (W dAF)' | (W dAF)' dAP ]  (nf x q), then solve with A.
  const rhs = zeros(nf, q);
  for (let a = 0; a < nf; a++) {
    for (let i = 0; i < N; i++) rhs.data[a * q + i] = WdAF.data[i * nf + a];
    for (let j = 0; j < P.length; j++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += WdAF.data[i * nf + a] * dAP.data[i * P.length + j];
      rhs.data[a * q + X[j]] = s;
    }
  }
  const top = cholSolveMat(LA, rhs);
  const H = zeros(p, q);
  F.forEach((k, a) => H.data.set(top.data.subarray(a * q, (a + 1) * q), k * q));
  P.forEach((k, j) => (H.data[k * q + X[j]] = -1));
  return H;
}

/** (1/T) B S B'. */
function sandwich(B: Mat, S: Mat, T: number): Mat {
  const r = B.rows;
  const q = B.cols;
  // BS (r x q)
  const BS = new Float64Array(r * q);
  for (let i = 0; i < r; i++)
    for (let l = 0; l < q; l++) {
      const bil = B.data[i * q + l];
      if (bil === 0) continue;
      const sl = l * q;
      const o = i * q;
      for (let j = 0; j < q; j++) BS[o + j] += bil * S.data[sl + j];
    }
  const out = zeros(r, r);
  for (let i = 0; i < r; i++)
    for (let j = i; j < r; j++) {
      let s = 0;
      for (let l = 0; l < q; l++) s += BS[i * q + l] * B.data[j * q + l];
      s /= T;
      out.data[i * r + j] = s;
      out.data[j * r + i] = s;
    }
  return out;
}

function gram(Z: Mat): Mat {
  const p = Z.cols;
  const out = zeros(p, p);
  for (let a = 0; a < p; a++)
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let i = 0; i < Z.rows; i++) s += Z.data[i * p + a] * Z.data[i * p + b];
      out.data[a * p + b] = s;
      out.data[b * p + a] = s;
    }
  return out;
}

function identityMat(n: number): Mat {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m.data[i * n + i] = 1;
  return m;
}

function transposeOf(a: Mat): Mat {
  const t = zeros(a.cols, a.rows);
  for (let i = 0; i < a.rows; i++) for (let j = 0; j < a.cols; j++) t.data[j * a.rows + i] = a.data[i * a.cols + j];
  return t;
}

function scaleInPlace(a: Mat, s: number): Mat {
  for (let i = 0; i < a.data.length; i++) a.data[i] *= s;
  return a;
}

/** Standard errors from a covariance diagonal; tiny negative rounding is clipped, a clearly negative variance is an error. */
export function standardErrors(cov: Mat, names: readonly string[], what: string): Float64Array {
  const n = cov.rows;
  const se = new Float64Array(n);
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(cov.data[i * n + i]));
  for (let i = 0; i < n; i++) {
    const v = cov.data[i * n + i];
    if (v < -1e-10 * scale)
      throw new DeflatorError('NOT_POSITIVE_DEFINITE', `the covariance of the ${what} has a negative variance for ${names[i] ?? `entry ${i + 1}`} (${v.toExponential(3)})`, 'the long-run covariance is badly conditioned; use fewer test assets or lags');
    se[i] = Math.sqrt(Math.max(0, v));
  }
  return se;
}
