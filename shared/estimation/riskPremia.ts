/**
 * Factor risk premia implied by the demeaned linear discount factor (Cochrane, Asset
 * Pricing, rev. ed. 2005, section 6.3; METHODS 2): with m = 1 - b'(f - mu),
 * E[R^e] = cov(R^e, f') b = beta' lambda with
 *
 *   lambda = Sigma_f b,
 *
 * Sigma_f the sample factor covariance (around fbar, divide by T). Standard errors by
 * the delta method with Sigma_f treated as known: Var(lambda) = Sigma_f Var(b) Sigma_f.
 */
import type { Mat } from '../linalg/matrix.js';

export const RISK_PREMIA_NOTE = 'delta method, Sigma_f treated as known';

/** Sample covariance of the factors, divide by T. */
export function factorCovariance(factors: readonly Float64Array[]): Mat {
  const K = factors.length;
  const T = K ? factors[0].length : 0;
  const mu = factors.map((f) => f.reduce((a, b) => a + b, 0) / T);
  const out = new Float64Array(K * K);
  for (let i = 0; i < K; i++)
    for (let j = i; j < K; j++) {
      let s = 0;
      for (let t = 0; t < T; t++) s += (factors[i][t] - mu[i]) * (factors[j][t] - mu[j]);
      out[i * K + j] = s / T;
      out[j * K + i] = s / T;
    }
  return { rows: K, cols: K, data: out };
}

/** lambda = Sigma_f b and its covariance Sigma_f Var(b) Sigma_f. */
export function riskPremia(sigmaF: Mat, b: ArrayLike<number>, covB: Mat): { lambda: Float64Array; cov: Mat } {
  const K = sigmaF.rows;
  const lambda = new Float64Array(K);
  for (let i = 0; i < K; i++) {
    let s = 0;
    for (let j = 0; j < K; j++) s += sigmaF.data[i * K + j] * b[j];
    lambda[i] = s;
  }
  // Sigma_f Var(b) Sigma_f
  const tmp = new Float64Array(K * K);
  for (let i = 0; i < K; i++)
    for (let j = 0; j < K; j++) {
      let s = 0;
      for (let l = 0; l < K; l++) s += sigmaF.data[i * K + l] * covB.data[l * K + j];
      tmp[i * K + j] = s;
    }
  const cov = new Float64Array(K * K);
  for (let i = 0; i < K; i++)
    for (let j = 0; j < K; j++) {
      let s = 0;
      for (let l = 0; l < K; l++) s += tmp[i * K + l] * sigmaF.data[l * K + j];
      cov[i * K + j] = s;
    }
  return { lambda, cov: { rows: K, cols: K, data: cov } };
}
