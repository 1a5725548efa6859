/**
 * Sorts with assets stored as returns (METHODS 8): a momentum sort of return histories
 * gives the same portfolios as the same sort of the price histories whose returns they are
 * (the price route is checked against pandas in sorts.pandas.test.ts); sorts that need
 * prices, dividends or shares, value weights and excess-return assets are refused naming
 * the assets. Inputs are seeded (shared/random.ts).
 */
import { describe, expect, it } from 'vitest';
import type { PriceHistory, ReturnHistory } from '../../../shared/data.js';
import { parseSortSpec, sortPortfolios } from '../../../shared/portfolios/index.js';
import { mulberry32 } from '../../../shared/random.js';

const u = mulberry32(20261204);
const months: string[] = [];
for (let t = 0; t < 48; t++) {
  const y = 2010 + Math.floor(t / 12);
  const m = (t % 12) + 1;
  months.push(`${y}-${String(m).padStart(2, '0')}-${new Date(Date.UTC(y, m, 0)).getUTCDate()}`);
}
const names = Array.from({ length: 9 }, (_, i) => `cove-${i + 1}`);
const nets = names.map(() => months.map(() => Number((2 * (u() - 0.48) * 8).toFixed(2))));

const asReturns: ReturnHistory[] = names.map((asset, i) => ({ asset, source: 'returns', dates: months, values: Float64Array.from(nets[i]), form: 'net', units: 'percent', excess: false }));
/** The price index of the same returns: 1 at the end of the month before the first return. */
const asPrices: PriceHistory[] = names.map((asset, i) => {
  const price = [1];
  for (const r of nets[i]) price.push(price[price.length - 1] * (1 + r / 100));
  return { asset, dates: ['2009-12-31', ...months], price: Float64Array.from(price), dividend: new Float64Array(price.length) };
});

describe('sorts of assets stored as returns', () => {
  it('momentum: the same portfolios as the sort of their price index, to 1e-13', () => {
    const spec = parseSortSpec({ characteristic: 'momentum', groups: 3, name: 'mom', frequency: 'monthly', lookback: 6, skip: 1 });
    const a = sortPortfolios(asReturns, spec);
    const b = sortPortfolios(asPrices, spec);
    expect(a.members).toEqual(b.members);
    expect(a.series.map((s) => s.periods)).toEqual(b.series.map((s) => s.periods));
    a.series.forEach((s, g) => s.net.forEach((v, t) => (Number.isNaN(v) ? expect(Number.isNaN(b.series[g].net[t])).toBe(true) : expect(Math.abs(v - b.series[g].net[t])).toBeLessThan(1e-13))));
    expect(a.formations.length).toBeGreaterThan(30);
  });

  it('sorts that need prices, dividends or shares, value weights and excess returns are refused, naming the assets', () => {
    for (const [c, w, what] of [
      ['price', 'equal', 'a price sort needs prices'],
      ['yield', 'equal', 'a yield sort needs prices and dividends'],
      ['size', 'equal', 'a size sort needs prices and shares outstanding'],
      ['momentum', 'value', 'a momentum sort with value weights needs prices and shares outstanding'],
    ] as const) {
      const spec = parseSortSpec({ characteristic: c, weight: w, groups: 3, name: 'x', frequency: 'monthly' });
      expect(() => sortPortfolios([...asPrices.slice(0, 3), asReturns[4]], spec)).toThrow(new RegExp(`${what}, and "cove-5" \\(net returns \\(percent\\)\\) was imported as returns`));
    }
    const excess = { ...asReturns[0], asset: 'cove-x', excess: true };
    expect(() => sortPortfolios([...asReturns, excess], parseSortSpec({ characteristic: 'momentum', groups: 3, name: 'x', frequency: 'monthly' }))).toThrow(/"cove-x" \(net returns \(percent, excess\)\) holds excess returns; a sort builds portfolios of total returns/);
  });
});
