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
 *
 * Computing it without an eigen-decomposition. M is the projection onto null(a) along
 * range(d), so with S = L L' positive definite, Var(g) has rank q - p and range null(a),
 * and for g in null(a)
 *
 *   g' Var(g)^+ g = T || (I - Z (Z'Z)^{-1} Z') L^{-1} g ||^2,   Z = L^{-1} d
 *
 * (derivation in shared/linalg/pinv.ts, `projectedCovariancePinvForm`, which also projects
 * g onto null(a) first: a g = 0 holds only to the solver's precision, and the
 * pseudo-inverse ignores the rest). O(q^2 p) beyond the Cholesky factor of S that J needs
 * anyway, where an eigen-decomposition of the q x q Var(g) costs about 9 q^3 flops
 * (minutes for 2,000 test assets). At the efficient stage (a = d'S^{-1}, so Z'L^{-1}g =
 * d'S^{-1}g = 0) the formula reduces to Hansen's J.
 *
 * Var(g) itself is formed as (I - dH) S (I - dH)' = U - (U H') d' with U = S - d (H S),
 * O(q^2 p), never as the product of q x q matrices.
 */
import { DeflatorError } from '../errors.js';
import { cholesky, cholForwardMat, cholSolveMat, cholSolveVec, smallestRelativePivot } from '../linalg/cholesky.js';
import { type Mat, zeros } from '../linalg/matrix.js';
import { projectedCovariancePinvForm } from '../linalg/pinv.js';
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
  /** The smallest relative Cholesky pivot of S and its moment (shared/warnings.ts, S_NEAR_SINGULAR). */
  sPivot: { share: number; index: number };
}

/**
 * Covariances and test statistics at theta, with S the long-run covariance that
 * inference uses. `g` and `d` are g_T and the Jacobian at theta.
 */
export function gmmInference(model: MomentModel, g: Float64Array, d: Mat, S: Mat, w: WeightingForInference, LSGiven?: Mat, opts: { equilibrate?: boolean } = {}): GmmInference {
  const { q, p, T } = model;
  const { covTheta, covG, LS, constraint } = gmmCovariances(model, d, S, w, LSGiven);
  const df = q - p;
  // g' Var(g)^+ g with Var(g) = (1/T) M S M': T times the projected form (file comment),
  // on the moments rescaled to unit long-run variance (see equilibrated below) unless the
  // caller's g is off null(a) by construction (the CUE: there the Moore-Penrose convention
  // on the moments as they are is the definition).
  const e = opts.equilibrate === false ? { g, d, LS, constraint } : equilibrated(S, LS, g, d, constraint);
  const stat = T * projectedCovariancePinvForm(e.g, e.d, e.LS, e.constraint, { labels: model.paramNames });
  const Sg = cholSolveVec(LS, g);
  let J = 0;
  for (let i = 0; i < q; i++) J += g[i] * Sg[i];
  J *= T;
  return { covTheta, covG, pricingErrorStat: Math.max(0, stat), df, J, sPivot: smallestRelativePivot(LS, S) };
}

/**
 * The moments rescaled by D = diag(S)^-1/2 (x -> D x, so S -> D S D with Cholesky factor
 * D L, d -> D d, and the row space of a -> a D^-1, spanned by D^-1 times the constraint's
 * columns). For g in null(a) the pricing-error statistic is the same either way; g leaves
 * null(a) only by the solver's rounding, and the Euclidean projection that removes that
 * part depends on the moments' units: with moments of very different sizes (returns scaled
 * by an instrument of 1e-6, say) it moves the statistic in its sixth digit. Rescaled, the
 * statistic does not depend on the units of any moment (docs/methods.md, Instruments).
 */
function equilibrated(S: Mat, LS: Mat, g: Float64Array, d: Mat, constraint: Mat): { g: Float64Array; d: Mat; LS: Mat; constraint: Mat } {
  const q = S.rows;
  const D = Float64Array.from({ length: q }, (_, i) => 1 / Math.sqrt(S.data[i * q + i]));
  const rows = (m: Mat, f: (i: number) => number): Mat => {
    const out = new Float64Array(m.data.length);
    for (let i = 0; i < m.rows; i++) {
      const c = f(i);
      for (let j = 0; j < m.cols; j++) out[i * m.cols + j] = m.data[i * m.cols + j] * c;
    }
    return { rows: m.rows, cols: m.cols, data: out };
  };
  return {
    g: Float64Array.from(g, (x, i) => x * D[i]),
    d: rows(d, (i) => D[i]),
    LS: rows(LS, (i) => D[i]),
    constraint: rows(constraint, (i) => 1 / D[i]),
  };
}

/**
 * Var(theta) and Var(g_T) only (and the Cholesky factor of S, computed unless `LSGiven`
 * is that factor), without the tests. `constraint` (q x p) spans the row space of a.
 */
export function gmmCovariances(model: MomentModel, d: Mat, S: Mat, w: WeightingForInference, LSGiven?: Mat): { covTheta: Mat; covG: Mat; LS: Mat; constraint: Mat } {
  const { q, p, T } = model;
  const names = model.paramNames;
  const LS =
    LSGiven ??
    cholesky(S, {
      name: 'the long-run covariance S of the moments',
      labels: model.momentNames,
      hint: 'two test assets may be (almost) the same portfolio, a series may be constant, or the sample is too short for this many moments; drop assets or lengthen the sample',
    });
  let covTheta: Mat;
  let covG: Mat;
  let constraint: Mat;
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
    // a = d'S^{-1}: its row space is spanned by the columns of S^{-1} d.
    constraint = cholSolveMat(LS, d);
  } else {
    const H = w.kind === 'fixed' ? selectionFixed(model, d, w.weight) : selectionPinned(model, d, w.weight);
    const HS = productHS(H, S);
    covTheta = zeros(p, p);
    for (let a = 0; a < p; a++)
      for (let b = a; b < p; b++) {
        let s = 0;
        for (let l = 0; l < q; l++) s += HS[a * q + l] * H.data[b * q + l];
        s /= T;
        covTheta.data[a * p + b] = s;
        covTheta.data[b * p + a] = s;
      }
    covG = projectedCovariance(d, H, HS, S, T);
    constraint = transposeOf(H);
  }
  return { covTheta, covG, LS, constraint };
}

/** H S (p x q) for H p x q and S q x q, row by row along contiguous rows of S. */
function productHS(H: Mat, S: Mat): Float64Array {
  const p = H.rows;
  const q = H.cols;
  const out = new Float64Array(p * q);
  for (let k = 0; k < p; k++) {
    const o = k * q;
    for (let l = 0; l < q; l++) {
      const h = H.data[o + l];
      if (h === 0) continue;
      const sl = l * q;
      for (let j = 0; j < q; j++) out[o + j] += h * S.data[sl + j];
    }
  }
  return out;
}

/**
 * (1/T) M S M' with M = I - d H, as U - (U H') d' with U = S - d (H S): O(q^2 p) where the
 * explicit q x q products cost O(q^3). Symmetrised (the two triangles differ by rounding).
 */
function projectedCovariance(d: Mat, H: Mat, HS: Float64Array, S: Mat, T: number): Mat {
  const q = d.rows;
  const p = d.cols;
  const dT = transposeOf(d).data; // p x q: column k of d is contiguous
  const out = zeros(q, q);
  const U = out.data;
  // U = S - d (H S), row i: S[i, :] - sum_k d[i, k] HS[k, :].
  for (let i = 0; i < q; i++) {
    const o = i * q;
    for (let j = 0; j < q; j++) U[o + j] = S.data[o + j];
    for (let k = 0; k < p; k++) {
      const c = d.data[i * p + k];
      if (c === 0) continue;
      const hk = k * q;
      for (let j = 0; j < q; j++) U[o + j] -= c * HS[hk + j];
    }
  }
  // U H' (q x p), then U - (U H') d' in place.
  const UH = new Float64Array(p);
  for (let i = 0; i < q; i++) {
    const o = i * q;
    for (let k = 0; k < p; k++) {
      let s = 0;
      const hk = k * q;
      for (let l = 0; l < q; l++) s += U[o + l] * H.data[hk + l];
      UH[k] = s;
    }
    for (let k = 0; k < p; k++) {
      const c = UH[k];
      if (c === 0) continue;
      const dk = k * q;
      for (let j = 0; j < q; j++) U[o + j] -= c * dT[dk + j];
    }
  }
  for (let i = 0; i < q; i++) {
    U[i * q + i] /= T;
    for (let j = i + 1; j < q; j++) {
      const v = (U[i * q + j] + U[j * q + i]) / (2 * T);
      U[i * q + j] = v;
      U[j * q + i] = v;
    }
  }
  return out;
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
