/**
 * Chart of a comparison's cross-sectional errors (the table and its "best" marks come
 * from the presentation model, shared/present).
 */
import type { CompareResult } from '../results.js';
import { baseOption, categoryAxis, num, valueAxis } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption } from './types.js';

export function compareChartOption(result: CompareResult): ChartOption {
  const ok = result.models;
  const labels = ok.map((m) => m.label);
  const pct = (x: number | undefined) => (x !== undefined && Number.isFinite(x) ? x * 100 : null);
  const hasOos = ok.some((m) => m.oos && Number.isFinite(m.oos.rmse));
  const ppy = result.sample.periodsPerYear;
  const series: ChartOption['series'] = [
    { type: 'bar', name: 'RMSE in sample', data: ok.map((m) => pct(m.fit.rmseAnnual)), itemStyle: { color: PALETTE.primary }, barMaxWidth: 26 },
    { type: 'bar', name: 'MAPE in sample', data: ok.map((m) => pct(m.fit.mapeAnnual)), itemStyle: { color: PALETTE.faint }, barMaxWidth: 26 },
  ];
  if (hasOos) series.push({ type: 'bar', name: 'RMSE out of sample', data: ok.map((m) => pct(m.oos ? m.oos.rmse * ppy : undefined)), itemStyle: { color: PALETTE.secondary }, barMaxWidth: 26 });
  return {
    id: 'comparison',
    ...baseOption(),
    legend: { top: 0, left: 56, textStyle: { color: PALETTE.muted, fontSize: 10 }, itemWidth: 14, itemHeight: 8 },
    grid: { left: 64, right: 16, top: 30, bottom: labels.length > 6 ? 72 : 36 },
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), axisPointer: { type: 'shadow' }, valueFormatter: (v: number) => `${num(v, 2)} % per year` },
    xAxis: categoryAxis(labels, { axisLabel: { color: PALETTE.ink, fontSize: 10, rotate: labels.length > 6 ? 25 : 0 } }),
    yAxis: valueAxis('pricing error, % per year'),
    series,
  };
}
