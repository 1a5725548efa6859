/**
 * Time-series regressions of the beta representation (traded factors), with the
 * Gibbons-Ross-Shanken test of all intercepts (METHODS 4):
 *
 *   R^e_i,t = a_i + beta_i' f_t + e_i,t,   i = 1..N, t = 1..T   (OLS asset by asset),
 *   GRS = ((T - N - K) / N) (1 + fbar' Omega^{-1} fbar)^{-1} a' Sigma^{-1} a  ~  F(N, T - N - K),
 *
 * Sigma = E'E / T the MLE residual covariance and Omega the MLE factor covariance
 * (divide by T), fbar the factor means. The F distribution is exact under i.i.d. normal
 * residuals (Gibbons, Ross and Shanken 1989). Quadratic forms are computed from QR
 * factorisations of the residual and demeaned-factor matrices (a'(E'E)^{-1}a = ||R^{-T} a||^2),
 * never from an inverse.
 *
 * Standard errors reported:
 *  - pricingErrors[i].se: classical OLS s.e. of a_i, s_i sqrt([(X'X)^{-1}]_00) with
 *    s_i^2 = RSS_i / (T - K - 1), X = [1, f] (as R's summary.lm);
 *  - pricingErrors[i].seHac: Newey-West s.e. with the spec's lags (Bartlett, divide by T,
 *    no small-sample adjustment; sandwich::NeweyWest(lag = L, prewhite = FALSE, adjust = FALSE)),
 *    and tests[1], the HAC Wald test a' Var_HAC(a)^{-1} a ~ chi2(N) (Cochrane 2005, ch. 12.1);
 *  - params mu.<factor>: factor means (the risk premia of traded factors) with
 *    s.e. sqrt(Omega_kk / T).
 *
 * References: Gibbons, M., Ross, S. and Shanken, J. (1989), "A test of the efficiency of
 * a given portfolio", Econometrica 57, 1121-1152; Cochrane, J. (2005), Asset Pricing,
 * rev. ed., Princeton University Press, ch. 12; Newey and West (1987).
 */
import { fewPeriodsWarning } from '../warnings.js';
import { PERIODS_PER_YEAR } from '../data.js';
import { DeflatorError } from '../errors.js';
import { cholesky, cholSolveVec } from '../linalg/cholesky.js';
import { inverseQuadForm, qrFactor, type DenseMatrix } from '../linalg/qr.js';
import type { ReturnsPanel } from '../panel.js';
import type { AssetRegression, BetaEstimate, FitResult, ParamEstimate, PricingErrorRow, SampleHeader, TestResult } from '../results.js';
import type { FitSpec } from '../spec.js';
import { chiSquareSf, fSf, normalTwoSidedP } from '../stats/distributions.js';
import { crossSectionFit } from './crossSectionFit.js';
import { assertAllFinite } from './finiteGuard.js';
import { lagsChoice, longRunCovariance } from './longRunCovariance.js';
import { olsMany } from './ols.js';
import { discountedPaths, linearSdfForPremia } from '../values/discountedValue.js';

/** The inputs of a beta-representation fit, checked. */
export interface BetaInputs {
  T: number;
  N: number;
  K: number;
  assets: string[];
  returns: Float64Array[];
  factorNames: string[];
  factors: Float64Array[];
  lags: number;
  lagsRule: string;
  periodsPerYear: number;
}

/** Full-sample time-series regressions, asset by asset, on X = [1, f]. */
export interface TimeSeriesRegressions {
  alpha: Float64Array;
  alphaSe: Float64Array;
  /** betas[i][k]: loading of asset i on factor k. */
  betas: Float64Array[];
  betaSe: Float64Array[];
  residuals: Float64Array[];
  r2: Float64Array;
  residualSd: Float64Array;
  /** (X'X)^{-1}. */
  unscaledCovariance: DenseMatrix;
  design: DenseMatrix;
}

function finiteSeries(what: string, x: Float64Array, periods: readonly string[], T: number): void {
  if (x.length !== T) throw new DeflatorError('INPUT_INVALID', `${what} has ${x.length} periods, the panel ${T}`, 'the panel must be balanced');
  for (let t = 0; t < T; t++)
    if (!Number.isFinite(x[t])) throw new DeflatorError('INPUT_INVALID', `${what} has a missing or non-finite value (${x[t]}) at ${periods[t] ?? `period ${t + 1}`}`, 'fill or drop that period; the panel must be balanced');
}

/** Spec + panel -> checked inputs of a time-series or two-pass fit. */
export function betaInputs(spec: FitSpec, panel: ReturnsPanel, method: 'time-series' | 'two-pass'): BetaInputs {
  if (spec.model.kind !== 'linear')
    throw new DeflatorError('SPEC_INVALID', `spec.estimator.method: ${method} regressions apply to the linear (beta-representation) model, not "${spec.model.kind}"`, 'set model.kind to "linear" or use method "gmm"');
  if (panel.returnKind !== 'excess') throw new DeflatorError('SPEC_INVALID', `spec.returns: ${method} regressions use excess returns; the panel holds ${panel.returnKind} returns`, 'set "returns": "excess" and name a risk-free series');
  const T = panel.periods.length;
  const N = panel.assets.length;
  if (T === 0 || N === 0) throw new DeflatorError('DATA_MISSING', 'the panel has no periods or no test assets after alignment', 'check the sample window and the asset list');
  panel.returns.forEach((r, i) => finiteSeries(`test asset "${panel.assets[i]}"`, r, panel.periods, T));
  const factorNames: string[] = [];
  const factors: Float64Array[] = [];
  for (const name of spec.model.factors) {
    const f = panel.factors.find((x) => x.name === name);
    if (!f) throw new DeflatorError('DATA_MISSING', `factor "${name}" is not in the panel (it has: ${panel.factors.map((x) => x.name).join(', ') || 'none'})`, 'import the factor series or fix model.factors');
    finiteSeries(`factor "${name}"`, f.values, panel.periods, T);
    factorNames.push(name);
    factors.push(f.values);
  }
  const K = factors.length;
  if (K === 0) throw new DeflatorError('SPEC_INVALID', 'spec.model.factors: a beta-representation fit needs at least one factor', 'name the factors in model.factors');
  const e = spec.estimator;
  const { lags, rule: lagsRule } = lagsChoice(e.lags, T);
  return { T, N, K, assets: [...panel.assets], returns: [...panel.returns], factorNames, factors, lags, lagsRule, periodsPerYear: PERIODS_PER_YEAR[panel.frequency] };
}

/** OLS of every asset on [1, f]; collinear or constant factors throw SINGULAR naming them. */
export function timeSeriesRegressions(inp: BetaInputs): TimeSeriesRegressions {
  const { T, N, K } = inp;
  if (T <= K + 1)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `time-series regressions: T = ${T} periods for ${K + 1} coefficients per asset (intercept and K = ${K} betas); need T > K + 1`,
      'use a longer sample or fewer factors',
    );
  const p = K + 1;
  const data = new Float64Array(T * p);
  for (let t = 0; t < T; t++) {
    data[t * p] = 1;
    for (let k = 0; k < K; k++) data[t * p + 1 + k] = inp.factors[k][t];
  }
  const design: DenseMatrix = { rows: T, cols: p, data };
  const r = olsMany(design, inp.returns, {
    name: 'the time-series regression design [const, factors]',
    labels: ['const', ...inp.factorNames],
    responseLabels: inp.assets,
  });
  return {
    alpha: Float64Array.from(r.fits, (f) => f.coefficients[0]),
    alphaSe: Float64Array.from(r.fits, (f) => f.se[0]),
    betas: r.fits.map((f) => f.coefficients.slice(1)),
    betaSe: r.fits.map((f) => f.se.slice(1)),
    residuals: r.fits.map((f) => f.residuals),
    r2: Float64Array.from(r.fits, (f) => f.r2),
    residualSd: Float64Array.from(r.fits, (f) => f.sigma),
    unscaledCovariance: r.unscaledCovariance,
    design,
  };
}

export function seriesMean(x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i];
  return s / x.length;
}

/** QR of the demeaned factors, for fbar' Omega^{-1} fbar and lambda' Sigma_f^{-1} lambda (Omega = F_c'F_c / T). */
export function factorCovarianceQuadForm(inp: BetaInputs): { quad: (v: ArrayLike<number>) => number; means: Float64Array; variances: Float64Array; covariance: DenseMatrix } {
  const { T, K } = inp;
  const means = Float64Array.from(inp.factors, (f) => seriesMean(f));
  const centered = new Float64Array(T * K);
  for (let t = 0; t < T; t++) for (let k = 0; k < K; k++) centered[t * K + k] = inp.factors[k][t] - means[k];
  const qr = qrFactor({ rows: T, cols: K, data: centered }, { name: 'the factor covariance matrix Omega (demeaned factors)', labels: inp.factorNames });
  const cov = new Float64Array(K * K);
  for (let i = 0; i < K; i++)
    for (let j = i; j < K; j++) {
      let s = 0;
      for (let t = 0; t < T; t++) s += centered[t * K + i] * centered[t * K + j];
      cov[i * K + j] = s / T;
      cov[j * K + i] = s / T;
    }
  const variances = Float64Array.from({ length: K }, (_, k) => cov[k * K + k]);
  return { quad: (v) => T * inverseQuadForm(qr, v), means, variances, covariance: { rows: K, cols: K, data: cov } };
}

export function betaRows(inp: BetaInputs, ts: TimeSeriesRegressions): { betas: BetaEstimate[]; assetRegressions: AssetRegression[] } {
  const betas: BetaEstimate[] = [];
  const assetRegressions: AssetRegression[] = [];
  inp.assets.forEach((asset, i) => {
    inp.factorNames.forEach((factor, k) => {
      const estimate = ts.betas[i][k];
      const se = ts.betaSe[i][k];
      betas.push({ asset, factor, estimate, se, t: se > 0 ? estimate / se : 0 });
    });
    assetRegressions.push({ asset, r2: ts.r2[i], residualSd: ts.residualSd[i] });
  });
  return { betas, assetRegressions };
}

export function normalParam(name: string, estimate: number, se: number, note?: string): ParamEstimate {
  const t = se > 0 ? estimate / se : 0;
  const out: ParamEstimate = { name, estimate, se, t, p: se > 0 ? normalTwoSidedP(t) : 1 };
  if (note) out.note = note;
  return out;
}

export function betaSampleHeader(spec: FitSpec, panel: ReturnsPanel, inp: BetaInputs, method: 'time-series' | 'two-pass', stage: string, weighting: string, lags: number, lagsRule: string, notes: string[]): SampleHeader {
  return {
    start: panel.periods[0],
    end: panel.periods[inp.T - 1],
    T: inp.T,
    N: inp.N,
    K: inp.K,
    lags,
    frequency: panel.frequency,
    periodsPerYear: inp.periodsPerYear,
    returns: 'excess',
    method,
    model: spec.model.kind,
    stage,
    weighting,
    centered: spec.estimator.centered,
    lagsRule,
    assets: [...inp.assets],
    factors: [...inp.factorNames],
    notes: [...notes],
  };
}

/** Newey-West covariance of the OLS intercepts across assets: (1/T) S_v, v_i,t = e_i,t h'x_t, h = T [(X'X)^{-1}]_0. */
export function hacAlphaCovariance(inp: BetaInputs, ts: TimeSeriesRegressions, centered: boolean): DenseMatrix {
  const { T, N, K } = inp;
  const p = K + 1;
  const h = new Float64Array(p);
  for (let j = 0; j < p; j++) h[j] = T * ts.unscaledCovariance.data[j];
  const weight = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    let s = 0;
    for (let j = 0; j < p; j++) s += h[j] * ts.design.data[t * p + j];
    weight[t] = s;
  }
  const v = ts.residuals.map((e) => {
    const out = new Float64Array(T);
    for (let t = 0; t < T; t++) out[t] = e[t] * weight[t];
    return out;
  });
  const S = longRunCovariance(v, inp.lags, centered);
  const data = new Float64Array(N * N);
  for (let i = 0; i < N * N; i++) data[i] = S.data[i] / T;
  return { rows: N, cols: N, data };
}

/** Time-series regressions with the GRS test (see the file comment). */
export function timeSeriesFit(spec: FitSpec, panel: ReturnsPanel): FitResult {
  const inp = betaInputs(spec, panel, 'time-series');
  const { T, N, K, periodsPerYear: ppy } = inp;
  if (T <= N + K)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `the GRS test needs T > N + K: T = ${T} periods, N = ${N} test assets, K = ${K} factors (T - N - K = ${T - N - K})`,
      'use a longer sample or fewer test assets',
    );
  const ts = timeSeriesRegressions(inp);
  const fq = factorCovarianceQuadForm(inp);

  // a' Sigma^{-1} a with Sigma = E'E / T.
  const E = new Float64Array(T * N);
  for (let t = 0; t < T; t++) for (let i = 0; i < N; i++) E[t * N + i] = ts.residuals[i][t];
  const residualQr = qrFactor(
    { rows: T, cols: N, data: E },
    { name: 'the residual covariance Sigma of the time-series regressions', labels: inp.assets },
  );
  const aSigmaA = T * inverseQuadForm(residualQr, ts.alpha);
  const fOmegaF = fq.quad(fq.means);
  const df2 = T - N - K;
  const grs = (df2 / N) * (aSigmaA / (1 + fOmegaF));
  const grsTest: TestResult = {
    name: 'GRS',
    stat: grs,
    df1: N,
    df2,
    p: fSf(grs, N, df2),
    note: "((T-N-K)/N) (1 + fbar'Omega^-1 fbar)^-1 a'Sigma^-1 a, Sigma and Omega MLE (divide by T); F(N, T-N-K) under i.i.d. normal residuals",
  };

  const covHac = hacAlphaCovariance(inp, ts, spec.estimator.centered);
  const seHac = Float64Array.from({ length: N }, (_, i) => Math.sqrt(covHac.data[i * N + i]));
  const L = cholesky(covHac, { name: 'the Newey-West covariance of the intercepts', labels: inp.assets.map((a) => `intercept of "${a}"`), code: 'SINGULAR', hint: 'use fewer test assets, fewer lags or a longer sample' });
  const sol = cholSolveVec(L, ts.alpha);
  let wald = 0;
  for (let i = 0; i < N; i++) wald += ts.alpha[i] * sol[i];
  const waldTest: TestResult = {
    name: 'intercepts Wald chi-square (Newey-West)',
    stat: wald,
    df: N,
    p: chiSquareSf(wald, N),
    note: `a' Var_HAC(a)^-1 a with Newey-West lags ${inp.lags}; asymptotic chi2(N)`,
  };

  const meanReturns = inp.returns.map((r) => seriesMean(r));
  const pricingErrors: PricingErrorRow[] = inp.assets.map((asset, i) => {
    const a = ts.alpha[i];
    const se = ts.alphaSe[i];
    return {
      asset,
      alpha: a,
      se,
      t: se > 0 ? a / se : 0,
      alphaAnnual: a * ppy,
      seAnnual: se * ppy,
      meanReturn: meanReturns[i],
      predicted: meanReturns[i] - a,
      seHac: seHac[i],
    };
  });

  const muNote = 'factor mean; s.e. sqrt(Omega_kk / T), Omega the MLE factor covariance';
  const params: ParamEstimate[] = inp.factorNames.map((f, k) => normalParam(`mu.${f}`, fq.means[k], Math.sqrt(fq.variances[k] / T), muNote));
  const { betas, assetRegressions } = betaRows(inp, ts);

  const notes: string[] = [
    'Pricing errors are the time-series intercepts a_i (per period); s.e. classical OLS (i.i.d. residuals, as the GRS test assumes); seHac beside them uses Newey-West with the lags in the header.',
    'Factor means mu.<factor> are the time-series estimates of the factor risk premia (traded factors).',
  ];
  const fit = crossSectionFit(ts.alpha, meanReturns, ppy);
  if (!fit.r2Defined) notes.push('R^2_cs is not defined (all test assets have the same mean return); reported as 0.');
  for (const s of panel.sampleNotes) notes.push(`${s.subject}: ${s.reason}`);

  const result: FitResult = {
    kind: 'fit',
    label: spec.label ?? `time-series(${inp.factorNames.join(',')})`,
    sample: betaSampleHeader(spec, panel, inp, 'time-series', 'OLS per asset', 'none (OLS)', inp.lags, inp.lagsRule, notes),
    params,
    pricingErrors,
    test: grsTest,
    tests: [grsTest, waldTest],
    fit: { mape: fit.mape, rmse: fit.rmse, r2: fit.r2, mapeAnnual: fit.mapeAnnual, rmseAnnual: fit.rmseAnnual },
    betas,
    assetRegressions,
    notes,
    discounted: discountedPaths({
      form: 'gains',
      periods: panel.periods,
      assets: inp.assets,
      returns: inp.returns,
      sdf: linearSdfForPremia(inp.factors, fq.means, inp.factorNames),
      priority: pricingErrors.map((e) => e.t),
      note: "m_t = 1 - fbar' Sigma_f^-1 (f_t - fbar), the linear discount factor that prices the factor means: its mean increments are the intercepts a_i",
    }),
    warnings: [fewPeriodsWarning(panel.periods.length, inp.assets.length + inp.factorNames.length)].filter((w) => w !== undefined),
  };
  assertAllFinite(result);
  return result;
}
