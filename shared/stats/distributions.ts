/**
 * Distribution functions for the tool's test statistics: chi-square, F, normal,
 * Student t, and weighted sums of chi-square(1) variables. Pure TypeScript.
 *
 * Upper tails (`...Sf`, the survival function P(X > x)) are computed directly, not as
 * 1 - cdf, so that a p-value of 1e-12 keeps its relative accuracy. Checked against R's
 * pchisq, pf, pnorm, pt and qnorm (lower.tail = TRUE and FALSE) to 1e-10 relative in
 * test/shared/stats/distributions.test.ts. Arguments out of the domain (NaN, df <= 0)
 * throw DeflatorError('INPUT_INVALID'); no function returns NaN.
 *
 * Definitions (Johnson, Kotz and Balakrishnan, Continuous Univariate Distributions):
 *   chi2(df) cdf  = P(df/2, x/2)                       (regularized incomplete gamma)
 *   F(d1, d2) cdf = I_{d1 x / (d1 x + d2)}(d1/2, d2/2)   (regularized incomplete beta)
 *   t(df) upper   = I_{df / (df + t^2)}(df/2, 1/2) / 2 for t >= 0
 *   N(0,1) upper  = erfc(x / sqrt 2) / 2 = Q(1/2, x^2/2) / 2 for x >= 0
 */
import { DeflatorError } from '../errors.js';
import { incompleteBeta, incompleteGamma } from './special.js';

export { weightedChiSquareSf } from './imhof.js';
export { erfc, logGamma, incompleteGamma, incompleteBeta } from './special.js';

function checkX(fn: string, x: number): void {
  if (Number.isNaN(x)) throw new DeflatorError('INPUT_INVALID', `${fn}: the statistic is NaN`, 'a NaN statistic means an upstream computation failed; check the inputs');
}

function checkDf(fn: string, name: string, df: number): void {
  if (!(df > 0) || !Number.isFinite(df)) throw new DeflatorError('INPUT_INVALID', `${fn}: ${name} must be a positive finite number, got ${df}`, 'check the degrees of freedom (number of moments minus parameters, or sample size minus regressors)');
}

/** P(X <= x), X ~ chi2(df). */
export function chiSquareCdf(x: number, df: number): number {
  checkX('chiSquareCdf', x);
  checkDf('chiSquareCdf', 'df', df);
  return incompleteGamma(df / 2, x / 2).lower;
}

/** P(X > x), X ~ chi2(df), computed directly (relative accuracy kept for tiny p). */
export function chiSquareSf(x: number, df: number): number {
  checkX('chiSquareSf', x);
  checkDf('chiSquareSf', 'df', df);
  return incompleteGamma(df / 2, x / 2).upper;
}

function fTails(fn: string, x: number, d1: number, d2: number): { lower: number; upper: number } {
  checkX(fn, x);
  checkDf(fn, 'd1', d1);
  checkDf(fn, 'd2', d2);
  if (x <= 0) return { lower: 0, upper: 1 };
  if (x === Infinity) return { lower: 1, upper: 0 };
  const u = d1 * x;
  const s = u + d2;
  if (s === Infinity) return { lower: 1, upper: 0 };
  return incompleteBeta(u / s, d2 / s, d1 / 2, d2 / 2);
}

/** P(X <= x), X ~ F(d1, d2). */
export function fCdf(x: number, d1: number, d2: number): number {
  return fTails('fCdf', x, d1, d2).lower;
}

/** P(X > x), X ~ F(d1, d2), computed directly. */
export function fSf(x: number, d1: number, d2: number): number {
  return fTails('fSf', x, d1, d2).upper;
}

/** P(Z > x), Z ~ N(0, 1). */
export function normalSf(x: number): number {
  checkX('normalSf', x);
  if (x === Infinity) return 0;
  if (x === -Infinity) return 1;
  const g = incompleteGamma(0.5, (x * x) / 2);
  return x >= 0 ? 0.5 * g.upper : 0.5 + 0.5 * g.lower;
}

/** P(Z <= x), Z ~ N(0, 1). */
export function normalCdf(x: number): number {
  checkX('normalCdf', x);
  return normalSf(-x);
}

/** Two-sided normal p-value P(|Z| > |z|). */
export function normalTwoSidedP(z: number): number {
  checkX('normalTwoSidedP', z);
  return Math.min(1, 2 * normalSf(Math.abs(z)));
}

function tUpperTail(t: number, df: number): number {
  // For t >= 0: P(T > t) = I_{df/(df+t^2)}(df/2, 1/2) / 2.
  const t2 = t * t;
  if (t2 === Infinity) return 0;
  const s = df + t2;
  return 0.5 * incompleteBeta(df / s, t2 / s, df / 2, 0.5).lower;
}

/** P(T > x), T ~ Student t(df), computed directly. */
export function studentTSf(x: number, df: number): number {
  checkX('studentTSf', x);
  checkDf('studentTSf', 'df', df);
  if (x === Infinity) return 0;
  if (x === -Infinity) return 1;
  return x >= 0 ? tUpperTail(x, df) : 1 - tUpperTail(-x, df);
}

/** P(T <= x), T ~ Student t(df). */
export function studentTCdf(x: number, df: number): number {
  checkX('studentTCdf', x);
  return studentTSf(-x, df);
}

// Acklam's rational approximation to the normal quantile (relative error 1.15e-9),
// refined by one Halley step on the exact cdf above.
const QA = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const QB = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const QC = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const QD = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const P_LOW = 0.02425;

function acklam(p: number): number {
  if (p < P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (((((QC[0] * q + QC[1]) * q + QC[2]) * q + QC[3]) * q + QC[4]) * q + QC[5]) / ((((QD[0] * q + QD[1]) * q + QD[2]) * q + QD[3]) * q + 1);
  }
  if (p <= 1 - P_LOW) {
    const q = p - 0.5;
    const r = q * q;
    return ((((((QA[0] * r + QA[1]) * r + QA[2]) * r + QA[3]) * r + QA[4]) * r + QA[5]) * q) / (((((QB[0] * r + QB[1]) * r + QB[2]) * r + QB[3]) * r + QB[4]) * r + 1);
  }
  const q = Math.sqrt(-2 * Math.log(1 - p));
  return -(((((QC[0] * q + QC[1]) * q + QC[2]) * q + QC[3]) * q + QC[4]) * q + QC[5]) / ((((QD[0] * q + QD[1]) * q + QD[2]) * q + QD[3]) * q + 1);
}

/**
 * The standard normal quantile: x with P(Z <= x) = p, 0 < p < 1. Acklam's (2003)
 * approximation, then Halley steps on the exact cdf (the tail on the side of p keeps
 * relative accuracy: for p > 1/2 the error is measured on 1 - p).
 */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) throw new DeflatorError('INPUT_INVALID', `normalQuantile: probability ${p} is outside (0, 1)`, 'pass a probability strictly between 0 and 1');
  let x = acklam(p);
  for (let i = 0; i < 2; i++) {
    // e = Phi(x) - p, computed on the small tail.
    const e = p < 0.5 ? normalCdf(x) - p : 1 - p - normalSf(x);
    const density = Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
    if (density === 0) break;
    const u = e / density;
    x = x - u / (1 + (x * u) / 2);
  }
  return x;
}
