/**
 * Out-of-sample pricing errors of one window's estimate over its held-out periods
 * (METHODS 6). The window's parameters are held fixed; for each held-out period the
 * model's discount factor m_t is evaluated and the error of asset i is the mean over
 * the held-out periods of its pricing moment:
 *
 *   linear        m_t = 1 - b'(f_t - mu_window)      alpha_i = mean R^e_it m_t
 *   linear-raw    m_t = 1 - b'f_t                     alpha_i = mean R^e_it m_t
 *   linear-gross  m_t = a - b'f_t                     alpha_i = mean R_it m_t - 1
 *   consumption   m_t = delta (C_t/C_{t-1})^(-gamma)  alpha_i = mean R^e_it m_t (excess)
 *                                                     or mean R_it m_t - 1 (gross)
 * and for the beta-representation estimators, which give no m_t:
 *   time-series   alpha_i = mean (R^e_it - beta_i'f_t)   (the intercept, out of sample)
 *   two-pass      alpha_i = mean R^e_it - lambda_0 - beta_i'lambda
 *                 (lambda_0 = 0 when the cross-sectional regression has no constant).
 * The benchmark error (the zero-alpha benchmark of the out-of-sample R^2) is the same
 * moment with m_t = 1: mean R^e_it for excess returns, mean R_it - 1 for gross returns.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { FitSpec } from '../spec.js';
import { meanPrice, payoffPrices } from '../estimation/instruments.js';

export interface ParamLike {
  name: string;
  estimate: number;
}

export interface HeldOutErrors {
  alpha: Float64Array;
  benchmark: Float64Array;
  /** Mean held-out return as estimated (excess or gross). */
  meanReturn: Float64Array;
}

function lookup(params: readonly ParamLike[]): (name: string, fallback?: number) => number {
  const map = new Map(params.map((p) => [p.name, p.estimate]));
  return (name, fallback) => {
    const v = map.get(name);
    if (v !== undefined) return v;
    if (fallback !== undefined) return fallback;
    throw new DeflatorError('NOT_FOUND', `the window's estimate has no parameter "${name}" needed for the out-of-sample pricing errors`, 'the estimator and the back-test disagree on parameter names; report this with the spec');
  };
}

/** Pricing errors of the held-out periods [from, to) at the window's parameters. */
export function heldOutErrors(spec: FitSpec, panel: ReturnsPanel, params: readonly ParamLike[], from: number, to: number): HeldOutErrors {
  const N = panel.assets.length;
  const h = to - from;
  const p = lookup(params);
  const gross = panel.returnKind === 'gross';
  const alpha = new Float64Array(N);
  const benchmark = new Float64Array(N);
  const meanReturn = new Float64Array(N);
  // Gross payoffs cost 1, or E[z] over the held-out periods for a return scaled by z (METHODS 9).
  const prices = payoffPrices(panel);
  const price = new Float64Array(N).fill(gross ? 1 : 0);
  if (prices) prices.forEach((z, i) => (price[i] = meanPrice(z, from, to)));
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let t = from; t < to; t++) s += panel.returns[i][t];
    meanReturn[i] = s / h;
    benchmark[i] = gross ? meanReturn[i] - price[i] : meanReturn[i];
  }
  const names = panel.factors.map((f) => f.name);
  const method = spec.estimator.method;
  if (method === 'time-series' || method === 'two-pass') {
    const lambda0 = method === 'two-pass' && spec.estimator.intercept ? p('lambda.const') : 0;
    for (let i = 0; i < N; i++) {
      const beta = names.map((f) => p(`beta.${panel.assets[i]}.${f}`));
      let s = 0;
      for (let t = from; t < to; t++) {
        let fit = 0;
        if (method === 'time-series') for (let k = 0; k < beta.length; k++) fit += beta[k] * panel.factors[k].values[t];
        s += panel.returns[i][t] - fit;
      }
      let a = s / h;
      if (method === 'two-pass') {
        a -= lambda0;
        for (let k = 0; k < beta.length; k++) a -= beta[k] * p(`lambda.${names[k]}`);
      }
      alpha[i] = a;
    }
    return { alpha, benchmark, meanReturn };
  }
  const m = new Float64Array(h);
  const kind = spec.model.kind;
  if (kind === 'consumption') {
    const g = panel.consumptionGrowth;
    if (!g) throw new DeflatorError('DATA_MISSING', 'the consumption model needs consumption growth in the panel', 'name the consumption series in model.consumption');
    const delta = p('delta', spec.model.delta ?? 1);
    const gamma = p('gamma');
    for (let t = from; t < to; t++) m[t - from] = delta * Math.pow(g[t], -gamma);
  } else {
    const b = names.map((f) => p(`b.${f}`));
    const mu = kind === 'linear' ? names.map((f) => p(`mu.${f}`)) : names.map(() => 0);
    const a = kind === 'linear-gross' ? p('a') : 1;
    for (let t = from; t < to; t++) {
      let s = a;
      for (let k = 0; k < b.length; k++) s -= b[k] * (panel.factors[k].values[t] - mu[k]);
      m[t - from] = s;
    }
  }
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let t = from; t < to; t++) s += panel.returns[i][t] * m[t - from];
    alpha[i] = s / h - (gross ? price[i] : 0);
  }
  return { alpha, benchmark, meanReturn };
}
