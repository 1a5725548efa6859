// Identities every return series must satisfy, by the definitions of METHODS section 1
// (R_t = (P_t + D_t)/P_{t-1}; V_0 = 1, V_t = V_{t-1} R_t; l_t = ln R_t; R_month = prod
// R_day) and of the split factor in shared/data.ts (prices and dividends before t divided
// by the product of later factors). Inputs: the pandas fixture's prices (fixtures/prices.csv)
// and seeded random histories from fast-check. Tolerance relative 1e-12 unless stated
// (products of up to ~600 factors accumulate a few ulps each).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { PriceHistory } from '../../../shared/data.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { returnsTable } from '../../../shared/returns/index.js';
import { expectClose, readPrices } from './helpers.js';

const histories = readPrices();

function errorOf(fn: () => unknown): unknown {
  try {
    fn();
  } catch (e) {
    return e;
  }
  return null;
}

describe('total-return index identities', () => {
  for (const frequency of ['daily', 'weekly', 'monthly', 'quarterly'] as const) {
    it(`${frequency}: V_t = V_{t-1} R_t wherever both periods are present, and V starts at 1`, () => {
      const index = returnsTable(histories, { frequency, kind: 'index' });
      const gross = returnsTable(histories, { frequency, kind: 'gross' });
      for (const h of histories) {
        const v = index.series[h.asset];
        const first = v.findIndex((x) => x !== null);
        expect(v[first]).toBe(1);
        let checked = 0;
        for (let t = 1; t < index.periods.length; t++) {
          const at = gross.periods.indexOf(index.periods[t]);
          const r = at >= 0 ? gross.series[h.asset][at] : null;
          if (r === null || v[t] === null || v[t - 1] === null) continue;
          expectClose(v[t], (v[t - 1] as number) * r, `${frequency} ${h.asset} ${index.periods[t]}`);
          checked += 1;
        }
        expect(checked).toBeGreaterThan(0);
      }
    });
  }

  it('V_T = prod R_t and ln V_T = sum of log returns over the whole history of an asset without gaps', () => {
    const alder = histories.filter((h) => h.asset === 'alder_works');
    for (const frequency of ['daily', 'monthly', 'annual'] as const) {
      const v = returnsTable(alder, { frequency, kind: 'index' }).series.alder_works;
      const g = returnsTable(alder, { frequency, kind: 'gross' }).series.alder_works;
      const l = returnsTable(alder, { frequency, kind: 'log' }).series.alder_works;
      expect(v.length).toBe(g.length + 1);
      let prod = 1;
      let sum = 0;
      for (let t = 0; t < g.length; t++) {
        prod *= g[t] as number;
        sum += l[t] as number;
        expectClose(v[t + 1], prod, `${frequency} V at ${t + 1}`, 1e-12);
        expectClose(Math.log(v[t + 1] as number), sum, `${frequency} ln V at ${t + 1}`, 1e-11, 1e-13);
      }
    }
  });

  it('monthly gross = product of the daily gross returns inside the month (log returns add)', () => {
    const alder = histories.filter((h) => h.asset === 'alder_works');
    const daily = returnsTable(alder, { frequency: 'daily', kind: 'gross' });
    const monthly = returnsTable(alder, { frequency: 'monthly', kind: 'gross' });
    monthly.periods.forEach((label, m) => {
      const month = label.slice(0, 7);
      let prod = 1;
      daily.periods.forEach((d, t) => {
        if (d.slice(0, 7) === month) prod *= daily.series.alder_works[t] as number;
      });
      expectClose(monthly.series.alder_works[m], prod, `month ${month}`);
    });
  });

  it('with zero dividends and no split the gross return is the price relative', () => {
    const h = histories.find((x) => x.asset === 'alder_works') as PriceHistory;
    const noDiv: PriceHistory = { ...h, dividend: new Float64Array(h.dates.length) };
    const daily = returnsTable([noDiv], { frequency: 'daily', kind: 'gross' });
    for (let t = 0; t < daily.periods.length; t++) {
      expectClose(daily.series.alder_works[t], h.price[t + 1] / h.price[t], `daily ${daily.periods[t]}`, 1e-15);
    }
    const monthly = returnsTable([noDiv], { frequency: 'monthly', kind: 'gross' });
    monthly.periods.forEach((label, m) => {
      const end = h.dates.indexOf(label);
      const prevMonth = monthly.periods[m - 1] ?? h.dates.filter((d) => d.slice(0, 7) < label.slice(0, 7)).at(-1);
      const start = h.dates.indexOf(prevMonth as string);
      expectClose(monthly.series.alder_works[m], h.price[end] / h.price[start], `monthly ${label}`, 1e-12);
    });
  });

  it('a dividend on a row without a price is carried to the next priced row (hand-worked)', () => {
    const h: PriceHistory = { asset: 'x', dates: ['2024-01-02', '2024-01-03', '2024-01-04'], price: Float64Array.of(10, Number.NaN, 11), dividend: Float64Array.of(0, 0.5, 0) };
    const t = returnsTable([h], { frequency: 'daily', kind: 'gross' });
    expect(t.periods).toEqual(['2024-01-04']);
    expectClose(t.series.x[0], (11 + 0.5) / 10, 'carried dividend', 1e-15);
  });

  it('a row without a price on a trading day of another asset: no return across the gap, the other asset unaffected (hand-worked)', () => {
    const dates = ['2024-01-02', '2024-01-03', '2024-01-04', '2024-01-05'];
    const x: PriceHistory = { asset: 'x', dates, price: Float64Array.of(10, Number.NaN, 11, 12), dividend: Float64Array.of(0, 0.5, 0, 0) };
    const y: PriceHistory = { asset: 'y', dates, price: Float64Array.of(20, 21, 22, 22), dividend: Float64Array.of(0, 0, 1, 0) };
    const t = returnsTable([x, y], { frequency: 'daily', kind: 'gross' });
    expect(t.periods).toEqual(dates.slice(1));
    // x: 01-04 follows its close of 01-02 over the trading day 01-03, so no daily return there
    expect(t.series.x).toEqual([null, null, 12 / 11]);
    expect(t.series.y).toEqual([21 / 20, (22 + 1) / 21, 22 / 22]);
  });
});

describe('the split factor leaves returns unchanged', () => {
  it('the fixture: returns from raw prices with split factors equal those from prices adjusted by hand (data.ts definition)', () => {
    for (const h of histories.filter((x) => x.adjust?.some((a) => a !== 1))) {
      const a = h.adjust as Float64Array;
      const later = new Float64Array(a.length);
      let acc = 1;
      for (let t = a.length - 1; t >= 0; t--) {
        later[t] = acc;
        acc *= a[t];
      }
      const adjusted: PriceHistory = { asset: h.asset, dates: h.dates, price: h.price.map((p, t) => p / later[t]), dividend: h.dividend.map((d, t) => d / later[t]) };
      for (const frequency of ['daily', 'monthly'] as const) {
        const raw = returnsTable([h], { frequency, kind: 'gross' });
        const adj = returnsTable([adjusted], { frequency, kind: 'gross' });
        expect(raw.periods).toEqual(adj.periods);
        raw.series[h.asset].forEach((r, t) => expectClose(r, adj.series[h.asset][t], `${h.asset} ${frequency} ${raw.periods[t]}`, 1e-13));
      }
    }
  });

  it('property (fast-check, seeded): any splits on any days leave daily and monthly returns unchanged', () => {
    const days = Array.from({ length: 70 }, (_, i) => new Date(Date.UTC(2024, 0, 1 + i)).toISOString().slice(0, 10));
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -0.05, max: 0.05, noNaN: true }), { minLength: 70, maxLength: 70 }),
        fc.array(fc.constantFrom(1, 1, 1, 1, 1, 1, 1, 1, 2, 3, 0.5, 1.5), { minLength: 70, maxLength: 70 }),
        fc.array(fc.constantFrom(0, 0, 0, 0, 0, 0.25, 1), { minLength: 70, maxLength: 70 }),
        (moves, splits, divs) => {
          // Economic value per original share, then per current share after the splits.
          const econ: number[] = [];
          let p = 50;
          for (const m of moves) econ.push((p *= 1 + m));
          const shares: number[] = [];
          let s = 1;
          splits.forEach((f, t) => shares.push((s *= t === 0 ? 1 : f)));
          const raw: PriceHistory = {
            asset: 'p',
            dates: days,
            price: Float64Array.from(econ, (e, t) => e / shares[t]),
            dividend: Float64Array.from(divs, (d, t) => d / shares[t]),
            adjust: Float64Array.from(splits, (f, t) => (t === 0 ? 1 : f)),
          };
          const plain: PriceHistory = { asset: 'p', dates: days, price: Float64Array.from(econ), dividend: Float64Array.from(divs) };
          for (const frequency of ['daily', 'monthly'] as const) {
            const a = returnsTable([raw], { frequency, kind: 'gross' }).series.p;
            const b = returnsTable([plain], { frequency, kind: 'gross' }).series.p;
            if (a.length !== b.length) return false;
            for (let t = 0; t < a.length; t++) if (Math.abs((a[t] as number) - (b[t] as number)) > 1e-12 * Math.abs(b[t] as number)) return false;
          }
          return true;
        },
      ),
      { seed: 20240613, numRuns: 200 },
    );
  });
});

describe('data already at the requested frequency, and data at a lower one', () => {
  const monthly: PriceHistory = {
    asset: 'm',
    dates: ['2024-01-01', '2024-02-01', '2024-03-01', '2024-04-01'],
    price: Float64Array.of(20, 21, 19.5, 22),
    dividend: Float64Array.of(0, 0, 0.3, 0),
  };

  it('monthly data -> monthly returns is no aggregation: (P_t + D_t) / P_{t-1}, labelled by the data\'s own dates, nothing flagged', () => {
    const t = returnsTable([monthly], { frequency: 'monthly', kind: 'gross' });
    expect(t.periods).toEqual(['2024-02-01', '2024-03-01', '2024-04-01']);
    expectClose(t.series.m[0], 21 / 20, 'Feb', 1e-15);
    expectClose(t.series.m[1], (19.5 + 0.3) / 21, 'Mar', 1e-15);
    expectClose(t.series.m[2], 22 / 19.5, 'Apr', 1e-15);
    expect(t.sample.flags).toEqual([]);
    expect(t.sample).toMatchObject({ first: '2024-02-01', last: '2024-04-01', T: 3 });
  });

  it('monthly data asked at weekly frequency: the asset is listed as dropped, with the reason', () => {
    const t = returnsTable([monthly], { frequency: 'weekly', kind: 'gross' });
    expect(t.sample.T).toBe(0);
    expect(t.sample.dropped).toEqual([{ asset: 'm', reason: expect.stringContaining('stored at monthly frequency, lower than the weekly requested') }]);
  });
});

describe('bad input is refused with the row named', () => {
  const base = (): PriceHistory => ({ asset: 'q', dates: ['2024-01-02', '2024-01-03', '2024-01-04'], price: Float64Array.of(10, 11, 12), dividend: Float64Array.of(0, 0, 0) });
  it('a non-positive price', () => {
    const h = base();
    h.price[1] = 0;
    const e = errorOf(() => returnsTable([h], { frequency: 'daily', kind: 'gross' }));
    expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
    expect((e as Error).message).toContain('"q", 2024-01-03');
  });
  it('dates out of order', () => {
    const h = base();
    h.dates = ['2024-01-02', '2024-01-04', '2024-01-03'];
    const e = errorOf(() => returnsTable([h], { frequency: 'daily', kind: 'gross' }));
    expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
    expect((e as Error).message).toContain('row 3 (2024-01-03) follows 2024-01-04');
  });
  it('a date that is not a calendar date', () => {
    const h = base();
    h.dates = ['2024-01-02', '2024-02-30', '2024-03-01'];
    const e = errorOf(() => returnsTable([h], { frequency: 'daily', kind: 'gross' }));
    expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
    expect((e as Error).message).toContain('"2024-02-30"');
  });
  it('a negative dividend and a zero split factor', () => {
    const h = base();
    h.dividend[2] = -1;
    expect((errorOf(() => returnsTable([h], { frequency: 'daily', kind: 'gross' })) as Error).message).toContain('dividend -1');
    const g = base();
    g.adjust = Float64Array.of(1, 0, 1);
    expect((errorOf(() => returnsTable([g], { frequency: 'daily', kind: 'gross' })) as Error).message).toContain('split factor 0');
  });
});
