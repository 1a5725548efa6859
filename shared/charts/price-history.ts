/**
 * An asset's price against its total-return index (dividends reinvested, METHODS
 * section 1), both starting at the first price: the gap between the lines is the
 * cumulated dividend yield. An asset stored as returns (METHODS 8) has no price: only
 * its index line is drawn, under the label the reply gives.
 */
import type { AssetHistory } from '../bridge/types.js';
import { baseOption, num, valueAxis } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption } from './types.js';

export function priceHistoryOption(h: AssetHistory, opts: { log?: boolean } = {}): ChartOption {
  const clean = (xs: number[]) => h.dates.map((d, i) => [d, Number.isFinite(xs[i]) ? xs[i] : null]);
  const many = h.dates.length > 400;
  return {
    id: `history-${h.asset}`,
    ...baseOption(),
    legend: { top: 0, left: 56, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    grid: { left: 64, right: 24, top: 28, bottom: many ? 64 : 36 },
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      valueFormatter: (v: number) => num(v, 2),
    },
    xAxis: {
      type: 'time',
      axisLine: { lineStyle: { color: PALETTE.faint } },
      axisLabel: { color: PALETTE.muted, fontSize: 10 },
      splitLine: { show: false },
    },
    yAxis: valueAxis(opts.log ? 'level (log scale)' : 'level', opts.log ? { type: 'log', scale: true } : { scale: true }),
    dataZoom: many ? [{ type: 'slider', height: 18, bottom: 8, borderColor: PALETTE.rule, fillerColor: 'rgba(43,95,125,0.10)' }, { type: 'inside' }] : [],
    series: [
      ...(h.price.length
        ? [{ type: 'line' as const, name: 'price', data: clean(h.price), showSymbol: false, lineStyle: { color: PALETTE.faint, width: 1.5 }, itemStyle: { color: PALETTE.faint } }]
        : []),
      { type: 'line' as const, name: h.indexLabel ?? 'total-return index', data: clean(h.totalReturn), showSymbol: false, lineStyle: { color: PALETTE.primary, width: 1.8 }, itemStyle: { color: PALETTE.primary } },
    ],
  };
}
