/**
 * Named refusals and warnings of the present-value analyses, on the invented demo market
 * (sample-data/monthly/prices.csv) and hand-made histories.
 */
import { describe, expect, it } from 'vitest';
import type { PriceHistory, ReturnSeries } from '../../../shared/data.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { yearlyValues } from '../../../shared/returns/yearly.js';
import { parseDriftSpec, parsePresentValueSpec } from '../../../shared/spec.js';
import { driftAnalysis, driftPanel } from '../../../shared/values/drift.js';
import { presentValue } from '../../../shared/values/presentValue.js';
import { demoHistories } from './helpers.js';
import { present } from '../../../shared/present/index.js';
import { resultToHtml } from '../../../shared/report/html.js';
import { resultToText } from '../../../shared/report/text.js';

const histories = demoHistories();
const byName = (n: string): PriceHistory => histories.find((h) => h.asset === n) as PriceHistory;

function refusal(fn: () => unknown): { code: string; message: string; hint?: string } {
  try {
    fn();
  } catch (e) {
    if (isDeflatorError(e)) return { code: e.code, message: e.message, hint: e.hint };
    throw e;
  }
  throw new Error('expected a refusal');
}

/** A copy of a history with some rows changed. */
function edited(h: PriceHistory, change: (date: string, row: { price: number; dividend: number }) => { price: number; dividend: number } | null): PriceHistory {
  const keep: number[] = [];
  const price: number[] = [];
  const dividend: number[] = [];
  h.dates.forEach((d, i) => {
    const r = change(d, { price: h.price[i], dividend: h.dividend[i] });
    if (!r) return;
    keep.push(i);
    price.push(r.price);
    dividend.push(r.dividend);
  });
  return {
    asset: h.asset,
    dates: keep.map((i) => h.dates[i]),
    price: Float64Array.from(price),
    dividend: Float64Array.from(dividend),
    adjust: Float64Array.from(keep, (i) => (h.adjust as Float64Array)[i]),
    shares: Float64Array.from(keep, (i) => (h.shares as Float64Array)[i]),
  };
}

describe('present value: named refusals', () => {
  it('an asset that never pays a dividend', () => {
    const e = refusal(() => presentValue(parsePresentValueSpec({ analysis: 'present-value', asset: 'fallowmere-grain' }), histories));
    expect(e.code).toBe('DATA_MISSING');
    expect(e.message).toContain('pays no dividends');
    expect(e.hint).toContain('--aggregate');
  });

  it('a year without dividends names the year', () => {
    const h = edited(byName('harrowind-timber'), (d, r) => (d.startsWith('2010-') ? { ...r, dividend: 0 } : r));
    const e = refusal(() => yearlyValues([h], { aggregate: false }));
    expect(e.code).toBe('DATA_MISSING');
    expect(e.message).toContain('paid no dividends in 2010');
    expect(e.hint).toContain('--start/--end');
    // A window that avoids the year works.
    expect(yearlyValues([h], { aggregate: false, fromYear: 2011 }).years[0]).toBe('2011');
  });

  it('too few years', () => {
    const e = refusal(() => presentValue(parsePresentValueSpec({ analysis: 'present-value', asset: 'lanternfold-power', start: '2021', end: '2023' }), histories));
    expect(e.code).toBe('SAMPLE_TOO_SHORT');
    expect(e.message).toContain('3 years');
  });

  it('a year without a December close inside the sample names the year and the asset', () => {
    const h = edited(byName('brinemoor-ferries'), (d, r) => (d.startsWith('2012-12') ? null : r));
    const e = refusal(() => yearlyValues([h, byName('corvane-saltworks')], { aggregate: true }));
    expect(e.code).toBe('DATA_MISSING');
    expect(e.message).toContain('year 2012 is not covered by brinemoor-ferries');
  });

  it('an unknown asset', () => {
    const e = refusal(() => presentValue(parsePresentValueSpec({ analysis: 'present-value', asset: 'no-such-company' }), histories));
    expect(e.code).toBe('NOT_FOUND');
  });

  it('spec: one asset or the aggregate, not both, not neither', () => {
    expect(refusal(() => parsePresentValueSpec({ analysis: 'present-value' })).code).toBe('SPEC_INVALID');
    expect(refusal(() => parsePresentValueSpec({ analysis: 'present-value', asset: 'x', aggregate: true })).code).toBe('SPEC_INVALID');
    expect(refusal(() => parsePresentValueSpec({ analysis: 'present-value', aggregate: true, frequency: 'monthly' })).code).toBe('SPEC_INVALID');
  });

  it('an aggregate where shares are missing holds one share of each asset, with a warning', () => {
    const noShares = { ...byName('corvane-saltworks') };
    delete noShares.shares;
    const r = presentValue(parsePresentValueSpec({ analysis: 'present-value', aggregate: true, assets: ['brinemoor-ferries', 'corvane-saltworks'] }), [byName('brinemoor-ferries'), noShares]);
    expect(r.weighting).toBe('equal');
    expect(r.warnings.map((w) => w.code)).toContain('EQUAL_SHARES');
    expect(r.warnings.find((w) => w.code === 'EQUAL_SHARES')?.message).toContain('corvane-saltworks');
  });

  it('the demo aggregate: 24 whole years of market values, nothing to warn about', () => {
    const r = presentValue(parsePresentValueSpec({ analysis: 'present-value', aggregate: true }), histories);
    expect(r.sample).toEqual({ first: '2001', last: '2024', T: 24 });
    expect(r.weighting).toBe('shares');
    expect(r.warnings).toEqual([]);
  });
});

describe('drift: assets stored as returns', () => {
  it('a return series beside priced assets has drift and sigma, no split, and a warning saying why', () => {
    const months = histories[0].dates.slice(1);
    const fund: ReturnSeries = { name: 'harbor-fund', frequency: 'monthly', periods: months, net: Float64Array.from(months, (_, t) => 0.004 + 0.03 * Math.sin(t)) };
    const spec = parseDriftSpec({ analysis: 'drift', assets: ['lanternfold-power', 'harbor-fund'] });
    const r = driftAnalysis(spec, driftPanel(spec, histories, [fund]));
    const row = r.assets.find((a) => a.asset === 'harbor-fund');
    expect(row?.source).toBe('returns');
    expect(row?.priceGrowth).toBeNull();
    expect(row?.sigma).toBeGreaterThan(0);
    expect(r.warnings).toEqual([expect.objectContaining({ code: 'NO_PRICE_SPLIT' })]);
    expect(r.warnings[0].message).toContain('harbor-fund is stored as returns');
  });
});

describe('value warnings beside the numbers they qualify', () => {
  it('FEW_YEARS (six years of the demo aggregate) is listed under the regressions and long-run tables on every surface', () => {
    const r = presentValue(parsePresentValueSpec({ analysis: 'present-value', aggregate: true, start: '2019' }), histories);
    expect(r.warnings.map((w) => w.code)).toContain('FEW_YEARS');
    const p = present(r);
    for (const id of ['regressions', 'long-run']) expect(p.tables.find((t) => t.id === id)!.warnings.map((w) => w.code), id).toContain('FEW_YEARS');
    expect(p.tables.find((t) => t.id === 'covariance')!.warnings).toEqual([]);
    const text = resultToText(r);
    const block = text.slice(text.indexOf('\nPredictive regressions'), text.indexOf('\nLong-run coefficients'));
    expect(block).toMatch(/! warning 1 \(FEW_YEARS\) applies to this table/);
    expect(resultToHtml(r)).toMatch(/data-table="regressions"[\s\S]*?data-warning="FEW_YEARS"/);
  });

  it('NO_PRICE_SPLIT flags the rows of the assets stored as returns', () => {
    const months = histories[0].dates.slice(1);
    const fund: ReturnSeries = { name: 'harbor-fund', frequency: 'monthly', periods: months, net: Float64Array.from(months, (_, t) => 0.004 + 0.03 * Math.sin(t)) };
    const spec = parseDriftSpec({ analysis: 'drift', assets: ['lanternfold-power', 'harbor-fund'] });
    const r = driftAnalysis(spec, driftPanel(spec, histories, [fund]));
    const t = present(r).tables.find((x) => x.id === 'drift')!;
    const w = t.warnings.find((x) => x.code === 'NO_PRICE_SPLIT')!;
    expect(w.rows?.map((i) => t.rows[i][0])).toEqual(['harbor-fund']);
  });
});
