/**
 * Dense period maps (shared/returns/periodMap.ts) and a calendar's index lists
 * (PeriodCalendar.indicesOf): checked against the ECMAScript built-in Map, which a period
 * map stands in for (the same keys, values bit for bit, sizes, ascending iteration and
 * copies of a run of periods after any sequence of sets and deletes), and against the
 * calendar's own one-date lookup.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { NumberPeriodMap, PeriodMap } from '../../../shared/returns/periodMap.js';
import { dateOfDay, parseAscending, parseDate, periodCalendar, type CalendarDate } from '../../../shared/returns/periods.js';

type Op = { del: boolean; k: number; v: number };
const ops = fc.array(fc.record({ del: fc.boolean(), k: fc.integer({ min: -300, max: 300 }), v: fc.double() }), { maxLength: 200 });

function same(m: Map<number, number>, ref: Map<number, number>): void {
  expect(m.size).toBe(ref.size);
  const keys = [...ref.keys()].sort((a, b) => a - b);
  expect([...m.keys()]).toEqual(keys);
  for (const k of keys) expect(Object.is(m.get(k), ref.get(k))).toBe(true);
  for (const [k, v] of m) expect(Object.is(v, ref.get(k))).toBe(true);
  for (let k = -310; k <= 310; k++) expect(m.has(k)).toBe(ref.has(k));
}

function apply(m: Map<number, number>, list: Op[]): void {
  for (const o of list) {
    if (o.del) m.delete(o.k);
    else m.set(o.k, o.v);
  }
}

describe('period maps', () => {
  it('a number map (Float64Array) and a general map hold what the built-in Map holds, bit for bit (-0, NaN, growing down and up)', () => {
    fc.assert(
      fc.property(ops, fc.option(fc.integer({ min: -50, max: 50 }), { nil: undefined }), (list, lo) => {
        const ref = new Map<number, number>();
        apply(ref, list);
        for (const m of [new NumberPeriodMap(), new PeriodMap<number>(), ...(lo !== undefined ? [new NumberPeriodMap(lo, 10), new PeriodMap<number>(lo, 10)] : [])]) {
          apply(m, list);
          same(m, ref);
        }
      }),
      { numRuns: 200 },
    );
    fc.assert(
      fc.property(ops, fc.integer({ min: -320, max: 320 }), fc.integer({ min: 0, max: 40 }), (list, from, n) => {
        const ref = new Map<number, number>();
        apply(ref, list);
        let all = true;
        for (let k = from; k < from + n; k++) all &&= ref.has(k);
        for (const m of [new NumberPeriodMap(), new PeriodMap<number>()]) {
          apply(m, list);
          const out = new Float64Array(n);
          expect(m.rangeInto(from, out)).toBe(all);
          if (all) for (let i = 0; i < n; i++) expect(Object.is(out[i], ref.get(from + i))).toBe(true);
        }
      }),
      { numRuns: 300 },
    );
    const m = new NumberPeriodMap(5, 4);
    m.set(6, -0).set(7, Number.NaN).set(1000, 1.5).set(-1000, 2.5);
    expect(Object.is(m.get(6), -0)).toBe(true);
    expect(Number.isNaN(m.get(7))).toBe(true);
    expect(m.extent()).toEqual([-1000, 1000]);
    m.clear();
    expect(m.size).toBe(0);
    expect(m.get(6)).toBeUndefined();
  });
});

describe('period maps over a run of periods', () => {
  const runs = fc.record({ lo: fc.integer({ min: -100, max: 100 }), values: fc.array(fc.double(), { minLength: 1, maxLength: 60 }), lazy: fc.boolean(), numbers: fc.boolean() });
  it('a run holds what a built-in Map with the same entries holds, before and after sets and deletes, and never writes to the values it was given', () => {
    fc.assert(
      fc.property(runs, ops, fc.integer({ min: -320, max: 320 }), fc.integer({ min: 0, max: 70 }), (r, list, from, n) => {
        const given = Float64Array.from(r.values);
        const copy = Float64Array.from(given);
        const src = r.lazy ? () => given : given;
        const m = r.numbers ? NumberPeriodMap.numberRun(r.lo, given.length, src) : PeriodMap.run<number>(r.lo, given.length, src);
        const ref = new Map<number, number>();
        given.forEach((v, i) => ref.set(r.lo + i, v));
        same(m, ref);
        expect(m.extent()).toEqual([r.lo, r.lo + given.length - 1]);
        // missingIn against has(), period by period
        let missing = 0;
        let first = -1;
        for (let k = from; k < from + n; k++) {
          if (!ref.has(k)) {
            if (missing === 0) first = k;
            missing++;
          }
        }
        expect(m.missingIn(from, from + n - 1)).toEqual({ missing, first });
        const out = new Float64Array(n);
        const all = missing === 0;
        expect(m.rangeInto(from, out)).toBe(all);
        if (all) for (let i = 0; i < n; i++) expect(Object.is(out[i], ref.get(from + i))).toBe(true);
        apply(m, list);
        apply(ref, list);
        same(m, ref);
        expect(Array.from(given).every((v, i) => Object.is(v, copy[i]))).toBe(true);
      }),
      { numRuns: 300 },
    );
  });

  it('two runs are the same run only over the same periods of the same given values', () => {
    const dates = Object.freeze(['2024-01-02', '2024-01-03']);
    const a = PeriodMap.run(5, 2, dates);
    expect(a.sameRun(PeriodMap.run(5, 2, dates))).toBe(true);
    expect(a.sameRun(PeriodMap.run(6, 2, dates))).toBe(false);
    expect(a.sameRun(PeriodMap.run(5, 2, [...dates]))).toBe(false);
    expect(a.sameRun(PeriodMap.run(5, 2, () => dates))).toBe(false);
    const b = PeriodMap.run(5, 2, dates);
    b.set(5, '2024-01-01');
    expect(a.sameRun(b)).toBe(false);
    expect(dates[0]).toBe('2024-01-02');
    expect(() => PeriodMap.run(0, 0, [])).toThrow(RangeError);
  });
});

describe('calendar index lists', () => {
  const days = fc.uniqueArray(fc.integer({ min: 18000, max: 18400 }), { minLength: 1, maxLength: 80 });
  it('indicesOf gives indexOf of each date (-1 for none), on daily and calendar periods, for ascending and unordered lists', () => {
    fc.assert(
      fc.property(days, days, fc.boolean(), (trading, listed, sorted) => {
        const list: CalendarDate[] = (sorted ? [...listed].sort((a, b) => a - b) : listed).map((d) => parseDate(dateOfDay(d)));
        for (const cal of [periodCalendar('daily', trading), periodCalendar('monthly'), periodCalendar('weekly')]) {
          const ix = cal.indicesOf(list);
          expect(Array.from(ix)).toEqual(list.map((d) => cal.indexOf(d) ?? -1));
        }
      }),
      { numRuns: 200 },
    );
  });

  it('the list of a shared parsed list is computed once per calendar; other lists each time', () => {
    const text = Object.freeze(['2024-01-02', '2024-01-03', '2024-01-05']);
    const parsed = parseAscending(text, 'test');
    const cal = periodCalendar('daily', parsed.map((d) => d.day));
    expect(cal.indicesOf(parsed)).toBe(cal.indicesOf(parsed));
    expect(Array.from(cal.indicesOf(parsed))).toEqual([0, 1, 2]);
    const loose = parseAscending([...text], 'test');
    expect(cal.indicesOf(loose)).not.toBe(cal.indicesOf(loose));
    expect(dateOfDay(parsed[2].day)).toBe('2024-01-05');
  });
});
