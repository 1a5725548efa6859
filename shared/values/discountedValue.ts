/**
 * Discounted-value paths under a fitted discount factor (METHODS 10).
 *
 * Excess returns: the discounted gains process G_i,t = sum_{s <= t} m_s R^e_i,s
 * (G_i,0 = 0 before the first period). Its mean increment G_i,T / T is the sample
 * moment E_T[m R^e_i], the pricing error of a discount-factor fit; an asset the model
 * prices exactly has a path with zero mean increment (it wanders around a flat line).
 * Gross returns: the discounted value Lambda_t V_i,t with Lambda_t = prod_{s <= t} m_s and
 * V the reinvested value, i.e. prod_{s <= t} m_s R_i,s (1 before the first period); its
 * mean increment ratio E_T[m R_i] is 1 + the pricing error (1 if priced).
 *
 * Beta-representation fits have no estimated m; they get the discount factor linear in the
 * factors that carries their premia, m_t = 1 - lambda' Sigma_f^{-1} (f_t - fbar) (Sigma_f the
 * factor covariance dividing by T, so the sample mean of m is 1). With lambda = fbar
 * (time-series regressions) E_T[m R^e_i] = mean(R^e_i) - beta_i' fbar, the regression
 * intercept exactly; with the two-pass lambda it is mean(R^e_i) - beta_i' lambda, which is
 * the pricing error plus the zero-beta rate gamma_0 when the cross-section has an
 * intercept, so those paths discount R^e_i - gamma_0.
 *
 * Reference: Cochrane, J. H. (2005), Asset Pricing, rev. ed., Princeton University Press,
 * ch. 1 and 6 (discounted gains and the linear discount factor m = 1 - b'(f - E f)); Duffie,
 * D. (2001), Dynamic Asset Pricing Theory, 3rd ed., Princeton University Press (deflated
 * gains are martingales under no arbitrage). Chapters cited from memory.
 */
import { DeflatorError } from '../errors.js';
import { cholesky, cholSolveVec } from '../linalg/cholesky.js';
import type { DiscountedPaths } from '../results.js';
import { factorCovariance } from '../estimation/riskPremia.js';

/** At most this many numbers (assets x periods) are kept in a fit's record. */
export const MAX_DISCOUNTED_VALUES = 500_000;

export interface DiscountedInput {
  form: 'gains' | 'value';
  periods: readonly string[];
  assets: readonly string[];
  /** Excess returns (gains) or gross returns (value), one series of length T per asset. */
  returns: readonly Float64Array[];
  /** The fitted discount factor m_t, length T. */
  sdf: ArrayLike<number>;
  /** Subtracted from every excess return before discounting (the two-pass zero-beta rate). */
  offset?: number;
  /** |t| of each asset's pricing error: decides which assets stay when the record would be too large. */
  priority?: ArrayLike<number>;
  note?: string;
}

/** The discounted paths of every asset (or of the most mispriced, when N x T is above MAX_DISCOUNTED_VALUES). */
export function discountedPaths(inp: DiscountedInput): DiscountedPaths {
  const T = inp.periods.length;
  const N = inp.assets.length;
  if (inp.sdf.length !== T) throw new RangeError(`discountedPaths: ${inp.sdf.length} discount factors for ${T} periods`);
  let keep = Array.from({ length: N }, (_, i) => i);
  let omitted: DiscountedPaths['omitted'];
  const room = Math.max(1, Math.floor(MAX_DISCOUNTED_VALUES / Math.max(1, T)));
  if (N > room) {
    const pr = inp.priority;
    keep = keep
      .map((i) => ({ i, p: pr ? Math.abs(pr[i]) : 0 }))
      .sort((a, b) => b.p - a.p || a.i - b.i)
      .slice(0, room)
      .map((x) => x.i)
      .sort((a, b) => a - b);
    omitted = { count: N - room, rule: `kept the ${room} assets with the largest |t| of the pricing error (at most ${MAX_DISCOUNTED_VALUES} values in a record)` };
  }
  const off = inp.offset ?? 0;
  const series: Record<string, number[]> = {};
  for (const i of keep) {
    const r = inp.returns[i];
    if (r.length !== T) throw new RangeError(`discountedPaths: asset ${inp.assets[i]} has ${r.length} returns for ${T} periods`);
    const path = new Array<number>(T);
    if (inp.form === 'gains') {
      let g = 0;
      for (let t = 0; t < T; t++) {
        g += inp.sdf[t] * (r[t] - off);
        path[t] = g;
      }
    } else {
      let v = 1;
      for (let t = 0; t < T; t++) {
        v *= inp.sdf[t] * r[t];
        path[t] = v;
      }
    }
    series[inp.assets[i]] = path;
  }
  const out: DiscountedPaths = { form: inp.form, periods: [...inp.periods], series };
  if (omitted) out.omitted = omitted;
  if (inp.note) out.note = inp.note;
  return out;
}

/**
 * m_t = 1 - lambda' Sigma_f^{-1} (f_t - fbar), Sigma_f dividing by T: the linear discount
 * factor that prices the factors' premia lambda (see the file comment).
 */
export function linearSdfForPremia(factors: readonly Float64Array[], lambda: ArrayLike<number>, names: readonly string[]): Float64Array {
  const K = factors.length;
  if (lambda.length !== K) throw new RangeError(`linearSdfForPremia: ${lambda.length} premia for ${K} factors`);
  const T = K ? factors[0].length : 0;
  const fbar = factors.map((f) => f.reduce((a, b) => a + b, 0) / T);
  const L = cholesky(factorCovariance(factors), { name: 'the factor covariance Sigma_f (discounted-value paths)', labels: [...names] });
  const b = cholSolveVec(L, lambda);
  const m = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    let s = 0;
    for (let k = 0; k < K; k++) s += b[k] * (factors[k][t] - fbar[k]);
    m[t] = 1 - s;
  }
  for (let t = 0; t < T; t++) if (!Number.isFinite(m[t])) throw new DeflatorError('INPUT_INVALID', 'the discount factor of the discounted-value paths is not finite', 'check the factor series for extreme values');
  return m;
}
