/**
 * Assets stored as returns (METHODS section 8) -> gross returns per period, on the same
 * footing as price histories (prices.ts): the result is an AssetPeriods, so tables,
 * panels and sorts treat both alike.
 *
 * A stored return dated t is the return over period t of the file's own frequency (from
 * the end of t-1 to the end of t). Per row: R = 1 + r (net), R (gross) or exp(l) (log),
 * after dividing percent by 100; a missing value (NaN) is a gap, never a zero.
 *
 * - At the stored frequency each return is its period's return by itself (like a
 *   per-period rate): a gap before it does not void it. On a daily calendar built from
 *   several assets' dates a row counts only when the asset's previous row sits on the
 *   previous trading date (as for prices), so one return never spans two periods.
 * - At a lower frequency the period's gross return is the product of the stored returns
 *   of every one of its native periods: the first must start at the end of the previous
 *   period, none may be missing or absent. A last period cut short by the end of the data
 *   is kept and flagged, as for prices.
 * - The value index V is 1 at the period before the first return and V_t = V_{t-1} R_t;
 *   a gap leaves V where it was (the periods of the gap have no value).
 * - Excess returns (the file held R^e): with a risk-free series, R = R^e + R^f per native
 *   period, and everything above applies; without one, only the excess returns at the
 *   stored frequency themselves are available (`excess`), since compounding needs R.
 */
import { isReturnHistory, type NamedSeries, type ReturnForm, type ReturnHistory, type StoredAsset, type ValueUnits } from '../data.js';
import { DeflatorError } from '../errors.js';
import { calendarDateOfDay, dateOfDay, frequencyRank, lastDayOf, parseAscending, periodCalendar, spacingFrequency, type PeriodCalendar } from './periods.js';
import { historyPeriods, pricedDates, type AssetPeriods } from './prices.js';
import { riskfreePeriods, type DayCount } from './series.js';

/** The decimal of a stored value: percent divided by 100 (one IEEE division), decimal as it is. */
function decimal(v: number, units: ValueUnits): number {
  return units === 'percent' ? v / 100 : v;
}

/** Gross return R of a stored value in its form and units (NaN stays NaN). */
export function grossOf(v: number, form: ReturnForm, units: ValueUnits): number {
  const x = decimal(v, units);
  switch (form) {
    case 'net':
      return 1 + x;
    case 'gross':
      return x;
    case 'log':
      return Math.exp(x);
  }
}

/** Net return r = R - 1 of a stored value (for a net form the value itself, bit for bit). */
export function netOf(v: number, form: ReturnForm, units: ValueUnits): number {
  const x = decimal(v, units);
  switch (form) {
    case 'net':
      return x;
    case 'gross':
      return x - 1;
    case 'log':
      return Math.expm1(x);
  }
}

/** What is wrong with one stored return, or null: below -100 % (gross not positive) or not finite. */
export function returnProblem(v: number, form: ReturnForm, units: ValueUnits): string | null {
  if (!Number.isFinite(v)) return `${v} is not a finite number`;
  const g = grossOf(v, form, units);
  if (!Number.isFinite(g)) return `a ${form} return of ${v}${units === 'percent' ? ' %' : ''} gives a gross return of ${g}`;
  if (!(g > 0)) {
    const pct = (g - 1) * 100;
    return `a ${form} return of ${v}${units === 'percent' ? ' %' : ''} is a return of ${Number(pct.toPrecision(6))} %, not above -100 %`;
  }
  return null;
}

export interface StoredPeriodsOptions {
  /** Risk-free series for excess-return assets (R = R^e + R^f). */
  riskfree?: NamedSeries;
  dayCount?: DayCount;
}

/** Dates with an observation: priced rows of a price history; every row (gaps included) of a return history. */
export function observedDates(h: StoredAsset): string[] {
  return isReturnHistory(h) ? h.dates : pricedDates(h);
}

/** Period returns of any stored asset on a calendar. */
export function assetPeriods(h: StoredAsset, cal: PeriodCalendar, opts: StoredPeriodsOptions = {}): AssetPeriods {
  return isReturnHistory(h) ? returnHistoryPeriods(h, cal, opts) : historyPeriods(h, cal);
}

/** Period returns of an asset stored as returns (see the file comment). */
export function returnHistoryPeriods(h: ReturnHistory, cal: PeriodCalendar, opts: StoredPeriodsOptions = {}): AssetPeriods {
  const where = `return history "${h.asset}"`;
  const n = h.dates.length;
  if (h.values.length !== n) throw new DeflatorError('INPUT_INVALID', `${where}: ${n} dates but ${h.values.length} returns`, 'give one return per date');
  const dates = parseAscending(h.dates, where);
  const stored = spacingFrequency(dates);
  const f = cal.frequency;
  const out: AssetPeriods = { asset: h.asset, stored, close: new Map(), gross: new Map(), lastDay: new Map(), lastDate: new Map() };
  if (stored !== null && frequencyRank(stored) > frequencyRank(f)) {
    out.unusable = `stored at ${stored} frequency, lower than the ${f} requested: its returns cannot be split into shorter periods`;
    return out;
  }
  const aggregated = stored !== null && frequencyRank(stored) < frequencyRank(f);
  // the file's own periods: calendar periods of the stored frequency, or the rows themselves (daily)
  const native: PeriodCalendar | null = stored !== null && stored !== 'daily' ? periodCalendar(stored) : null;
  const nat = new Int32Array(n);
  for (let j = 0; j < n; j++) nat[j] = native ? (native.indexOf(dates[j]) as number) : j;
  const targetOf = new Array<number | null>(n);
  for (let j = 0; j < n; j++) targetOf[j] = cal.indexOf(dates[j]);
  /** At the stored frequency: a row is its period's return unless, on a trading-day calendar, the asset skipped the previous date. */
  const standsAlone = (j: number, k: number): boolean => f !== 'daily' || j === 0 || targetOf[j - 1] === k - 1;
  /** Target period holding the end of native period m (a calendar period of the stored frequency; its Friday for weeks). */
  const nativeEnd = (m: number): number | null => {
    if (!native || stored === null || stored === 'daily') return null;
    return cal.indexOf(calendarDateOfDay(stored === 'weekly' ? m * 7 + 1 : lastDayOf(m, stored)));
  };
  /** Target period holding the end of the period before row j's (its previous row's, when that is the one). */
  const before = (j: number): number | null => (j > 0 && nat[j - 1] === nat[j] - 1 ? targetOf[j - 1] : nativeEnd(nat[j] - 1));

  // net returns as stored; gross returns where they can be had
  const net = new Float64Array(n);
  const gross = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const v = h.values[j];
    if (Number.isNaN(v)) {
      net[j] = gross[j] = Number.NaN;
      continue;
    }
    const problem = returnProblem(v, h.form, h.units);
    if (problem) throw new DeflatorError('INPUT_INVALID', `${where}, ${h.dates[j]}: ${problem}`, 'correct that row in the source file (or its units) and import it again');
    net[j] = netOf(v, h.form, h.units);
    gross[j] = grossOf(v, h.form, h.units);
  }
  if (h.excess) {
    if (!aggregated) {
      out.excess = new Map();
      for (let j = 0; j < n; j++) {
        const k = cal.indexOf(dates[j]);
        if (k !== null && !Number.isNaN(net[j]) && standsAlone(j, k)) out.excess.set(k, net[j]);
      }
    }
    if (opts.riskfree) {
      // R = R^e + R^f on the file's own periods (the same gross-return rule as any rate)
      const rfCal = native ?? (stored === null ? cal : periodCalendar('daily', dates.map((d) => d.day)));
      const rf = riskfreePeriods(opts.riskfree, rfCal, opts.dayCount ?? 'periods');
      for (let j = 0; j < n; j++) {
        const kn = rfCal.indexOf(dates[j]);
        const r = kn === null ? undefined : rf.values.get(kn);
        gross[j] = r === undefined || Number.isNaN(net[j]) ? Number.NaN : net[j] + r;
      }
    } else {
      gross.fill(Number.NaN);
      if (aggregated) {
        out.unusable = `holds ${stored} excess returns; ${f} returns compound total returns R = R^e + R^f, and no risk-free series was given`;
        return out;
      }
    }
  }

  let value = 1;
  let prevGroupDate: string | null = null;
  let j = 0;
  let firstGroup = true;
  while (j < n) {
    const k = targetOf[j];
    if (k === null) {
      j++;
      continue;
    }
    const start = j;
    let ok = true;
    let product = 1;
    let present = false;
    for (; j < n && targetOf[j] === k; j++) {
      const g = gross[j];
      if (Number.isNaN(h.values[j])) (out.missing ??= []).push(k);
      if (Number.isNaN(g)) ok = false;
      else {
        value *= g;
        product *= g;
        present = true;
      }
      if (j > start && nat[j] !== nat[j - 1] + 1) ok = false;
      out.lastDay.set(k, dates[j].day);
      out.lastDate.set(k, h.dates[j]);
    }
    if (firstGroup) {
      firstGroup = false;
      // V = 1 at the end of the period before the first return, when that is a period end here
      const base = aggregated ? before(start) : k - 1;
      if (base === k - 1 && f !== 'daily') {
        out.close.set(k - 1, 1);
        out.lastDate.set(k - 1, dateOfDay(lastDayOf(k - 1, f)));
      }
    }
    if (aggregated) {
      // the period's return must start at the end of the previous period
      if (before(start) !== k - 1) ok = false;
    } else if (!standsAlone(start, k)) ok = false;
    if (ok && present) out.gross.set(k, product);
    if (present) out.close.set(k, value);
    const last = j - 1;
    if (j >= n && aggregated && ok && present) {
      const cutShort = native ? nativeEnd(nat[last] + 1) === k : dates[last].day < (cal.lastWeekday(k) ?? dates[last].day);
      if (cutShort) out.cutShort = { index: k, from: prevGroupDate, to: h.dates[last] };
    }
    prevGroupDate = h.dates[last];
  }
  if (out.gross.size === 0 && !(out.excess && out.excess.size > 0)) {
    out.unusable = h.excess && !opts.riskfree ? 'holds excess returns, and no risk-free series was given to make total returns' : `no ${f} return`;
  }
  return out;
}
