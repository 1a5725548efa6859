/**
 * Calendar helpers shared by the import checks and the store's coverage report:
 * day numbers, the data's frequency from the median spacing of its dates, and what
 * counts as a gap at that frequency.
 */
import type { Frequency } from '../../shared/data.js';

/** Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant's days_from_civil). */
export function dayNumber(y: number, m: number, d: number): number {
  const yy = m <= 2 ? y - 1 : y;
  const era = Math.floor(yy / 400);
  const yoe = yy - era * 400;
  const doy = Math.floor((153 * (m + (m > 2 ? -3 : 9)) + 2) / 5) + d - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

/** Day number of an ISO YYYY-MM-DD string (already validated). */
export function isoDayNumber(iso: string): number {
  return dayNumber(Number(iso.slice(0, 4)), Number(iso.slice(5, 7)), Number(iso.slice(8, 10)));
}

export function daysInMonth(y: number, m: number): number {
  if (m === 2) return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0 ? 29 : 28;
  return m === 4 || m === 6 || m === 9 || m === 11 ? 30 : 31;
}

/** Frequency from the median spacing in calendar days (one rule, in the returns engine). */
export { frequencyFromSpacing } from '../../shared/returns/periods.js';
import { frequencyFromSpacing } from '../../shared/returns/periods.js';

/**
 * A spacing longer than this many calendar days is a gap at that frequency: more than a
 * week without a daily close, more than about half a period beyond the usual spacing
 * otherwise. (Our own thresholds; docs/methods.md states them.)
 */
export const GAP_DAYS: Record<Frequency, number> = {
  daily: 7,
  weekly: 12,
  monthly: 50,
  quarterly: 140,
  annual: 550,
};

/** Median of a histogram of spacings (key: days, value: count); 0 when empty. */
export function histogramMedian(hist: Map<number, number>): number {
  let total = 0;
  for (const c of hist.values()) total += c;
  if (total === 0) return 0;
  const keys = [...hist.keys()].sort((a, b) => a - b);
  const at = (index: number): number => {
    let seen = 0;
    for (const k of keys) {
      seen += hist.get(k) ?? 0;
      if (index < seen) return k;
    }
    return keys[keys.length - 1];
  };
  return total % 2 === 1 ? at((total - 1) / 2) : (at(total / 2 - 1) + at(total / 2)) / 2;
}

export interface Coverage {
  first: string | null;
  last: string | null;
  count: number;
  frequency: Frequency | null;
  /** Spacings longer than GAP_DAYS[frequency]. */
  gaps: { from: string; to: string; days: number }[];
}

/** Coverage of an ascending list of ISO dates. */
export function coverage(dates: string[]): Coverage {
  if (dates.length === 0) return { first: null, last: null, count: 0, frequency: null, gaps: [] };
  const days = dates.map(isoDayNumber);
  const hist = new Map<number, number>();
  for (let i = 1; i < days.length; i++) {
    const s = days[i] - days[i - 1];
    hist.set(s, (hist.get(s) ?? 0) + 1);
  }
  const frequency = days.length > 1 ? frequencyFromSpacing(histogramMedian(hist)) : null;
  const gaps: Coverage['gaps'] = [];
  if (frequency) {
    const limit = GAP_DAYS[frequency];
    for (let i = 1; i < days.length; i++) {
      const s = days[i] - days[i - 1];
      if (s > limit) gaps.push({ from: dates[i - 1], to: dates[i], days: s });
    }
  }
  return { first: dates[0], last: dates[dates.length - 1], count: dates.length, frequency, gaps };
}
