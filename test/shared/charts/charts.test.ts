import { describe, expect, it } from 'vitest';
import {
  barColor,
  compareChartOption,
  oosErrorsOption,
  parameterPathsOption,
  pathParameterNames,
  predictedRealizedOption,
  priceHistoryOption,
  pricingErrorOption,
  sortPricingErrors,
  volatilityBoundOption,
  PALETTE,
} from '../../../shared/charts/index.js';
import type { BacktestResult, CompareResult, FitResult } from '../../../shared/results.js';
import { tinyFit } from '../../src-main/app/fakes.js';

function fitWith(alphas: number[]): FitResult {
  const f = tinyFit();
  f.pricingErrors = alphas.map((a, i) => ({
    asset: `P${i + 1}`,
    alpha: a,
    se: Math.abs(a) / 2 + 0.0001,
    t: a / (Math.abs(a) / 2 + 0.0001),
    alphaAnnual: a * 12,
    seAnnual: (Math.abs(a) / 2 + 0.0001) * 12,
    meanReturn: 0.01 + a,
    predicted: 0.01,
  }));
  return f;
}

describe('pricing-error chart', () => {
  it('has one bar per test asset carrying the annualised alpha in percent, coloured by sign', () => {
    const f = fitWith([0.001, -0.002, 0.0005]);
    const o = pricingErrorOption(f);
    const bars = o.series[0].data as { value: number; itemStyle: { color: string } }[];
    expect(bars.length).toBe(3);
    expect(bars.map((b) => b.value)).toEqual(f.pricingErrors.map((r) => r.alphaAnnual * 100));
    expect(bars[1].itemStyle.color).toBe(PALETTE.negative);
    expect(bars[0].itemStyle.color).toBe(PALETTE.primary);
    expect((o.xAxis as { data: string[] }).data).toEqual(['P1', 'P2', 'P3']);
  });

  it('draws whiskers at +/- 2 standard errors', () => {
    const f = fitWith([0.001, -0.002]);
    const w = pricingErrorOption(f, { annual: false }).series[1].data as number[][];
    const r = f.pricingErrors[1];
    expect(w[1][0]).toBe(1);
    expect(w[1][1]).toBeCloseTo((r.alpha - 2 * r.se) * 100, 12);
    expect(w[1][2]).toBeCloseTo((r.alpha + 2 * r.se) * 100, 12);
  });

  it('renders whiskers through the custom-series API', () => {
    const o = pricingErrorOption(fitWith([0.001]));
    const render = o.series[1].renderItem as (p: unknown, api: unknown) => { children: { shape: { x1: number; y1: number; y2: number } }[] };
    const api = { value: (d: number) => [0, -1, 3][d], coord: ([x, y]: [number, number]) => [x * 10 + 5, 100 - y * 10] };
    const g = render({}, api);
    expect(g.children[0].shape).toMatchObject({ x1: 5, y1: 110, y2: 70 });
  });

  it('sorts by alpha, |alpha|, t or name, keeping ties stable', () => {
    const f = fitWith([0.001, -0.003, 0.002, -0.001]);
    expect(sortPricingErrors(f.pricingErrors, 'alpha').map((r) => r.asset)).toEqual(['P2', 'P4', 'P1', 'P3']);
    expect(sortPricingErrors(f.pricingErrors, 'absAlpha', true).map((r) => r.asset)).toEqual(['P2', 'P3', 'P1', 'P4']);
    const named = [...f.pricingErrors].reverse();
    named[0] = { ...named[0], asset: 'P10' };
    expect(sortPricingErrors(named, 'asset').map((r) => r.asset)).toEqual(['P1', 'P2', 'P3', 'P10']);
    const o = pricingErrorOption(f, { sort: 'alpha' });
    expect((o.xAxis as { data: string[] }).data).toEqual(['P2', 'P4', 'P1', 'P3']);
    expect(barColor(0)).toBe(PALETTE.primary);
  });
});

describe('other fit charts', () => {
  it('predicted vs realised: one point per asset, axes that contain the 45-degree line', () => {
    const f = fitWith([0.001, -0.002]);
    const o = predictedRealizedOption(f);
    const pts = o.series[1].data as { name: string; value: number[] }[];
    expect(pts.map((p) => p.name)).toEqual(['P1', 'P2']);
    expect(pts[1].value[0]).toBeCloseTo(0.01 * 1200, 10);
    expect(pts[1].value[1]).toBeCloseTo((0.01 - 0.002) * 1200, 10);
    const line = o.series[0].data as number[][];
    expect(line[0][0]).toBe(line[0][1]);
    expect(line[1][0]).toBe(line[1][1]);
  });

  it('volatility bound: the excess-return cone has slope maxSharpe and the model point is plotted', () => {
    const f = tinyFit();
    f.bound = { maxSharpe: 0.5, model: { mean: 0.99, sigma: 0.6 } };
    const o = volatilityBoundOption(f);
    const line = o.series[0].data as number[][];
    for (const [v, s] of line) expect(s).toBeCloseTo(0.5 * v, 12);
    expect((o.series[1].data as { value: number[] }[])[0].value).toEqual([0.99, 0.6]);
    f.bound = { maxSharpe: Number.NaN, curve: [{ mean: 0.9, sigma: 1 }, { mean: Number.NaN, sigma: 1 }, { mean: 1, sigma: 0.5 }] };
    expect((volatilityBoundOption(f).series[0].data as number[][]).length).toBe(2);
  });

  it('price history: non-finite values become gaps, never NaN', () => {
    const o = priceHistoryOption({ asset: 'X', frequency: 'stored', dates: ['2001-01-31', '2001-02-28'], price: [10, Number.NaN], totalReturn: [10, 10.5], dividends: 1 });
    expect(o.series[0].data).toEqual([['2001-01-31', 10], ['2001-02-28', null]]);
    expect(o.series[1].data).toEqual([['2001-01-31', 10], ['2001-02-28', 10.5]]);
  });
});

const bt: BacktestResult = {
  kind: 'backtest',
  label: 'm',
  sample: tinyFit().sample,
  windows: 2,
  windowsFailed: 0,
  failures: [],
  oos: { rmse: 0.001, rmsePooled: 0.002, r2: 0.1 },
  inSample: { rmse: 0.001, r2: 0.2, mape: 0.001 },
  perAsset: [
    { asset: 'A1', alphaOos: 0.001, alphaIn: 0.0005, meanReturnOos: 0.01 },
    { asset: 'A2', alphaOos: Number.NaN, alphaIn: -0.001, meanReturnOos: 0.01 },
  ],
  paths: [
    { end: '2001-06-30', params: [{ name: 'b.MKT', estimate: 2, se: 0.5 }, { name: 'mu.MKT', estimate: 0.01, se: 0.002 }] },
    { end: '2001-07-31', params: [{ name: 'b.MKT', estimate: 2.5, se: 0.4 }, { name: 'mu.MKT', estimate: 0.012, se: 0.002 }] },
  ],
  windowList: [],
  spec: { window: 6, step: 1, horizon: 1, expanding: false },
  warnings: [],
};

describe('back-test charts', () => {
  it('parameter paths: estimate line and a band from est - 2se of width 4se', () => {
    expect(pathParameterNames(bt)).toEqual(['b.MKT', 'mu.MKT']);
    const o = parameterPathsOption(bt);
    expect((o.grid as unknown[]).length).toBe(2);
    const [lower, width, est] = o.series;
    expect(est.data).toEqual([2, 2.5]);
    expect(lower.data).toEqual([1, 2.5 - 0.8]);
    expect(width.data).toEqual([2, 4 * 0.4]);
    expect(lower.stack).toBe(width.stack);
  });

  it('OOS errors: a missing value is a gap', () => {
    const o = oosErrorsOption(bt);
    expect(o.series[0].data).toEqual([0.001 * 1200, null]);
    expect(o.series[1].data[1]).toBeCloseTo(-0.001 * 1200, 12);
  });
});

describe('comparison', () => {
  const base = tinyFit();
  const row = (label: string, rmse: number, r2: number, p: number, error?: string) => ({
    label,
    params: [],
    test: { name: 'J', stat: 1, df: 1, p },
    fit: { mape: rmse, rmse, r2, mapeAnnual: rmse * 12, rmseAnnual: rmse * 12 },
    ...(error ? { error } : {}),
  });
  const result: CompareResult = {
    kind: 'compare',
    sample: base.sample,
    models: [row('one', 0.002, 0.3, 0.2), row('two', 0.001, 0.6, 0.1), row('no back-test', 0.0001, 0.99, 0.9, 'back-test failed: singular')],
    hjTests: [],
    warnings: [],
  };
  it('charts every fitted model: a failed back-test leaves its in-sample bars', () => {
    const o = compareChartOption(result);
    expect((o.xAxis as { data: string[] }).data).toEqual(['one', 'two', 'no back-test']);
    expect(o.series[0].data).toEqual([0.002 * 1200, 0.001 * 1200, 0.0001 * 1200].map((x) => expect.closeTo(x, 12)));
  });
});

describe('axis ranges', () => {
  it('rounds to steps of 1, 2 or 5 x 10^k that cover the data', async () => {
    const { niceRange } = await import('../../../shared/charts/predicted-realized.js');
    const r = niceRange(-1.9, 23.9);
    expect(r.step).toBe(5);
    expect(r.lo).toBe(-5);
    expect(r.hi).toBe(25);
    const s = niceRange(0.8, 1.2, 4);
    expect(s.step).toBeCloseTo(0.1, 12);
    expect(s.lo).toBeLessThanOrEqual(0.8);
    expect(s.hi).toBeGreaterThanOrEqual(1.2);
  });
});
