// The balanced panel: alignment of test assets with the risk-free, factor and
// consumption series, the common sample, and assets dropped with a reason. Expected
// values come from pandas (python3-pandas 1.5.3): fixtures/make_aggregation.py computed
// the monthly risk-free (daily rates compounded), the factor (daily values compounded),
// consumption growth (last level per period) and the panel window from the same CSVs.
// Tolerance: relative 1e-12; excess returns and factor values are differences near zero,
// so they get an absolute floor of 1e-14.
import { describe, expect, it } from 'vitest';
import type { NamedSeries, ReturnSeries } from '../../../shared/data.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { buildPanel, periodKey } from '../../../shared/returns/index.js';
import { parseFitSpec, type FitSpecInput } from '../../../shared/spec.js';
import { expectClose, readJson, readPrices, readSeries } from './helpers.js';

interface Fixture {
  monthlySeries: { riskfreeGross: Record<string, number>; factor: Record<string, number>; consumptionGrowth: Record<string, number>; excess: Record<string, Record<string, number>> };
  panelMonthlyExcess: {
    spec: FitSpecInput;
    periods: string[];
    assets: string[];
    dropped: string[];
    T: number;
    returns: Record<string, number[]>;
    riskfreeGross: number[];
    factor: number[];
    consumptionGrowth: number[];
  };
  quarterlyConsumptionGrowth: Record<string, number>;
}
const fixture = readJson<Fixture>('aggregation.json');
const histories = readPrices();
const series = readSeries();
const ref = fixture.panelMonthlyExcess;

function errorOf(fn: () => unknown): unknown {
  try {
    fn();
  } catch (e) {
    return e;
  }
  return null;
}

const spec = (over: Record<string, unknown> = {}) => parseFitSpec({ ...ref.spec, ...over });

describe('buildPanel against pandas (fixtures/make_aggregation.py)', () => {
  it('monthly excess returns, risk-free and factor on the common sample', () => {
    const panel = buildPanel({ histories, series, spec: spec() });
    expect(panel.frequency).toBe('monthly');
    expect(panel.returnKind).toBe('excess');
    expect(panel.periods).toEqual(ref.periods);
    expect(panel.periods.length).toBe(ref.T);
    expect(panel.assets).toEqual(ref.assets);
    panel.assets.forEach((a, i) => ref.returns[a].forEach((x, t) => expectClose(panel.returns[i][t], x, `excess ${a} ${ref.periods[t]}`, 1e-12, 1e-14)));
    ref.riskfreeGross.forEach((x, t) => expectClose(panel.riskfreeGross?.[t], x, `R^f ${ref.periods[t]}`));
    expect(panel.factors.map((f) => f.name)).toEqual(['mkt_excess']);
    ref.factor.forEach((x, t) => expectClose(panel.factors[0].values[t], x, `factor ${ref.periods[t]}`, 1e-12, 1e-14));
  });

  it('the asset with a missing month is dropped with the reason, and the sample is reported', () => {
    const panel = buildPanel({ histories, series, spec: spec() });
    for (const name of ref.dropped) {
      const note = panel.sampleNotes.find((n) => n.subject === name);
      expect(note?.reason).toMatch(/^dropped: no value in 2 of the \d+ periods .* \(first missing: 2022-03-31\)$/);
    }
    const star = panel.sampleNotes.find((n) => n.subject === '*');
    expect(star?.reason).toBe(`common sample ${ref.periods[0]}..${ref.periods[ref.T - 1]}: T = ${ref.T} monthly periods, N = ${ref.assets.length} test assets`);
    // The factor was compounded from daily values: said so.
    expect(panel.sampleNotes.find((n) => n.subject === 'mkt_excess')?.reason).toMatch(/compounded to monthly as prod\(1 \+ f\) - 1/);
    // birch_mills ends on 2023-03-15: its last month, inside the window, is cut short and noted.
    expect(panel.sampleNotes.find((n) => n.subject === 'birch_mills')?.reason).toBe('2023-03-31: last monthly period cut short by the end of the data: from 2023-02-28 to 2023-03-15');
  });

  it('consumption growth at the panel frequency (monthly levels: native; quarterly: last level per quarter)', () => {
    const m = buildPanel({ histories, series, spec: spec({ model: { kind: 'consumption', consumption: 'cons_level', delta: 1 } }) });
    expect(m.periods).toEqual(ref.periods);
    ref.consumptionGrowth.forEach((x, t) => expectClose(m.consumptionGrowth?.[t], x, `monthly growth ${ref.periods[t]}`));
    const q = buildPanel({ histories, series, spec: spec({ frequency: 'quarterly', returns: 'gross', model: { kind: 'consumption', consumption: 'cons_level' } }) });
    expect(q.periods.length).toBeGreaterThan(4);
    q.periods.forEach((p, t) => expectClose(q.consumptionGrowth?.[t], fixture.quarterlyConsumptionGrowth[p], `quarterly growth ${p}`));
  });

  it('gross returns with the risk-free asset included as a test asset', () => {
    const panel = buildPanel({ histories, series, spec: spec({ returns: 'gross', includeRiskfree: true, model: { kind: 'linear-gross', factors: ['mkt_excess'] } }) });
    expect(panel.returnKind).toBe('gross');
    expect(panel.assets).toEqual([...ref.assets, 'cash_rate']);
    const rfRow = panel.returns[panel.assets.indexOf('cash_rate')];
    ref.riskfreeGross.forEach((x, t) => expectClose(rfRow[t], x, `R^f as an asset ${ref.periods[t]}`));
    // Gross = excess + R^f (pandas values).
    ref.returns.alder_works.forEach((x, t) => expectClose(panel.returns[0][t], x + ref.riskfreeGross[t], `gross alder_works ${ref.periods[t]}`));
  });
});

describe('buildPanel windows and alignment', () => {
  it('start/end are inclusive on period labels; an asset with a hole in the window is dropped', () => {
    const panel = buildPanel({ histories, series, spec: spec({ start: '2021-06-01', end: '2022-12-31' }) });
    expect(panel.periods[0]).toBe('2021-06-30');
    expect(panel.periods.at(-1)).toBe('2022-12-30');
    expect(panel.periods.length).toBe(19);
    expect(panel.assets).toEqual(['alder_works', 'birch_mills']);
    // Same values as the full-sample panel on those periods.
    const off = ref.periods.indexOf('2021-06-30');
    panel.returns[0].forEach((x, t) => expectClose(x, ref.returns.alder_works[off + t], `alder_works ${panel.periods[t]}`, 1e-12, 1e-14));
  });

  it('a window that avoids the missing month keeps every asset', () => {
    const panel = buildPanel({ histories, series, spec: spec({ start: '2022-05-01', end: '2023-02-28' }) });
    expect(panel.assets).toEqual(['alder_works', 'birch_mills', 'cedar_lines']);
    expect(panel.periods.length).toBe(10);
    const cedar = fixture.monthlySeries.excess.cedar_lines;
    panel.periods.forEach((p, t) => expectClose(panel.returns[2][t], cedar[p], `cedar_lines ${p}`, 1e-12, 1e-14));
  });

  it('weekly: the gap week and the missing month drop two assets, each with its reason', () => {
    const panel = buildPanel({ histories, series, spec: spec({ frequency: 'weekly' }) });
    expect(panel.assets).toEqual(['alder_works']);
    expect(panel.sampleNotes.find((n) => n.subject === 'birch_mills')?.reason).toContain('first missing: 2021-08-13');
    expect(panel.sampleNotes.find((n) => n.subject === 'cedar_lines')?.reason).toContain('first missing: 2022-03-11');
    // Period labels are the last trading date of each ISO week; keys line up.
    expect(panel.periods.every((p) => new Date(`${p}T00:00:00Z`).getUTCDay() >= 1 && new Date(`${p}T00:00:00Z`).getUTCDay() <= 5)).toBe(true);
    expect(periodKey(panel.periods[0], 'weekly')).toMatch(/^2021-W\d\d$/);
  });

  it('a ready-made portfolio return series is a test asset by its name', () => {
    const monthly = fixture.monthlySeries.excess.alder_works;
    const labels = Object.keys(monthly);
    const rf = fixture.monthlySeries.riskfreeGross;
    const port: ReturnSeries = { name: 'sorted_low', frequency: 'monthly', periods: labels, net: Float64Array.from(labels, (p) => monthly[p] + rf[p] - 1) };
    const panel = buildPanel({ histories, series, portfolios: [port], spec: spec({ assets: ['sorted_low', 'birch_mills'] }) });
    expect(panel.assets).toEqual(['sorted_low', 'birch_mills']);
    panel.periods.forEach((p, t) => expectClose(panel.returns[0][t], monthly[p], `portfolio ${p}`, 1e-12, 1e-14));
    const weekly = { ...port, frequency: 'weekly' as const };
    const e = errorOf(() => buildPanel({ histories, series, portfolios: [weekly], spec: spec({ assets: ['sorted_low'] }) }));
    expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
    expect((e as Error).message).toContain('portfolio "sorted_low" holds weekly returns');
  });
});

describe('buildPanel with a yield-quoted risk-free series', () => {
  // Expected R^f from numpy: the "monthly yield-annual" cases of fixtures/riskfree.json
  // (fixtures/make_riskfree.py). The asset is a constant price (gross return 1), so its
  // excess return is 1 - R^f exactly as numpy computed it.
  const rfFixture = readJson<{ cases: { name: string; dates: string[]; values: number[]; expected: { periods: string[]; gross: number[] } }[] }>('riskfree.json');
  for (const dayCount of ['periods', 'actual365'] as const) {
    it(`spec.dayCount ${dayCount}`, () => {
      const c = rfFixture.cases.find((x) => x.name === `monthly yield-annual ${dayCount}`);
      if (!c) throw new Error('fixture case missing');
      const flat = { asset: 'flat', dates: c.dates, price: new Float64Array(c.dates.length).fill(10), dividend: new Float64Array(c.dates.length) };
      const rf: NamedSeries = { name: 'bill', kind: 'riskfree', rfForm: 'yield-annual', dates: c.dates, values: Float64Array.from(c.values) };
      const f: NamedSeries = { name: 'zero', kind: 'factor', dates: c.dates, values: new Float64Array(c.dates.length) };
      const panelSpec = parseFitSpec({ frequency: 'monthly', riskfree: 'bill', ...(dayCount === 'actual365' ? { dayCount } : {}), model: { kind: 'linear', factors: ['zero'] } });
      const panel = buildPanel({ histories: [flat], series: [rf, f], spec: panelSpec });
      expect(panel.periods).toEqual(c.expected.periods);
      c.expected.gross.forEach((g, t) => {
        expectClose(panel.riskfreeGross?.[t], g, `R^f ${c.expected.periods[t]}`);
        expectClose(panel.returns[0][t], 1 - g, `excess ${c.expected.periods[t]}`, 1e-12, 1e-15);
      });
    });
  }
});

describe('buildPanel errors', () => {
  it('a factor that is not there: DATA_MISSING naming it and listing the available ones', () => {
    const e = errorOf(() => buildPanel({ histories, series, spec: spec({ model: { kind: 'linear', factors: ['mkt_excess', 'value_spread'] } }) }));
    expect(isDeflatorError(e) && e.code).toBe('DATA_MISSING');
    expect((e as Error).message).toContain('"value_spread"');
    expect((e as Error).message).toContain('available factor/other series: mkt_excess');
  });

  it('an unknown test asset: DATA_MISSING listing the assets', () => {
    const e = errorOf(() => buildPanel({ histories, series, spec: spec({ assets: ['alder_works', 'elm_foundry'] }) }));
    expect(isDeflatorError(e) && e.code).toBe('DATA_MISSING');
    expect((e as Error).message).toContain('"elm_foundry"');
    expect((e as Error).message).toContain('alder_works, birch_mills, cedar_lines');
  });

  it('a risk-free series that is not there: DATA_MISSING', () => {
    const e = errorOf(() => buildPanel({ histories, series, spec: spec({ riskfree: 'deposit_rate' }) }));
    expect(isDeflatorError(e) && e.code).toBe('DATA_MISSING');
    expect((e as Error).message).toContain('available riskfree series: cash_rate');
  });

  it('fewer than two periods: SAMPLE_TOO_SHORT naming the window', () => {
    const e = errorOf(() => buildPanel({ histories, series, spec: spec({ start: '2022-06-01', end: '2022-06-30' }) }));
    expect(isDeflatorError(e) && e.code).toBe('SAMPLE_TOO_SHORT');
    expect((e as Error).message).toContain('2022-06-01..2022-06-30');
    expect((e as Error).message).toContain('holds 1 period(s)');
  });

  it('a risk-free series with a missing month inside the window: DATA_MISSING naming the month', () => {
    const rf = series.find((s) => s.name === 'cash_rate') as NamedSeries;
    const holed: NamedSeries = { ...rf, values: rf.values.map((v, i) => (rf.dates[i].startsWith('2022-07') ? Number.NaN : v)) };
    const e = errorOf(() => buildPanel({ histories, series: series.map((s) => (s === rf ? holed : s)), spec: spec() }));
    expect(isDeflatorError(e) && e.code).toBe('DATA_MISSING');
    // July has no rate and August has no previous month, so the first missing period is July.
    expect((e as Error).message).toContain('risk-free series "cash_rate" has no value for the monthly period 2022-07-29');
  });

  it('a series stored at a lower frequency than the panel: INPUT_INVALID', () => {
    const e = errorOf(() => buildPanel({ histories, series, spec: spec({ frequency: 'weekly', model: { kind: 'consumption', consumption: 'cons_level', delta: 1 } }) }));
    expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
    expect((e as Error).message).toContain('"cons_level" is stored at monthly frequency, lower than the weekly requested');
  });
});
