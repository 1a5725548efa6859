/**
 * Pricing errors per test asset as bars with +/- 2 s.e. whiskers (the sample pricing
 * error alpha_i and its standard error from the fit, METHODS section 3).
 */
import type { FitResult, PricingErrorRow } from '../results.js';
import { periodWord } from '../present/units.js';
import { baseOption, categoryAxis, num, valueAxis } from './common.js';
import { PALETTE } from './palette.js';
import type { ChartOption, CustomApi } from './types.js';

export type PricingErrorSort = 'asset' | 'alpha' | 'absAlpha' | 't' | 'input';

export interface PricingErrorChartOptions {
  sort?: PricingErrorSort;
  descending?: boolean;
  /** Annualised (alpha x periods per year) or per period; default annualised. */
  annual?: boolean;
}

/** Rows in display order; ties keep the input order. */
export function sortPricingErrors(rows: PricingErrorRow[], sort: PricingErrorSort = 'input', descending = false): PricingErrorRow[] {
  const indexed = rows.map((r, i) => ({ r, i }));
  const key = (r: PricingErrorRow): number | string => {
    switch (sort) {
      case 'alpha':
        return r.alpha;
      case 'absAlpha':
        return Math.abs(r.alpha);
      case 't':
        return r.t;
      case 'asset':
        return r.asset;
      default:
        return 0;
    }
  };
  if (sort === 'input') return descending ? [...rows].reverse() : [...rows];
  indexed.sort((a, b) => {
    const ka = key(a.r);
    const kb = key(b.r);
    const c = typeof ka === 'string' && typeof kb === 'string' ? ka.localeCompare(kb, undefined, { numeric: true }) : (ka as number) - (kb as number);
    return (descending ? -c : c) || a.i - b.i;
  });
  return indexed.map((x) => x.r);
}

/** Colour of a bar: positive and negative pricing errors differ. */
export function barColor(value: number): string {
  return value >= 0 ? PALETTE.primary : PALETTE.negative;
}

export function pricingErrorOption(fit: FitResult, opts: PricingErrorChartOptions = {}): ChartOption {
  const annual = opts.annual ?? true;
  const rows = sortPricingErrors(fit.pricingErrors, opts.sort ?? 'input', opts.descending ?? false);
  const scale = 100; // percent
  const val = (r: PricingErrorRow): number => (annual ? r.alphaAnnual : r.alpha) * scale;
  const se = (r: PricingErrorRow): number => (annual ? r.seAnnual : r.se) * scale;
  const unit = annual ? '% per year' : `% per ${periodWord(fit.sample.frequency)}`;
  // With instruments one asset has a row per instrument: "<asset>:<instrument>" (the asset alone for the constant).
  const key = (r: PricingErrorRow): string => (r.instrument === undefined || r.instrument === 'const' ? r.asset : `${r.asset}:${r.instrument}`);
  const assets = rows.map(key);
  const bars = rows.map((r) => ({ value: val(r), itemStyle: { color: barColor(val(r)) } }));
  const whiskers = rows.map((r, i) => [i, val(r) - 2 * se(r), val(r) + 2 * se(r)]);
  const byAsset = new Map(rows.map((r) => [key(r), r]));
  const wide = rows.length > 40;
  return {
    id: 'pricing-errors',
    ...baseOption(),
    grid: { left: 64, right: 16, top: 20, bottom: rows.length > 24 ? 84 : rows.length > 10 ? 64 : 36 },
    tooltip: {
      ...(baseOption().tooltip as Record<string, unknown>),
      trigger: 'axis',
      axisPointer: { type: 'shadow', shadowStyle: { color: 'rgba(29,36,48,0.05)' } },
      formatter: (params: { name?: string }[] | { name?: string }) => {
        const first = Array.isArray(params) ? params[0] : params;
        const r = first?.name !== undefined ? byAsset.get(first.name) : undefined;
        if (!r) return '';
        return `<b>${r.asset}</b>${r.instrument && r.instrument !== 'const' ? ` x ${r.instrument}` : ''}<br/>alpha ${num(val(r), 3)} ${unit}<br/>s.e. ${num(se(r), 3)}&nbsp;&nbsp;t ${num(r.t, 2)}`;
      },
    },
    xAxis: categoryAxis(assets),
    yAxis: valueAxis(`pricing error, ${unit}`, { nameGap: 46 }),
    series: [
      {
        type: 'bar',
        name: 'pricing error',
        data: bars,
        barMaxWidth: 28,
        barCategoryGap: wide ? '20%' : '35%',
      },
      {
        type: 'custom',
        name: '±2 s.e.',
        data: whiskers,
        z: 3,
        silent: true,
        renderItem: (_params: unknown, api: CustomApi) => {
          const x = api.value(0);
          const lo = api.coord([x, api.value(1)]);
          const hi = api.coord([x, api.value(2)]);
          const cap = wide ? 2 : 4;
          const style = { stroke: PALETTE.ink, lineWidth: 1, opacity: 0.7 };
          return {
            type: 'group',
            children: [
              { type: 'line', shape: { x1: lo[0], y1: lo[1], x2: hi[0], y2: hi[1] }, style },
              { type: 'line', shape: { x1: lo[0] - cap, y1: lo[1], x2: lo[0] + cap, y2: lo[1] }, style },
              { type: 'line', shape: { x1: hi[0] - cap, y1: hi[1], x2: hi[0] + cap, y2: hi[1] }, style },
            ],
          };
        },
        encode: { x: 0, y: [1, 2] },
      },
    ],
  };
}
