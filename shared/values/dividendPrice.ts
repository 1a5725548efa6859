/**
 * The dividend-price ratio decomposition (METHODS 10): does a high dividend yield
 * forecast returns or dividend growth?
 *
 * With P_t the year-end price, D_t the dividends paid during year t (shared/returns/yearly.ts),
 *   dp_t = ln(D_t / P_t),  dd_{t+1} = ln(D_{t+1} / D_t),  r_{t+1} = ln((P_{t+1} + D_{t+1}) / P_t),
 *   rho = 1 / (1 + exp(mean dp))                (mean over all T years),
 * and three OLS regressions with intercept over t = 1..T-1 (n = T - 1 observations):
 *   r_{t+1} = a_r + b_r dp_t + e,  dd_{t+1} = a_d + b_d dp_t + e,  dp_{t+1} = a_phi + phi dp_t + e.
 * Linearising the return around mean dp (Campbell and Shiller 1988) gives
 *   r_{t+1} ~ k - rho dp_{t+1} + dd_{t+1} + dp_t,  hence  b_r - b_d + rho phi ~ 1;
 * the value minus 1 is the linearisation error (the gap). Iterating forward, the
 * long-run coefficients b_r^lr = b_r / (1 - rho phi) and b_d^lr = b_d / (1 - rho phi)
 * split the variance of dp into return and dividend-growth news: b_r^lr - b_d^lr ~ 1
 * (Cochrane 2008); the shares are b_r^lr and -b_d^lr as they are, not rescaled.
 *
 * Inference: the three regressions share the design X = [1, dp_t], so their coefficients
 * theta = (a_r, b_r, a_d, b_d, a_phi, phi) have the joint Newey-West covariance
 *   Var(theta) = (I_3 (x) (X'X)^{-1}) (n S) (I_3 (x) (X'X)^{-1}),
 * S the long-run covariance (shared/estimation/longRunCovariance.ts, Bartlett, divide by n,
 * not centered: the OLS scores x_t e_t sum to zero) of the six score series x_t e_k,t.
 * Each regression's own block is what a general OLS routine reports with HAC covariance,
 * Bartlett kernel and no small-sample correction. The long-run coefficients get
 * delta-method standard errors from the (b, phi) block with rho held fixed:
 *   grad b^lr = (1 / (1 - rho phi), b rho / (1 - rho phi)^2).
 *
 * References: Campbell, J. Y. and R. J. Shiller (1988), "The dividend-price ratio and
 * expectations of future dividends and discount factors", Review of Financial Studies 1,
 * 195-228; Cochrane, J. H. (2008), "The dog that did not bark: a defense of return
 * predictability", Review of Financial Studies 21, 1533-1575; Newey, W. and K. West (1987),
 * Econometrica 55, 703-708.
 */
import { DeflatorError } from '../errors.js';
import type { DpRegression, PresentValueResult, ResultWarning } from '../results.js';
import { lagsChoice, longRunCovariance } from '../estimation/longRunCovariance.js';
import { olsMany } from '../estimation/ols.js';
import type { YearlyValues } from '../returns/yearly.js';

export interface DividendPriceOptions {
  /** Newey-West lags: a number (0 = White) or 'auto' = floor(4 (n/100)^(2/9)) with n = T - 1. */
  lags: number | 'auto';
  /** What the data are, for messages and the label: `asset "x"` or `the aggregate of 12 assets`. */
  subject: string;
}

/** Years below which the decomposition is flagged as imprecise (our own rule of thumb, not a published value). */
export const FEW_YEARS = 20;
/** 1 - rho phi below this: the long-run coefficients divide by almost nothing (our own threshold). */
export const NEAR_UNIT_ROOT = 0.05;
/** |identity gap| above this: the linearisation is poor for these data (our own threshold). */
export const LARGE_GAP = 0.1;

export const COEFFICIENT_NAMES = ['a_r', 'b_r', 'a_d', 'b_d', 'a_phi', 'phi'] as const;

export type DividendPriceCore = Omit<PresentValueResult, 'kind' | 'label' | 'asset' | 'assets' | 'weighting' | 'frequency'>;

/** The decomposition of the yearly values (at least four years; see the file comment). */
export function dividendPriceDecomposition(v: YearlyValues, opts: DividendPriceOptions): DividendPriceCore {
  const T = v.years.length;
  const n = T - 1;
  const { lags, rule: lagsRule } = lagsChoice(opts.lags, n);
  if (n <= 2 || n <= lags + 1) {
    throw new DeflatorError(
      'SAMPLE_TOO_SHORT',
      `${opts.subject}: ${T} years (${v.years[0]}-${v.years[T - 1]}) give ${n} regression years; the decomposition needs more than ${Math.max(2, lags + 1)} (2 coefficients per regression${lags > 0 ? ` and ${lags} Newey-West lags` : ''})`,
      'use a longer history or a wider window (--start/--end)' + (lags > 0 ? ', or fewer lags (--lags)' : ''),
    );
  }
  const dp = new Float64Array(T);
  for (let t = 0; t < T; t++) dp[t] = Math.log(v.dividend[t] / v.price[t]);
  const r = new Float64Array(n);
  const dd = new Float64Array(n);
  const dpNext = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    r[t] = Math.log((v.price[t + 1] + v.dividend[t + 1]) / v.price[t]);
    dd[t] = Math.log(v.dividend[t + 1] / v.dividend[t]);
    dpNext[t] = dp[t + 1];
  }
  let sumDp = 0;
  for (let t = 0; t < T; t++) sumDp += dp[t];
  const meanDp = sumDp / T;
  const rho = 1 / (1 + Math.exp(meanDp));

  const X = new Float64Array(n * 2);
  for (let t = 0; t < n; t++) {
    X[2 * t] = 1;
    X[2 * t + 1] = dp[t];
  }
  const design = { rows: n, cols: 2, data: X };
  const fits = olsMany(design, [r, dd, dpNext], {
    name: `the predictive regressions on dp of ${opts.subject}`,
    labels: ['const', 'dp'],
    responseLabels: ['r', 'dd', 'dp'],
  });
  // Scores x_t e_k,t of the three regressions: six series.
  const scores: Float64Array[] = [];
  for (const f of fits.fits) {
    const s0 = new Float64Array(n);
    const s1 = new Float64Array(n);
    for (let t = 0; t < n; t++) {
      s0[t] = f.residuals[t];
      s1[t] = f.residuals[t] * dp[t];
    }
    scores.push(s0, s1);
  }
  const S = longRunCovariance(scores, lags, false);
  // Var = (I (x) A) (n S) (I (x) A), A = (X'X)^{-1} (2 x 2).
  const A = fits.unscaledCovariance.data;
  const q = 6;
  const left = new Float64Array(q * q); // (I (x) A) S
  for (let i = 0; i < q; i++) {
    const bi = i >> 1;
    const ri = i & 1;
    for (let j = 0; j < q; j++) left[i * q + j] = A[ri * 2] * S.data[(2 * bi) * q + j] + A[ri * 2 + 1] * S.data[(2 * bi + 1) * q + j];
  }
  const V: number[][] = Array.from({ length: q }, () => new Array<number>(q).fill(0));
  for (let i = 0; i < q; i++) {
    for (let j = 0; j < q; j++) {
      const bj = j >> 1;
      const rj = j & 1;
      V[i][j] = n * (left[i * q + 2 * bj] * A[2 * 0 + rj] + left[i * q + 2 * bj + 1] * A[2 * 1 + rj]);
    }
  }
  // Symmetrise the rounding.
  for (let i = 0; i < q; i++) for (let j = 0; j < i; j++) V[i][j] = V[j][i] = (V[i][j] + V[j][i]) / 2;
  const se = (k: number): number => Math.sqrt(Math.max(0, V[k][k]));
  const regression = (k: number): DpRegression => {
    const f = fits.fits[k];
    const seB = se(2 * k + 1);
    return { a: f.coefficients[0], b: f.coefficients[1], seA: se(2 * k), seB, tB: seB > 0 ? f.coefficients[1] / seB : 0, r2: f.r2, fitted: Array.from(f.fitted) };
  };
  const regR = regression(0);
  const regD = regression(1);
  const regP = regression(2);
  const phi = regP.b;
  const den = 1 - rho * phi;
  if (den === 0) {
    throw new DeflatorError('SINGULAR', `${opts.subject}: 1 - rho phi is exactly 0 (phi = ${phi}, rho = ${rho}): the long-run coefficients are not defined`, 'use a longer sample; dp behaves like a unit root here');
  }
  const longRun = (b: number, bIndex: number): { b: number; se: number } => {
    const g0 = 1 / den;
    const g1 = (b * rho) / (den * den);
    const p = 5; // phi
    const v = g0 * g0 * V[bIndex][bIndex] + 2 * g0 * g1 * V[bIndex][p] + g1 * g1 * V[p][p];
    return { b: b / den, se: Math.sqrt(Math.max(0, v)) };
  };
  const lrR = longRun(regR.b, 1);
  const lrD = longRun(regD.b, 3);
  const identityValue = regR.b - regD.b + rho * phi;

  const warnings: ResultWarning[] = [];
  if (T < FEW_YEARS)
    warnings.push({ code: 'FEW_YEARS', message: `only ${T} years: long-horizon coefficients from so few years are imprecise (fewer than ${FEW_YEARS} years is our own rule of thumb)` });
  if (den < NEAR_UNIT_ROOT)
    warnings.push({
      code: 'DP_NEAR_UNIT_ROOT',
      message: `1 - rho phi = ${den.toPrecision(3)}: dp is close to a unit root (or beyond), so the long-run coefficients divide by almost nothing and should not be trusted`,
    });
  if (Math.abs(identityValue - 1) > LARGE_GAP)
    warnings.push({ code: 'LARGE_IDENTITY_GAP', message: `b_r - b_d + rho phi = ${identityValue.toPrecision(4)} is far from 1: the linearisation fits these data poorly` });

  return {
    sample: { first: v.years[0], last: v.years[T - 1], T },
    lags,
    lagsRule,
    meanDp,
    rho,
    regressions: { r: regR, dd: regD, dp: regP },
    identity: { value: identityValue, gap: identityValue - 1 },
    longRun: { r: lrR, dd: lrD },
    varianceShares: { r: lrR.b, dd: -lrD.b },
    covariance: { names: [...COEFFICIENT_NAMES], values: V },
    series: { years: [...v.years], closes: [...v.closes], price: Array.from(v.price), dividend: Array.from(v.dividend), dp: Array.from(dp), r: Array.from(r), dd: Array.from(dd) },
    warnings,
    notes: [
      `Newey-West standard errors (Bartlett, ${lagsRule}; divide by n = ${n}, no small-sample correction) from the joint covariance of the three regressions.`,
      'Long-run coefficients b / (1 - rho phi) with delta-method standard errors, rho held fixed.',
      'Variance shares of dp: b_r^lr (returns) and -b_d^lr (dividend growth), not rescaled to sum to 1; their sum is 1 up to the linearisation gap.',
    ],
  };
}
