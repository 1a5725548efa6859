/**
 * One asset's price and dividend history -> gross returns per period (METHODS section 1).
 *
 * Row returns: with the split/adjustment factor a_t of shared/data.ts (prices and
 * dividends before t are divided by the product of later factors), the return from
 * the previous close to the close of t is
 *   R_t = (P*_t + D*_t) / P*_{t-1} = (P_t + D_t) a_t / P_{t-1},
 * so a split leaves returns unchanged. A period's gross return is the product of the
 * row returns inside it: from the last close of the previous period to the last close
 * of this one. The value index V (1 at the first close, V_t = V_{t-1} R_t) is kept at
 * each period's last close.
 */
import type { Frequency, PriceHistory } from '../data.js';
import { DeflatorError } from '../errors.js';
import { frequencyRank, parseAscending, storedFrequency, type PeriodCalendar } from './periods.js';
import { NumberPeriodMap, PeriodMap } from './periodMap.js';

export interface AssetPeriods {
  asset: string;
  /** The frequency the history is stored at (null: too few rows to tell). */
  stored: Frequency | null;
  /** Period index -> value index V at the period's last close (V = 1 at the asset's first close). */
  close: Map<number, number>;
  /**
   * Period index -> price ratio over the period without dividends, P*_t / P*_{t-1} of the
   * split-adjusted closes (METHODS 10), where `gross` has the period: the product of the row
   * ratios P_t a_t / P_{t-1}, computed like the row returns without the dividend, so an asset
   * that pays nothing has ratios equal to its gross returns bit for bit.
   */
  priceGross?: Map<number, number>;
  /** Period index -> gross return over the period (only where the previous period has a close). */
  gross: Map<number, number>;
  /** Period index -> day number of the last close in the period. */
  lastDay: Map<number, number>;
  /** Period index -> date of the last close in the period. */
  lastDate: Map<number, string>;
  /** The asset's last period when the data end before that period's last weekday (kept, flagged). */
  cutShort?: { index: number; from: string | null; to: string };
  /** Why the asset yields no returns at this frequency, when it yields none. */
  unusable?: string;
  /**
   * Assets stored as excess returns (shared/returns/stored-returns.ts): period index -> the
   * excess return R^e as stored, at the stored frequency only. `gross` then holds R^e + R^f
   * where a risk-free series was given, and is empty otherwise.
   */
  excess?: Map<number, number>;
  /** Assets stored as returns: periods holding a missing return (a gap; the value index V carries over it). */
  missing?: number[];
}

/** Is no price NaN? (A function of its own: compiled on its first long run.) */
function everyPriced(price: ArrayLike<number>): boolean {
  for (let i = 0; i < price.length; i++) if (Number.isNaN(price[i])) return false;
  return true;
}

/** isRun of the index lists a calendar hands to every history on one shared list of dates (periods.ts indicesOf). */
const runLists = new WeakMap<Int32Array, boolean>();

/** Are the indices k0, k0 + 1, ... with k0 >= 0 (each row the period after the previous row's)? */
function isRun(indices: Int32Array): boolean {
  const known = runLists.get(indices);
  if (known !== undefined) return known;
  let run = indices.length > 0 && indices[0] >= 0;
  for (let j = 1; j < indices.length && run; j++) run = indices[j] === indices[0] + j;
  runLists.set(indices, run);
  return run;
}

/** Dates with a price (rows whose price is NaN are no observation): the history's trading dates. */
export function pricedDates(h: PriceHistory): string[] {
  // every row priced (the usual case): the history's own list, no copy
  return everyPriced(h.price) && h.price.length === h.dates.length ? h.dates : h.dates.filter((_, i) => !Number.isNaN(h.price[i]));
}

/** An asset's periods with none in them (it yields no returns at the calendar's frequency). */
function noPeriods(asset: string, stored: Frequency | null): AssetPeriods {
  return { asset, stored, close: new NumberPeriodMap(), priceGross: new NumberPeriodMap(), gross: new NumberPeriodMap(), lastDay: new NumberPeriodMap(), lastDate: new PeriodMap<string>() };
}

function invalid(asset: string, date: string, what: string): DeflatorError {
  return new DeflatorError('INPUT_INVALID', `price history "${asset}", ${date}: ${what}`, 'correct that row in the source file and import it again');
}

/**
 * The row returns of a history's priced rows, in order, into rowGross (NaN for the first)
 * and rowPriceGross (when given): how many (m), and the positions of the priced rows in the
 * history when some row is unpriced (null: row j is priced row j). A function of its own so
 * that the engine compiles this loop over every row early (historyPeriods/METHODS 1 rules).
 */
function rowReturns(h: PriceHistory, rowGross: Float64Array, rowPriceGross: Float64Array | null): { m: number; rowAt: Int32Array | null } {
  const n = h.dates.length;
  let rowAt: Int32Array | null = null; // made at the first unpriced row
  let m = 0;
  let prevPrice = Number.NaN;
  let factor = 1;
  let carried = 0;
  for (let i = 0; i < n; i++) {
    const p = h.price[i];
    const rawD = h.dividend[i];
    const rawA = h.adjust ? h.adjust[i] : 1;
    const d = Number.isNaN(rawD) ? 0 : rawD;
    const a = Number.isNaN(rawA) ? 1 : rawA;
    if (!Number.isFinite(d) || d < 0) throw invalid(h.asset, h.dates[i], `dividend ${rawD} is not a non-negative number`);
    if (!Number.isFinite(a) || a <= 0) throw invalid(h.asset, h.dates[i], `split factor ${rawA} is not a positive number`);
    factor *= a;
    if (Number.isNaN(p)) {
      if (rowAt === null) {
        rowAt = new Int32Array(n);
        for (let q = 0; q < m; q++) rowAt[q] = q;
      }
      carried += d * factor;
      continue;
    }
    if (!Number.isFinite(p) || p <= 0) throw invalid(h.asset, h.dates[i], `price ${p} is not a positive number`);
    let r = Number.NaN;
    let g = Number.NaN;
    if (!Number.isNaN(prevPrice)) {
      r = ((p + d) * factor + carried) / prevPrice;
      g = (p * factor) / prevPrice;
      if (!Number.isFinite(r) || r <= 0) throw invalid(h.asset, h.dates[i], `the return from the previous close is ${r}`);
    }
    if (rowAt !== null) rowAt[m] = i;
    rowGross[m] = r;
    if (rowPriceGross !== null) rowPriceGross[m] = g;
    m++;
    prevPrice = p;
    factor = 1;
    carried = 0;
  }
  return { m, rowAt };
}

/**
 * Period returns of one history on a calendar. Rows whose price is NaN count as no
 * observation: their dividend and split factor are carried to the next priced row
 * (cash held, not reinvested, for those days). A non-positive or infinite price,
 * a negative dividend or a non-positive split factor is an error naming the row.
 */
export function historyPeriods(h: PriceHistory, cal: PeriodCalendar): AssetPeriods {
  const n = h.dates.length;
  const where = `price history "${h.asset}"`;
  if (h.price.length !== n || h.dividend.length !== n || (h.adjust && h.adjust.length !== n)) {
    throw new DeflatorError('INPUT_INVALID', `${where}: ${n} dates but ${h.price.length} prices, ${h.dividend.length} dividends${h.adjust ? `, ${h.adjust.length} split factors` : ''}`, 'give one price, dividend and split factor per date');
  }
  const dates = parseAscending(h.dates, where);
  const f = cal.frequency;

  // Every row priced and each on the calendar period after the previous row's (a daily
  // panel's histories on its trading days): each row is a period of its own, and the
  // period maps are runs over the row arrays (periodMap.ts), with no copy of them.
  const indicesAll = n > 0 ? cal.indicesOf(dates) : null;
  const runShape = indicesAll !== null && isRun(indicesAll);

  // Row returns over priced rows (typed arrays of the history's length; m of them used).
  const rowGross = new Float64Array(n); // NaN for the first priced row
  // P_t a_t / P_{t-1}: the row return without the dividend (a run makes them when they are read)
  let rowPriceGross = runShape ? null : new Float64Array(n);
  let rows = rowReturns(h, rowGross, rowPriceGross);
  if (rows.rowAt !== null && rowPriceGross === null) {
    // an unpriced row: no run after all, and the price ratios are needed row by row
    rowPriceGross = new Float64Array(n);
    rows = rowReturns(h, rowGross, rowPriceGross);
  }
  const { m, rowAt } = rows;
  const run = runShape && rowAt === null;
  const runIndices = run ? indicesAll : null;

  const rowDates = m === n || rowAt === null ? dates : Array.from(rowAt.subarray(0, m), (i) => dates[i]);
  const stored = storedFrequency(rowDates);
  if (stored !== null && frequencyRank(stored) > frequencyRank(f)) {
    return { ...noPeriods(h.asset, stored), unusable: `stored at ${stored} frequency, lower than the ${f} requested: its returns cannot be split into shorter periods` };
  }
  if (m === 0) return { ...noPeriods(h.asset, stored), unusable: 'no priced rows' };

  if (run && runIndices !== null) {
    const k0 = runIndices[0];
    const kLast = k0 + n - 1;
    // As the grouping below gives them for one row per period: V the running product of the
    // row returns (1 at the first close); a period's return (and price ratio) its row's, 1 * r,
    // which is r; no return for the first period.
    const close = (): Float64Array => {
      const c = new Float64Array(n);
      let value = 1;
      for (let j = 0; j < n; j++) {
        const r = rowGross[j];
        if (!Number.isNaN(r)) value *= r;
        c[j] = value;
      }
      return c;
    };
    const priceRatios = (): Float64Array => {
      const out = new Float64Array(n - 1);
      for (let j = 1; j < n; j++) {
        const rawA = h.adjust ? h.adjust[j] : 1;
        const a = Number.isNaN(rawA) ? 1 : rawA;
        out[j - 1] = (h.price[j] * a) / h.price[j - 1];
      }
      return out;
    };
    const out: AssetPeriods = {
      asset: h.asset,
      stored,
      close: NumberPeriodMap.numberRun(k0, n, close),
      priceGross: n > 1 ? NumberPeriodMap.numberRun(k0 + 1, n - 1, priceRatios) : new NumberPeriodMap(),
      gross: n > 1 ? NumberPeriodMap.numberRun(k0 + 1, n - 1, rowGross.subarray(1)) : new NumberPeriodMap(),
      lastDay: NumberPeriodMap.numberRun(k0, n, () => Float64Array.from(dates, (d) => d.day)),
      // a frozen list is the store's shared one, never changed: the map reads it as it is
      lastDate: PeriodMap.run(k0, n, Object.isFrozen(h.dates) ? h.dates : () => dates.map((d) => d.date)),
    };
    if (n === 1) out.unusable = `no two consecutive ${f} periods with a close, so no ${f} return`;
    else if (stored !== null && frequencyRank(stored) < frequencyRank(f)) {
      const lastWeekday = cal.lastWeekday(kLast);
      if (lastWeekday !== null && dates[n - 1].day < lastWeekday) out.cutShort = { index: kLast, from: dates[n - 2].date, to: dates[n - 1].date };
    }
    return out;
  }

  // Dense period maps over the periods of the first and last priced rows: rows are
  // ascending, so are their periods (periodMap.ts)
  const k0 = cal.indexOf(rowDates[0]);
  const k1 = cal.indexOf(rowDates[m - 1]);
  const span = k0 !== null && k1 !== null && k1 >= k0 ? k1 - k0 + 1 : undefined;
  const numbers = () => (span !== undefined && k0 !== null ? new NumberPeriodMap(k0, span) : new NumberPeriodMap());
  const lastDate = span !== undefined && k0 !== null ? new PeriodMap<string>(k0, span) : new PeriodMap<string>();
  const out: AssetPeriods = { asset: h.asset, stored, close: numbers(), priceGross: numbers(), gross: numbers(), lastDay: numbers(), lastDate };

  // Group rows by period (rows are ascending, so are their periods).
  let value = 1;
  let k: number | null = null;
  let product = 1;
  let priceProduct = 1;
  let prevClosedK: number | null = null;
  const flush = (): void => {
    if (k === null) return;
    out.close.set(k, value);
    if (prevClosedK !== null && prevClosedK === k - 1) {
      out.gross.set(k, product);
      out.priceGross?.set(k, priceProduct);
    }
    prevClosedK = k;
  };
  let lastPeriodStart: string | null = null;
  const indices = rowDates === dates && indicesAll !== null ? indicesAll : cal.indicesOf(rowDates);
  const pg = rowPriceGross as Float64Array;
  for (let j = 0; j < m; j++) {
    const idx = indices[j];
    if (idx < 0) continue;
    if (idx !== k) {
      flush();
      lastPeriodStart = k !== null ? (out.lastDate.get(k) ?? null) : null;
      k = idx;
      product = 1;
      priceProduct = 1;
    }
    const r = rowGross[j];
    if (!Number.isNaN(r)) {
      value *= r;
      product *= r;
      priceProduct *= pg[j];
    }
    out.lastDay.set(idx, rowDates[j].day);
    out.lastDate.set(idx, rowDates[j].date);
  }
  flush();

  if (out.gross.size === 0) {
    out.unusable = `no two consecutive ${f} periods with a close, so no ${f} return`;
  }
  if (k !== null && out.stored !== null && frequencyRank(out.stored) < frequencyRank(f)) {
    const lastWeekday = cal.lastWeekday(k);
    const lastDay = out.lastDay.get(k) as number;
    if (lastWeekday !== null && lastDay < lastWeekday) {
      out.cutShort = { index: k, from: out.gross.has(k) ? lastPeriodStart : null, to: out.lastDate.get(k) as string };
    }
  }
  return out;
}
