/**
 * Test-asset portfolios by a characteristic sort. The rules (also stored, word for word,
 * with every portfolio; see sortRules):
 *
 * - Sort dates: the last period of each rebalancing period (every period when the
 *   rebalancing frequency is the return frequency).
 * - Characteristic at sort date t, asset i:
 *     momentum  prod_{s = t-J+1}^{t-k} R_{i,s} - 1  (look-back J, skip k; 12-1 by default
 *               on monthly data), all J - k returns present;
 *     yield     sum of the dividends paid in periods t-J+1..t, in units of a share at t
 *               (split factors applied), over the price at t; needs a price in period t-J
 *               so that the whole year of dividends is observed;
 *     price     the quoted price per share at t;
 *     size      price x shares outstanding at t (latest shares figure imported).
 *   An asset is eligible when it has a price in period t and a finite characteristic
 *   (and, for value weights, a market value).
 * - Breakpoints: the g/G quantiles (g = 1..G-1) of the characteristic over all eligible
 *   assets at t, linear interpolation between order statistics (Hyndman and Fan, 1996,
 *   definition 7; numpy's and pandas' default). Bucket g holds b_{g-1} < c <= b_g, bucket
 *   1 also the minimum (pandas.qcut's bins).
 * - Weights: equal, or market value at t; bought at t and held to the next sort date,
 *   so weights drift with returns: the bucket return in period s is
 *   sum_i w_i V_i,s-1 r_i,s / sum_i w_i V_i,s-1, V_i the value of one unit bought at t.
 * - Missing returns: an asset whose return is missing in a holding period (delisting,
 *   a gap) is dropped from the bucket for the rest of that holding span; the others'
 *   weights are renormalised (its last value is taken as reinvested in the rest).
 * - A bucket with fewer than minAssets assets at a sort date has no return (NaN) over
 *   that holding span.
 */
import type { ReturnSeries } from '../data.js';
import { DeflatorError } from '../errors.js';
import { periodKey } from '../returns/periods.js';
import type { SortPanel } from './periods.js';
import { bucketName, type SortSpec } from './spec.js';

export interface Formation {
  /** Sort date (period label). */
  date: string;
  eligible: number;
  /** Assets per bucket. */
  counts: number[];
  /** The G - 1 breakpoints. */
  breakpoints: number[];
}

export interface SortResult {
  series: ReturnSeries[];
  rules: string;
  formations: Formation[];
  /** Per bucket, the assets in it at each sort (for audits and tests). */
  members: { date: string; buckets: string[][] }[];
}

/** The g/G quantiles (g = 1..G-1) of sorted values, Hyndman-Fan definition 7. */
export function breakpoints(sortedValues: readonly number[], G: number): number[] {
  const n = sortedValues.length;
  const out: number[] = [];
  for (let g = 1; g < G; g++) {
    const h = (n - 1) * (g / G);
    const lo = Math.floor(h);
    const hi = Math.min(lo + 1, n - 1);
    out.push(sortedValues[lo] + (h - lo) * (sortedValues[hi] - sortedValues[lo]));
  }
  return out;
}

/** Bucket (1-based) of value c: 1 + number of breakpoints strictly below c. */
export function bucketOf(c: number, bps: readonly number[]): number {
  let g = 1;
  for (const b of bps) if (b < c) g++;
  return g;
}

/** Characteristic of asset i at period t (NaN where undefined). */
export function characteristic(panel: SortPanel, spec: SortSpec, i: number, t: number): number {
  const P = panel.price[i][t];
  if (!(P > 0)) return Number.NaN;
  const J = spec.lookback;
  switch (spec.characteristic) {
    case 'momentum': {
      const from = t - J + 1;
      const to = t - spec.skip;
      if (from < 0 || to < from) return Number.NaN;
      let v = 1;
      for (let s = from; s <= to; s++) {
        const g = panel.gross[i][s];
        if (!Number.isFinite(g)) return Number.NaN;
        v *= g;
      }
      return v - 1;
    }
    case 'yield': {
      if (t - J < 0 || !(panel.price[i][t - J] > 0)) return Number.NaN;
      let d = 0;
      for (let s = t - J + 1; s <= t; s++) d += panel.dividendF[i][s];
      return d / panel.factorAtPrice[i][t] / P;
    }
    case 'price':
      return P;
    case 'size': {
      const sh = panel.shares[i][t];
      return sh > 0 ? P * sh : Number.NaN;
    }
  }
}

/** Indices of the sort dates: periods whose successor lies in another rebalancing period. */
function sortDates(panel: SortPanel, spec: SortSpec, first: number, last: number): number[] {
  const out: number[] = [];
  for (let t = first; t < last; t++) {
    if (!panel.periods[t]) continue;
    if (spec.rebalance === spec.frequency) {
      out.push(t);
      continue;
    }
    let next = t + 1;
    while (next <= last && !panel.periods[next]) next++;
    if (next > last) break;
    if (periodKey(panel.periods[t], spec.rebalance) !== periodKey(panel.periods[next], spec.rebalance)) out.push(t);
  }
  return out;
}

export function sortRules(spec: SortSpec): string {
  const c = spec.characteristic;
  const what =
    c === 'momentum'
      ? `past return over ${spec.lookback} periods skipping the latest ${spec.skip} (product of gross returns t-${spec.lookback - 1}..t-${spec.skip}, all present)`
      : c === 'yield'
        ? `trailing dividend yield: dividends of the last ${spec.lookback} periods in units of a current share over the price at the sort date (needs a price ${spec.lookback} periods earlier)`
        : c === 'price'
          ? 'quoted price per share at the sort date'
          : 'market value (price x latest shares outstanding) at the sort date';
  return [
    `Characteristic sort "${spec.name}": ${spec.groups} groups on ${what}.`,
    spec.rebalance === spec.frequency ? `Returns ${spec.frequency}; sorted at the end of every period.` : `Returns ${spec.frequency}; sorted at the last ${spec.frequency} period of each ${spec.rebalance} period.`,
    'Eligible: a price at the sort date and a finite characteristic' + (spec.weight === 'value' ? ' and market value (shares outstanding imported).' : '.'),
    `Breakpoints: the g/${spec.groups} quantiles of the characteristic over all eligible assets at the sort date (linear interpolation, Hyndman-Fan definition 7); bucket g holds b(g-1) < c <= b(g), the first bucket also the minimum.`,
    `Weights: ${spec.weight === 'value' ? 'market value at the sort date' : 'equal'}, bought at the sort date and held (weights drift with returns) until the next sort.`,
    'An asset whose return is missing in a holding period (delisting or gap) is dropped for the rest of that holding span and the other weights renormalised.',
    `A bucket with fewer than ${spec.minAssets} asset(s) at a sort date has no return (missing) for that holding span.`,
  ].join(' ');
}

export function buildSortedPortfolios(panel: SortPanel, spec: SortSpec): SortResult {
  const T = panel.periods.length;
  const N = panel.assets.length;
  const G = spec.groups;
  if ((spec.characteristic === 'size' || spec.weight === 'value') && !panel.shares.some((s) => s.some((v) => v > 0))) {
    throw new DeflatorError(
      'DATA_MISSING',
      `a ${spec.characteristic === 'size' ? 'size sort' : 'value-weighted sort'} needs shares outstanding, and none of the ${N} histories has them`,
      'import prices with a shares column, or use equal weights and another characteristic',
    );
  }
  let first = 0;
  let last = T - 1;
  while (first < T && (!panel.periods[first] || (spec.start && panel.periods[first] < spec.start))) first++;
  while (last >= 0 && (!panel.periods[last] || (spec.end && panel.periods[last] > spec.end))) last--;
  const dates = sortDates(panel, spec, first, last);
  const formations: Formation[] = [];
  const members: SortResult['members'] = [];
  const net = Array.from({ length: G }, () => new Float64Array(T).fill(Number.NaN));
  let firstHeld = -1;
  for (let f = 0; f < dates.length; f++) {
    const t = dates[f];
    const end = f + 1 < dates.length ? dates[f + 1] : last;
    if (end <= t) continue;
    const elig: { i: number; c: number; w: number }[] = [];
    for (let i = 0; i < N; i++) {
      const c = characteristic(panel, spec, i, t);
      if (!Number.isFinite(c)) continue;
      let w = 1;
      if (spec.weight === 'value') {
        w = panel.price[i][t] * panel.shares[i][t];
        if (!(w > 0) || !Number.isFinite(w)) continue;
      }
      elig.push({ i, c, w });
    }
    if (elig.length === 0) continue;
    const sorted = elig.map((e) => e.c).sort((a, b) => a - b);
    const bps = breakpoints(sorted, G);
    const buckets: { i: number; w: number }[][] = Array.from({ length: G }, () => []);
    for (const e of elig) buckets[bucketOf(e.c, bps) - 1].push({ i: e.i, w: e.w });
    formations.push({ date: panel.periods[t], eligible: elig.length, counts: buckets.map((b) => b.length), breakpoints: bps });
    members.push({ date: panel.periods[t], buckets: buckets.map((b) => b.map((m) => panel.assets[m.i])) });
    if (firstHeld < 0) firstHeld = t + 1;
    for (let g = 0; g < G; g++) {
      const b = buckets[g];
      if (b.length < spec.minAssets) continue;
      const value = b.map((m) => m.w);
      const alive = b.map(() => true);
      for (let s = t + 1; s <= end; s++) {
        let num = 0;
        let den = 0;
        for (let k = 0; k < b.length; k++) {
          if (!alive[k]) continue;
          const r = panel.gross[b[k].i][s];
          if (!Number.isFinite(r)) {
            alive[k] = false;
            continue;
          }
          num += value[k] * (r - 1);
          den += value[k];
          value[k] *= r;
        }
        if (den > 0) net[g][s] = num / den;
      }
    }
  }
  if (formations.length === 0 || firstHeld < 0) {
    throw new DeflatorError('SAMPLE_TOO_SHORT', `no sort date had an eligible asset for the ${spec.characteristic} sort`, spec.characteristic === 'size' || spec.weight === 'value' ? 'import shares outstanding with the prices, or sort on another characteristic' : 'use a shorter look-back or a longer sample');
  }
  const rules = sortRules(spec);
  const idx: number[] = [];
  for (let s = firstHeld; s <= last; s++) if (panel.periods[s]) idx.push(s);
  const series: ReturnSeries[] = net.map((v, g) => ({
    name: bucketName(spec.name, g + 1),
    frequency: spec.frequency,
    periods: idx.map((s) => panel.periods[s]),
    net: Float64Array.from(idx, (s) => v[s]),
    rules: `${rules} This is bucket ${g + 1} of ${G} (${g === 0 ? 'lowest' : g === G - 1 ? 'highest' : 'middle'} characteristic).`,
  }));
  return { series, rules, formations, members };
}
