/**
 * Back-test charts (METHODS section 6): each parameter's path over the windows with a
 * +/- 2 s.e. band, and the per-asset out-of-sample pricing error beside the in-sample one.
 */
import type { BacktestResult } from '../results.js';
import { periodWord } from '../present/units.js';
import { baseOption, categoryAxis, num, valueAxis } from './common.js';
import { PALETTE, SERIES_COLORS } from './palette.js';
import type { ChartOption, SeriesOption } from './types.js';

/** Parameter names in the order of the first window that has them. */
export function pathParameterNames(bt: BacktestResult): string[] {
  const seen: string[] = [];
  for (const w of bt.paths) for (const p of w.params) if (!seen.includes(p.name)) seen.push(p.name);
  return seen;
}

export function parameterPathsOption(bt: BacktestResult, names: string[] = pathParameterNames(bt).slice(0, 6)): ChartOption {
  const ends = bt.paths.map((w) => w.end);
  const n = Math.max(1, names.length);
  const gap = 5;
  const top = 4;
  const bottom = 8;
  const h = (100 - top - bottom - gap * (n - 1)) / n;
  const grids = names.map((_, i) => ({ left: 80, right: 20, top: `${top + i * (h + gap)}%`, height: `${h}%` }));
  const xAxes = names.map((_, i) => ({
    ...categoryAxis(ends, { gridIndex: i }),
    axisLabel: { show: i === n - 1, color: PALETTE.muted, fontSize: 10 },
    boundaryGap: false,
  }));
  const yAxes = names.map((name, i) => valueAxis(name, { gridIndex: i, scale: true, nameGap: 52, nameTextStyle: { color: PALETTE.ink, fontSize: 11 }, splitNumber: 3 }));
  const series: SeriesOption[] = [];
  names.forEach((name, i) => {
    const get = (w: BacktestResult['paths'][number]) => w.params.find((p) => p.name === name);
    const est = bt.paths.map((w) => {
      const p = get(w);
      return p && Number.isFinite(p.estimate) ? p.estimate : null;
    });
    const lo = bt.paths.map((w) => {
      const p = get(w);
      return p && Number.isFinite(p.estimate) && Number.isFinite(p.se) ? p.estimate - 2 * p.se : null;
    });
    const width = bt.paths.map((w) => {
      const p = get(w);
      return p && Number.isFinite(p.se) ? 4 * p.se : null;
    });
    const color = SERIES_COLORS[i % SERIES_COLORS.length];
    const stack = `band-${i}`;
    series.push(
      { type: 'line', name: `${name} lower`, data: lo, xAxisIndex: i, yAxisIndex: i, stack, stackStrategy: 'all', lineStyle: { opacity: 0 }, showSymbol: false, silent: true, tooltip: { show: false } },
      { type: 'line', name: `${name} ±2 s.e.`, data: width, xAxisIndex: i, yAxisIndex: i, stack, stackStrategy: 'all', lineStyle: { opacity: 0 }, showSymbol: false, silent: true, areaStyle: { color, opacity: 0.16 }, tooltip: { show: false } },
      { type: 'line', name, data: est, xAxisIndex: i, yAxisIndex: i, showSymbol: ends.length < 40, symbolSize: 4, lineStyle: { color, width: 1.6 }, itemStyle: { color } },
    );
  });
  return {
    id: 'parameter-paths',
    ...baseOption(),
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), valueFormatter: (v: number) => num(v, 4) },
    axisPointer: { link: [{ xAxisIndex: 'all' }] },
    grid: grids,
    xAxis: xAxes,
    yAxis: yAxes,
    series,
  };
}

export function oosErrorsOption(bt: BacktestResult, opts: { annual?: boolean } = {}): ChartOption {
  const annual = opts.annual ?? true;
  const k = (annual ? bt.sample.periodsPerYear : 1) * 100;
  const unit = annual ? '% per year' : `% per ${periodWord(bt.sample.frequency)}`;
  // With instruments one asset has a row per instrument: "<asset>:<instrument>" (the asset alone for the constant).
  const assets = bt.perAsset.map((a) => (a.instrument === undefined || a.instrument === 'const' ? a.asset : `${a.asset}:${a.instrument}`));
  const fin = (x: number) => (Number.isFinite(x) ? x * k : null);
  return {
    id: 'oos-errors',
    ...baseOption(),
    legend: { top: 0, left: 56, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    grid: { left: 64, right: 16, top: 28, bottom: assets.length > 24 ? 84 : assets.length > 10 ? 64 : 36 },
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), axisPointer: { type: 'shadow' }, valueFormatter: (v: number) => `${num(v, 3)} ${unit}` },
    xAxis: categoryAxis(assets),
    yAxis: valueAxis(`mean pricing error, ${unit}`),
    series: [
      { type: 'bar', name: 'out of sample (mean held-out α)', data: bt.perAsset.map((a) => fin(a.alphaOos)), itemStyle: { color: PALETTE.primary }, barMaxWidth: 18 },
      { type: 'bar', name: "in sample (mean of the windows' own α)", data: bt.perAsset.map((a) => fin(a.alphaIn)), itemStyle: { color: PALETTE.faint }, barMaxWidth: 18 },
    ],
  };
}
