/**
 * Instruments in the panel (METHODS 9): z observed at the end of period t scales period
 * t + lag. Hand-worked cases: each instrument value is its own month number, so the
 * expected alignment can be read off (the value at the panel's period t is the month
 * number of t - lag), and the sample follows METHODS 9 exactly: instruments stored before
 * the first return keep that first period; instruments that start with the returns lose
 * the first `lag` periods, and the sample header says which.
 */
import { describe, expect, it } from 'vitest';
import type { NamedSeries, PriceHistory, SeriesKind } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { buildPanel } from '../../../shared/returns/index.js';
import { parseFitSpec } from '../../../shared/spec.js';

const monthEnd = (m: number): string => {
  const y = 2020 + Math.floor((m - 1) / 12);
  const mm = ((m - 1) % 12) + 1;
  return `${y}-${String(mm).padStart(2, '0')}-${String(new Date(Date.UTC(y, mm, 0)).getUTCDate()).padStart(2, '0')}`;
};
const months = (from: number, to: number): number[] => Array.from({ length: to - from + 1 }, (_, i) => from + i);

function history(asset: string, growth: number): PriceHistory {
  const ms = months(1, 12);
  return { asset, dates: ms.map(monthEnd), price: Float64Array.from(ms, (m) => 10 * growth ** m), dividend: new Float64Array(ms.length) };
}
function series(name: string, kind: SeriesKind, ms: number[], value: (m: number) => number = (m) => m): NamedSeries {
  return { name, kind, dates: ms.map(monthEnd), values: Float64Array.from(ms, value), ...(kind === 'riskfree' ? { rfForm: 'rate' as const } : {}) };
}

const histories = [history('ALDER', 1.01), history('BIRCH', 1.02)];
const base = [series('rf', 'riskfree', months(1, 12), () => 0.001), series('mkt', 'factor', months(1, 12), (m) => 0.01 * Math.sin(m))];
const spec = (instruments: Record<string, unknown>) => parseFitSpec({ frequency: 'monthly', riskfree: 'rf', model: { kind: 'linear', factors: ['mkt'] }, instruments });

describe('instruments aligned with their lag', () => {
  it('stored before the first return: nothing is lost, period t gets z dated t - 1', () => {
    const p = buildPanel({ histories, series: [...base, series('dp', 'other', months(1, 12))], spec: spec({ series: ['dp'] }) });
    expect(p.periods).toEqual(months(2, 12).map(monthEnd));
    expect(Array.from(p.instruments!.series[0].values)).toEqual(months(1, 11));
    expect(p.instruments!.lost).toEqual([]);
    expect(p.sampleNotes.at(-1)!.reason).toMatch(/instruments const, dp dated 1 period\(s\) before the returns they scale; no period lost to the lag/);
  });

  it('starting with the returns: the first period is lost and named', () => {
    const p = buildPanel({ histories, series: [...base, series('dp', 'other', months(2, 12))], spec: spec({ series: ['dp'] }) });
    expect(p.periods).toEqual(months(3, 12).map(monthEnd));
    expect(Array.from(p.instruments!.series[0].values)).toEqual(months(2, 11));
    expect(p.instruments!.lost).toEqual([monthEnd(2)]);
    expect(p.sampleNotes.at(-1)!.reason).toMatch(/1 period\(s\) lost to the lag: 2020-02-29/);
  });

  it('lag 2: period t gets z dated t - 2; two instruments keep their order', () => {
    const p = buildPanel({ histories, series: [...base, series('dp', 'other', months(1, 12)), series('spread', 'factor', months(1, 12), (m) => 100 + m)], spec: spec({ series: ['spread', 'dp'], lag: 2 }) });
    expect(p.periods).toEqual(months(3, 12).map(monthEnd));
    expect(p.instruments!.series.map((s) => s.name)).toEqual(['spread', 'dp']);
    expect(Array.from(p.instruments!.series[0].values)).toEqual(months(1, 10).map((m) => 100 + m));
    expect(Array.from(p.instruments!.series[1].values)).toEqual(months(1, 10));
    expect(p.instruments!.lost).toEqual([monthEnd(2)]);
  });

  it('an explicit start keeps its first period when the instrument covers the month before', () => {
    const p = buildPanel({ histories, series: [...base, series('dp', 'other', months(1, 12))], spec: { ...spec({ series: ['dp'] }), start: '2020-05-01' } });
    expect(p.periods[0]).toBe(monthEnd(5));
    expect(p.instruments!.series[0].values[0]).toBe(4);
  });

  it('a daily-stored level becomes its last value in each month', () => {
    const days: string[] = [];
    const vals: number[] = [];
    for (const m of months(1, 12))
      for (const d of [10, 20]) {
        days.push(`${monthEnd(m).slice(0, 8)}${d}`);
        vals.push(m + d / 100);
      }
    const daily: NamedSeries = { name: 'dp', kind: 'other', dates: days, values: Float64Array.from(vals) };
    const p = buildPanel({ histories, series: [...base, daily], spec: spec({ series: ['dp'] }) });
    expect(Array.from(p.instruments!.series[0].values)).toEqual(months(1, 11).map((m) => m + 0.2));
  });

  it('a gap inside the window is DATA_MISSING naming the series and both periods', () => {
    const ms = months(1, 12).filter((m) => m !== 6);
    expect(() => buildPanel({ histories, series: [...base, series('dp', 'other', ms)], spec: spec({ series: ['dp'] }) })).toThrow(
      /instrument series "dp" has no value for the monthly period 2020-06-30, which the lag of 1 needs for 2020-07-31/,
    );
  });

  it('a risk-free series is not an instrument', () => {
    let err: unknown;
    try {
      buildPanel({ histories, series: base, spec: spec({ series: ['rf2'] }) });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(DeflatorError);
    expect((err as DeflatorError).code).toBe('DATA_MISSING');
    expect(() => parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['mkt'] }, instruments: { series: ['rf'] } })).toThrow(/"rf" is the risk-free series/);
    expect(() => buildPanel({ histories, series: [...base, { ...series('rf2', 'riskfree', months(1, 12)) }], spec: spec({ series: ['rf2'] }) })).toThrow(/of kind "riskfree"/);
  });

  it('no instruments key: the panel has none and is what it was', () => {
    const a = buildPanel({ histories, series: base, spec: parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['mkt'] } }) });
    expect(a.instruments).toBeUndefined();
    const b = buildPanel({ histories, series: base, spec: spec({ series: [] }) });
    expect(b.periods).toEqual(a.periods);
    expect(b.instruments).toEqual({ lag: 1, series: [], lost: [] });
  });
});
