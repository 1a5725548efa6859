/**
 * The grid of pricing errors by asset and instrument (shared/charts/pricing-error-heatmap.ts)
 * on a real fit with instruments: one cell per (asset, instrument) pair holding the fit's
 * own t and annualised alpha, rows in the result's asset order, the constant's column first;
 * colours blend white into the positive or negative colour by |t| / 3 (hand-worked values).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { hasInstrumentErrors, heatColor, heatmapCells, pricingErrorHeatmapOption, PALETTE } from '../../../shared/charts/index.js';
import { gmmFit } from '../../../shared/estimation/gmmFit.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { panelFromFixture, type FixtureData } from '../estimation/helpers.js';

const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, '../estimation/fixtures/instruments_reference.json'), 'utf8')) as { data: FixtureData & { instruments: number[][] } };

function fitWithInstruments(scale: 'returns' | 'factors') {
  const base = panelFromFixture(fx.data, 'excess', ['f1', 'f2']);
  const T = base.periods.length;
  const panel = {
    ...base,
    instruments: { lag: 1, series: ['dp', 'spread'].map((name, j) => ({ name, values: Float64Array.from({ length: T }, (_, t) => fx.data.instruments[t][j]) })), lost: [] },
  };
  return gmmFit(parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, instruments: { series: ['dp', 'spread'], scale } }), panel);
}

describe('pricing errors by asset and instrument', () => {
  it('colours: white at t = 0, full colour at |t| >= 3, halfway at 1.5', () => {
    expect(heatColor(0)).toBe('#ffffff');
    expect(heatColor(3)).toBe(PALETTE.primary);
    expect(heatColor(-7)).toBe(PALETTE.negative);
    // 0x2b = 43: 255 + (43 - 255) / 2 = 149 = 0x95; 0x5f = 95 -> 175 = 0xaf; 0x7d = 125 -> 190 = 0xbe
    expect(heatColor(1.5)).toBe('#95afbe');
  });

  it('one cell per asset and instrument, carrying the fit\'s t and annualised alpha', () => {
    const fit = fitWithInstruments('returns');
    expect(hasInstrumentErrors(fit)).toBe(true);
    const { assets, instruments, cells } = heatmapCells(fit);
    expect(instruments).toEqual(['const', 'dp', 'spread']);
    expect(assets).toEqual(fit.sample.assets);
    expect(cells).toHaveLength(assets.length * 3);
    for (const r of fit.pricingErrors) {
      const c = cells.find((x) => x.asset === r.asset && x.instrument === r.instrument)!;
      expect(c.t).toBe(r.t);
      expect(c.alpha).toBe(r.alphaAnnual);
      expect(c.x).toBe(instruments.indexOf(r.instrument!));
      expect(c.y).toBe(assets.indexOf(r.asset));
      expect(c.color).toBe(heatColor(r.t));
    }
    const o = pricingErrorHeatmapOption(fit);
    const data = o.series[0].data as { value: number[] }[];
    expect(data.map((d) => d.value[2])).toEqual(fit.pricingErrors.map((r) => r.t));
  });

  it('scaled factors only: every pricing error is the constant\'s, so there is no grid to draw', () => {
    expect(hasInstrumentErrors(fitWithInstruments('factors'))).toBe(false);
  });
});

describe('the other fit charts with instruments', () => {
  it('bars are keyed by asset and instrument; predicted against realised shows the unscaled returns only', async () => {
    const { pricingErrorOption, predictedRealizedOption } = await import('../../../shared/charts/index.js');
    const fit = fitWithInstruments('returns');
    const bars = pricingErrorOption(fit);
    const names = (bars.xAxis as { data: string[] }).data;
    expect(names).toHaveLength(fit.pricingErrors.length);
    expect(new Set(names).size).toBe(names.length);
    expect(names[fit.sample.assets.length]).toBe(`${fit.sample.assets[0]}:dp`);
    const pts = predictedRealizedOption(fit).series.find((x) => x.type === 'scatter')!.data as { name: string }[];
    expect(pts.map((p) => p.name)).toEqual(fit.sample.assets);
  });
});
