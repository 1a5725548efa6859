/**
 * Long-run covariance of a vector series by Newey and West (1987), Bartlett weights:
 *
 *   S = G_0 + sum_{j=1..L} (1 - j/(L+1)) (G_j + G_j'),   G_j = (1/T) sum_{t>j} u_t u_{t-j}',
 *
 * with u_t demeaned first (centered, the default) or used as given. Divide by T, no
 * degrees-of-freedom correction, no pre-whitening (METHODS 3). Bartlett lag L is
 * bandwidth L + 1 in kernel notation (Andrews 1991), so R's
 * sandwich::NeweyWest(lag = L, prewhite = FALSE, adjust = FALSE) and
 * gmm(kernel = "Bartlett", bw = L + 1, prewhite = FALSE) compute the same matrix.
 *
 * References: Newey, W. and West, K. (1987), "A simple, positive semi-definite,
 * heteroskedasticity and autocorrelation consistent covariance matrix", Econometrica
 * 55, 703-708; Newey and West (1994), "Automatic lag selection in covariance matrix
 * estimation", Review of Economic Studies 61, 631-653 (the automatic lag rule).
 *
 * Computation: S_ab = (1/T) sum_t u_b,t v_a,t with v_a,t = u_a,t + sum_j w_j (u_a,t+j + u_a,t-j)
 * (terms outside 0..T-1 dropped), which is the formula above regrouped: O(q T L + q^2 T / 2).
 */
import { DeflatorError } from '../errors.js';
import { wasmGramOf } from '../linalg/gramKernel.js';
import { seriesProductsUpper, type Mat } from '../linalg/matrix.js';

/** The automatic lag rule L = floor(4 (T/100)^(2/9)) (Newey and West 1994). */
export function autoLags(T: number): number {
  return Math.floor(4 * Math.pow(T / 100, 2 / 9));
}

/**
 * The lag count a spec's `lags` asks for at T observations, and the words the reports print
 * for it: "auto" is the rule above.
 */
export function lagsChoice(lags: number | 'auto', T: number): { lags: number; rule: string } {
  const L = lags === 'auto' ? autoLags(T) : lags;
  const rule = lags === 'auto' ? `automatic, floor(4 (T/100)^(2/9)) = ${L}` : L === 0 ? 'none (0 lags: heteroskedasticity-robust only)' : `user, ${L}`;
  return { lags: L, rule };
}

/** Bartlett weights w_j = 1 - j/(L+1), j = 1..L (index 0 holds w_0 = 1). */
export function bartlettWeights(lags: number): Float64Array {
  const w = new Float64Array(lags + 1);
  for (let j = 0; j <= lags; j++) w[j] = 1 - j / (lags + 1);
  return w;
}

/**
 * S for the q series `u` (each of length T; u[a][t] is moment a at period t).
 * Throws SAMPLE_TOO_SHORT when T <= lags + 1.
 */
export function longRunCovariance(u: readonly Float64Array[], lags: number, centered = true): Mat {
  const q = u.length;
  const T = q > 0 ? u[0].length : 0;
  if (!Number.isInteger(lags) || lags < 0) throw new DeflatorError('SPEC_INVALID', `lags must be a whole number >= 0, got ${lags}`, 'set estimator.lags to 0, a positive whole number or "auto"');
  if (T <= lags + 1)
    throw new DeflatorError('SAMPLE_TOO_SHORT', `${T} periods are too few for ${lags} Newey-West lags (need more than ${lags + 1})`, 'use fewer lags (estimator.lags) or a longer sample');
  const w = bartlettWeights(lags);
  for (let a = 0; a < q; a++) if (u[a].length !== T) throw new RangeError(`longRunCovariance: series ${a} has ${u[a].length} periods, expected ${T}`);
  // S_ab = S_ba = (1/T) sum_t v_a,t u_b,t for b >= a, v_a = u_a + sum_j w_j (lead_j + lag_j):
  // the kernel's products of x = v and y = u. Its WebAssembly route has both written straight
  // into its memory (no q x T copies on the JavaScript heap, each page of which is new
  // memory to the process); elsewhere, the same series as arrays.
  // The centring and the filter run there too, as WebAssembly (the same operations in the
  // same order as demeanInto and bartlettInto below, so the same bits): compiled code from
  // the first period, where these loops in JavaScript are interpreted (each value a new heap
  // number) until V8 has compiled them, most of a short sample's time.
  const S =
    wasmGramOf(
      q,
      T,
      lags === 0,
      (a, v, c, rows) => {
        const ua = c ?? v;
        ua.set(u[a]);
        if (centered) rows.demean(ua);
        if (c) {
          if (a === 0) rows.scratch.set(w);
          rows.bartlett(v, c, rows.scratch, lags);
        }
      },
      lags + 1,
    ) ?? arrayProducts(u, w, lags, centered);
  const invT = 1 / T;
  for (let k = 0; k < S.length; k++) S[k] *= invT;
  return { rows: q, cols: q, data: S };
}

/**
 * v_t = u_t + sum_{j=1..L} w_j (u_{t-j} + u_{t+j}), terms outside 0..T-1 dropped, each
 * period's sum taken in one pass: for j = 1, 2, ..., L the lag term, then the lead term,
 * each added (and rounded) in that order. That is the order in which the pairwise form
 * `for j: for t: v[t] += w_j u[t+j]; v[t+j] += w_j u[t]` adds them to period s (its lag term
 * at t = s - j, before its lead term at t = s), so the sums are the same bit for bit; one
 * write per period instead of 2L read-modify-writes of the whole series.
 */
function bartlettInto(v: Float64Array, x: Float64Array, w: Float64Array, lags: number): void {
  const T = x.length;
  const lo = Math.min(lags, T);
  const hi = Math.max(lo, T - lags);
  for (let s = 0; s < lo; s++) v[s] = bartlettEdge(x, w, lags, s);
  for (let s = lo; s < hi; s++) {
    let acc = x[s];
    for (let j = 1; j <= lags; j++) {
      const wj = w[j];
      acc += wj * x[s - j];
      acc += wj * x[s + j];
    }
    v[s] = acc;
  }
  for (let s = hi; s < T; s++) v[s] = bartlettEdge(x, w, lags, s);
}

/** The products of the filtered and the (centred) series as arrays, for the JavaScript route. */
function arrayProducts(u: readonly Float64Array[], w: Float64Array, lags: number, centered: boolean): Float64Array {
  const q = u.length;
  const series: Float64Array[] = new Array(q);
  for (let a = 0; a < q; a++) {
    if (centered) {
      series[a] = new Float64Array(u[a].length);
      demeanInto(series[a], u[a]);
    } else series[a] = u[a];
  }
  const filtered: Float64Array[] = new Array(q);
  for (let a = 0; a < q; a++) {
    if (lags === 0) filtered[a] = series[a];
    else {
      filtered[a] = new Float64Array(series[a].length);
      bartlettInto(filtered[a], series[a], w, lags);
    }
  }
  return seriesProductsUpper(filtered, series);
}

/**
 * v_s at the ends, where some terms fall outside the sample: the same terms in the same
 * order as the middle periods' sum. A function of its own (not a closure made per call),
 * so the optimised code of the filter is not thrown away at each new series.
 */
function bartlettEdge(x: Float64Array, w: Float64Array, lags: number, s: number): number {
  const T = x.length;
  let acc = x[s];
  for (let j = 1; j <= lags; j++) {
    if (s - j >= 0) acc += w[j] * x[s - j];
    if (s + j < T) acc += w[j] * x[s + j];
  }
  return acc;
}

/**
 * c = x minus its mean (the sum in order of t, divided by T). Each loop is a function of its
 * own with nothing after it to learn: V8 compiles a long loop while it runs (on-stack
 * replacement) and keeps that code for later calls, and code after the loop that had not
 * yet run when it was compiled would send every later call back to the interpreter.
 */
function demeanInto(c: Float64Array, x: Float64Array): void {
  subtractInto(c, x, sumOf(x) / x.length);
}

function sumOf(x: Float64Array): number {
  let s = 0;
  for (let t = 0; t < x.length; t++) s += x[t];
  return s;
}

function subtractInto(c: Float64Array, x: Float64Array, m: number): void {
  for (let t = 0; t < x.length; t++) c[t] = x[t] - m;
}
