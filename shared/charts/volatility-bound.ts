/**
 * The Hansen-Jagannathan volatility bound (METHODS section 5) with the model's fitted
 * discount factor as one point. Gross returns: the curve sigma_min(E m); excess returns
 * only: the cone sigma(m) >= maxSharpe * E(m). Points below the bound are not admissible.
 */
import type { FitResult } from '../results.js';
import { baseOption, num, valueAxis } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption } from './types.js';
import { niceRange } from './predicted-realized.js';

export function hasVolatilityBound(fit: FitResult): boolean {
  const b = fit.bound;
  return b !== undefined && ((b.curve !== undefined && b.curve.length > 1) || Number.isFinite(b.maxSharpe));
}

export function volatilityBoundOption(fit: FitResult): ChartOption {
  const b = fit.bound;
  const model = b?.model && Number.isFinite(b.model.mean) && Number.isFinite(b.model.sigma) ? b.model : undefined;
  let line: number[][];
  if (b?.curve && b.curve.length > 1) {
    line = b.curve.filter((p) => Number.isFinite(p.mean) && Number.isFinite(p.sigma)).map((p) => [p.mean, p.sigma]);
  } else {
    const s = b && Number.isFinite(b.maxSharpe) ? b.maxSharpe : 0;
    const center = model?.mean ?? 1;
    const range = niceRange(Math.max(0, center - 0.2), center + 0.2, 4);
    const lo = Math.max(0, range.lo);
    const hi = range.hi;
    const n = 41;
    line = Array.from({ length: n }, (_, i) => {
      const v = lo + ((hi - lo) * i) / (n - 1);
      return [v, s * v];
    });
  }
  const ys = [...line.map((p) => p[1]), ...(model ? [model.sigma] : [])];
  const y = niceRange(0, ys.length ? Math.max(...ys) * 1.08 : 1, 5);
  const xs = [...line.map((p) => p[0]), ...(model ? [model.mean] : [])];
  const x = niceRange(Math.min(...xs), Math.max(...xs), 4);
  const series: ChartOption['series'] = [
    {
      type: 'line',
      name: 'volatility bound',
      data: line,
      showSymbol: false,
      smooth: false,
      lineStyle: { color: PALETTE.secondary, width: 2 },
      areaStyle: { color: PALETTE.bound, origin: 'end' },
    },
  ];
  if (model) {
    series.push({
      type: 'scatter',
      name: fit.label || 'model',
      data: [{ name: fit.label || 'model', value: [model.mean, model.sigma] }],
      symbol: 'diamond',
      symbolSize: 12,
      itemStyle: { color: PALETTE.primary, borderColor: '#fff', borderWidth: 1 },
      label: { show: true, position: 'right', formatter: '{b}', fontSize: 10, color: PALETTE.ink },
    });
  }
  return {
    id: 'volatility-bound',
    ...baseOption(),
    legend: { top: 0, left: 56, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    grid: { left: 64, right: 24, top: 28, bottom: 48 },
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      trigger: 'item',
      formatter: (p: { value?: number[]; seriesName?: string }) => (p.value ? `${p.seriesName ?? ''}<br/>E[m] ${num(p.value[0], 4)}<br/>σ(m) ${num(p.value[1], 4)}` : ''),
    },
    xAxis: valueAxis('E[m]', { min: x.lo, max: x.hi, interval: x.step, nameGap: 28, axisLabel: { color: PALETTE.muted, fontSize: 10, formatter: (v: number) => num(v, 3) } }),
    yAxis: valueAxis('σ(m)', { min: 0, max: y.hi, interval: y.step, axisLabel: { color: PALETTE.muted, fontSize: 10, formatter: (v: number) => num(v, 2) } }),
    series,
  };
}
