/**
 * Characteristic sorts: two small cases worked by hand (in the comments), the quantile
 * rule against numpy's default, and the option checks.
 */
import { describe, expect, it } from 'vitest';
import type { PriceHistory } from '../../../shared/data.js';
import { breakpoints, bucketOf, parseSortSpec, sortPortfolios } from '../../../shared/portfolios/index.js';

function history(asset: string, dates: string[], price: number[], extra: Partial<Pick<PriceHistory, 'dividend' | 'shares' | 'adjust'>> = {}): PriceHistory {
  return {
    asset,
    dates,
    price: Float64Array.from(price),
    dividend: extra.dividend ?? new Float64Array(price.length),
    ...(extra.shares ? { shares: extra.shares } : {}),
    ...(extra.adjust ? { adjust: extra.adjust } : {}),
  };
}

const close = (a: number | undefined, b: number, tol = 1e-12) => expect(Math.abs((a ?? NaN) - b)).toBeLessThanOrEqual(tol);

describe('breakpoints (Hyndman-Fan definition 7, as numpy.quantile and pandas.qcut)', () => {
  it('matches values worked by hand and numpy.quantile', () => {
    // sorted [1, 2, 4, 8]: the median is at h = 3 * 0.5 = 1.5 -> 2 + 0.5 * (4 - 2) = 3;
    // numpy.quantile([1,2,4,8], [0.25, 0.5, 0.75]) = [1.75, 3.0, 5.0] (numpy 1.24, linear method)
    expect(breakpoints([1, 2, 4, 8], 2)).toEqual([3]);
    expect(breakpoints([1, 2, 4, 8], 4)).toEqual([1.75, 3, 5]);
    // bucket g holds b(g-1) < c <= b(g): 3 goes to bucket 1, 3.0001 to bucket 2
    expect(bucketOf(3, [3])).toBe(1);
    expect(bucketOf(3.0001, [3])).toBe(2);
    expect(bucketOf(1, [1.75, 3, 5])).toBe(1);
    expect(bucketOf(8, [1.75, 3, 5])).toBe(4);
  });
});

describe('momentum sort worked by hand', () => {
  // Month ends Jan..May 2030, four assets, prices chosen for round gross returns:
  //   A: 10, 11, 12.1, 12.1, 14.52  -> R(Feb..May) = 1.1, 1.1, 1.0, 1.2
  //   B: 10, 10, 10, 11, 11.55      -> 1.0, 1.0, 1.1, 1.05
  //   C: 20, 18, 18, 19.8, 19.8     -> 0.9, 1.0, 1.1, 1.0
  //   D: 5, 5.5, 5.5, 5.5, 4.95     -> 1.1, 1.0, 1.0, 0.9
  // Look-back 3, skip 1: at the end of April the characteristic is R_Feb R_Mar - 1:
  //   A 0.21, B 0, C -0.1, D 0.1 (no earlier sort date has two past returns).
  // Two groups: median of (-0.1, 0, 0.1, 0.21) = 0 + 0.5 (0.1 - 0) = 0.05, so
  //   q1 = {C, B}, q2 = {D, A}; equal weights over May:
  //   q1 = (0.0 + 0.05) / 2 = 0.025, q2 = (-0.1 + 0.2) / 2 = 0.05.
  const dates = ['2030-01-31', '2030-02-28', '2030-03-29', '2030-04-30', '2030-05-31'];
  const hs = [
    history('A', dates, [10, 11, 12.1, 12.1, 14.52]),
    history('B', dates, [10, 10, 10, 11, 11.55]),
    history('C', dates, [20, 18, 18, 19.8, 19.8]),
    history('D', dates, [5, 5.5, 5.5, 5.5, 4.95]),
  ];
  it('gives the hand-computed buckets and returns', () => {
    const spec = parseSortSpec({ characteristic: 'momentum', groups: 2, name: 'mom', lookback: 3, skip: 1 });
    const res = sortPortfolios(hs, spec);
    expect(res.series.map((s) => s.name)).toEqual(['mom.q1', 'mom.q2']);
    expect(res.series[0].periods).toEqual(['2030-05-31']);
    expect(res.members).toEqual([{ date: '2030-04-30', buckets: [['B', 'C'], ['A', 'D']] }]);
    close(res.formations[0].breakpoints[0], 0.05, 1e-15);
    close(res.series[0].net[0], 0.025); // by hand, above
    close(res.series[1].net[0], 0.05); // by hand, above
    expect(res.series[0].rules).toContain('skipping the latest 1');
  });
});

describe('value-weighted size sort with quarterly rebalancing and a delisting, worked by hand', () => {
  // Month ends Jan..Jun 2030, 100 shares each. At the end of March (the only sort date
  // before the last period) the market values are W 1000, X 2000, Y 500, Z 4000; the
  // median is 1000 + 0.5 (2000 - 1000) = 1500, so q1 = {Y, W}, q2 = {X, Z}.
  // Returns Apr, May, Jun: W 1.10, 1.00, 1.05; Y 0.80 then no rows (delisted);
  // X 1.00, 1.10, 1.00; Z 1.05, 0.90, 1.00. Buy and hold from March:
  //   q1 Apr: (1000 x 0.10 + 500 x -0.20) / 1500 = 0; May: Y has no return -> dropped,
  //      W alone: 0; Jun: 0.05.
  //   q2 Apr: (2000 x 0 + 4000 x 0.05) / 6000 = 1/30; values X 2000, Z 4200;
  //      May: (2000 x 0.10 - 4200 x 0.10) / 6200 = -220/6200; values X 2200, Z 3780;
  //      Jun: 0.
  const d6 = ['2030-01-31', '2030-02-28', '2030-03-29', '2030-04-30', '2030-05-31', '2030-06-28'];
  const sh = (n: number) => new Float64Array(n).fill(100);
  const hs = [
    history('W', d6, [10, 10, 10, 11, 11, 11.55], { shares: sh(6) }),
    history('X', d6, [20, 20, 20, 20, 22, 22], { shares: sh(6) }),
    history('Y', d6.slice(0, 4), [5, 5, 5, 4], { shares: sh(4) }),
    history('Z', d6, [40, 40, 40, 42, 37.8, 37.8], { shares: sh(6) }),
  ];
  it('gives the hand-computed returns', () => {
    const spec = parseSortSpec({ characteristic: 'size', groups: 2, weight: 'value', rebalance: 'quarterly', name: 'sz' });
    const res = sortPortfolios(hs, spec);
    expect(res.formations.map((f) => f.date)).toEqual(['2030-03-29']);
    expect(res.members[0].buckets).toEqual([['W', 'Y'], ['X', 'Z']]);
    expect(res.series[0].periods).toEqual(['2030-04-30', '2030-05-31', '2030-06-28']);
    const q1 = Array.from(res.series[0].net);
    const q2 = Array.from(res.series[1].net);
    [0, 0, 0.05].forEach((v, i) => close(q1[i], v)); // by hand, above
    [1 / 30, -220 / 6200, 0].forEach((v, i) => close(q2[i], v)); // by hand, above
  });

  it('leaves a bucket below the minimum size without returns', () => {
    const spec = parseSortSpec({ characteristic: 'size', groups: 2, weight: 'value', rebalance: 'quarterly', name: 'sz', minAssets: 3 });
    const res = sortPortfolios(hs, spec);
    expect(res.series.every((s) => Array.from(s.net).every(Number.isNaN))).toBe(true);
    expect(res.rules).toContain('fewer than 3 asset(s)');
  });

  it('refuses a size sort without shares outstanding', () => {
    const bare = hs.map((h) => ({ asset: h.asset, dates: h.dates, price: h.price, dividend: h.dividend }));
    expect(() => sortPortfolios(bare, parseSortSpec({ characteristic: 'size', groups: 2, name: 'sz' }))).toThrow(/shares outstanding/);
  });
});

describe('sort options', () => {
  it('rejects bad options with the key named', () => {
    expect(() => parseSortSpec({ characteristic: 'momentum', groups: 1, name: 'm' })).toThrow(/portfolio.groups/);
    expect(() => parseSortSpec({ characteristic: 'momentum', name: 'm', lookback: 3, skip: 3 })).toThrow(/portfolio.skip/);
    expect(() => parseSortSpec({ characteristic: 'price', name: 'p', frequency: 'quarterly', rebalance: 'monthly' })).toThrow(/portfolio.rebalance/);
    expect(() => parseSortSpec({ characteristic: 'price', name: '9x' })).toThrow(/portfolio.name/);
  });
  it('defaults the look-back to one year of periods', () => {
    expect(parseSortSpec({ characteristic: 'momentum', name: 'm' }).lookback).toBe(12);
    expect(parseSortSpec({ characteristic: 'yield', name: 'y', frequency: 'quarterly' }).lookback).toBe(4);
  });
});
