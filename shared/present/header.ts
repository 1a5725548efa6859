/**
 * The header every surface prints above a result's tables: what was estimated, on which
 * sample, how. Words a reader understands; no internal key names.
 */
import type { SampleHeader } from '../results.js';
import type { HeaderLine } from './types.js';

/** The model in words; comparators say what they are (beta representations, not a discount factor). */
export function modelDescription(s: Pick<SampleHeader, 'model' | 'method' | 'returns'>): string {
  if (s.method === 'time-series') return "beta representation by time-series regressions: R^e_i,t = a_i + beta_i'f_t + e_i,t, a_i the pricing errors";
  if (s.method === 'two-pass') return "beta representation by two-pass cross-sectional regressions: E[R^e_i] = lambda_0 + beta_i'lambda";
  switch (s.model) {
    case 'linear':
      return "linear discount factor, demeaned: m = 1 - b'(f - mu), mu estimated; E[m R^e] = 0";
    case 'linear-raw':
      return "linear discount factor: m = 1 - b'f; E[m R^e] = 0";
    case 'linear-gross':
      return "linear discount factor on gross returns: m = a - b'f; E[m R] = 1";
    case 'consumption':
      return `consumption, power utility: m = delta (C_t/C_t-1)^(-gamma); ${s.returns === 'gross' ? 'E[m R] = 1' : 'E[m R^e] = 0, delta fixed'}`;
    default:
      return s.model;
  }
}

/** The estimator in words: "GMM, second stage", "time-series regressions (OLS per asset)". */
export function estimatorDescription(s: Pick<SampleHeader, 'method' | 'stage'>): string {
  if (s.method === 'gmm') return `GMM, ${s.stage === 'cue' ? 'continuously updated' : s.stage.startsWith('per model') ? s.stage : `${s.stage} stage`}`;
  if (s.method === 'time-series') return 'time-series regressions (OLS per asset)';
  if (s.method === 'two-pass') return 'two-pass cross-sectional regressions (Fama-MacBeth)';
  return s.method;
}

/** Sample and estimator lines of a fit or back-test, in a fixed order. */
export function sampleLines(s: SampleHeader): HeaderLine[] {
  const lines: HeaderLine[] = [
    { key: 'model', value: modelDescription(s) },
    { key: 'estimator', value: estimatorDescription(s) },
    { key: 'weighting', value: s.weighting },
    { key: 'sample', value: `${s.start} to ${s.end}, ${s.frequency} (${s.periodsPerYear} periods per year), T = ${s.T}` },
    { key: 'test assets', value: `N = ${s.N}, ${s.returns} returns: ${s.assets.join(', ')}` },
    { key: 'factors', value: s.factors.length ? `K = ${s.K}: ${s.factors.join(', ')}` : 'none' },
    { key: 'long-run covariance', value: `Newey-West (Bartlett), ${s.lags} lag${s.lags === 1 ? '' : 's'} (${s.lagsRule}), ${s.centered ? 'centred' : 'uncentred'} moments, divided by T` },
  ];
  if (s.instruments?.length)
    lines.push({
      key: 'instruments',
      value: `${s.instruments.join(', ')}, scaling the ${s.instrumentScale === 'both' ? 'returns and the factors' : s.instrumentScale ?? 'returns'}${s.instrumentLag !== undefined ? `, lagged ${s.instrumentLag} period${s.instrumentLag === 1 ? '' : 's'}` : ''}${s.lostToLag?.length ? ` (${s.lostToLag.length} period${s.lostToLag.length === 1 ? '' : 's'} lost to the lag)` : ''}`,
    });
  return lines;
}

/** Sample lines shared by every model of a comparison (the estimators are in the models table). */
export function comparisonSampleLines(s: SampleHeader, models: number): HeaderLine[] {
  return [
    { key: 'models', value: `${models}, each with its estimator in the models table` },
    { key: 'sample', value: `${s.start} to ${s.end}, ${s.frequency} (${s.periodsPerYear} periods per year), T = ${s.T}` },
    { key: 'test assets', value: `N = ${s.N}, ${s.returns} returns: ${s.assets.join(', ')}` },
    { key: 'series', value: s.factors.length ? s.factors.join(', ') : 'none' },
  ];
}
