/**
 * Result objects: plain, serialisable data. Every formatter (terminal report, CSV,
 * XLSX, LaTeX, HTML) and every screen reads these. JSON keys named in the issues
 * (sample, params, pricingErrors, test, hj, fit, windows, oos, perAsset, paths, models)
 * are a contract: add keys freely, never rename.
 */
import type { SampleInfo } from './panel.js';
import type { Frequency } from './data.js';

/**
 * A reason not to trust a result as it stands (shared/warnings.ts lists the codes and
 * the thresholds). Every result carries `warnings` (JSON key, a contract); every
 * surface shows them beside the numbers they qualify.
 */
export interface ResultWarning {
  /** Stable code, e.g. FEW_PERIODS (shared/warnings.ts). */
  code: string;
  /** One sentence a reader understands without the code: what, how much, what to do. */
  message: string;
  /** In a comparison: the label of the model the warning belongs to. */
  model?: string;
}

/** What estimated a model: method, stage, first-stage weight and lags (the spec's rule and the count used). */
export interface EstimatorIdentity {
  method: string;
  stage: string;
  weight: string;
  /** As the spec gave them: a number or "auto". */
  lags: number | 'auto';
  /** The count used on the (comparison's) sample. */
  lagsUsed: number;
}

export interface ParamEstimate {
  /** b.<factor>, mu.<factor>, lambda.<factor>, lambda.const, a, delta, gamma, beta.<asset>.<factor> ... */
  name: string;
  estimate: number;
  se: number;
  t: number;
  p: number;
  /** Two-pass only: Shanken (1992) corrected standard error. */
  seShanken?: number;
  /** Note on how the s.e. was computed, e.g. "delta method, Sigma_f treated as known". */
  note?: string;
}

export interface PricingErrorRow {
  asset: string;
  /** With instruments (METHODS 9): the instrument scaling this asset's moment, "const" for the constant. */
  instrument?: string;
  /** Per-period pricing error (decimal). */
  alpha: number;
  se: number;
  t: number;
  /** alpha x periods per year. */
  alphaAnnual: number;
  seAnnual: number;
  /** Realised mean return of the asset over the sample (excess or gross, as estimated). */
  meanReturn: number;
  /**
   * Model-predicted mean return: meanReturn - alpha for the beta-representation estimators;
   * for GMM meanReturn - alpha / E_T[m] (so alpha = E_T[m] (meanReturn - predicted)), which is
   * meanReturn - alpha where the sample mean of m is 1 (the demeaned model's first stage).
   */
  predicted: number;
  /** Time-series regressions: Newey-West (HAC) s.e. of the intercept, with the spec's lags. */
  seHac?: number;
  /** Two-pass only: Shanken (1992) corrected s.e. of the average cross-sectional residual. */
  seShanken?: number;
}

/** One slope of a time-series regression R^e_i = a_i + beta_i'f + e (time-series and two-pass fits). */
export interface BetaEstimate {
  asset: string;
  factor: string;
  estimate: number;
  /** Classical OLS standard error. */
  se: number;
  t: number;
}

/** Per-asset summary of its time-series regression. */
export interface AssetRegression {
  asset: string;
  /** Time-series R^2 (centered). */
  r2: number;
  /** Residual standard deviation sqrt(RSS / (T - K - 1)). */
  residualSd: number;
}

/** A test statistic: chi-square style (df) or F style (df1, df2). */
export interface TestResult {
  name: string;
  stat: number;
  df?: number;
  df1?: number;
  df2?: number;
  p: number;
  note?: string;
}

export interface HjDistanceResult {
  distance: number;
  p: number;
  /** How the p-value was evaluated, e.g. "Imhof (1961) numerical inversion". */
  method: string;
}

export interface CrossSectionFit {
  mape: number;
  rmse: number;
  r2: number;
  mapeAnnual: number;
  rmseAnnual: number;
}

export interface SdfSeries {
  periods: string[];
  values: number[];
  mean: number;
  std: number;
}

export interface VolatilityBound {
  /** Gross returns: sigma_min(m) at each candidate E[m]. */
  curve?: { mean: number; sigma: number }[];
  /** Excess returns: the max Sharpe ratio, so sigma(m)/E(m) >= maxSharpe. */
  maxSharpe: number;
  /** The model's own fitted (E m, sigma m). */
  model?: { mean: number; sigma: number };
  /** The bound's smallest sigma(m) at the model's E[m] (sigma_min(E m), or maxSharpe x E m on excess returns). */
  atModel?: number;
}

export interface SampleHeader extends SampleInfo {
  frequency: Frequency;
  periodsPerYear: number;
  returns: 'excess' | 'gross';
  method: string;
  model: string;
  stage: string;
  weighting: string;
  centered: boolean;
  lagsRule: string;
  assets: string[];
  factors: string[];
  notes: string[];
  /** Instruments (METHODS 9), "const" first; absent without instruments. */
  instruments?: string[];
  /** What the instruments scale: the returns (managed portfolios), the factors, or both. */
  instrumentScale?: 'returns' | 'factors' | 'both';
  /** Periods between an instrument's date and the returns it scales. */
  instrumentLag?: number;
  /** Period labels the returns and factors cover but the lagged instruments do not. */
  lostToLag?: string[];
}

export interface FitResult {
  kind: 'fit';
  label: string;
  sample: SampleHeader;
  params: ParamEstimate[];
  pricingErrors: PricingErrorRow[];
  test: TestResult;
  /** Further tests (e.g. Hansen J beside the pricing-error chi-square, GRS). */
  tests: TestResult[];
  hj?: HjDistanceResult;
  fit: CrossSectionFit;
  sdf?: SdfSeries;
  bound?: VolatilityBound;
  convergence?: { iterations: number; converged: boolean; criterion: string };
  /** Time-series and two-pass fits: the full-sample betas, asset by asset, factor by factor. */
  betas?: BetaEstimate[];
  /** Time-series and two-pass fits: per-asset regression R^2 and residual s.d. */
  assetRegressions?: AssetRegression[];
  /** Statements the report must carry (e.g. how lambda s.e. were computed). */
  notes: string[];
  /** Discounted-value paths under the fitted discount factor (METHODS 10). */
  discounted?: DiscountedPaths;
  /** Reasons not to trust the fit as it stands (empty when there are none). */
  warnings: ResultWarning[];
}

export interface BacktestWindow {
  start: string;
  end: string;
  /** Held-out periods (first and last label). */
  oosStart: string;
  oosEnd: string;
  ok: boolean;
  reason?: string;
  /** Root mean square across assets of this window's out-of-sample pricing errors. */
  oosRmse?: number;
}

export interface BacktestResult {
  kind: 'backtest';
  label: string;
  sample: SampleHeader;
  windows: number;
  windowsFailed: number;
  failures: { end: string; reason: string }[];
  oos: { rmse: number; rmsePooled: number; r2: number };
  inSample: { rmse: number; r2: number; mape: number };
  /** Per test asset (with instruments: per payoff, asset and instrument; METHODS 9). */
  perAsset: { asset: string; instrument?: string; alphaOos: number; alphaIn: number; meanReturnOos: number }[];
  paths: { end: string; params: { name: string; estimate: number; se: number }[] }[];
  windowList: BacktestWindow[];
  spec: { window: number; step: number; horizon: number; expanding: boolean };
  /** Reasons not to trust the back-test as it stands (failed windows, ...). */
  warnings: ResultWarning[];
}

export interface CompareRow {
  label: string;
  /** The model kind (linear, linear-raw, linear-gross, consumption). */
  model?: string;
  /** The estimator that fitted this model (a model is its kind, factors and estimator). */
  estimator?: EstimatorIdentity;
  /** Returns the model priced (excess or gross). */
  returns?: 'excess' | 'gross';
  /** Factors (or the consumption series) of the model. */
  factors?: string[];
  params: ParamEstimate[];
  test: TestResult;
  hj?: HjDistanceResult;
  fit: CrossSectionFit;
  oos?: { rmse: number; rmsePooled: number; r2: number };
  /** Windows of this model's back-test that failed (0 when all were estimated). */
  oosWindowsFailed?: number;
  error?: string;
  /** This model's fit and back-test warnings. */
  warnings?: ResultWarning[];
}

export interface CompareResult {
  kind: 'compare';
  sample: SampleHeader;
  models: CompareRow[];
  /** Pairwise bootstrap tests of equal squared HJ distance. */
  hjTests: {
    a: string;
    b: string;
    diff: number;
    p: number;
    replications: number;
    block: number;
    seed: number;
    /** Replications on which both distances could be computed (the p-value's denominator less one). */
    used?: number;
  }[];
  /**
   * The best model per column: column key -> label (the first listed on a tie). The rule
   * and its columns are in shared/present/best.ts (hj.distance, hj.p, fit.mape, fit.rmse,
   * fit.r2, oos.rmse, oos.rmsePooled, oos.r2); no test statistic is ranked, and nothing
   * is marked with fewer than two models.
   */
  best?: Record<string, string>;
  /** How the HJ bootstrap was run (absent when fewer than two models have an HJ distance). */
  bootstrap?: { replications: number; block: number; blockRule: string; seed: number; method: string; failures: string[] };
  /** Models whose fit failed, with the reason; they have no row in `models`. */
  failures?: { label: string; error: string }[];
  /** The comparison's own warnings (failed bootstrap replications) and every model's, each with `model`. */
  warnings: ResultWarning[];
}

/** One predictive regression y_{t+1} = a + b dp_t + e of the dividend-price decomposition. */
export interface DpRegression {
  a: number;
  b: number;
  /** Newey-West standard errors of a and b (the decomposition's lags). */
  seA: number;
  seB: number;
  /** b / seB. */
  tB: number;
  /** Centered R^2. */
  r2: number;
  /** Fitted values a + b dp_t over the regression years (for the charts). */
  fitted: number[];
}

/** The dividend-price decomposition of one asset or an aggregate (METHODS 10). */
export interface PresentValueResult {
  kind: 'present-value';
  label: string;
  /** The one asset analysed (absent for an aggregate). */
  asset?: string;
  /** The assets of an aggregate (absent for one asset). */
  assets?: string[];
  /** 'single' asset; aggregate of market values ('shares') or of one current share each ('equal'). */
  weighting: 'single' | 'shares' | 'equal';
  frequency: 'annual';
  /** T years used, first and last year. */
  sample: { first: string; last: string; T: number };
  lags: number;
  lagsRule: string;
  /** Mean of dp over all T years, and rho = 1 / (1 + exp(mean dp)). */
  meanDp: number;
  rho: number;
  regressions: { r: DpRegression; dd: DpRegression; dp: DpRegression };
  /** b_r - b_d + rho phi, and its distance from 1 (the linearisation error). */
  identity: { value: number; gap: number };
  /** b / (1 - rho phi) with delta-method s.e. (rho fixed). */
  longRun: { r: { b: number; se: number }; dd: { b: number; se: number } };
  /** Shares of Var(dp): b_r^lr and -b_d^lr, not rescaled. */
  varianceShares: { r: number; dd: number };
  /** Joint Newey-West covariance of (a_r, b_r, a_d, b_d, a_phi, phi). */
  covariance: { names: string[]; values: number[][] };
  /** The yearly data: years, year-end close dates, P, D, dp (T each); r and dd (T - 1 each, from the second year). */
  series: { years: string[]; closes: string[]; price: number[]; dividend: number[]; dp: number[]; r: number[]; dd: number[] };
  warnings: ResultWarning[];
  notes: string[];
}

/** One asset's drift split (METHODS 10), annualised; null where the asset has no prices to split. */
export interface DriftRow {
  asset: string;
  /** 'prices': from stored prices and dividends; 'returns': stored as returns (no split). */
  source: 'prices' | 'returns';
  /** mean(r) / dt. */
  drift: number;
  /** mean(P_t / P_{t-1} - 1) / dt. */
  priceGrowth: number | null;
  /** mean(r - g) / dt: the dividend flow. */
  dividendYield: number | null;
  /** sd(ln R) / sqrt(dt), sd dividing by T - 1. */
  sigma: number;
  /** mean(ln R) / dt. */
  logDrift: number;
  /** drift - sigma^2 / 2, printed beside logDrift. */
  driftLessHalfVariance: number;
  /** Newey-West s.e. of the annualised means. */
  se: { drift: number; priceGrowth: number | null; dividendYield: number | null; logDrift: number };
}

export interface DriftResult {
  kind: 'drift';
  label: string;
  frequency: Frequency;
  periodsPerYear: number;
  /** The common sample of the assets kept: first and last period label and T. */
  sample: { first: string; last: string; T: number };
  lags: number;
  lagsRule: string;
  assets: DriftRow[];
  /** Assets left out, and why. */
  dropped: { asset: string; reason: string }[];
  warnings: ResultWarning[];
  notes: string[];
}

/**
 * Discounted-value paths of a fit (METHODS 10): for excess returns the discounted gains
 * G_i,t = sum_{s <= t} m_s R^e_i,s (G_i,0 = 0 before the first period), whose mean
 * increment G_i,T / T is the pricing error; for gross returns Lambda_t V_i,t =
 * prod_{s <= t} m_s R_i,s (1 before the first period), whose mean increment ratio is
 * E_T[m R_i] = 1 + pricing error.
 */
export interface DiscountedPaths {
  /** 'gains' (excess returns, flat at 0 when priced) or 'value' (gross returns, flat at 1). */
  form: 'gains' | 'value';
  periods: string[];
  series: Record<string, number[]>;
  /** Assets left out to keep the record small (largest |t| of the pricing error kept), with the rule. */
  omitted?: { count: number; rule: string };
  /** How m_t was obtained for a beta-representation fit. */
  note?: string;
}

/** One axis value of a batch task (shared/batch/grid.ts). */
export interface BatchSettingValue {
  axis: string;
  value: string;
}

/** A fitted task of a batch: a comparison row plus where it sits in the grid. */
export interface BatchRow extends CompareRow {
  /** Task number in the grid's expansion order (0, 1, ...). */
  task: number;
  settings: BatchSettingValue[];
  /** The task's own sample (tasks may differ in window, assets and factors). */
  sample: { start: string; end: string; T: number; N: number; K: number };
  /** SHA-256 of the task's whole outcome (fit and back-test, exact JSON): every number, not only the row's. */
  sha256: string;
}

/**
 * A merged batch: every task of a grid (shared/batch), fitted (and back-tested) one by
 * one, possibly on many machines, brought together as one run. Rows are in task order;
 * rankings are computed from them (shared/batch/rank.ts).
 */
export interface BatchResult {
  kind: 'batch';
  label: string;
  /** The first fitted task's sample header; notes say which keys vary across tasks. */
  sample: SampleHeader;
  tasks: number;
  axes: { axis: string; count: number }[];
  models: BatchRow[];
  /** Tasks whose model could not be fitted, with the reason (deterministic: replay gives the same). */
  failures: { task: number; label: string; error: string; sha256: string }[];
  /** Column key -> label of the best fitted task (the comparison's rule). */
  best: Record<string, string>;
  /** Fingerprint of the data the batch ran on: SHA-256 over its distinct returns panels' fingerprints. */
  data: { sha256: string; panels: number };
  /** The tasks' warnings by code: how many tasks carry each, with the first task's message. */
  warnings: ResultWarning[];
}

export type AnyResult = FitResult | BacktestResult | CompareResult | BatchResult;

/** Results of the present-value analyses (METHODS 10). */
export type ValueResult = PresentValueResult | DriftResult;

/** Any result a run records. */
export type RunResult = AnyResult | ValueResult;

/** Is this a present-value analysis (decomposition or drift split)? */
export function isValueResult(r: { kind: string }): r is ValueResult {
  return r.kind === 'present-value' || r.kind === 'drift';
}

/** The caution every results screen and report carries. */
export const CAUTION = 'Statistical model diagnostics only; not investment advice.';
