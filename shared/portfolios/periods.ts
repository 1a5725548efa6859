/**
 * Stored histories -> what a sort reads per asset and period, on the returns engine's
 * calendar (shared/returns): the period gross return (from the previous period's last
 * close, only when that period has a close, METHODS 1), the last quoted price in the
 * period, shares outstanding on that row, and the period's dividends in units that the
 * split factors make comparable across periods.
 */
import { isReturnHistory, type Frequency, type StoredAsset } from '../data.js';
import { DeflatorError } from '../errors.js';
import { parseAscending } from '../returns/periods.js';
import { assetPeriods } from '../returns/stored-returns.js';
import { assetLastDates, periodLabels, tradingCalendar } from '../returns/table.js';

export interface SortPanel {
  frequency: Frequency;
  /** Period labels (the last trading date seen in the period across the assets), consecutive periods. */
  periods: string[];
  assets: string[];
  /** Per asset, per period: gross return R_t, NaN where none. */
  gross: Float64Array[];
  /**
   * Last quoted price per share in the period (unadjusted), NaN where none. For an asset
   * stored as returns: its value index V at the period's end (only eligibility reads it:
   * sorts on price, yield or size refuse such assets).
   */
  price: Float64Array[];
  /** Shares outstanding on the row of that price (the latest figure imported up to that row), NaN where none. */
  shares: Float64Array[];
  /** Sum over the period's rows of D_tau * F_tau, F the running product of split factors. */
  dividendF: Float64Array[];
  /** F on the row of the period's last price. */
  factorAtPrice: Float64Array[];
}

export function sortPanel(histories: StoredAsset[], frequency: Frequency): SortPanel {
  if (histories.length === 0) throw new DeflatorError('DATA_MISSING', 'no asset histories to sort', 'import prices or returns first (deflator import prices / import returns)');
  const cal = tradingCalendar(frequency, histories.map((h) => h.dates));
  const ap = histories.map((h) => assetPeriods(h, cal));
  const labels = periodLabels(ap.map(assetLastDates));
  const keys = [...labels.keys()].sort((a, b) => a - b);
  if (keys.length === 0) throw new DeflatorError('DATA_MISSING', 'the histories have no priced rows', 'import price histories first');
  const k0 = keys[0];
  const T = keys[keys.length - 1] - k0 + 1;
  const periods: string[] = [];
  for (let t = 0; t < T; t++) periods.push(labels.get(k0 + t) ?? '');
  const N = histories.length;
  const gross = Array.from({ length: N }, () => new Float64Array(T).fill(Number.NaN));
  const price = Array.from({ length: N }, () => new Float64Array(T).fill(Number.NaN));
  const shares = Array.from({ length: N }, () => new Float64Array(T).fill(Number.NaN));
  const dividendF = Array.from({ length: N }, () => new Float64Array(T));
  const factorAtPrice = Array.from({ length: N }, () => new Float64Array(T).fill(Number.NaN));
  histories.forEach((h, i) => {
    for (const [k, g] of ap[i].gross) gross[i][k - k0] = g;
    if (isReturnHistory(h)) {
      for (const [k, v] of ap[i].close) {
        if (k - k0 < 0 || k - k0 >= T) continue;
        price[i][k - k0] = v;
        factorAtPrice[i][k - k0] = 1;
      }
      return;
    }
    const dates = parseAscending(h.dates, `price history "${h.asset}"`);
    let F = 1;
    let lastShares = Number.NaN;
    for (let r = 0; r < h.dates.length; r++) {
      const sh = h.shares ? h.shares[r] : Number.NaN;
      if (Number.isFinite(sh) && sh > 0) lastShares = sh;
      const a = h.adjust ? h.adjust[r] : 1;
      if (Number.isFinite(a) && a > 0) F *= a;
      const k = cal.indexOf(dates[r]);
      if (k === null) continue;
      const t = k - k0;
      if (t < 0 || t >= T) continue;
      const d = h.dividend[r];
      if (Number.isFinite(d) && d > 0) dividendF[i][t] += d * F;
      const p = h.price[r];
      if (Number.isFinite(p) && p > 0) {
        price[i][t] = p;
        factorAtPrice[i][t] = F;
        shares[i][t] = lastShares;
      }
    }
  });
  return { frequency, periods, assets: histories.map((h) => h.asset), gross, price, shares, dividendF, factorAtPrice };
}
