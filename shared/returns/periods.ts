/**
 * Calendar periods: which period a date belongs to, how periods follow one another, and
 * the string key a period is known by. Alignment across assets and series is on the
 * period (its integer index here), never on the exact date string, so a price history
 * whose last trading day in January is the 29th and a factor file dated the 31st meet.
 *
 * - daily: the periods are the trading dates of the data (the union of the test assets'
 *   dates); a series observation dated between two trading dates belongs to the next one.
 * - weekly: ISO 8601 weeks, Monday to Sunday (so a trading week ends on its Friday).
 * - monthly, quarterly, annual: calendar months, quarters (Jan-Mar, ...), years.
 *
 * Keys: daily "2024-03-28", weekly "2024-W13", monthly "2024-03", quarterly "2024-Q1",
 * annual "2024". docs/methods.md ("Returns") states the rules.
 */
import { FREQUENCIES, type Frequency } from '../data.js';
import { DeflatorError } from '../errors.js';

const MS_PER_DAY = 86_400_000;

/** Days since 1970-01-01 of a proleptic Gregorian date (Hinnant's days_from_civil). */
function daysFromCivil(year: number, month: number, dom: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const doy = Math.floor((153 * (month + (month > 2 ? -3 : 9)) + 2) / 5) + dom - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

function daysInMonth(year: number, month: number): number {
  if (month === 2) return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0 ? 29 : 28;
  return month === 4 || month === 6 || month === 9 || month === 11 ? 30 : 31;
}

function digits(s: string, from: number, to: number): number {
  let v = 0;
  for (let i = from; i < to; i++) {
    const c = s.charCodeAt(i) - 48;
    if (c < 0 || c > 9) return -1;
    v = v * 10 + c;
  }
  return v;
}

/** A parsed calendar date. `day` counts days since 1970-01-01 (UTC, proleptic Gregorian). */
export interface CalendarDate {
  day: number;
  year: number;
  month: number;
  date: string;
}

/** Is this a calendar date written as YYYY-MM-DD (year 0001-9999; 2010-02-30 and 2010-13-01 are not)? */
export function isCalendarDate(date: unknown): date is string {
  if (typeof date !== 'string' || date.length !== 10 || date[4] !== '-' || date[7] !== '-') return false;
  const year = digits(date, 0, 4);
  const month = digits(date, 5, 7);
  const dom = digits(date, 8, 10);
  return year >= 1 && month >= 1 && month <= 12 && dom >= 1 && dom <= daysInMonth(year, month);
}

/**
 * Parsed dates by their text, shared by every history of a panel (a daily panel of N assets
 * repeats each trading date N times). The entries are never modified. Emptied when it
 * reaches MEMO_LIMIT entries, so it stays a few megabytes.
 */
const memo = new Map<string, CalendarDate>();
const MEMO_LIMIT = 1 << 18;

/** The parsed date, or null when the text is not a calendar date written as YYYY-MM-DD. */
function tryParseDate(date: string): CalendarDate | null {
  const hit = memo.get(date);
  if (hit !== undefined) return hit;
  if (typeof date === 'string' && date.length === 10 && date[4] === '-' && date[7] === '-') {
    const year = digits(date, 0, 4);
    const month = digits(date, 5, 7);
    const dom = digits(date, 8, 10);
    if (year >= 1 && month >= 1 && month <= 12 && dom >= 1 && dom <= daysInMonth(year, month)) {
      const d: CalendarDate = { day: daysFromCivil(year, month, dom), year, month, date };
      if (memo.size >= MEMO_LIMIT) memo.clear();
      memo.set(date, d);
      return d;
    }
  }
  return null;
}

function notADate(date: string, where: string): DeflatorError {
  return new DeflatorError('INPUT_INVALID', `${where}: "${date}" is not a calendar date written as YYYY-MM-DD`, 'write dates as YYYY-MM-DD, e.g. 2024-03-28');
}

/** Parses an ISO date (YYYY-MM-DD); `where` names the field for the error message. The result is shared: do not modify it. */
export function parseDate(date: string, where = 'date'): CalendarDate {
  const d = tryParseDate(date);
  if (d === null) throw notADate(date, where);
  return d;
}

/** Day numbers of dates; `where(i)` names row i for an error message (built only on error). */
export function dayNumbers(dates: readonly string[], where: (i: number) => string, out: number[] = []): number[] {
  for (let i = 0; i < dates.length; i++) {
    const d = tryParseDate(dates[i]);
    if (d === null) throw notADate(dates[i], where(i));
    out.push(d.day);
  }
  return out;
}

/** The ISO date of a day number. */
export function dateOfDay(day: number): string {
  return new Date(day * MS_PER_DAY).toISOString().slice(0, 10);
}

/** 0 = Monday ... 6 = Sunday (1970-01-01 was a Thursday). */
export function weekday(day: number): number {
  return (((day + 3) % 7) + 7) % 7;
}

/** Position of a frequency from the shortest period (daily, 0) to the longest (annual, 4). */
export function frequencyRank(f: Frequency): number {
  return FREQUENCIES.indexOf(f);
}

/** Index of the calendar period (weekly and lower) holding a date; consecutive periods have consecutive indices. */
export function calendarIndex(d: CalendarDate, f: Exclude<Frequency, 'daily'>): number {
  switch (f) {
    case 'weekly': {
      const monday = d.day - weekday(d.day);
      return (monday + 3) / 7;
    }
    case 'monthly':
      return d.year * 12 + (d.month - 1);
    case 'quarterly':
      return d.year * 4 + Math.floor((d.month - 1) / 3);
    case 'annual':
      return d.year;
  }
}

function pad2(n: number): string {
  return n < 10 ? `0${n}` : String(n);
}

function calendarKey(index: number, f: Exclude<Frequency, 'daily'>): string {
  switch (f) {
    case 'weekly': {
      const thursday = index * 7; // Monday is index * 7 - 3
      const year = new Date(thursday * MS_PER_DAY).getUTCFullYear();
      const jan1 = daysFromCivil(year, 1, 1);
      return `${year}-W${pad2(Math.floor((thursday - jan1) / 7) + 1)}`;
    }
    case 'monthly':
      return `${Math.floor(index / 12)}-${pad2((index % 12) + 1)}`;
    case 'quarterly':
      return `${Math.floor(index / 4)}-Q${(index % 4) + 1}`;
    case 'annual':
      return String(index);
  }
}

/** Last calendar day (day number) of a calendar period: Sunday of an ISO week, the month's, quarter's or year's last day. */
export function lastDayOf(index: number, f: Exclude<Frequency, 'daily'>): number {
  switch (f) {
    case 'weekly':
      return index * 7 + 3;
    case 'monthly': {
      const year = Math.floor(index / 12);
      const month = (index % 12) + 1;
      return daysFromCivil(year, month, daysInMonth(year, month));
    }
    case 'quarterly': {
      const year = Math.floor(index / 4);
      const month = (index % 4) * 3 + 3;
      return daysFromCivil(year, month, daysInMonth(year, month));
    }
    case 'annual':
      return daysFromCivil(index, 12, 31);
  }
}

/** The calendar date of a day number. */
export function calendarDateOfDay(day: number): CalendarDate {
  return parseDate(dateOfDay(day));
}

/** Last day (day number) of a calendar period, stepped back over a weekend: the last weekday of the period. */
function lastWeekdayOf(index: number, f: Exclude<Frequency, 'daily'>): number {
  let last: number;
  switch (f) {
    case 'weekly':
      return index * 7 + 1; // the Friday of that ISO week (Monday + 4)
    // Arithmetic, not Date.UTC: Date.UTC maps years 0-99 to 1900-1999.
    case 'monthly': {
      const year = Math.floor(index / 12);
      const month = (index % 12) + 1;
      last = daysFromCivil(year, month, daysInMonth(year, month));
      break;
    }
    case 'quarterly': {
      const year = Math.floor(index / 4);
      const month = (index % 4) * 3 + 3;
      last = daysFromCivil(year, month, daysInMonth(year, month));
      break;
    }
    case 'annual':
      last = daysFromCivil(index, 12, 31);
      break;
  }
  while (weekday(last) >= 5) last -= 1;
  return last;
}

/**
 * The periods of one frequency. For daily periods the calendar is a list of trading
 * dates: period i runs from just after trading date i-1 up to and including trading date i.
 */
export interface PeriodCalendar {
  readonly frequency: Frequency;
  /** Period index of a date; null for a daily calendar when the date is after its last trading date. */
  indexOf(d: CalendarDate): number | null;
  /** The period's key (see the file comment). */
  keyOf(index: number): string;
  /** Last weekday of a calendar period (weekly and lower); null for daily periods. */
  lastWeekday(index: number): number | null;
  /**
   * indexOf of every date of a list, -1 for null (never modify the result: the index list
   * of a shared parsed list, see parseAscending, is kept and handed to every caller).
   */
  indicesOf(dates: readonly CalendarDate[]): Int32Array;
}

/** The index lists of shared parsed lists, per calendar (one computation per list and calendar). */
function indexLists(indexOf: (d: CalendarDate) => number | null, fill?: (dates: readonly CalendarDate[], out: Int32Array) => void): (dates: readonly CalendarDate[]) => Int32Array {
  const kept = new WeakMap<readonly CalendarDate[], Int32Array>();
  return (dates) => {
    const hit = kept.get(dates);
    if (hit !== undefined) return hit;
    const out = new Int32Array(dates.length);
    if (fill) fill(dates, out);
    else for (let i = 0; i < dates.length; i++) out[i] = indexOf(dates[i]) ?? -1;
    if (sharedParsed.has(dates)) kept.set(dates, out);
    return out;
  };
}

/** A calendar of `frequency`; daily calendars need the trading dates (day numbers, any order, duplicates allowed). */
export function periodCalendar(frequency: Frequency, tradingDays?: Iterable<number>): PeriodCalendar {
  if (frequency !== 'daily') {
    const f = frequency;
    const indexOf = (d: CalendarDate): number => calendarIndex(d, f);
    return {
      frequency,
      indexOf,
      keyOf: (i) => calendarKey(i, f),
      lastWeekday: (i) => lastWeekdayOf(i, f),
      indicesOf: indexLists(indexOf),
    };
  }
  const days = [...new Set(tradingDays ?? [])].sort((a, b) => a - b);
  /** The first trading day at or after `day` (days.length when none), searching [lo, days.length). */
  const lowerBound = (day: number, from: number): number => {
    let lo = from;
    let hi = days.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (days[mid] < day) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  const indexOf = (d: CalendarDate): number | null => {
    const lo = lowerBound(d.day, 0);
    return lo < days.length ? lo : null;
  };
  // ascending dates: each search starts where the previous one ended (the same lower bound)
  const fill = (dates: readonly CalendarDate[], out: Int32Array): void => {
    let at = 0;
    let prevDay = Number.NEGATIVE_INFINITY;
    for (let i = 0; i < dates.length; i++) {
      const day = dates[i].day;
      if (day < prevDay) at = 0;
      while (at < days.length && days[at] < day) at++;
      out[i] = at < days.length ? at : -1;
      prevDay = day;
    }
  };
  return {
    frequency,
    indexOf,
    indicesOf: indexLists(indexOf, fill),
    keyOf: (i) => (i >= 0 && i < days.length ? dateOfDay(days[i]) : `trading day #${i}`),
    lastWeekday: () => null,
  };
}

/** The key of the period holding `date` at a calendar frequency (daily: the date itself). Use it to align on labels. */
export function periodKey(date: string, frequency: Frequency): string {
  const d = parseDate(date);
  return frequency === 'daily' ? d.date : calendarKey(calendarIndex(d, frequency), frequency);
}

/**
 * The frequency a list of dates is stored at: the lowest frequency (longest period) at
 * which no two dates fall in the same calendar period. Monthly data -> 'monthly', daily
 * data -> 'daily'. Null when there are fewer than two dates (nothing to tell).
 */
export function storedFrequency(dates: readonly CalendarDate[]): Frequency | null {
  if (dates.length < 2) return null;
  for (const f of ['annual', 'quarterly', 'monthly', 'weekly'] as const) {
    let prev = Number.NaN;
    let clash = false;
    for (const d of dates) {
      const i = calendarIndex(d, f);
      if (i === prev) {
        clash = true;
        break;
      }
      prev = i;
    }
    if (!clash) return f;
  }
  return 'daily';
}

/**
 * Frequency from the median spacing in calendar days (weekends and holidays make daily
 * data's spacing 1-5 days; month ends 28-31; quarter ends 89-92).
 */
export function frequencyFromSpacing(medianDays: number): Frequency {
  if (medianDays <= 4) return 'daily';
  if (medianDays <= 10) return 'weekly';
  if (medianDays <= 45) return 'monthly';
  if (medianDays <= 135) return 'quarterly';
  return 'annual';
}

/**
 * The frequency of a series of period returns (each row the return over one period): from
 * the median spacing of consecutive dates, so that two monthly returns of a column that
 * starts late (March and April) read as monthly, not as one return per quarter; raised to
 * a higher frequency where two dates would share a period. Null for fewer than two dates.
 */
export function spacingFrequency(dates: readonly CalendarDate[]): Frequency | null {
  if (dates.length < 2) return null;
  const gaps: number[] = [];
  for (let i = 1; i < dates.length; i++) gaps.push(dates[i].day - dates[i - 1].day);
  gaps.sort((a, b) => a - b);
  const m = gaps.length % 2 === 1 ? gaps[(gaps.length - 1) / 2] : (gaps[gaps.length / 2 - 1] + gaps[gaps.length / 2]) / 2;
  let f = frequencyFromSpacing(m);
  const lowest = storedFrequency(dates) as Frequency;
  if (frequencyRank(lowest) < frequencyRank(f)) f = lowest;
  return f;
}

/** Checks that dates are strictly ascending; throws INPUT_INVALID naming the first offending pair. */
/**
 * Dates already parsed and checked ascending, by the frozen array they came in (a store
 * hands one frozen array to every asset on the same trading days): parsed once per array.
 * Only frozen arrays are remembered, so a list that could change is always parsed again.
 */
const parsedLists = new WeakMap<readonly string[], CalendarDate[]>();
/** The lists parsedLists hands out (shared, never modified): calendars keep their index lists. */
const sharedParsed = new WeakSet<readonly CalendarDate[]>();

export function parseAscending(dates: readonly string[], where: string): CalendarDate[] {
  if (!Object.isFrozen(dates)) return parseAscendingOnce(dates, where);
  const hit = parsedLists.get(dates);
  if (hit !== undefined) return hit;
  const out = parseAscendingOnce(dates, where);
  parsedLists.set(dates, out);
  sharedParsed.add(out);
  return out;
}

function parseAscendingOnce(dates: readonly string[], where: string): CalendarDate[] {
  const out: CalendarDate[] = new Array(dates.length);
  for (let i = 0; i < dates.length; i++) {
    const d = tryParseDate(dates[i]);
    if (d === null) throw notADate(dates[i], `${where}, row ${i + 1}`);
    out[i] = d;
    if (i > 0 && out[i].day <= out[i - 1].day) {
      throw new DeflatorError(
        'INPUT_INVALID',
        `${where}: dates must be strictly ascending, but row ${i + 1} (${dates[i]}) follows ${dates[i - 1]}`,
        'sort the rows by date and keep one row per date',
      );
    }
  }
  return out;
}
