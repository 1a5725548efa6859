/**
 * Exports of results with instruments (METHODS 9) carry the instrument beside the asset:
 * the CSV pricing-error and per-asset tables, read back by csv-parse (an independent RFC 4180
 * reader), and the sample header names the instruments, their scaling and lag.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { backtest } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import { resultToCsv } from '../../../shared/report/csv.js';
import type { AnyResult } from '../../../shared/results.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { panelFromFixture, type FixtureData } from '../estimation/helpers.js';

const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, '../estimation/fixtures/instruments_reference.json'), 'utf8')) as { data: FixtureData & { instruments: number[][] } };
const base = panelFromFixture(fx.data, 'excess', ['f1', 'f2']);
const T = base.periods.length;
const panel = { ...base, instruments: { lag: 1, series: ['dp'].map((name) => ({ name, values: Float64Array.from({ length: T }, (_, t) => fx.data.instruments[t][0]) })), lost: [] } };
const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, instruments: { series: ['dp'] }, backtest: { window: 150, step: 50, horizon: 5 } });

function csv(result: AnyResult, table: string): { about: string; header: string[]; rows: string[][] } {
  const files = resultToCsv(result);
  const records = parse(files.find((x) => x.table === table)!.text) as string[][];
  return { about: files.find((x) => x.table === 'about')!.text, header: records[0], rows: records.slice(1) };
}

describe('exports with instruments', () => {
  it('fit: the pricing-error CSV has an instrument column, instrument-major, and the header names the instruments', () => {
    const r = fit(spec, panel);
    const t = csv(r, 'pricing-errors');
    expect(t.header.slice(0, 3)).toEqual(['Asset', 'Instrument', 'alpha (% per month)']);
    expect(t.rows).toHaveLength(2 * 10);
    expect(t.rows.map((x) => x[1])).toEqual([...Array(10).fill('const'), ...Array(10).fill('dp')]);
    t.rows.forEach((x, i) => {
      expect(x[0]).toBe(r.pricingErrors[i].asset);
      expect(Object.is(Number(x[2]), 100 * r.pricingErrors[i].alpha)).toBe(true);
    });
    expect(t.about).toMatch(/instruments: const, dp, scaling the returns, lagged 1 period/);
  });

  it('back-test: the per-asset CSV has the instrument column too', () => {
    const r = backtest(spec, panel, { fit });
    const t = csv(r, 'per-asset');
    expect(t.header.slice(0, 2)).toEqual(['Asset', 'Instrument']);
    expect(t.rows.map((x) => `${x[0]}|${x[1]}`)).toEqual(r.perAsset.map((a) => `${a.asset}|${a.instrument}`));
  });
});
