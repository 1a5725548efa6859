/**
 * The drift of a return split into price growth and the dividend-yield flow, with the
 * diffusion and the drift of the log value (METHODS 10).
 *
 * Per period t of the sample (dt = 1 / periods per year), from the returns engine:
 *   r_t = R_t - 1                  the net return (dividends reinvested within a period that
 *                                  aggregates several stored rows, as in METHODS 1),
 *   g_t = P*_t / P*_{t-1} - 1      price growth (split-adjusted closes, no dividends),
 *   y_t = r_t - g_t                the dividend flow: D_t / P_{t-1} when the period is one
 *                                  stored row, and the dividends with their reinvestment
 *                                  inside the period when it aggregates several.
 * Annualised: drift mu_R = mean(r) / dt, price growth mean(g) / dt, dividend yield mean(y) / dt
 * (so mu_R is their sum, up to the rounding of two means); sigma = sd(ln R) / sqrt(dt) with
 * sd dividing by T - 1; the drift of the log value mean(ln R) / dt, printed beside
 * mu_R - sigma^2 / 2, which it approaches for a diffusion (Ito's lemma). Standard errors of
 * the means: Newey-West (shared/estimation/longRunCovariance.ts, centered, divide by T),
 * s.e.(mean x) = sqrt(S_x / T), annualised by 1 / dt.
 *
 * References: Cochrane, J. H. (2005), Asset Pricing, rev. ed., Princeton University Press,
 * ch. 1 (the continuous-time return dP/P + (D/P) dt; chapter cited from memory); Campbell,
 * J. Y., A. W. Lo and A. C. MacKinlay (1997), The Econometrics of Financial Markets, ch. 1;
 * Newey, W. and K. West (1987), Econometrica 55, 703-708.
 */
import { DeflatorError } from '../errors.js';
import type { DriftRow } from '../results.js';
import { longRunCovariance } from '../estimation/longRunCovariance.js';

export interface DriftInput {
  asset: string;
  /** Gross returns R_t over the sample (length T). */
  gross: Float64Array;
  /** Price ratios P*_t / P*_{t-1} (length T); absent for an asset stored as returns. */
  priceRatio?: Float64Array;
}

function mean(x: Float64Array): number {
  let s = 0;
  for (let t = 0; t < x.length; t++) s += x[t];
  return s / x.length;
}

/** Newey-West s.e. of the sample mean of each series (centered, Bartlett, divide by T). */
function meanStandardErrors(series: Float64Array[], lags: number): number[] {
  const S = longRunCovariance(series, lags, true);
  const T = series[0].length;
  return series.map((_, k) => Math.sqrt(Math.max(0, S.data[k * series.length + k]) / T));
}

/** One asset's split (T periods, T > lags + 1 and T >= 2). */
export function driftSplit(input: DriftInput, periodsPerYear: number, lags: number): DriftRow {
  const { asset, gross } = input;
  const T = gross.length;
  if (T < 2) throw new DeflatorError('SAMPLE_TOO_SHORT', `asset "${asset}": ${T} period(s); the drift split needs at least 2`, 'use a longer window or a higher frequency');
  const r = new Float64Array(T);
  const l = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    if (!(gross[t] > 0) || !Number.isFinite(gross[t])) throw new DeflatorError('INPUT_INVALID', `asset "${asset}": gross return ${gross[t]} in period ${t + 1} is not a positive number`, 'check the stored prices and dividends of that asset');
    r[t] = gross[t] - 1;
    l[t] = Math.log(gross[t]);
  }
  const ppy = periodsPerYear;
  const meanL = mean(l);
  let ss = 0;
  for (let t = 0; t < T; t++) ss += (l[t] - meanL) * (l[t] - meanL);
  const sigma = Math.sqrt(ss / (T - 1)) * Math.sqrt(ppy);
  const drift = mean(r) * ppy;
  const logDrift = meanL * ppy;
  const base = { asset, drift, sigma, logDrift, driftLessHalfVariance: drift - (sigma * sigma) / 2 };
  if (!input.priceRatio) {
    const [seR, seL] = meanStandardErrors([r, l], lags);
    return { ...base, source: 'returns', priceGrowth: null, dividendYield: null, se: { drift: seR * ppy, priceGrowth: null, dividendYield: null, logDrift: seL * ppy } };
  }
  const ratio = input.priceRatio;
  if (ratio.length !== T) throw new RangeError(`driftSplit: ${ratio.length} price ratios for ${T} returns`);
  const g = new Float64Array(T);
  const y = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    g[t] = ratio[t] - 1;
    y[t] = r[t] - g[t];
  }
  const [seR, seG, seY, seL] = meanStandardErrors([r, g, y, l], lags);
  return {
    ...base,
    source: 'prices',
    priceGrowth: mean(g) * ppy,
    dividendYield: mean(y) * ppy,
    se: { drift: seR * ppy, priceGrowth: seG * ppy, dividendYield: seY * ppy, logDrift: seL * ppy },
  };
}
