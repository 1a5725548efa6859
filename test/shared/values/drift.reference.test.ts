/**
 * The drift split of the demo assets against pandas and statsmodels (fixture made by
 * fixtures/make_present_value.py): returns, price growth and dividend yield per period
 * by pandas from the CSV rows (monthly native; quarterly compounded from the months),
 * means and the sd of log returns (ddof 1) by numpy, the Newey-West s.e. of each mean as
 * statsmodels OLS on a constant with HAC (Bartlett, use_correction=False). 1e-8.
 */
import { describe, expect, it } from 'vitest';
import { parseDriftSpec } from '../../../shared/spec.js';
import { driftAnalysis, driftPanel } from '../../../shared/values/drift.js';
import { driftSplit } from '../../../shared/values/driftSplit.js';
import { close, demoHistories, loadFixture } from './helpers.js';

const fx = loadFixture();

function check(label: string, got: number | null, want: number, tol = 1e-8): void {
  if (got === null || !close(got, want, tol)) throw new Error(`${label}: got ${got}, pandas/statsmodels ${want}, tolerance ${tol}`);
}

describe(`drift split vs pandas ${fx.versions.pandas} and statsmodels ${fx.versions.statsmodels}`, () => {
  const histories = demoHistories();
  for (const ref of fx.drift) {
    it(`${ref.frequency}, ${ref.assets.length} assets, lags ${ref.lags}: every number at 1e-8`, () => {
      const spec = parseDriftSpec({ analysis: 'drift', frequency: ref.frequency, assets: ref.assets.map((a) => a.asset), lags: ref.frequency === 'monthly' ? 'auto' : ref.lags });
      const res = driftAnalysis(spec, driftPanel(spec, histories));
      expect(res.lags).toBe(ref.lags);
      expect(res.sample).toEqual(ref.sample);
      expect(res.assets.map((a) => a.asset)).toEqual(ref.assets.map((a) => a.asset));
      res.assets.forEach((got, i) => {
        const want = ref.assets[i];
        const at = `${ref.frequency} ${want.asset}`;
        expect(got.source).toBe('prices');
        check(`${at} drift`, got.drift, want.drift);
        check(`${at} price growth`, got.priceGrowth, want.priceGrowth);
        check(`${at} dividend yield`, got.dividendYield, want.dividendYield);
        check(`${at} sigma`, got.sigma, want.sigma);
        check(`${at} log drift`, got.logDrift, want.logDrift);
        check(`${at} se drift`, got.se.drift, want.se.drift);
        check(`${at} se price growth`, got.se.priceGrowth, want.se.priceGrowth);
        check(`${at} se dividend yield`, got.se.dividendYield, want.se.dividendYield);
        check(`${at} se log drift`, got.se.logDrift, want.se.logDrift);
      });
    });
  }

  it('the split sums: drift = price growth + dividend yield for every demo asset (to the rounding of two means)', () => {
    const spec = parseDriftSpec({ analysis: 'drift' });
    const res = driftAnalysis(spec, driftPanel(spec, histories));
    expect(res.assets.length).toBe(30);
    let worst = 0;
    for (const a of res.assets) {
      const sum = (a.priceGrowth as number) + (a.dividendYield as number);
      const err = Math.abs(a.drift - sum);
      worst = Math.max(worst, err);
      expect(err).toBeLessThanOrEqual(8 * Number.EPSILON * Math.max(1, Math.abs(a.drift)));
      expect(a.driftLessHalfVariance).toBe(a.drift - (a.sigma * a.sigma) / 2);
    }
    console.info(`[drift] largest |drift - (price growth + dividend yield)| over 30 demo assets: ${worst.toExponential(2)}`);
    // Non-payers: the whole drift is price growth, exactly (their price ratios are their gross returns bit for bit).
    for (const name of ['fallowmere-grain', 'islet-ropeworks', 'kestrelmark-mills']) {
      const none = res.assets.find((a) => a.asset === name);
      expect(none?.dividendYield, name).toBe(0);
      expect(none?.priceGrowth, name).toBe(none?.drift);
    }
  });

  it('an asset stored as returns shows drift and sigma, and says why the split is missing', () => {
    const gross = Float64Array.from([1.01, 0.99, 1.03, 1.0, 1.02, 0.98, 1.01, 1.04]);
    const row = driftSplit({ asset: 'board-fund', gross }, 12, 1);
    expect(row.source).toBe('returns');
    expect(row.priceGrowth).toBeNull();
    expect(row.dividendYield).toBeNull();
    expect(row.se.priceGrowth).toBeNull();
    const mean = gross.reduce((a, b) => a + b - 1, 0) / gross.length;
    expect(row.drift).toBeCloseTo(mean * 12, 14);
  });
});
