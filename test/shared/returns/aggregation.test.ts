// Aggregation of daily prices and dividends to daily, weekly, monthly, quarterly and
// annual returns, checked against pandas (python3-pandas 1.5.3, numpy 1.24.2):
// fixtures/make_aggregation.py computed fixtures/aggregation.json from fixtures/prices.csv
// (resample-style grouping by calendar period of the reinvested value index, then the
// ratio of consecutive period closes). Tolerance: relative 1e-12 on gross returns and
// the index (the two routes differ only in floating-point rounding of the same products);
// net and log returns are differences near zero, so they get an absolute floor of 1e-14.
import { describe, expect, it } from 'vitest';
import type { Frequency } from '../../../shared/data.js';
import { returnsTable, type ReturnKind } from '../../../shared/returns/index.js';
import { expectClose, readJson, readPrices, readSeries } from './helpers.js';

interface FreqEntry {
  periods: string[];
  gross: Record<string, (number | null)[]>;
  net?: Record<string, (number | null)[]>;
  log?: Record<string, (number | null)[]>;
  indexPeriods?: string[];
  index?: Record<string, (number | null)[]>;
  sample: { first: string | null; last: string | null; T: number; dropped: string[] };
  cutShort?: { asset: string; period: string; from: string | null; to: string }[];
}
interface Fixture {
  libraries: Record<string, string>;
  frequencies: Record<Frequency, FreqEntry>;
  monthlySeries: { riskfreeGross: Record<string, number>; excess: Record<string, Record<string, number>> };
}

const fixture = readJson<Fixture>('aggregation.json');
const histories = readPrices();

describe('aggregation of daily prices against pandas (fixtures/make_aggregation.py)', () => {
  it('reads the three invented assets of the fixture', () => {
    expect(histories.map((h) => h.asset)).toEqual(['alder_works', 'birch_mills', 'cedar_lines']);
    expect(fixture.libraries.pandas).toBe('1.5.3');
  });

  for (const frequency of ['daily', 'weekly', 'monthly', 'quarterly', 'annual'] as const) {
    const ref = fixture.frequencies[frequency];
    const kinds: ReturnKind[] = frequency === 'daily' ? ['gross'] : ['gross', 'net', 'log', 'index'];
    for (const kind of kinds) {
      it(`${frequency} ${kind} returns match pandas`, () => {
        const table = returnsTable(histories, { frequency, kind });
        const periods = kind === 'index' ? (ref.indexPeriods as string[]) : ref.periods;
        const expected = kind === 'index' ? ref.index : kind === 'gross' ? ref.gross : kind === 'net' ? ref.net : ref.log;
        // Period labels: the last trading date seen in each period across the assets (pandas groupby max).
        expect(table.periods).toEqual(periods);
        expect(table.frequency).toBe(frequency);
        expect(table.kind).toBe(kind);
        for (const [asset, values] of Object.entries(expected as Record<string, (number | null)[]>)) {
          const got = table.series[asset];
          expect(got.length).toBe(values.length);
          for (let t = 0; t < values.length; t++) {
            expectClose(got[t], values[t], `${frequency} ${kind} ${asset} ${periods[t]}`, 1e-12, kind === 'net' || kind === 'log' ? 1e-14 : 0);
          }
        }
      });
    }

    it(`${frequency}: the common sample matches the rule computed in pandas`, () => {
      const table = returnsTable(histories, { frequency, kind: 'gross' });
      expect({ first: table.sample.first, last: table.sample.last, T: table.sample.T }).toEqual({ first: ref.sample.first, last: ref.sample.last, T: ref.sample.T });
      expect(table.sample.dropped.map((d) => d.asset).sort()).toEqual([...ref.sample.dropped].sort());
      for (const d of table.sample.dropped) expect(d.reason).toMatch(/no value in \d+ of the \d+ periods/);
    });

    if (frequency !== 'daily') {
      it(`${frequency}: a last period cut short by the end of the data is kept and flagged`, () => {
        const table = returnsTable(histories, { frequency, kind: 'gross' });
        const flags = table.sample.flags.map((f) => ({ asset: f.asset, period: f.period }));
        expect(flags).toEqual((ref.cutShort ?? []).map((f) => ({ asset: f.asset, period: f.period })));
        for (const f of ref.cutShort ?? []) {
          const note = table.sample.flags.find((x) => x.asset === f.asset)?.note ?? '';
          expect(note).toContain(`to ${f.to}`);
          if (f.from) expect(note).toContain(`from ${f.from}`);
          // Kept: the asset has a return in its flagged period.
          const at = table.periods.indexOf(f.period);
          expect(table.series[f.asset][at]).not.toBeNull();
        }
      });
    }
  }

  it('monthly excess returns over daily rates compounded within the month match pandas', () => {
    const rf = readSeries().find((s) => s.name === 'cash_rate');
    const table = returnsTable(histories, { frequency: 'monthly', kind: 'excess', riskfree: rf });
    let checked = 0;
    for (const [asset, byLabel] of Object.entries(fixture.monthlySeries.excess)) {
      table.periods.forEach((p, t) => {
        const expected = byLabel[p] ?? null;
        expectClose(table.series[asset][t], expected, `excess ${asset} ${p}`, 1e-12, 1e-14);
        if (expected !== null) checked += 1;
      });
    }
    expect(checked).toBeGreaterThan(60);
    // The daily rates end mid-month too: their last month is flagged beside the assets'.
    expect(table.sample.flags.some((f) => f.asset === 'cash_rate' && f.period === '2023-04-21')).toBe(true);
  });

  it('daily data asked at daily frequency is not flagged (no period is cut short)', () => {
    expect(returnsTable(histories, { frequency: 'daily', kind: 'gross' }).sample.flags).toEqual([]);
  });

  it('the missing month of cedar_lines leaves that month and the next without a return, and the gap week of birch_mills likewise', () => {
    // Independent of pandas: a period needs a close in the period before it (docs/methods.md, Returns).
    const monthly = returnsTable(histories, { frequency: 'monthly', kind: 'gross' });
    expect(monthly.series.cedar_lines[monthly.periods.indexOf('2022-03-31')]).toBeNull();
    expect(monthly.series.cedar_lines[monthly.periods.indexOf('2022-04-29')]).toBeNull();
    expect(monthly.series.cedar_lines[monthly.periods.indexOf('2022-05-31')]).not.toBeNull();
    const weekly = returnsTable(histories, { frequency: 'weekly', kind: 'gross' });
    expect(weekly.series.birch_mills[weekly.periods.indexOf('2021-08-13')]).toBeNull();
    expect(weekly.series.birch_mills[weekly.periods.indexOf('2021-08-20')]).toBeNull();
    expect(weekly.series.birch_mills[weekly.periods.indexOf('2021-08-27')]).not.toBeNull();
    expect(weekly.series.alder_works[weekly.periods.indexOf('2021-08-13')]).not.toBeNull();
  });
});
