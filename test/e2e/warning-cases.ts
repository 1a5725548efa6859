/**
 * Data built to raise each warning code (shared/warnings.ts) through a real run in the
 * app: seeded, invented series written as CSV files, the spec that runs on them, and why
 * the construction raises the code (the same constructions as test/shared/warnings.test.ts,
 * written out as files and imported through the bridge). Every asset and series name
 * starts with "wn-" so that the cases do not meet other specs' imports in the shared
 * server database. Pure TypeScript (no Playwright), so a script can write the same files.
 */

import { normal, rng } from '../shared/seeded-draws.js';

/** Month-end dates from January 2001 (the period keys of a monthly panel). */
export function monthEnds(T: number, from = 0): string[] {
  return Array.from({ length: T }, (_, k) => {
    const m = from + k;
    const y = 2001 + Math.floor(m / 12);
    const mo = ((m % 12) + 12) % 12;
    const last = new Date(Date.UTC(y, mo + 1, 0)).getUTCDate();
    return `${y}-${String(mo + 1).padStart(2, '0')}-${String(last).padStart(2, '0')}`;
  });
}

/** A wide CSV: date column and one column per named series (full double precision). */
export function wideCsv(dates: string[], cols: { name: string; values: ArrayLike<number> }[]): string {
  const lines = [['date', ...cols.map((c) => c.name)].join(',')];
  dates.forEach((d, t) => lines.push([d, ...cols.map((c) => String(c.values[t]))].join(',')));
  return lines.join('\n') + '\n';
}

/** The seeded panel of test/shared/warnings.test.ts: K factors, N assets loading on the first. */
function panel(T: number, N: number, K: number, seed: number): { factors: Float64Array[]; returns: Float64Array[] } {
  const r = rng(seed);
  const factors = Array.from({ length: K }, () => Float64Array.from({ length: T }, () => 0.005 + 0.04 * normal(r)));
  const returns = Array.from({ length: N }, (_, i) => Float64Array.from({ length: T }, (_, t) => 0.005 + (0.5 + 0.05 * i) * factors[0][t] + 0.05 * normal(r)));
  return { factors, returns };
}

export interface CaseFile {
  /** The file's name as the import log shows it. */
  name: string;
  kind: 'returns' | 'series' | 'prices';
  options: Record<string, unknown>;
  text: string;
}

export interface WarningCase {
  code: string;
  /** Why the construction raises the code. */
  why: string;
  files: CaseFile[];
  call: 'fit' | 'backtest' | 'compare';
  spec: Record<string, unknown>;
  /** Presentation tables the warning is listed under on the run's screen. */
  tables: string[];
}

const excessReturns = (name: string, dates: string[], cols: { name: string; values: ArrayLike<number> }[]): CaseFile => ({ name, kind: 'returns', options: { excess: true }, text: wideCsv(dates, cols) });
const series = (name: string, kind: string, dates: string[], cols: { name: string; values: ArrayLike<number> }[]): CaseFile => ({ name, kind: 'series', options: { seriesKind: kind }, text: wideCsv(dates, cols) });
const named = (prefix: string, xs: ArrayLike<number>[]) => Array.from(xs, (values, i) => ({ name: `${prefix}${i + 1}`, values }));
const monthly = { frequency: 'monthly', returns: 'excess' } as const;

function nearSingular(): WarningCase {
  const T = 240;
  const p = panel(T, 8, 3, 2);
  p.returns[7] = Float64Array.from(p.returns[6], (x, t) => x + 2e-6 * Math.sin(t * 1.7));
  const dates = monthEnds(T);
  const assets = named('wn-twin-', p.returns);
  const factors = named('wn-twin-f', p.factors);
  return {
    code: 'S_NEAR_SINGULAR',
    why: 'test asset 8 is asset 7 plus 2e-6 noise: its moment is the others\' up to about 1e-9 of its variance (warning below 1e-8)',
    files: [excessReturns('wn-twin-assets.csv', dates, assets), series('wn-twin-factors.csv', 'factor', dates, factors)],
    call: 'fit',
    spec: { ...monthly, label: 'wn near-twin assets', assets: assets.map((a) => a.name), model: { kind: 'linear', factors: factors.map((f) => f.name) }, estimator: { stage: 'second' } },
    tables: ['parameters', 'tests', 'fit'],
  };
}

function belowBound(): WarningCase {
  const T = 240;
  const p = panel(T, 8, 1, 5);
  const rr = rng(9);
  const returns = p.returns.map((_, i) => Float64Array.from(p.factors[0], (f) => 0.01 * (i % 2 ? 1 : -1) + f + 0.01 * normal(rr)));
  const dates = monthEnds(T);
  const assets = named('wn-alt-', returns);
  return {
    code: 'BELOW_VOLATILITY_BOUND',
    why: 'alphas of +1 % and -1 % a period alternate across the assets: a long-short mix of them has a Sharpe ratio the one-factor discount factor cannot reach',
    files: [excessReturns('wn-alt-assets.csv', dates, assets), series('wn-alt-factor.csv', 'factor', dates, [{ name: 'wn-alt-f', values: p.factors[0] }])],
    call: 'fit',
    spec: { ...monthly, label: 'wn alternating alphas', assets: assets.map((a) => a.name), model: { kind: 'linear', factors: ['wn-alt-f'] } },
    tables: ['discount-factor'],
  };
}

/**
 * Consumption growth cycling e^-0.02, 1, e^0.02 (stored as levels, one month before the
 * first return so that growth covers every return month), so that with X = e^(0.02 gamma)
 * the moment of an excess return cycling (a, -b, c) is (a X - b + c / X) / 3: its zeros are
 * the roots of a X^2 - b X + c. The returns are scaled by 0.005 (the zeros stay put) to be
 * returns above -100 %.
 */
const CYCLE_T = 120;
function consumptionFile(name: string): CaseFile {
  const g = [Math.exp(-0.02), 1, Math.exp(0.02)];
  const level = new Float64Array(CYCLE_T + 1);
  level[0] = 100;
  for (let t = 1; t <= CYCLE_T; t++) level[t] = level[t - 1] * g[(t - 1) % 3];
  return series(`${name}.csv`, 'consumption', monthEnds(CYCLE_T + 1, 11), [{ name, values: level }]);
}
const cycle = (v: number[]) => Float64Array.from({ length: CYCLE_T }, (_, t) => 0.005 * v[t % 3]);

function startAtEdge(): WarningCase {
  const dates = monthEnds(CYCLE_T, 12);
  const assets = [
    { name: 'wn-edge-1', values: cycle([1, -Math.exp(5), 0]) },
    { name: 'wn-edge-2', values: cycle([1, -(Math.exp(5) + Math.exp(-5)), 1]) },
  ];
  return {
    code: 'START_AT_EDGE',
    why: 'both assets\' moments vanish at X = e^5, gamma = 250, beyond the end of the start scan at 200, where the scan\'s best point lies',
    files: [consumptionFile('wn-cons-edge'), excessReturns('wn-edge-assets.csv', dates, assets)],
    call: 'fit',
    spec: { ...monthly, label: 'wn gamma beyond the scan', assets: assets.map((a) => a.name), model: { kind: 'consumption', consumption: 'wn-cons-edge', delta: 1 }, estimator: { stage: 'first', lags: 0 } },
    tables: ['parameters', 'discount-factor'],
  };
}

function severalMinima(): WarningCase {
  const dates = monthEnds(CYCLE_T, 12);
  const x1 = Math.exp(0.2);
  const x2 = Math.exp(2);
  // a second asset, a tenth the size, whose moment vanishes at gamma = 10 only: the
  // minimum near 100 stays a local one (the test of the pricing errors needs two moments)
  const assets = [
    { name: 'wn-twomin-1', values: cycle([1, -(x1 + x2), x1 * x2]) },
    { name: 'wn-twomin-2', values: cycle([0.1, -0.1 * x1, 0]) },
  ];
  return {
    code: 'SEVERAL_MINIMA',
    why: 'the first asset\'s moment (X - e^0.2)(X - e^2) / (3 X) vanishes at gamma = 10 and gamma = 100, both inside the scan: two local minima',
    files: [consumptionFile('wn-cons-twomin'), excessReturns('wn-twomin-assets.csv', dates, assets)],
    call: 'fit',
    spec: { ...monthly, label: 'wn two minima in gamma', assets: assets.map((a) => a.name), model: { kind: 'consumption', consumption: 'wn-cons-twomin', delta: 1 }, estimator: { stage: 'first', lags: 0 } },
    tables: ['parameters', 'discount-factor'],
  };
}

function failedWindows(): WarningCase {
  const T = 150;
  const p = panel(T, 6, 1, 7);
  p.factors[0].fill(0.004, 0, 45);
  const dates = monthEnds(T);
  const assets = named('wn-flat-', p.returns);
  return {
    code: 'FAILED_WINDOWS',
    why: 'the factor is constant over the first 45 periods, so the 30-period windows inside them have a singular factor covariance',
    files: [excessReturns('wn-flat-assets.csv', dates, assets), series('wn-flat-factor.csv', 'factor', dates, [{ name: 'wn-flat-f', values: p.factors[0] }])],
    call: 'backtest',
    spec: { ...monthly, label: 'wn factor flat at first', assets: assets.map((a) => a.name), model: { kind: 'linear', factors: ['wn-flat-f'] }, backtest: { window: 30, step: 10, horizon: 1 } },
    tables: ['summary'],
  };
}

function failedReplications(): WarningCase {
  const T = 120;
  const p = panel(T, 6, 1, 8);
  // asset 6 is asset 5 but in two months: a block resample that misses both holds two equal
  // assets, so E[R R'] (the HJ distance's weight) is singular on it and that replication fails
  p.returns[5] = Float64Array.from(p.returns[4]);
  p.returns[5][40] += 0.05;
  p.returns[5][81] -= 0.04;
  const dates = monthEnds(T);
  const assets = named('wn-dup-', p.returns);
  return {
    code: 'FAILED_REPLICATIONS',
    why: 'asset 6 equals asset 5 but in two months: on a block resample that misses both, E[R R\'] is singular and the HJ distances cannot be computed',
    files: [excessReturns('wn-dup-assets.csv', dates, assets), series('wn-dup-factor.csv', 'factor', dates, [{ name: 'wn-dup-f', values: p.factors[0] }])],
    call: 'compare',
    spec: { ...monthly, assets: assets.map((a) => a.name), bootstrap: { replications: 40, block: 3, seed: 7 }, compare: [{ label: 'wn demeaned', model: { kind: 'linear', factors: ['wn-dup-f'] } }, { label: 'wn raw', model: { kind: 'linear-raw', factors: ['wn-dup-f'] } }] },
    tables: ['hj-tests'],
  };
}

function instrumentLevel(): WarningCase {
  const T = 240;
  const p = panel(T, 6, 1, 12);
  const rr = rng(13);
  const z = Float64Array.from({ length: T }, () => 5 + 0.5 * normal(rr));
  const dates = monthEnds(T);
  const assets = named('wn-lvl-', p.returns);
  return {
    code: 'INSTRUMENT_LEVEL',
    why: 'the instrument has mean 5 and s.d. 0.5 (ten times, warning above 3) and scales the factor',
    files: [excessReturns('wn-lvl-assets.csv', dates, assets), series('wn-lvl-series.csv', 'factor', dates, [{ name: 'wn-lvl-f', values: p.factors[0] }]), series('wn-lvl-instrument.csv', 'other', dates, [{ name: 'wn-lvl-z', values: z }])],
    call: 'fit',
    spec: { ...monthly, label: 'wn instrument far from zero', assets: assets.map((a) => a.name), model: { kind: 'linear', factors: ['wn-lvl-f'] }, instruments: { series: ['wn-lvl-z'], scale: 'factors' } },
    tables: ['parameters', 'tests'],
  };
}

export function warningCases(): WarningCase[] {
  return [nearSingular(), belowBound(), startAtEdge(), severalMinima(), failedWindows(), failedReplications(), instrumentLevel()];
}

/**
 * A price history without shares outstanding (long layout: date, asset, price, dividend):
 * month-end closes from December 2000 to December 2024 on a seeded path, one dividend each
 * June of 2 % of the price. An aggregate that holds it cannot weight by market value.
 */
export function pricesWithoutShares(asset: string): CaseFile {
  const r = rng(21);
  const dates = monthEnds(24 * 12 + 1, -1);
  let price = 40;
  const lines = ['date,asset,price,dividend'];
  dates.forEach((d, t) => {
    if (t > 0) price *= Math.exp(0.005 + 0.04 * normal(r));
    const dividend = d.slice(5, 7) === '06' ? Number((0.02 * price).toFixed(4)) : 0;
    lines.push(`${d},${asset},${price.toFixed(4)},${dividend}`);
  });
  return { name: `${asset}.csv`, kind: 'prices', options: {}, text: lines.join('\n') + '\n' };
}

/**
 * A price history built from yearly log dividend-price ratios dp and dividend growth dd
 * (long layout: date, asset, price, dividend): in year y every month-end close is
 * P_y = D_y / exp(dp_y) and the year's dividend D_y (D_0 = 5) is paid in June, so the
 * decomposition's yearly values are exactly these P_y and D_y. Years from 1985.
 */
export function pricesFromDp(asset: string, dp: number[], dd: number[]): CaseFile {
  const lines = ['date,asset,price,dividend'];
  let dividend = 5;
  dp.forEach((x, t) => {
    if (t > 0) dividend *= Math.exp(dd[t]);
    const price = dividend / Math.exp(x);
    const y = 1985 + t;
    for (let mo = 1; mo <= 12; mo++) {
      const day = new Date(Date.UTC(y, mo, 0)).getUTCDate();
      lines.push(`${y}-${String(mo).padStart(2, '0')}-${day},${asset},${price},${mo === 6 ? dividend : 0}`);
    }
  });
  return { name: `${asset}.csv`, kind: 'prices', options: {}, text: lines.join('\n') + '\n' };
}

export interface ValueCase {
  code: string;
  why: string;
  files: CaseFile[];
  call: 'presentValue' | 'drift';
  spec: Record<string, unknown>;
  tables: string[];
}

/** Ten of the demo's priced assets (named, so that other specs' imports stay out of the aggregate). */
const DEMO_PRICED = ['ashcombe-lamps', 'brackenholt-rail', 'brinemoor-ferries', 'cindervale-metals', 'corvane-saltworks', 'duskwater-fisheries', 'eddisholm-glass', 'emberlyn-clocks', 'fallowmere-grain', 'foxmere-printing'];

/** The warnings of the present-value analyses (shared/present/value.ts VALUE_WARNING_TABLES, and NO_PRICE_SPLIT of the drift split). */
export function valueCases(): ValueCase[] {
  const months = monthEnds(24 * 12);
  const fund: CaseFile = { name: 'wn-fund.csv', kind: 'returns', options: {}, text: wideCsv(months, [{ name: 'wn-fund', values: months.map((_, t) => 0.004 + 0.03 * Math.sin(t)) }]) };
  const gapMonths = months.filter((d) => !d.startsWith('2010-06'));
  const gapped: CaseFile = { name: 'wn-gapped.csv', kind: 'returns', options: {}, text: wideCsv(gapMonths, [{ name: 'wn-gapped', values: gapMonths.map((_, t) => 0.004 + 0.03 * Math.cos(t)) }]) };
  const years = 40;
  const steadyGrowth = Array.from({ length: years }, (_, t) => 0.02 + 0.01 * Math.sin(t));
  return [
    {
      code: 'DP_NEAR_UNIT_ROOT',
      why: 'dp falling by 0.02 a year from -3.2 (with a wiggle of 0.005 sin 3t): phi is 1 and rho about 0.97, so 1 - rho phi is below 0.05',
      files: [pricesFromDp('wn-unitroot', Array.from({ length: years }, (_, t) => -3.2 - 0.02 * t + 0.005 * Math.sin(3 * t)), steadyGrowth)],
      call: 'presentValue',
      spec: { analysis: 'present-value', label: 'wn unit root', asset: 'wn-unitroot' },
      tables: ['long-run'],
    },
    {
      code: 'LARGE_IDENTITY_GAP',
      why: 'dp climbing from -4 to +4 in steps of 2 and falling back every five years: the first-order expansion of the return around mean dp is poor that far out, and the identity misses 1 by about 0.16',
      files: [pricesFromDp('wn-widedp', Array.from({ length: years }, (_, t) => -4 + 8 * ((t % 5) / 4)), steadyGrowth)],
      call: 'presentValue',
      spec: { analysis: 'present-value', label: 'wn wide dp', asset: 'wn-widedp' },
      tables: ['summary', 'long-run'],
    },
    {
      code: 'ASSET_DROPPED',
      why: 'a return series with June 2010 missing beside a priced demo asset: the common sample has no value for it that month, so it is left out by name',
      files: [gapped],
      call: 'drift',
      spec: { analysis: 'drift', label: 'wn drift with a gap', assets: ['lanternfold-power', 'wn-gapped'] },
      tables: ['drift'],
    },
    {
      code: 'FEW_YEARS',
      why: 'the aggregate of ten demo assets over 2019 to 2024: six years, below the 20 of the rule of thumb',
      files: [],
      call: 'presentValue',
      spec: { analysis: 'present-value', label: 'wn six years', aggregate: true, assets: DEMO_PRICED, start: '2019', end: '2024' },
      tables: ['regressions', 'long-run'],
    },
    {
      code: 'EQUAL_SHARES',
      why: 'one asset of the aggregate was imported without shares outstanding, so the aggregate cannot weight by market value',
      files: [pricesWithoutShares('wn-noshares')],
      call: 'presentValue',
      spec: { analysis: 'present-value', label: 'wn no shares', aggregate: true, assets: ['brinemoor-ferries', 'wn-noshares'] },
      tables: ['summary', 'regressions', 'long-run'],
    },
    {
      code: 'NO_PRICE_SPLIT',
      why: 'an asset imported as net returns (2001-2024, seeded as 0.004 + 0.03 sin t) beside a priced one: its drift has no price and dividend parts',
      files: [fund],
      call: 'drift',
      spec: { analysis: 'drift', label: 'wn drift with a return asset', assets: ['lanternfold-power', 'wn-fund'] },
      tables: ['drift'],
    },
  ];
}
