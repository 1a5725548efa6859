/**
 * Hansen-Jagannathan distance (Hansen and Jagannathan 1997, "Assessing specification
 * errors in stochastic discount factor models", J. Finance 52, 557-590):
 *
 *   HJ = sqrt( min_theta g_A(theta)' (E[RR'])^{-1} g_A(theta) ),
 *
 * g_A the asset pricing errors, E[RR'] the second-moment matrix of the test-asset returns
 * used (gross or excess). For the demeaned linear model the factor means are held at
 * the sample means, as at the first stage.
 *
 * p-value (Jagannathan and Wang 1996, "The conditional CAPM and the cross-section of
 * expected returns", J. Finance 51, 3-53, appendix): T HJ^2 is asymptotically
 * sum_j lambda_j chi2_j(1), lambda_j the non-zero eigenvalues of
 * S^{1/2} M'W_A M S^{1/2} (S the long-run covariance of all the model's moments at the
 * HJ estimate, M = I - d (a d)^{-1} a the map from moments to fitted pricing errors).
 * They equal the eigenvalues of C^{-1} [T Var(g_A)] C^{-T}, E[RR'] = C C', which is how
 * they are computed here (one Cholesky factor, one symmetric eigen-decomposition of an
 * N x N matrix). The tail probability is evaluated by Imhof's (1961) numerical inversion
 * (shared/stats/imhof.ts).
 */
import { cholForwardMat } from '../linalg/cholesky.js';
import { symmetricEigen } from '../linalg/eigen.js';
import { type Mat, zeros } from '../linalg/matrix.js';
import { weightedChiSquareSf } from '../stats/distributions.js';
import { firstStage, momentCovariance } from './gmm.js';
import { gmmCovariances } from './gmmInference.js';
import type { MomentModel } from './momentModel.js';
import { hjWeighting } from './weighting.js';

export interface HjDistance {
  distance: number;
  /** T HJ^2. */
  stat: number;
  p: number;
  /** The weights of the chi-square(1) sum (descending). */
  weights: number[];
  /** The HJ-weighted estimate. */
  theta: Float64Array;
  method: string;
}

export const HJ_METHOD =
  "T HJ^2 against a weighted sum of chi2(1) variables (Jagannathan and Wang 1996), weights from S of all moments at the HJ estimate; tail by Imhof (1961) numerical inversion";

export function hjDistance(model: MomentModel, lags: number, centered: boolean, maxIterations = 200): HjDistance {
  const N = model.nAssets;
  const assetNames = model.momentNames.slice(0, N);
  const W = hjWeighting(model.returns, assetNames);
  const est = firstStage(model, W, 'Hansen-Jagannathan distance', maxIterations);
  const theta = est.theta;
  const d = model.jacobian(theta);
  const S = momentCovariance(model, theta, lags, centered);
  const inf = gmmCovariances(model, d, S, model.pinned ? { kind: 'pinned', weight: W } : { kind: 'fixed', weight: W });
  // T Var(g_A), the asset block.
  const q = model.q;
  const V: Mat = zeros(N, N);
  for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) V.data[i * N + j] = model.T * inf.covG.data[i * q + j];
  const C = W.inverseOf!.chol;
  // Y = C^{-1} V, then C^{-1} V C^{-T} = C^{-1} (C^{-1} V)'  (V symmetric).
  const Y = cholForwardMat(C, V);
  const Yt = zeros(N, N);
  for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) Yt.data[i * N + j] = Y.data[j * N + i];
  const B = cholForwardMat(C, Yt);
  const eig = symmetricEigen(B, { valuesOnly: true, name: 'the Jagannathan-Wang weight matrix' });
  const pFree = model.p - (model.pinned ? model.pinned.params.length : 0);
  const m = N - pFree;
  const weights: number[] = [];
  for (let k = N - 1; k >= N - m; k--) weights.push(Math.max(0, eig.values[k]));
  const dist2 = Math.max(0, est.objective);
  const stat = model.T * dist2;
  const p = weightedChiSquareSf(stat, weights);
  return { distance: Math.sqrt(dist2), stat, p, weights, theta, method: HJ_METHOD };
}
