/**
 * Year-end prices and the cash dividends paid during each calendar year, of one asset or
 * of the aggregate of a set of assets: the input of the dividend-price decomposition
 * (METHODS 10; Campbell and Shiller 1988; Cochrane 2008).
 *
 * - P_y: the price at the last close of year y; D_y: the cash dividends per share paid
 *   during year y (their ex-dates in y), summed, not reinvested. One asset: per current
 *   share (prices and dividends before a split divided by the later split factors, as in
 *   METHODS 1), so a split inside the sample changes nothing.
 * - Aggregate: P_y = sum_i P_i,y S_i,y (market value at the year-end close) and
 *   D_y = sum_i sum_{s in y} D_i,s S_i,s (each dividend times the shares on its row), where
 *   every asset has shares outstanding on every row used; otherwise one current share of
 *   each asset (equal shares) and a warning naming the assets without shares.
 * - A calendar year is used when the history covers all of it: its first priced row lies
 *   in or before the first month of the year (first quarter, or the year itself, for
 *   quarterly and annual data) and it has a priced row in the last month (quarter, year)
 *   of the year, which is the year-end close. A history starting on 31 January therefore
 *   covers its first year. Daily and weekly data are judged at monthly resolution.
 * - The years used are the covered years inside the window (the years of --start and
 *   --end); for an aggregate, the years every asset covers. They must be consecutive, and
 *   every year needs D_y > 0: a gap or a year without dividends is a named refusal.
 */
import type { PriceHistory } from '../data.js';
import { DeflatorError } from '../errors.js';
import { calendarIndex, parseAscending, storedFrequency, type CalendarDate } from './periods.js';

export interface YearlyValues {
  /** Calendar years used, ascending and consecutive ("2001", "2002", ...). */
  years: string[];
  /** Date of the year-end close of each year (the latest among the assets of an aggregate). */
  closes: string[];
  /** P_y: year-end price (one asset, per current share) or market value (aggregate). */
  price: Float64Array;
  /** D_y: cash dividends paid during the year, summed (same units as price). */
  dividend: Float64Array;
  /** 'shares': market values; 'equal': one current share of each asset; 'single': one asset. */
  weighting: 'single' | 'shares' | 'equal';
  /** Assets without shares outstanding on some row used (only when weighting is 'equal' for an aggregate). */
  withoutShares: string[];
  /** Which assets' coverage set the first and the last year (aggregates). */
  limitedBy: { first: string[]; last: string[] };
}

export interface YearlyOptions {
  /** First and last calendar year to use (inclusive). */
  fromYear?: number;
  toYear?: number;
  /** Aggregate the histories (sum of market values and dividends); otherwise exactly one history. */
  aggregate: boolean;
}

interface AssetYears {
  asset: string;
  /** Years covered (see the file comment). */
  covered: Set<number>;
  /** Year -> row index of the year-end close. */
  closeRow: Map<number, number>;
  /** Year -> dividends per current share. */
  divPerShare: Map<number, number>;
  /** Year -> sum of dividend x shares on its row (NaN when a paying row has no shares). */
  divTimesShares: Map<number, number>;
  /** Per row: the divisor turning a price into a price per current share (product of later split factors). */
  laterSplits: Float64Array;
  dates: CalendarDate[];
  paysAtAll: boolean;
}

type Unit = 'monthly' | 'quarterly' | 'annual';

function assetYears(h: PriceHistory): AssetYears {
  const where = `price history "${h.asset}"`;
  const dates = parseAscending(h.dates, where);
  const n = dates.length;
  const laterSplits = new Float64Array(n);
  let prod = 1;
  for (let i = n - 1; i >= 0; i--) {
    laterSplits[i] = prod;
    const a = h.adjust ? h.adjust[i] : 1;
    if (!Number.isNaN(a)) {
      if (!(a > 0) || !Number.isFinite(a)) throw new DeflatorError('INPUT_INVALID', `${where}, ${h.dates[i]}: split factor ${a} is not a positive number`, 'correct that row in the source file and import it again');
      prod *= a;
    }
  }
  const priced: number[] = [];
  for (let i = 0; i < n; i++) {
    const p = h.price[i];
    if (Number.isNaN(p)) continue;
    if (!(p > 0) || !Number.isFinite(p)) throw new DeflatorError('INPUT_INVALID', `${where}, ${h.dates[i]}: price ${p} is not a positive number`, 'correct that row in the source file and import it again');
    priced.push(i);
  }
  const out: AssetYears = { asset: h.asset, covered: new Set(), closeRow: new Map(), divPerShare: new Map(), divTimesShares: new Map(), laterSplits, dates, paysAtAll: false };
  for (let i = 0; i < n; i++) {
    const raw = h.dividend[i];
    const d = Number.isNaN(raw) ? 0 : raw;
    if (!(d >= 0) || !Number.isFinite(d)) throw new DeflatorError('INPUT_INVALID', `${where}, ${h.dates[i]}: dividend ${raw} is not a non-negative number`, 'correct that row in the source file and import it again');
    const y = dates[i].year;
    out.divPerShare.set(y, (out.divPerShare.get(y) ?? 0) + d / laterSplits[i]);
    const s = h.shares ? h.shares[i] : Number.NaN;
    const prev = out.divTimesShares.get(y) ?? 0;
    out.divTimesShares.set(y, d === 0 ? prev : prev + d * s);
    if (d > 0) out.paysAtAll = true;
  }
  if (priced.length === 0) return out;
  const stored = storedFrequency(priced.map((i) => dates[i]));
  const unit: Unit = stored === 'quarterly' || stored === 'annual' ? stored : 'monthly';
  const first = dates[priced[0]];
  const unitsPerYear = unit === 'monthly' ? 12 : unit === 'quarterly' ? 4 : 1;
  const firstUnit = calendarIndex(first, unit);
  // The last priced row of each year, and whether it lies in the year's last month (quarter).
  for (const i of priced) out.closeRow.set(dates[i].year, i);
  for (const [y, i] of out.closeRow) {
    const u = calendarIndex(dates[i], unit);
    const lastUnitOfYear = y * unitsPerYear + unitsPerYear - 1;
    const firstUnitOfYear = y * unitsPerYear;
    if (u === lastUnitOfYear && firstUnit <= firstUnitOfYear) out.covered.add(y);
  }
  return out;
}

function names(list: string[]): string {
  return list.length > 6 ? `${list.slice(0, 6).join(', ')} and ${list.length - 6} more` : list.join(', ');
}

/** Year-end prices and yearly dividends of one history, or of the aggregate of several. */
export function yearlyValues(histories: readonly PriceHistory[], opts: YearlyOptions): YearlyValues {
  if (histories.length === 0) throw new DeflatorError('DATA_MISSING', 'no price histories were given', 'import price histories first, or name the assets');
  if (!opts.aggregate && histories.length !== 1) throw new DeflatorError('INPUT_INVALID', `one asset expected, ${histories.length} given`, 'name one asset, or ask for the aggregate');
  const seen = new Set<string>();
  for (const h of histories) {
    if (seen.has(h.asset)) throw new DeflatorError('INPUT_INVALID', `price history "${h.asset}" is given twice`, 'name each asset once');
    seen.add(h.asset);
  }
  const per = histories.map(assetYears);
  const what = opts.aggregate ? `the aggregate of ${histories.length} assets` : `asset "${histories[0].asset}"`;
  if (!per.some((a) => a.paysAtAll)) {
    throw new DeflatorError(
      'DATA_MISSING',
      opts.aggregate ? `none of the ${histories.length} assets pays a dividend in its stored history: the dividend-price ratio is not defined` : `asset "${histories[0].asset}" pays no dividends in its stored history: the dividend-price ratio is not defined`,
      opts.aggregate ? 'include dividend-paying assets (--assets), or import their dividends' : 'choose a dividend-paying asset, or use --aggregate over several assets',
    );
  }
  // Years every asset covers, inside the window.
  let years: number[] = [...per[0].covered];
  for (const a of per.slice(1)) years = years.filter((y) => a.covered.has(y));
  years = years.filter((y) => (opts.fromYear === undefined || y >= opts.fromYear) && (opts.toYear === undefined || y <= opts.toYear)).sort((x, y) => x - y);
  const window = opts.fromYear !== undefined || opts.toYear !== undefined ? ` in ${opts.fromYear ?? '...'}-${opts.toYear ?? '...'}` : '';
  if (years.length === 0) {
    throw new DeflatorError(
      'SAMPLE_TOO_SHORT',
      `${what} covers no whole calendar year${window} (a year needs a close in its last month and a history starting by its first month${opts.aggregate ? ', for every asset' : ''})`,
      opts.aggregate ? 'name assets whose histories overlap (--assets), or widen --start/--end' : 'import a longer history, or widen --start/--end',
    );
  }
  for (let k = 1; k < years.length; k++) {
    if (years[k] !== years[k - 1] + 1) {
      const missing = years[k - 1] + 1;
      const culprits = per.filter((a) => !a.covered.has(missing)).map((a) => a.asset);
      throw new DeflatorError(
        'DATA_MISSING',
        `${what}: year ${missing} is not covered${opts.aggregate ? ` by ${names(culprits)}` : ''} (no close in its last month), between covered years ${years[k - 1]} and ${years[k]}`,
        `choose a window on one side of ${missing} (--start/--end), or import the missing closes`,
      );
    }
  }
  const withoutShares = opts.aggregate
    ? per
        .filter((a, i) => {
          const h = histories[i];
          if (!h.shares) return true;
          for (const y of years) {
            const r = a.closeRow.get(y) as number;
            if (!(h.shares[r] > 0) || !Number.isFinite(h.shares[r])) return true;
            if (!Number.isFinite(a.divTimesShares.get(y) ?? 0)) return true;
          }
          return false;
        })
        .map((a) => a.asset)
    : [];
  const weighting: YearlyValues['weighting'] = !opts.aggregate ? 'single' : withoutShares.length ? 'equal' : 'shares';
  const T = years.length;
  const price = new Float64Array(T);
  const dividend = new Float64Array(T);
  const closes: string[] = [];
  years.forEach((y, t) => {
    let p = 0;
    let d = 0;
    let close = '';
    per.forEach((a, i) => {
      const h = histories[i];
      const r = a.closeRow.get(y) as number;
      if (a.dates[r].date > close) close = a.dates[r].date;
      if (weighting === 'shares') {
        const s = (h.shares as Float64Array)[r];
        p += h.price[r] * s;
        d += a.divTimesShares.get(y) ?? 0;
      } else {
        p += h.price[r] / a.laterSplits[r];
        d += a.divPerShare.get(y) ?? 0;
      }
    });
    price[t] = p;
    dividend[t] = d;
    closes.push(close);
  });
  for (let t = 0; t < T; t++) {
    if (!(dividend[t] > 0)) {
      throw new DeflatorError(
        'DATA_MISSING',
        `${what} paid no dividends in ${years[t]}: the dividend-price ratio ln(D/P) is not defined for that year`,
        opts.aggregate ? 'choose a window without that year (--start/--end), or add dividend-paying assets' : 'choose a window without that year (--start/--end), or use --aggregate over several assets',
      );
    }
  }
  const firstYears = per.map((a) => Math.min(...a.covered));
  const lastYears = per.map((a) => Math.max(...a.covered));
  // Only a strict subset of the assets can be said to have limited the sample.
  const subset = (list: string[]): string[] => (list.length < per.length ? list : []);
  const limitedBy = opts.aggregate
    ? {
        first: subset(per.filter((_, i) => firstYears[i] === years[0] && years[0] !== opts.fromYear).map((a) => a.asset)),
        last: subset(per.filter((_, i) => lastYears[i] === years[T - 1] && years[T - 1] !== opts.toYear).map((a) => a.asset)),
      }
    : { first: [], last: [] };
  return { years: years.map(String), closes, price, dividend, weighting, withoutShares, limitedBy };
}
