/**
 * Pricing errors of a fit with instruments (METHODS 9) as a grid: one row per test asset,
 * one column per instrument (the constant first), each cell the pricing error of that
 * asset's return scaled by that instrument. A scaled payoff's error is in units of return
 * times the instrument, so errors of different columns do not compare; the colour shows
 * t = alpha / s.e., which does (diverging: the positive colour above zero, the negative one
 * below, full strength at |t| >= 3), and each cell is labelled with its t. The tooltip
 * gives alpha and its s.e. as well.
 */
import type { FitResult, PricingErrorRow } from '../results.js';
import { baseOption, categoryAxis, num } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption, CustomApi } from './types.js';

/** |t| at which a cell reaches full colour. */
export const HEATMAP_T_FULL = 3;

export interface HeatmapCell {
  asset: string;
  instrument: string;
  /** Column (instrument) and row (asset) indices. */
  x: number;
  y: number;
  t: number;
  alpha: number;
  se: number;
  color: string;
}

function hex(c: string): [number, number, number] {
  return [parseInt(c.slice(1, 3), 16), parseInt(c.slice(3, 5), 16), parseInt(c.slice(5, 7), 16)];
}

/** White blended towards the positive or negative colour by |t| / HEATMAP_T_FULL (capped at 1). */
export function heatColor(t: number): string {
  const w = Number.isFinite(t) ? Math.min(1, Math.abs(t) / HEATMAP_T_FULL) : 0;
  const [r, g, b] = hex(t >= 0 ? PALETTE.primary : PALETTE.negative);
  const mix = (c: number) => Math.round(255 + (c - 255) * w);
  return `#${[mix(r), mix(g), mix(b)].map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

/** Does the fit have pricing errors per asset and instrument? */
export function hasInstrumentErrors(fit: FitResult): boolean {
  return fit.pricingErrors.some((r) => r.instrument !== undefined && r.instrument !== 'const');
}

/** The grid's rows (assets, in the result's order), columns (instruments) and cells. */
export function heatmapCells(fit: FitResult, annual = true): { assets: string[]; instruments: string[]; cells: HeatmapCell[] } {
  const instruments = fit.sample.instruments ?? [...new Set(fit.pricingErrors.map((r) => r.instrument ?? 'const'))];
  const assets: string[] = [];
  for (const r of fit.pricingErrors) if (!assets.includes(r.asset)) assets.push(r.asset);
  const cells = fit.pricingErrors.map((r: PricingErrorRow) => {
    const instrument = r.instrument ?? 'const';
    return {
      asset: r.asset,
      instrument,
      x: instruments.indexOf(instrument),
      y: assets.indexOf(r.asset),
      t: r.t,
      alpha: annual ? r.alphaAnnual : r.alpha,
      se: annual ? r.seAnnual : r.se,
      color: heatColor(r.t),
    };
  });
  return { assets, instruments, cells };
}

export function pricingErrorHeatmapOption(fit: FitResult, opts: { annual?: boolean } = {}): ChartOption {
  const annual = opts.annual ?? true;
  const { assets, instruments, cells } = heatmapCells(fit, annual);
  const unit = annual ? '% per year' : `% per period (${fit.sample.frequency})`;
  const byIndex = new Map(cells.map((c) => [`${c.x}:${c.y}`, c]));
  return {
    id: 'pricing-error-grid',
    ...baseOption(),
    grid: { left: 150, right: 16, top: 28, bottom: 40 },
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      trigger: 'item',
      formatter: (p: { value?: number[] }) => {
        const c = p.value ? byIndex.get(`${p.value[0]}:${p.value[1]}`) : undefined;
        if (!c) return '';
        return `<b>${c.asset}</b> x <b>${c.instrument}</b><br/>alpha ${num(100 * c.alpha, 3)} ${unit} (return x instrument)<br/>s.e. ${num(100 * c.se, 3)}&nbsp;&nbsp;t ${num(c.t, 2)}`;
      },
    },
    xAxis: categoryAxis(instruments, { position: 'top', splitArea: { show: false }, name: 'instrument', nameLocation: 'middle', nameGap: 22, nameTextStyle: { color: PALETTE.muted, fontSize: 11 } }),
    yAxis: categoryAxis(assets, { inverse: true, axisLabel: { color: PALETTE.muted, fontSize: 10, rotate: 0, interval: 0 } }),
    series: [
      {
        type: 'custom',
        name: 't of the pricing error',
        data: cells.map((c) => ({ value: [c.x, c.y, c.t], itemStyle: { color: c.color } })),
        renderItem: (_params: unknown, api: CustomApi) => {
          const x = api.value(0);
          const y = api.value(1);
          const t = api.value(2);
          const centre = api.coord([x, y]);
          const size = api.size ? api.size([1, 1]) : [40, 16];
          const w = size[0] - 2;
          const h = size[1] - 2;
          const color = heatColor(t);
          const dark = Math.abs(t) >= HEATMAP_T_FULL / 2;
          return {
            type: 'group',
            children: [
              { type: 'rect', shape: { x: centre[0] - w / 2, y: centre[1] - h / 2, width: w, height: h }, style: { fill: color, stroke: PALETTE.rule, lineWidth: 1 } },
              { type: 'text', style: { text: num(t, 1), x: centre[0], y: centre[1], textAlign: 'center', textVerticalAlign: 'middle', fontSize: 10, fill: dark ? '#ffffff' : PALETTE.ink } },
            ],
          };
        },
        encode: { x: 0, y: 1 },
      },
    ],
  };
}
