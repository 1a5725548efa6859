/**
 * Charts of the present-value analyses (METHODS 10): the discounted-value paths of a fit,
 * dp over time, the three predictive regressions with their fitted lines, and the drift
 * split per asset as stacked bars.
 */
import type { DiscountedPaths, DriftResult, FitResult, PresentValueResult } from '../results.js';
import { baseOption, categoryAxis, num, valueAxis } from './common.js';
import { PALETTE, SERIES_COLORS } from './palette.js';
import type { ChartOption, SeriesOption } from './types.js';

/** The level a path stays around when the model prices the asset: 0 for gains, 1 for a discounted value. */
export function flatLevel(d: Pick<DiscountedPaths, 'form'>): number {
  return d.form === 'gains' ? 0 : 1;
}

/**
 * The assets whose paths end farthest from the flat level, most first (at most k): the
 * ones the discounted-value chart labels.
 */
export function mostDrifting(d: DiscountedPaths, k: number): string[] {
  const flat = flatLevel(d);
  return Object.entries(d.series)
    .map(([asset, path]) => ({ asset, off: Math.abs((path[path.length - 1] ?? flat) - flat) }))
    .filter((x) => Number.isFinite(x.off))
    .sort((a, b) => b.off - a.off || (a.asset < b.asset ? -1 : 1))
    .slice(0, k)
    .map((x) => x.asset);
}

/** Does this fit carry discounted-value paths to draw? */
export function hasDiscountedPaths(fit: FitResult): boolean {
  return !!fit.discounted && Object.keys(fit.discounted.series).length > 0;
}

/**
 * One line per asset of the fit's discounted gains G_i,t (excess returns, in percent of
 * one unit of payoff) or discounted value Lambda_t V_i,t (gross returns), the flat line of
 * a priced asset dashed, and the `label` assets that drift most named at their ends in
 * colour (the rest faint).
 */
export function discountedPathsOption(fit: FitResult, opts: { label?: number } = {}): ChartOption {
  const d = fit.discounted;
  if (!d) throw new RangeError('discountedPathsOption: the fit has no discounted paths');
  const gains = d.form === 'gains';
  const scale = gains ? 100 : 1;
  const flat = flatLevel(d) * scale;
  const named = mostDrifting(d, opts.label ?? 5);
  const colour = new Map(named.map((a, i) => [a, SERIES_COLORS[i % SERIES_COLORS.length]]));
  const assets = Object.keys(d.series);
  // faint lines first, the named ones on top
  const order = [...assets.filter((a) => !colour.has(a)), ...named];
  const series: SeriesOption[] = [
    {
      type: 'line',
      name: gains ? 'priced: flat at 0' : 'priced: flat at 1',
      data: d.periods.map(() => flat),
      showSymbol: false,
      silent: true,
      lineStyle: { color: PALETTE.ink, type: 'dashed', width: 1 },
      tooltip: { show: false },
      z: 3,
    },
    ...order.map((asset): SeriesOption => {
      const c = colour.get(asset);
      return {
        type: 'line',
        name: asset,
        data: d.series[asset].map((v) => (Number.isFinite(v) ? v * scale : null)),
        showSymbol: false,
        lineStyle: { color: c ?? PALETTE.faint, width: c ? 1.6 : 0.8, opacity: c ? 1 : 0.55 },
        itemStyle: { color: c ?? PALETTE.faint },
        emphasis: { focus: 'series' },
        endLabel: { show: !!c, formatter: '{a}', color: c ?? PALETTE.muted, fontSize: 10 },
        labelLayout: { moveOverlap: 'shiftY' },
        z: c ? 4 : 2,
      };
    }),
  ];
  const unit = gains ? 'sum of m_t R^e_t, %' : 'prod of m_t R_t';
  return {
    id: 'discounted-paths',
    ...baseOption(),
    grid: { left: 64, right: 130, top: 16, bottom: 40 },
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), trigger: 'item', formatter: (p: { seriesName?: string; name?: string; value?: number }) => `<b>${p.seriesName ?? ''}</b><br/>${p.name ?? ''}: ${num(p.value ?? Number.NaN, gains ? 2 : 4)}` },
    xAxis: { ...categoryAxis(d.periods), boundaryGap: false, axisLabel: { color: PALETTE.muted, fontSize: 10, interval: Math.max(0, Math.ceil(d.periods.length / 8) - 1) } },
    yAxis: valueAxis(gains ? `discounted gains G (${unit})` : `discounted value (${unit})`, { scale: true, nameGap: 48 }),
    series,
  };
}

/** dp_t = ln(D_t / P_t) over the years, with its mean (the point of linearisation). */
export function dpOverTimeOption(pv: PresentValueResult): ChartOption {
  const years = pv.series.years;
  return {
    id: 'dp-over-time',
    ...baseOption(),
    grid: { left: 64, right: 24, top: 24, bottom: 36 },
    legend: { top: 0, left: 64, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), valueFormatter: (v: number) => num(v, 3) },
    xAxis: { ...categoryAxis(years), boundaryGap: false },
    yAxis: valueAxis('dp = ln(D / P)', { scale: true }),
    series: [
      { type: 'line', name: 'dp', data: pv.series.dp, showSymbol: years.length <= 40, symbolSize: 4, lineStyle: { color: PALETTE.primary, width: 1.6 }, itemStyle: { color: PALETTE.primary } },
      { type: 'line', name: `mean ${num(pv.meanDp, 3)}`, data: years.map(() => pv.meanDp), showSymbol: false, silent: true, lineStyle: { color: PALETTE.faint, type: 'dashed', width: 1 }, tooltip: { show: false } },
    ],
  };
}

const REGRESSION_TITLES = { r: 'return r(t+1)', dd: 'dividend growth dd(t+1)', dp: 'dp(t+1)' } as const;
const COEFFICIENT = { r: 'b_r', dd: 'b_d', dp: 'phi' } as const;

/**
 * The three predictive regressions side by side: each year's dp_t against next year's
 * return, dividend growth and dp, with the OLS line a + b dp over the range of dp.
 */
export function dpRegressionsOption(pv: PresentValueResult): ChartOption {
  const x = pv.series.dp.slice(0, -1);
  const ys = { r: pv.series.r, dd: pv.series.dd, dp: pv.series.dp.slice(1) };
  const lo = Math.min(...x);
  const hi = Math.max(...x);
  const keys = ['r', 'dd', 'dp'] as const;
  const w = 100 / 3;
  const grid = keys.map((_, i) => ({ left: `${i * w + 5}%`, width: `${w - 8}%`, top: 52, bottom: 40 }));
  const series: SeriesOption[] = [];
  keys.forEach((k, i) => {
    const g = pv.regressions[k];
    const colour = SERIES_COLORS[i];
    series.push(
      {
        type: 'scatter',
        name: REGRESSION_TITLES[k],
        data: x.map((v, t) => ({ name: pv.series.years[t + 1], value: [v, ys[k][t]] })),
        xAxisIndex: i,
        yAxisIndex: i,
        symbolSize: 6,
        itemStyle: { color: colour, opacity: 0.8 },
      },
      {
        type: 'line',
        name: `${REGRESSION_TITLES[k]}: fitted`,
        data: [
          [lo, g.a + g.b * lo],
          [hi, g.a + g.b * hi],
        ],
        xAxisIndex: i,
        yAxisIndex: i,
        showSymbol: false,
        silent: true,
        lineStyle: { color: colour, width: 1.6 },
        tooltip: { show: false },
      },
    );
  });
  return {
    id: 'dp-regressions',
    ...baseOption(),
    title: keys.map((k, i) => ({
      text: `${REGRESSION_TITLES[k]}`,
      subtext: `${COEFFICIENT[k]} = ${num(pv.regressions[k].b, 3)} (s.e. ${num(pv.regressions[k].seB, 3)}), R2 ${num(pv.regressions[k].r2, 2)}`,
      subtextStyle: { fontSize: 10, color: PALETTE.muted },
      itemGap: 2,
      left: `${i * w + 5}%`,
      top: 4,
      textStyle: { fontSize: 11, fontWeight: 'normal', color: PALETTE.ink },
    })),
    grid,
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      trigger: 'item',
      formatter: (p: { seriesName?: string; name?: string; value?: number[] }) => (p.value ? `<b>${p.name ?? ''}</b><br/>dp(t) ${num(p.value[0], 3)}<br/>${p.seriesName ?? ''} ${num(p.value[1], 3)}` : ''),
    },
    xAxis: keys.map((_, i) => valueAxis(i === 1 ? 'dp(t)' : '', { gridIndex: i, scale: true, splitNumber: 3, nameGap: 26, axisLabel: { color: PALETTE.muted, fontSize: 9 } })),
    // ECharts picks the labels' decimals from the tick interval (a fixed two repeated 0.02 on a 0.005 grid)
    yAxis: keys.map((_, i) => valueAxis('', { gridIndex: i, scale: true, axisLabel: { color: PALETTE.muted, fontSize: 9 } })),
    series,
  };
}

/**
 * Each asset's annual drift as stacked bars of price growth and dividend yield (percent a
 * year; the two sum to the drift), the drift itself as a marker; an asset stored as returns
 * has no split and shows its drift as one faint bar.
 */
export function driftSplitOption(dr: DriftResult): ChartOption {
  const assets = dr.assets.map((a) => a.asset);
  const pct = (v: number | null) => (v === null || !Number.isFinite(v) ? null : v * 100);
  return {
    id: 'drift-split',
    ...baseOption(),
    legend: { top: 0, left: 64, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    grid: { left: 64, right: 16, top: 28, bottom: assets.length > 24 ? 96 : assets.length > 10 ? 72 : 36 },
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), axisPointer: { type: 'shadow' }, valueFormatter: (v: number) => `${num(v, 2)} % per year` },
    xAxis: categoryAxis(assets),
    yAxis: valueAxis('% per year'),
    series: [
      { type: 'bar', name: 'price growth', stack: 'split', data: dr.assets.map((a) => pct(a.priceGrowth)), itemStyle: { color: PALETTE.primary }, barMaxWidth: 28 },
      { type: 'bar', name: 'dividend yield', stack: 'split', data: dr.assets.map((a) => pct(a.dividendYield)), itemStyle: { color: PALETTE.secondary }, barMaxWidth: 28 },
      { type: 'bar', name: 'drift (stored as returns: no split)', stack: 'split', data: dr.assets.map((a) => (a.source === 'returns' ? pct(a.drift) : null)), itemStyle: { color: PALETTE.faint }, barMaxWidth: 28 },
      { type: 'scatter', name: 'drift mu', data: dr.assets.map((a) => pct(a.drift)), symbol: 'diamond', symbolSize: 9, itemStyle: { color: PALETTE.ink }, z: 5 },
    ],
  };
}
