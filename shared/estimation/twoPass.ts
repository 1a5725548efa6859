/**
 * Two-pass (Fama-MacBeth) cross-sectional regressions of the beta representation
 * (METHODS 4):
 *
 *  1. full-sample betas from the time-series regressions R^e_i,t = a_i + beta_i'f_t + e_i,t;
 *  2. each period t, the cross-sectional OLS of R^e_t (N assets) on Z = [1, beta]
 *     (spec.estimator.intercept, the default) or on Z = beta: coefficients gamma_t and
 *     residuals alpha_t = R^e_t - Z gamma_t;
 *  3. lambda = (1/T) sum_t gamma_t; Var_FM(lambda) = (1/T^2) sum_t (gamma_t - lambda)(gamma_t - lambda)'
 *     (time s.d. dividing by T, over sqrt(T)); pricing errors alpha = (1/T) sum_t alpha_t with
 *     Cov_FM(alpha) = (1/T^2) sum_t (alpha_t - alpha)(alpha_t - alpha)'.
 *
 * Shanken (1992) errors-in-variables correction, with c = lambda_f' Sigma_f^{-1} lambda_f
 * (lambda_f the factor premia, Sigma_f the MLE factor covariance, divide by T):
 *   Var_Shanken(lambda) = (1 + c) Var_FM(lambda) + [0, 0; 0, Sigma_f / T].
 * With an intercept the standard treatment applies: the factor (1 + c) multiplies the
 * whole Var_FM, intercept row and column included, and Sigma_f / T enters only the
 * factor block (the intercept is not a factor, so it has no Sigma_f term). The pricing
 * errors get Cov_Shanken(alpha) = (1 + c) Cov_FM(alpha) (Cochrane 2005, ch. 12.2).
 *
 * Test of all pricing errors (Cochrane 2005, ch. 12.2):
 *   alpha' Cov_FM(alpha)^+ alpha ~ chi2(N - K - 1) with the intercept, chi2(N - K) without;
 * Cov_FM(alpha) has rank N - p (alpha_t is orthogonal to Z), so the Moore-Penrose inverse
 * is taken on the orthogonal complement of Z, from the QR factorisation of Z. The
 * Shanken-corrected statistic divides by (1 + c).
 *
 * t and p of lambda use the Fama-MacBeth s.e. and the normal distribution (two-sided);
 * seShanken is reported beside them.
 *
 * References: Fama, E. and MacBeth, J. (1973), "Risk, return, and equilibrium: empirical
 * tests", J. Political Economy 81, 607-636; Shanken, J. (1992), "On the estimation of
 * beta-pricing models", Review of Financial Studies 5, 1-33; Cochrane, J. (2005), Asset
 * Pricing, rev. ed., ch. 12.
 */
import { fewPeriodsWarning } from '../warnings.js';
import { DeflatorError } from '../errors.js';
import { applyQ, applyQt, inverseQuadForm, qrFactor, solveR } from '../linalg/qr.js';
import type { ReturnsPanel } from '../panel.js';
import type { FitResult, ParamEstimate, PricingErrorRow, TestResult } from '../results.js';
import type { FitSpec } from '../spec.js';
import { chiSquareSf } from '../stats/distributions.js';
import { discountedPaths, linearSdfForPremia } from '../values/discountedValue.js';
import { crossSectionFit } from './crossSectionFit.js';
import { assertAllFinite } from './finiteGuard.js';
import { betaInputs, betaRows, betaSampleHeader, factorCovarianceQuadForm, normalParam, seriesMean, timeSeriesRegressions } from './timeSeries.js';

export function twoPassFit(spec: FitSpec, panel: ReturnsPanel): FitResult {
  const inp = betaInputs(spec, panel, 'two-pass');
  const { T, N, K, periodsPerYear: ppy } = inp;
  const intercept = spec.estimator.intercept;
  const p = K + (intercept ? 1 : 0);
  const df = N - p;
  if (df < 1)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `the cross-sectional regressions have N = ${N} test assets for ${p} coefficients (${intercept ? 'intercept and ' : ''}K = ${K} betas); the pricing-error test needs N > ${p}`,
      'add test assets or use fewer factors',
    );
  const ts = timeSeriesRegressions(inp);
  if (T <= df)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `the pricing-error test needs more periods than its ${df} degrees of freedom (N - ${intercept ? 'K - 1' : 'K'}): T = ${T}`,
      'use a longer sample or fewer test assets',
    );
  const fq = factorCovarianceQuadForm(inp);

  // Cross-sectional design Z (N x p).
  const zLabels = [...(intercept ? ['const'] : []), ...inp.factorNames.map((f) => `beta.${f}`)];
  const Z = new Float64Array(N * p);
  for (let i = 0; i < N; i++) {
    let c = 0;
    if (intercept) Z[i * p + c++] = 1;
    for (let k = 0; k < K; k++) Z[i * p + c++] = ts.betas[i][k];
  }
  const zQr = qrFactor({ rows: N, cols: p, data: Z }, { name: 'the cross-sectional design [const, betas]', labels: zLabels });

  // Per period: gamma_t and the residual coordinates w_t = (Q'R_t)[p..N) in the complement of Z.
  const gamma: Float64Array[] = Array.from({ length: p }, () => new Float64Array(T));
  const w: Float64Array[] = Array.from({ length: df }, () => new Float64Array(T));
  const alphaT: Float64Array[] = Array.from({ length: N }, () => new Float64Array(T));
  const rt = new Float64Array(N);
  for (let t = 0; t < T; t++) {
    for (let i = 0; i < N; i++) rt[i] = inp.returns[i][t];
    const z = applyQt(zQr, rt);
    const g = solveR(zQr, z);
    for (let j = 0; j < p; j++) gamma[j][t] = g[j];
    const tail = new Float64Array(N);
    for (let j = p; j < N; j++) {
      w[j - p][t] = z[j];
      tail[j] = z[j];
    }
    const a = applyQ(zQr, tail);
    for (let i = 0; i < N; i++) alphaT[i][t] = a[i];
  }

  const lambda = Float64Array.from(gamma, (g) => seriesMean(g));
  const covFm = new Float64Array(p * p);
  for (let i = 0; i < p; i++)
    for (let j = i; j < p; j++) {
      let s = 0;
      for (let t = 0; t < T; t++) s += (gamma[i][t] - lambda[i]) * (gamma[j][t] - lambda[j]);
      covFm[i * p + j] = s / (T * T);
      covFm[j * p + i] = s / (T * T);
    }
  const lambdaF = lambda.subarray(intercept ? 1 : 0);
  const c = fq.quad(lambdaF);
  const off = intercept ? 1 : 0;
  const seFm = Float64Array.from({ length: p }, (_, j) => Math.sqrt(covFm[j * p + j]));
  const seSh = Float64Array.from({ length: p }, (_, j) => {
    const factorPart = j >= off ? fq.covariance.data[(j - off) * K + (j - off)] / T : 0;
    return Math.sqrt((1 + c) * covFm[j * p + j] + factorPart);
  });

  const note = 'Fama-MacBeth s.e. (time s.d. of the period estimates, divide by T, over sqrt T); seShanken: Shanken (1992) correction';
  const params: ParamEstimate[] = zLabels.map((label, j) => {
    const name = j < off ? 'lambda.const' : `lambda.${inp.factorNames[j - off]}`;
    const out = normalParam(name, lambda[j], seFm[j], note);
    out.seShanken = seSh[j];
    return out;
  });

  // Pricing errors and their FM covariance.
  const alpha = Float64Array.from(alphaT, (a) => seriesMean(a));
  const meanReturns = inp.returns.map((r) => seriesMean(r));
  const pricingErrors: PricingErrorRow[] = inp.assets.map((asset, i) => {
    let s = 0;
    for (let t = 0; t < T; t++) s += (alphaT[i][t] - alpha[i]) ** 2;
    const se = Math.sqrt(s) / T;
    return {
      asset,
      alpha: alpha[i],
      se,
      t: se > 0 ? alpha[i] / se : 0,
      alphaAnnual: alpha[i] * ppy,
      seAnnual: se * ppy,
      meanReturn: meanReturns[i],
      predicted: meanReturns[i] - alpha[i],
      seShanken: Math.sqrt(1 + c) * se,
    };
  });

  // alpha' Cov_FM(alpha)^+ alpha = wbar' C_w^{-1} wbar, C_w = W_c'W_c / T^2.
  const wbar = Float64Array.from(w, (x) => seriesMean(x));
  const Wc = new Float64Array(T * df);
  for (let t = 0; t < T; t++) for (let j = 0; j < df; j++) Wc[t * df + j] = w[j][t] - wbar[j];
  const wQr = qrFactor(
    { rows: T, cols: df, data: Wc },
    { name: 'the Fama-MacBeth covariance of the pricing errors', labels: Array.from({ length: df }, (_, j) => `direction ${j + 1} orthogonal to the betas`) },
  );
  const statFm = T * T * inverseQuadForm(wQr, wbar);
  const statSh = statFm / (1 + c);
  const dfNote = intercept ? 'N - K - 1' : 'N - K';
  const fmTest: TestResult = {
    name: 'pricing errors chi-square (Fama-MacBeth covariance)',
    stat: statFm,
    df,
    p: chiSquareSf(statFm, df),
    note: `alpha' Cov_FM(alpha)^+ alpha, Cov_FM from the time variation of the period residuals; chi2(${dfNote})`,
  };
  const shTest: TestResult = {
    name: 'pricing errors chi-square (Shanken-corrected)',
    stat: statSh,
    df,
    p: chiSquareSf(statSh, df),
    note: `the Fama-MacBeth statistic divided by (1 + lambda'Sigma_f^-1 lambda) = ${(1 + c).toPrecision(6)}; chi2(${dfNote})`,
  };

  const { betas, assetRegressions } = betaRows(inp, ts);
  const notes: string[] = [
    `Cross-sectional regressions ${intercept ? 'with' : 'without'} an intercept on full-sample betas; lambda = time mean of the period estimates.`,
    `lambda s.e.: ${note}, with Sigma_f the MLE factor covariance; (1 + c) multiplies all of Var_FM, Sigma_f / T enters the factor block only.`,
    'Pricing errors are the time means of the cross-sectional residuals (per period), with Fama-MacBeth s.e.; seShanken scales them by sqrt(1 + c).',
  ];
  const fit = crossSectionFit(alpha, meanReturns, ppy);
  if (!fit.r2Defined) notes.push('R^2_cs is not defined (all test assets have the same mean return); reported as 0.');
  for (const s of panel.sampleNotes) notes.push(`${s.subject}: ${s.reason}`);

  const result: FitResult = {
    kind: 'fit',
    label: spec.label ?? `two-pass(${inp.factorNames.join(',')})`,
    sample: betaSampleHeader(
      spec,
      panel,
      inp,
      'two-pass',
      intercept ? 'Fama-MacBeth, with intercept' : 'Fama-MacBeth, no intercept',
      'OLS cross-sections',
      0,
      'none (Fama-MacBeth s.e. treat the period estimates as serially uncorrelated)',
      notes,
    ),
    params,
    pricingErrors,
    test: fmTest,
    tests: [fmTest, shTest],
    fit: { mape: fit.mape, rmse: fit.rmse, r2: fit.r2, mapeAnnual: fit.mapeAnnual, rmseAnnual: fit.rmseAnnual },
    betas,
    assetRegressions,
    notes,
    discounted: discountedPaths({
      form: 'gains',
      periods: panel.periods,
      assets: inp.assets,
      returns: inp.returns,
      sdf: linearSdfForPremia(inp.factors, lambdaF, inp.factorNames),
      offset: intercept ? lambda[0] : 0,
      priority: pricingErrors.map((e) => e.t),
      note: intercept
        ? "m_t = 1 - lambda' Sigma_f^-1 (f_t - fbar) applied to R^e - gamma_0 (the zero-beta rate, lambda.const): its mean increments are the pricing errors"
        : "m_t = 1 - lambda' Sigma_f^-1 (f_t - fbar): its mean increments are the pricing errors",
    }),
    warnings: [fewPeriodsWarning(panel.periods.length, inp.assets.length + inp.factorNames.length)].filter((w) => w !== undefined),
  };
  assertAllFinite(result);
  return result;
}
