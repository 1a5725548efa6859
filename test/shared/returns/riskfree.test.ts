// Risk-free conversions to per-period gross returns R^f_t, checked against numpy
// (python3-numpy 1.24.2; pandas 1.5.3 only for grouping dates into months):
// fixtures/make_riskfree.py wrote fixtures/riskfree.json with the seeded inputs, the
// numpy expression and the expected values. Tolerance: relative 1e-12 (numpy.power and
// numpy.exp against Math.pow and Math.exp differ by at most a few ulps; products of up to
// 21 daily factors add a few more).
import { describe, expect, it } from 'vitest';
import type { Frequency, NamedSeries, RiskfreeForm } from '../../../shared/data.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { returnsTable, riskfreeGross, yieldToGross, type DayCount } from '../../../shared/returns/index.js';
import { expectClose, readJson } from './helpers.js';

interface Case {
  name: string;
  form: RiskfreeForm;
  stored: Frequency;
  frequency: Frequency;
  dayCount: DayCount;
  dates: string[];
  values: number[];
  call: string;
  expected: { periods: string[]; gross: number[] };
}
const fixture = readJson<{ libraries: Record<string, string>; cases: Case[] }>('riskfree.json');

function series(c: Pick<Case, 'name' | 'form' | 'dates' | 'values'>): NamedSeries {
  return { name: c.name, kind: 'riskfree', rfForm: c.form, dates: c.dates, values: Float64Array.from(c.values) };
}

describe('risk-free conversions against numpy (fixtures/make_riskfree.py)', () => {
  it('the fixture covers every quoted form, both day counts, and monthly, weekly and daily dt', () => {
    const forms = new Set(fixture.cases.map((c) => c.form));
    expect([...forms].sort()).toEqual(['account', 'flow', 'rate', 'yield-annual', 'yield-continuous', 'yield-simple']);
    expect(new Set(fixture.cases.map((c) => c.dayCount))).toEqual(new Set(['periods', 'actual365']));
    expect(new Set(fixture.cases.map((c) => c.stored))).toEqual(new Set(['monthly', 'weekly', 'daily']));
    expect(fixture.libraries.numpy).toBe('1.24.2');
  });

  for (const c of fixture.cases) {
    it(`${c.name}: ${c.call}`, () => {
      const got = riskfreeGross(series(c), c.frequency, { dayCount: c.dayCount });
      expect(got.periods).toEqual(c.expected.periods);
      expect(got.gross.length).toBe(c.expected.gross.length);
      c.expected.gross.forEach((g, t) => expectClose(got.gross[t], g, `${c.name} ${c.expected.periods[t]}`));
    });
  }

  it('the two account views (level B_t and a constant-value account paying rf_t) give the same returns, monthly and compounded from daily', () => {
    // METHODS section 1: both views give the same return series; inputs are the numpy fixture's.
    for (const [flowName, accountName] of [
      ['monthly flow', 'monthly account'],
      ['daily flow -> monthly', 'daily account -> monthly'],
    ] as const) {
      const flow = fixture.cases.find((c) => c.name === flowName) as Case;
      const account = fixture.cases.find((c) => c.name === accountName) as Case;
      const a = riskfreeGross(series(flow), flow.frequency);
      const b = riskfreeGross(series(account), account.frequency);
      expect(a.periods).toEqual(b.periods);
      expect(a.periods.length).toBeGreaterThan(2);
      for (let t = 0; t < a.gross.length; t++) expectClose(b.gross[t], a.gross[t], `${accountName} vs ${flowName} at ${a.periods[t]}`, 1e-13);
    }
  });

  it('yield conventions at a worked example: 5% a year over one month', () => {
    // Expected values printed by numpy 1.24.2 (Debian python3-numpy):
    // 1 + 0.05/12, np.power(1.05, 1/12), np.exp(0.05/12), np.exp(0.05).
    expectClose(yieldToGross(0.05, 1 / 12, 'simple'), 1.0041666666666667, 'simple');
    expectClose(yieldToGross(0.05, 1 / 12, 'annual'), 1.0040741237836484, 'annual');
    expectClose(yieldToGross(0.05, 1 / 12, 'continuous'), 1.0041753592911185, 'continuous');
    expectClose(yieldToGross(0.05, 1, 'annual'), 1.05, 'annual, one year');
    expectClose(yieldToGross(0.05, 1, 'continuous'), 1.051271096376024, 'continuous, one year');
  });

  it('a yield dated t earns over period t+1: the first yield has no period of its own', () => {
    const c = fixture.cases.find((x) => x.name === 'monthly yield-simple periods') as Case;
    const got = riskfreeGross(series(c), 'monthly');
    expect(got.periods[0]).toBe(c.dates[1]);
    expectClose(got.gross[0], 1 + c.values[0] / 12, 'R^f of the second month from the first yield');
  });

  it('a monthly rate cannot be asked for weekly: INPUT_INVALID naming the series', () => {
    const c = fixture.cases.find((x) => x.name === 'monthly rate') as Case;
    try {
      riskfreeGross(series(c), 'weekly');
      expect.unreachable('a lower-frequency series must be refused');
    } catch (e) {
      expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
      expect((e as Error).message).toContain('"monthly rate" is stored at monthly frequency, lower than the weekly requested');
    }
  });

  it('a rate of -100% or less, or a non-positive account level, is refused with the row named', () => {
    const bad = (form: RiskfreeForm, values: number[]): unknown => {
      try {
        riskfreeGross({ name: 'x', kind: 'riskfree', rfForm: form, dates: ['2024-01-31', '2024-02-29', '2024-03-29'], values: Float64Array.from(values) }, 'monthly');
      } catch (e) {
        return e;
      }
      return null;
    };
    const e1 = bad('rate', [0.001, -1, 0.001]);
    expect(isDeflatorError(e1) && e1.code).toBe('INPUT_INVALID');
    expect((e1 as Error).message).toContain('2024-02-29');
    const e2 = bad('account', [100, 0, 101]);
    expect(isDeflatorError(e2) && e2.code).toBe('INPUT_INVALID');
    expect((e2 as Error).message).toContain('2024-02-29');
  });

  it('excess returns without a risk-free series are refused (DATA_MISSING)', () => {
    const h = { asset: 'a', dates: ['2024-01-31', '2024-02-29'], price: Float64Array.of(10, 11), dividend: Float64Array.of(0, 0) };
    try {
      returnsTable([h], { frequency: 'monthly', kind: 'excess' });
      expect.unreachable('excess needs a risk-free series');
    } catch (e) {
      expect(isDeflatorError(e) && e.code).toBe('DATA_MISSING');
      expect(isDeflatorError(e) && e.hint).toMatch(/risk-free/);
    }
  });
});
