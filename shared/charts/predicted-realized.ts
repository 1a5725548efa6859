/**
 * Predicted against realised mean returns per test asset, with the 45-degree line: a
 * model that prices the cross-section puts every point on the line (the vertical
 * distance is the pricing error).
 */
import type { FitResult } from '../results.js';
import { periodWord } from '../present/units.js';
import { baseOption, num, valueAxis } from './common.js';

/** Points named on the chart: the assets with the largest pricing errors. */
export const LABELLED = 6;
import { PALETTE } from './palette.js';
import type { ChartOption } from './types.js';

/**
 * An axis range padded by 4% and rounded to a "nice" step of 1, 2 or 5 x 10^k, the step
 * nearest span/ticks by Heckbert's rounding rule (Graphics Gems, 1990, "Nice numbers for
 * graph labels"): fractions below 1.5 -> 1, below 3 -> 2, below 7 -> 5, else 10.
 */
export function niceRange(min: number, max: number, ticks = 5): { lo: number; hi: number; step: number } {
  const span = max - min || Math.abs(max) || 1;
  const raw = span / ticks;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const f = raw / mag;
  const step = (f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10) * mag;
  const lo = Math.floor((min - span * 0.04) / step) * step;
  const hi = Math.ceil((max + span * 0.04) / step) * step;
  return { lo, hi, step };
}

export function predictedRealizedOption(fit: FitResult, opts: { annual?: boolean } = {}): ChartOption {
  // Gross returns are numbers near 1, per period: neither percent nor annualised (docs/methods.md, units).
  const gross = fit.sample.returns === 'gross';
  const annual = !gross && (opts.annual ?? true);
  const k = gross ? 1 : (annual ? fit.sample.periodsPerYear : 1) * 100;
  // With instruments only the unscaled returns (the constant's rows): a scaled payoff's mean is in units of return x instrument.
  const pts = fit.pricingErrors.filter((r) => r.instrument === undefined || r.instrument === 'const').map((r) => ({ name: r.asset, value: [r.predicted * k, r.meanReturn * k] }));
  const all = pts.flatMap((p) => p.value).filter(Number.isFinite);
  const { lo, hi, step } = gross
    ? niceRange(all.length ? Math.min(...all) : 0.99, all.length ? Math.max(...all) : 1.01)
    : niceRange(all.length ? Math.min(...all, 0) : 0, all.length ? Math.max(...all, 0) : 1);
  const unit = gross ? `gross return per ${periodWord(fit.sample.frequency)}` : annual ? '% per year' : `% per ${periodWord(fit.sample.frequency)}`;
  // Labels never pile up: only the assets farthest from the line are named (the table lists every asset).
  const named = new Set(
    [...fit.pricingErrors]
      .sort((a, b) => Math.abs(b.alpha) - Math.abs(a.alpha))
      .slice(0, LABELLED)
      .map((r) => r.asset),
  );
  const digits = gross ? 4 : 2;
  return {
    id: 'predicted-realized',
    ...baseOption(),
    grid: { left: 64, right: 24, top: 20, bottom: 52 },
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      trigger: 'item',
      formatter: (p: { name?: string; value?: number[]; seriesName?: string }) =>
        p.seriesName === '45°' || !p.value ? '' : `<b>${p.name ?? ''}</b><br/>predicted ${num(p.value[0], digits)}<br/>realised ${num(p.value[1], digits)} ${unit}`,
    },
    xAxis: valueAxis(`predicted mean ${fit.sample.returns} return, ${unit}`, { min: lo, max: hi, interval: step, nameGap: 30, axisLabel: { color: PALETTE.muted, fontSize: 10, formatter: (v: number) => num(v, gross ? 3 : 1) } }),
    yAxis: valueAxis(`realised mean, ${unit}`, { min: lo, max: hi, interval: step, axisLabel: { color: PALETTE.muted, fontSize: 10, formatter: (v: number) => num(v, gross ? 3 : 1) } }),
    series: [
      {
        type: 'line',
        name: '45°',
        data: [
          [lo, lo],
          [hi, hi],
        ],
        showSymbol: false,
        silent: true,
        lineStyle: { color: PALETTE.faint, type: 'dashed', width: 1 },
      },
      {
        type: 'scatter',
        name: 'test assets',
        data: pts,
        symbolSize: pts.length > 50 ? 5 : 8,
        itemStyle: { color: PALETTE.primary, opacity: 0.85 },
        label: { show: true, position: 'right', formatter: (x: { name?: string }) => (x.name && named.has(x.name) ? x.name : ''), fontSize: 9, color: PALETTE.muted, textBorderColor: '#ffffff', textBorderWidth: 2.5 },
        labelLayout: { hideOverlap: true },
      },
    ],
  };
}
