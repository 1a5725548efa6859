/**
 * Named series (risk-free, factor, consumption) -> one value per period of the
 * requested frequency (METHODS section 1; docs/methods.md "Returns").
 *
 * A series is either stored at the requested frequency ("native": one observation is
 * one period) or at a higher one ("aggregated": several observations per period). A
 * series stored at a lower frequency than requested is an error: nothing here splits a
 * period into shorter ones.
 *
 * Aggregated per-period values compound within the period, and, like prices, a period
 * counts only when the series also has an observation in the period before: the value
 * then runs from the previous period's last observation to this period's last one. So
 * a daily file aggregated to months loses its first month, exactly as the returns of
 * prices from the same daily file do, and the two line up.
 */
import { PERIODS_PER_YEAR, type Frequency, type NamedSeries, type RiskfreeForm } from '../data.js';
import { DeflatorError } from '../errors.js';
import { frequencyRank, parseAscending, storedFrequency, dateOfDay, type CalendarDate, type PeriodCalendar } from './periods.js';
import { NumberPeriodMap, PeriodMap } from './periodMap.js';

export type DayCount = 'periods' | 'actual365';
export type YieldConvention = 'simple' | 'annual' | 'continuous';

/** Values of a series on periods: index -> value, with the last observation date per period. */
export interface PeriodSeries {
  name: string;
  values: Map<number, number>;
  /** Period index -> last observation date in that period. */
  lastDate: Map<number, string>;
  /** Frequency the series is stored at (equal to the requested one when it has fewer than two observations). */
  stored: Frequency;
  /** Aggregated series whose last period ends before that period's last weekday. */
  cutShort?: { index: number; to: string };
}

/**
 * Gross return over a period of length dt years from an annualised yield y:
 * simple 1 + y dt, annual compounding (1 + y)^dt, continuous exp(y dt).
 */
export function yieldToGross(y: number, dt: number, convention: YieldConvention): number {
  switch (convention) {
    case 'simple':
      return 1 + y * dt;
    case 'annual':
      return Math.pow(1 + y, dt);
    case 'continuous':
      return Math.exp(y * dt);
  }
}

interface Observations {
  dates: readonly CalendarDate[];
  values: ArrayLike<number>;
  index: ArrayLike<number>;
  stored: Frequency;
}

/** Is every value finite and every date on the calendar (so that every observation is kept as it is)? */
function everyKept(values: ArrayLike<number>, indices: Int32Array): boolean {
  for (let i = 0; i < values.length; i++) if (!Number.isFinite(values[i]) || indices[i] < 0) return false;
  return true;
}

/** Finite observations of a series, placed on the calendar; NaN values are no observation. */
function observe(s: NamedSeries, cal: PeriodCalendar): Observations {
  const where = `series "${s.name}"`;
  if (s.values.length !== s.dates.length) {
    throw new DeflatorError('INPUT_INVALID', `${where}: ${s.dates.length} dates but ${s.values.length} values`, 'give one value per date');
  }
  const all = parseAscending(s.dates, where);
  const indices = cal.indicesOf(all);
  // the usual case: every row an observation on the calendar, read where it is (never modified here)
  if (everyKept(s.values, indices)) return { dates: all, values: s.values, index: indices, stored: checkedStored(all, cal, where) };
  const dates: CalendarDate[] = [];
  const values: number[] = [];
  const index: number[] = [];
  for (let i = 0; i < all.length; i++) {
    const v = s.values[i];
    if (Number.isNaN(v)) continue;
    if (!Number.isFinite(v)) throw new DeflatorError('INPUT_INVALID', `${where}, ${s.dates[i]}: value ${v} is not finite`, 'correct that row in the source file and import it again');
    const k = indices[i];
    if (k < 0) continue;
    dates.push(all[i]);
    values.push(v);
    index.push(k);
  }
  return { dates, values, index, stored: checkedStored(dates, cal, where) };
}

/** The frequency observations are stored at, when it is not lower than the calendar's. */
function checkedStored(dates: readonly CalendarDate[], cal: PeriodCalendar, where: string): Frequency {
  const stored = storedFrequency(dates) ?? cal.frequency;
  if (frequencyRank(stored) > frequencyRank(cal.frequency)) {
    throw new DeflatorError(
      'INPUT_INVALID',
      `${where} is stored at ${stored} frequency, lower than the ${cal.frequency} requested`,
      `choose frequency "${stored}" (or a lower one), or import the series at ${cal.frequency} frequency`,
    );
  }
  return stored;
}

/**
 * Groups observations by period and combines them. `rowValue(j)` gives observation j's
 * contribution (undefined: none, which voids its period); `combine` folds a period's
 * contributions; `perPeriod` says whether a native observation is a whole period's
 * value by itself (rates, factor returns) or needs the observation before it
 * (account levels, yields, consumption levels).
 */
function byPeriod(
  name: string,
  obs: Observations,
  cal: PeriodCalendar,
  rowValue: (j: number) => number | undefined,
  combine: (acc: number, v: number, first: boolean) => number,
  perPeriod: boolean,
): PeriodSeries {
  // observations are ascending, so are their periods: dense maps over the first to the last (periodMap.ts)
  const nObs = obs.index.length;
  const span = nObs > 0 ? obs.index[nObs - 1] - obs.index[0] + 1 : 0;
  const out: PeriodSeries = { name, values: span > 0 ? new NumberPeriodMap(obs.index[0], span) : new NumberPeriodMap(), lastDate: span > 0 ? new PeriodMap(obs.index[0], span) : new PeriodMap(), stored: obs.stored };
  const aggregated = frequencyRank(obs.stored) < frequencyRank(cal.frequency);
  // ascending periods: period k - 1 has an observation exactly when the period group before k's is k - 1
  let prevK = Number.NaN;
  let j = 0;
  while (j < nObs) {
    const k = obs.index[j];
    let acc = Number.NaN;
    let ok = true;
    let first = true;
    for (; j < obs.index.length && obs.index[j] === k; j++) {
      const v = rowValue(j);
      if (v === undefined) ok = false;
      else acc = combine(acc, v, first);
      first = false;
      out.lastDate.set(k, obs.dates[j].date);
    }
    // Native per-period values stand alone; everything else runs from the previous period's last observation.
    if (ok && ((perPeriod && !aggregated) || prevK === k - 1)) out.values.set(k, acc);
    prevK = k;
  }
  if (aggregated && obs.index.length > 0) {
    const k = obs.index[obs.index.length - 1];
    const lw = cal.lastWeekday(k);
    const last = obs.dates[obs.dates.length - 1].day;
    if (lw !== null && last < lw) out.cutShort = { index: k, to: dateOfDay(last) };
  }
  return out;
}

/**
 * Per-period gross risk-free return R^f_t earned over period t (from the end of t-1 to
 * the end of t), from any of the quoted forms (METHODS section 1):
 * - rate: R^f_t = 1 + rf_t (rf_t dated t is the return over period t);
 * - flow (a constant-value account paying rf_t each period): (1 + rf_t) / 1;
 * - account level B_t: B_t / B_{t-1};
 * - yield-simple / -annual / -continuous: a yield dated t earns over the next
 *   observation interval, R^f_{t+1} = 1 + y_t dt, (1 + y_t)^dt, exp(y_t dt), with dt =
 *   1 / periods per year of the series' stored frequency, or (actual days between the
 *   two dates) / 365.
 * Stored at a higher frequency than requested, the per-observation gross returns
 * compound within the period.
 */
export function riskfreePeriods(s: NamedSeries, cal: PeriodCalendar, dayCount: DayCount = 'periods'): PeriodSeries {
  const form: RiskfreeForm = s.rfForm ?? 'rate';
  const obs = observe(s, cal);
  const v = obs.values;
  const where = (j: number): string => `risk-free series "${s.name}", ${obs.dates[j].date}`;
  const bad = (j: number, what: string): DeflatorError =>
    new DeflatorError('INPUT_INVALID', `${where(j)}: ${what}`, `check the values and the quoted form ("${form}") of the series`);
  const ppy = PERIODS_PER_YEAR[obs.stored];
  let rowValue: (j: number) => number | undefined;
  let perPeriod: boolean;
  switch (form) {
    case 'rate':
    case 'flow':
      perPeriod = true;
      rowValue = (j) => {
        const g = (1 + v[j]) / 1;
        if (!(g > 0)) throw bad(j, `a per-period rate of ${v[j]} gives a gross return of ${g}`);
        return g;
      };
      break;
    case 'account':
      perPeriod = false;
      rowValue = (j) => {
        if (!(v[j] > 0)) throw bad(j, `an account level must be positive, got ${v[j]}`);
        if (j === 0) return undefined;
        return v[j] / v[j - 1];
      };
      break;
    case 'yield-simple':
    case 'yield-annual':
    case 'yield-continuous': {
      perPeriod = false;
      const convention = form.slice('yield-'.length) as YieldConvention;
      rowValue = (j) => {
        if (j === 0) return undefined;
        const dt = dayCount === 'actual365' ? (obs.dates[j].day - obs.dates[j - 1].day) / 365 : 1 / ppy;
        const g = yieldToGross(v[j - 1], dt, convention);
        if (!(g > 0) || !Number.isFinite(g)) throw bad(j - 1, `a ${convention} yield of ${v[j - 1]} gives a gross return of ${g}`);
        return g;
      };
      break;
    }
  }
  return byPeriod(s.name, obs, cal, rowValue, (acc, g, first) => (first ? g : acc * g), perPeriod);
}

/**
 * Factor values per period. Stored at the requested frequency they are taken as they
 * are; at a higher frequency they compound, prod(1 + f) - 1, which is exact for a
 * traded return and an approximation for an excess-return factor (the product of
 * (1 + excess) is not the excess of the compounded returns).
 */
export function factorPeriods(s: NamedSeries, cal: PeriodCalendar): PeriodSeries {
  const obs = observe(s, cal);
  const aggregated = frequencyRank(obs.stored) < frequencyRank(cal.frequency);
  if (!aggregated) {
    // One observation per period: the value itself (no 1 + f - 1 round trip); two in one daily period compound.
    return byPeriod(s.name, obs, cal, (j) => obs.values[j], (acc, f, first) => (first ? f : (1 + acc) * (1 + f) - 1), true);
  }
  const series = byPeriod(s.name, obs, cal, (j) => 1 + obs.values[j], (acc, g, first) => (first ? g : acc * g), true);
  for (const [k, g] of series.values) series.values.set(k, g - 1);
  return series;
}

/** Consumption growth C_t / C_{t-1} from levels; at a higher frequency the last level in each period is used. */
export function consumptionPeriods(s: NamedSeries, cal: PeriodCalendar): PeriodSeries {
  const obs = observe(s, cal);
  for (let j = 0; j < obs.values.length; j++) {
    if (!(obs.values[j] > 0)) {
      throw new DeflatorError('INPUT_INVALID', `consumption series "${s.name}", ${obs.dates[j].date}: a consumption level must be positive, got ${obs.values[j]}`, 'consumption series hold levels C_t (not growth rates); check the column');
    }
  }
  // Last level per period, then growth over consecutive periods.
  const level = new Map<number, number>();
  const lastDate = new Map<number, string>();
  for (let j = 0; j < obs.values.length; j++) {
    level.set(obs.index[j], obs.values[j]);
    lastDate.set(obs.index[j], obs.dates[j].date);
  }
  const out: PeriodSeries = { name: s.name, values: new Map(), lastDate, stored: obs.stored };
  for (const [k, c] of level) {
    const prev = level.get(k - 1);
    if (prev !== undefined) out.values.set(k, c / prev);
  }
  return out;
}

/**
 * Instrument values per period (METHODS 9: z_t observed at the end of period t). A
 * factor-kind series is a per-period value, taken as factorPeriods takes it (compounded
 * from a higher stored frequency); any other kind (a valuation ratio, a yield spread, a
 * level) is the last observation in the period.
 */
export function instrumentPeriods(s: NamedSeries, cal: PeriodCalendar): PeriodSeries {
  if (s.kind === 'factor') return factorPeriods(s, cal);
  const obs = observe(s, cal);
  const out: PeriodSeries = { name: s.name, values: new Map(), lastDate: new Map(), stored: obs.stored };
  for (let j = 0; j < obs.values.length; j++) {
    out.values.set(obs.index[j], obs.values[j]);
    out.lastDate.set(obs.index[j], obs.dates[j].date);
  }
  return out;
}

/** Sorted period indices of a map. */
export function sortedKeys(m: Map<number, unknown>): number[] {
  return [...m.keys()].sort((a, b) => a - b);
}
