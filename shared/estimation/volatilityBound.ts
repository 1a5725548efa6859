/**
 * Hansen-Jagannathan volatility bound (Hansen and Jagannathan 1991, "Implications of
 * security market data for models of dynamic economies", J. Political Economy 99,
 * 225-262; METHODS 5).
 *
 * Gross returns: for each candidate mean E[m] = v, the smallest standard deviation of a
 * discount factor that prices the assets is
 *   sigma_min(v) = sqrt( (1 - v mu_R)' Sigma_R^{-1} (1 - v mu_R) ),
 * mu_R and Sigma_R the sample mean and covariance (divide by T) of the gross returns.
 * Payoffs x with prices p other than 1 (gross returns scaled by instruments, whose price
 * is E[z]) give (p - v mu_x)' Sigma_x^{-1} (p - v mu_x) (Hansen and Jagannathan 1991, sec. 2).
 * Excess returns: sigma(m)/E(m) >= max Sharpe ratio = sqrt(mu_e' Sigma_e^{-1} mu_e).
 * For gross returns `maxSharpe` is the largest Sharpe ratio of a zero-cost portfolio of
 * the assets, sqrt(mu'S^-1 mu - (1'S^-1 mu)^2 / 1'S^-1 1), which bounds sigma(m)/E(m) the
 * same way (the minimum of sigma_min(v)/v over v).
 */
import { cholesky, cholSolveVec } from '../linalg/cholesky.js';
import { seriesProductsUpper } from '../linalg/matrix.js';
import type { VolatilityBound } from '../results.js';

export interface BoundInput {
  returns: readonly Float64Array[];
  assetNames: readonly string[];
  kind: 'gross' | 'excess';
  /** The model's fitted m_t: gives the point (E m, sigma m). */
  sdf?: Float64Array;
  /** Points on the curve (gross returns). */
  points?: number;
  /**
   * Gross payoffs that do not cost 1 (returns scaled by an instrument z cost E[z],
   * METHODS 9): the mean price of each, in place of the 1 of a plain gross return.
   */
  prices?: Float64Array;
}

export interface BoundOutput extends VolatilityBound {
  /** Gross returns: the E[m] at which sigma_min is smallest, and that minimum. */
  minimum?: { mean: number; sigma: number };
  /** Gross returns: sigma_min(v) at any v. */
  sigmaAt?: (v: number) => number;
  /** Assets left out because their return never varies (a riskless asset in the gross set). */
  riskless: string[];
}

/**
 * The bound's smallest sigma(m) at the model's own E[m]: sigma_min(E m) on gross returns,
 * maxSharpe x |E m| on excess returns. A discount factor that prices the assets has at
 * least this volatility (Hansen and Jagannathan 1991).
 */
export function boundAtModel(b: BoundOutput, kind: 'gross' | 'excess'): number | undefined {
  if (!b.model) return undefined;
  if (kind === 'excess') return b.maxSharpe * Math.abs(b.model.mean);
  return b.sigmaAt?.(b.model.mean);
}

function meanAndCov(x: readonly Float64Array[]): { mu: Float64Array; cov: Float64Array } {
  const n = x.length;
  const T = n ? x[0].length : 0;
  const mu = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let t = 0; t < T; t++) s += x[i][t];
    mu[i] = s / T;
  }
  const centered = x.map((xi, i) => {
    const c = new Float64Array(T);
    const m = mu[i];
    for (let t = 0; t < T; t++) c[t] = xi[t] - m;
    return c;
  });
  const cov = seriesProductsUpper(centered, centered);
  for (let k = 0; k < cov.length; k++) cov[k] /= T;
  return { mu, cov };
}

export function sdfMoments(m: Float64Array): { mean: number; sigma: number } {
  const T = m.length;
  let s = 0;
  for (let t = 0; t < T; t++) s += m[t];
  const mean = s / T;
  let v = 0;
  for (let t = 0; t < T; t++) v += (m[t] - mean) ** 2;
  return { mean, sigma: Math.sqrt(v / T) };
}

export function volatilityBound(input: BoundInput): BoundOutput {
  // Leave out assets whose return is constant (a riskless asset): they pin E[m] but carry no variance.
  const keep: number[] = [];
  const riskless: string[] = [];
  input.returns.forEach((r, i) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (let t = 0; t < r.length; t++) {
      lo = Math.min(lo, r[t]);
      hi = Math.max(hi, r[t]);
    }
    if (hi - lo > 1e-12 * Math.max(1, Math.abs(hi))) keep.push(i);
    else riskless.push(input.assetNames[i]);
  });
  const x = keep.map((i) => input.returns[i]);
  const names = keep.map((i) => input.assetNames[i]);
  const { mu, cov } = meanAndCov(x);
  const n = x.length;
  const L = cholesky({ rows: n, cols: n, data: cov }, { name: 'the covariance matrix of the test-asset returns (volatility bound)', labels: names, hint: 'two test assets are (almost) the same portfolio; drop one of them' });
  const model = input.sdf ? sdfMoments(input.sdf) : undefined;
  const sMu = cholSolveVec(L, mu);
  let muSmu = 0;
  for (let i = 0; i < n; i++) muSmu += mu[i] * sMu[i];
  const maxSharpe = Math.sqrt(Math.max(0, muSmu));
  if (input.kind === 'excess') return { maxSharpe, model, riskless };
  // sigma^2(v) = p'S^-1 p - 2 v p'S^-1 mu + v^2 mu'S^-1 mu, p the payoffs' prices (1 for a gross return).
  const price = input.prices ? Float64Array.from(keep, (i) => (input.prices as Float64Array)[i]) : new Float64Array(n).fill(1);
  const sOne = cholSolveVec(L, price);
  let oSo = 0;
  let oSm = 0;
  for (let i = 0; i < n; i++) {
    oSo += price[i] * sOne[i];
    oSm += price[i] * sMu[i];
  }
  // Gross returns: the largest Sharpe ratio of a zero-cost portfolio of the assets,
  // mu'S^-1 mu - (p'S^-1 mu)^2 / p'S^-1 p, bounds sigma(m)/E(m) from below.
  const grossSharpe = Math.sqrt(Math.max(0, muSmu - (oSm * oSm) / oSo));
  const sigmaAt = (v: number) => Math.sqrt(Math.max(0, oSo - 2 * v * oSm + v * v * muSmu));
  const vStar = muSmu > 0 ? oSm / muSmu : 1;
  const centre = model ? (vStar + model.mean) / 2 : vStar;
  const half = 1.5 * Math.max(model ? Math.abs(model.mean - vStar) / 2 : 0, 0.02 * Math.abs(vStar), 0.01);
  const points = Math.max(3, input.points ?? 61);
  const curve: { mean: number; sigma: number }[] = [];
  for (let k = 0; k < points; k++) {
    const v = centre - half + (2 * half * k) / (points - 1);
    curve.push({ mean: v, sigma: sigmaAt(v) });
  }
  return { curve, maxSharpe: grossSharpe, model, minimum: { mean: vStar, sigma: sigmaAt(vStar) }, riskless, sigmaAt };
}
