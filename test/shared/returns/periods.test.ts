// Calendar periods: ISO 8601 week numbering, the Gregorian leap-year rule, and the day
// numbers the engine computes without Date. References: ISO week-years as printed by
// Python's standard library (datetime.date.isocalendar, Debian python3 3.11); day
// numbers against ECMAScript's Date.UTC; leap years by the Gregorian rule (divisible by
// 4, except centuries not divisible by 400).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isDeflatorError } from '../../../shared/errors.js';
import { parseDate, periodKey, returnsTable, storedFrequency } from '../../../shared/returns/index.js';
import { dateOfDay, weekday } from '../../../shared/returns/periods.js';

describe('period keys', () => {
  it('ISO weeks, including the weeks that straddle a new year (datetime.date.isocalendar)', () => {
    expect(periodKey('2021-01-01', 'weekly')).toBe('2020-W53');
    expect(periodKey('2021-01-04', 'weekly')).toBe('2021-W01');
    expect(periodKey('2024-12-30', 'weekly')).toBe('2025-W01');
    expect(periodKey('2026-01-01', 'weekly')).toBe('2026-W01');
    expect(periodKey('2020-12-31', 'weekly')).toBe('2020-W53');
    expect(periodKey('2027-01-03', 'weekly')).toBe('2026-W53');
  });

  it('months, quarters, years and days', () => {
    expect(periodKey('2024-03-28', 'monthly')).toBe('2024-03');
    expect(periodKey('2024-03-28', 'quarterly')).toBe('2024-Q1');
    expect(periodKey('2024-10-01', 'quarterly')).toBe('2024-Q4');
    expect(periodKey('2024-03-28', 'annual')).toBe('2024');
    expect(periodKey('2024-03-28', 'daily')).toBe('2024-03-28');
  });
});

describe('date parsing', () => {
  it('day numbers equal Date.UTC for any date from 1900 to 2199 (fast-check, seeded)', () => {
    fc.assert(
      fc.property(fc.integer({ min: Date.UTC(1900, 0, 1) / 864e5, max: Date.UTC(2199, 11, 31) / 864e5 }), (day) => {
        const iso = new Date(day * 864e5).toISOString().slice(0, 10);
        return parseDate(iso).day === day;
      }),
      { seed: 20240614, numRuns: 2000 },
    );
  });

  it('the Gregorian leap-year rule', () => {
    expect(parseDate('2024-02-29').day).toBe(Date.UTC(2024, 1, 29) / 864e5);
    expect(parseDate('2000-02-29').day).toBe(Date.UTC(2000, 1, 29) / 864e5);
    for (const bad of ['2023-02-29', '1900-02-29', '2024-04-31', '2024-13-01', '2024-1-05', '24-01-05', '2024/01/05']) {
      let e: unknown = null;
      try {
        parseDate(bad, 'test');
      } catch (x) {
        e = x;
      }
      expect(isDeflatorError(e) && e.code, bad).toBe('INPUT_INVALID');
    }
  });
});

describe('stored frequency: the lowest frequency with at most one date per period', () => {
  const of = (dates: string[]) => storedFrequency(dates.map((d) => parseDate(d)));
  it('recognises daily, weekly, monthly, quarterly and annual dates', () => {
    expect(of(['2024-01-02', '2024-01-03', '2024-01-04'])).toBe('daily');
    expect(of(['2024-01-05', '2024-01-12', '2024-01-19', '2024-01-26', '2024-02-02'])).toBe('weekly');
    expect(of(['2024-01-31', '2024-02-29', '2024-03-29'])).toBe('monthly');
    expect(of(['2024-01-01', '2024-02-01', '2024-03-01'])).toBe('monthly');
    expect(of(['2023-03-31', '2023-06-30', '2023-09-29', '2023-12-29'])).toBe('quarterly');
    expect(of(['2021-12-31', '2022-12-30', '2023-12-29'])).toBe('annual');
    expect(of(['2024-01-31'])).toBeNull();
  });
});

describe('years before 100', () => {
  // Weekdays from Python's proleptic Gregorian calendar: datetime.date(50, 3, 31).weekday() == 3
  // (a Thursday), so March of year 50 ends on its last weekday, the 31st. ECMAScript's Date.UTC
  // maps years 0-99 to 1900-1999 (where 1950-03-31 is a Friday), so period ends must not
  // come from it.
  const weekdays = (from: string, to: string): string[] => {
    const out: string[] = [];
    for (let d = parseDate(from).day; d <= parseDate(to).day; d++) if (weekday(d) < 5) out.push(dateOfDay(d));
    return out;
  };
  const history = (dates: string[]) => ({ asset: 'a', dates, price: new Float64Array(dates.map((_, i) => 1 + i / 100)), dividend: new Float64Array(dates.length) });
  it('daily data ending on the last weekday of March 0050 make a complete month', () => {
    const t = returnsTable([history(weekdays('0050-01-03', '0050-03-31'))], { frequency: 'monthly', kind: 'net' });
    expect(t.periods).toEqual(['0050-02-28', '0050-03-31']);
    expect(t.sample.flags).toEqual([]);
  });
  it('daily data ending a day earlier leave March 0050 cut short, and flagged', () => {
    const t = returnsTable([history(weekdays('0050-01-03', '0050-03-30'))], { frequency: 'monthly', kind: 'net' });
    expect(t.sample.flags.map((f) => f.period)).toEqual(['0050-03-30']);
  });
});
