/**
 * Comparison of models side by side: the columns, which model is best in each, and a
 * chart of the cross-sectional errors. "Best" is lowest for error sizes and the HJ
 * distance, highest for R^2 and for p-values (the model least rejected).
 */
import type { CompareResult, CompareRow } from '../results.js';
import { baseOption, categoryAxis, num, valueAxis } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption } from './types.js';

export interface CompareColumn {
  key: string;
  label: string;
  better: 'lower' | 'higher';
  decimals: number;
  /** Percent columns are shown x100. */
  percent?: boolean;
  /** Per-period values shown a year (x periods per year). */
  annualise?: boolean;
  value(row: CompareRow): number | undefined;
}

export const COMPARE_COLUMNS: CompareColumn[] = [
  { key: 'testStat', label: 'test stat', better: 'lower', decimals: 2, value: (r) => r.test?.stat },
  { key: 'testP', label: 'test p', better: 'higher', decimals: 3, value: (r) => r.test?.p },
  { key: 'hj', label: 'HJ dist.', better: 'lower', decimals: 4, value: (r) => r.hj?.distance },
  { key: 'hjP', label: 'HJ p', better: 'higher', decimals: 3, value: (r) => r.hj?.p },
  { key: 'mape', label: 'MAPE %/yr', better: 'lower', decimals: 2, percent: true, value: (r) => r.fit?.mapeAnnual },
  { key: 'rmse', label: 'RMSE %/yr', better: 'lower', decimals: 2, percent: true, value: (r) => r.fit?.rmseAnnual },
  { key: 'r2', label: 'R² (cs)', better: 'higher', decimals: 3, value: (r) => r.fit?.r2 },
  { key: 'oosRmse', label: 'OOS RMSE %/yr', better: 'lower', decimals: 2, percent: true, annualise: true, value: (r) => r.oos?.rmse },
  { key: 'oosR2', label: 'OOS R²', better: 'higher', decimals: 3, value: (r) => r.oos?.r2 },
];

/** The number a column shows for a value (percent and annualised as the column says). */
export function compareDisplayValue(c: CompareColumn, v: number, periodsPerYear: number): number {
  return v * (c.percent ? 100 : 1) * (c.annualise ? periodsPerYear : 1);
}

/** Columns with a value for at least one model. */
export function compareColumnsFor(result: CompareResult): CompareColumn[] {
  return COMPARE_COLUMNS.filter((c) => result.models.some((m) => !m.error && Number.isFinite(c.value(m) ?? Number.NaN)));
}

/** For each column key, the labels of the best model(s); failed models and missing values never win. */
export function bestByColumn(result: CompareResult, columns: CompareColumn[] = COMPARE_COLUMNS): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const c of columns) {
    let best: number | undefined;
    let who: string[] = [];
    for (const m of result.models) {
      if (m.error) continue;
      const v = c.value(m);
      if (v === undefined || !Number.isFinite(v)) continue;
      if (best === undefined || (c.better === 'lower' ? v < best - 1e-15 : v > best + 1e-15)) {
        best = v;
        who = [m.label];
      } else if (Math.abs(v - best) <= 1e-15) who.push(m.label);
    }
    out[c.key] = who;
  }
  return out;
}

export function compareChartOption(result: CompareResult): ChartOption {
  const ok = result.models.filter((m) => !m.error);
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
    tooltip: { ...(baseOption().tooltip as Record<string, unknown>), axisPointer: { type: 'shadow' }, valueFormatter: (v: number) => `${num(v, 2)} % a year` },
    xAxis: categoryAxis(labels, { axisLabel: { color: PALETTE.ink, fontSize: 10, rotate: labels.length > 6 ? 25 : 0 } }),
    yAxis: valueAxis('pricing error, % a year'),
    series,
  };
}
