/**
 * Characteristic sorts against the same sorts done with pandas 1.5 (Debian's
 * python3-pandas) by fixtures/make_sorts.py on invented histories with dividends, splits,
 * quarterly share counts, a delisting, a late listing and a missing month. Every bucket
 * return of every period must agree to 1e-12 (absolute), and so must the bucket counts.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { PriceHistory } from '../../../shared/data.js';
import { parseSortSpec, sortPortfolios } from '../../../shared/portfolios/index.js';

interface Row { date: string; price: number; dividend: number; adjust: number; shares: number | null }
interface Case {
  name: string;
  characteristic: 'momentum' | 'yield' | 'price' | 'size';
  groups: number;
  weight: 'equal' | 'value';
  rebalance: 'monthly' | 'quarterly' | 'annual';
  lookback?: number;
  skip?: number;
  minAssets?: number;
  periods: string[];
  series: (number | null)[][];
  formations: { date: string; eligible: number; counts: number[]; breakpoints: number[] }[];
}
const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/sorts_pandas.json'), 'utf8')) as { histories: Record<string, Row[]>; cases: Case[] };

const histories: PriceHistory[] = Object.entries(fx.histories).map(([asset, rows]) => ({
  asset,
  dates: rows.map((r) => r.date),
  price: Float64Array.from(rows, (r) => r.price),
  dividend: Float64Array.from(rows, (r) => r.dividend),
  adjust: Float64Array.from(rows, (r) => r.adjust),
  shares: Float64Array.from(rows, (r) => (r.shares === null ? NaN : r.shares)),
}));

describe('sorts against pandas (fixtures/make_sorts.py)', () => {
  for (const c of fx.cases) {
    it(`${c.name}: ${c.characteristic}, ${c.groups} groups, ${c.weight}, ${c.rebalance}`, () => {
      const spec = parseSortSpec({
        characteristic: c.characteristic,
        groups: c.groups,
        weight: c.weight,
        rebalance: c.rebalance,
        name: c.name,
        ...(c.lookback ? { lookback: c.lookback } : {}),
        ...(c.skip !== undefined ? { skip: c.skip } : {}),
        ...(c.minAssets ? { minAssets: c.minAssets } : {}),
      });
      const res = sortPortfolios(histories, spec);
      expect(res.formations.map((f) => [f.date, f.eligible, f.counts])).toEqual(c.formations.map((f) => [f.date, f.eligible, f.counts])); // pandas.qcut counts
      res.formations.forEach((f, k) => f.breakpoints.forEach((b, j) => expect(Math.abs(b - c.formations[k].breakpoints[j])).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b))))); // numpy.quantile
      for (let g = 0; g < c.groups; g++) {
        const s = res.series[g];
        expect(s.periods).toEqual(c.periods);
        c.series[g].forEach((ref, t) => {
          const v = s.net[t];
          if (ref === null) {
            expect(Number.isNaN(v), `${s.name} ${s.periods[t]}: expected missing, got ${v}`).toBe(true);
          } else {
            const err = Math.abs(v - ref);
            if (!(err <= 1e-12)) expect.fail(`${s.name} ${s.periods[t]}: got ${v}, pandas ${ref}, |diff| ${err} > 1e-12`);
          }
        });
      }
    });
  }
});
