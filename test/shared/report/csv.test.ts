import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { CAUTION, type AnyResult } from '../../../shared/results.js';
import { resultToCsv } from '../../../shared/report/csv.js';
import { present } from '../../../shared/present/index.js';
import { sampleBacktest, sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

/** Reader: csv-parse (independent CSV parser), RFC 4180 quoting, no comment handling: the file must be the table alone. */
function read(text: string): { header: string[]; rows: string[][] } {
  const records = parse(text, { relax_column_count: false }) as string[][];
  return { header: records[0], rows: records.slice(1) };
}

function file(result: AnyResult, table: string): { header: string[]; rows: string[][] } {
  const f = resultToCsv(result, sampleRecord()).find((x) => x.table === table);
  if (!f) throw new Error(`no CSV for table ${table}`);
  return read(f.text);
}

/** A numeric cell read back must be the presented double itself (Object.is: sign of zero included). */
function expectSame(cell: string, value: number, where: string): void {
  const back = Number(cell);
  expect(Object.is(back, value), `${where}: cell "${cell}" read back ${back}, expected ${value}, tolerance 0 (bit for bit)`).toBe(true);
}

describe('CSV export read back by csv-parse', () => {
  it('fit: header row with units, then the data; numbers are the presented values bit for bit', () => {
    const r = sampleFit();
    const p = file(r, 'parameters');
    expect(p.header).toEqual(['Parameter', 'Estimate', 's.e.', 't', 'p']);
    expect(p.rows.length).toBe(r.params.length);
    r.params.forEach((q, i) => {
      expect(p.rows[i][0]).toBe(q.name);
      expectSame(p.rows[i][1], q.estimate, `${q.name}.estimate`);
      expectSame(p.rows[i][2], q.se, `${q.name}.se`);
      expectSame(p.rows[i][3], q.t, `${q.name}.t`);
      expectSame(p.rows[i][4], q.p, `${q.name}.p`);
    });
    const e = file(r, 'pricing-errors');
    expect(e.header).toEqual([
      'Asset',
      'alpha (% per month)',
      's.e. (% per month)',
      't',
      'alpha (% per year)',
      's.e. (% per year)',
      'mean return (% per month)',
      'predicted (% per month)',
    ]);
    r.pricingErrors.forEach((q, i) => {
      expect(e.rows[i][0]).toBe(q.asset); // names with commas, quotes and '#' survive quoting
      // Percent columns hold 100 x the stored decimal (one IEEE multiplication), annualised ones 100 x the stored annual value.
      expectSame(e.rows[i][1], 100 * q.alpha, `${q.asset}.alpha`);
      expectSame(e.rows[i][2], 100 * q.se, `${q.asset}.se`);
      expectSame(e.rows[i][3], q.t, `${q.asset}.t`);
      expectSame(e.rows[i][4], 100 * q.alphaAnnual, `${q.asset}.alphaAnnual`);
      expectSame(e.rows[i][5], 100 * q.seAnnual, `${q.asset}.seAnnual`);
      expectSame(e.rows[i][6], 100 * q.meanReturn, `${q.asset}.meanReturn`);
      expectSame(e.rows[i][7], 100 * q.predicted, `${q.asset}.predicted`);
    });
    const t = file(r, 'tests');
    expect(t.header).toEqual(['Test', 'Statistic', 'df1', 'df2', 'p']);
    expect(t.rows.map((x) => x[0])).toEqual([r.test.name, ...r.tests.map((x) => x.name)]);
    expectSame(t.rows[2][4], 3.3e-9, 'GRS p');
    expect(t.rows[2].slice(2, 4)).toEqual(['6', '52']);
  });

  it('keeps the metadata out of the tables: a sidecar about.txt carries record, header, caution, notes and warnings', () => {
    const files = resultToCsv(sampleBacktest(), sampleRecord());
    for (const f of files.filter((x) => x.ext === 'csv')) expect(f.text.startsWith('#'), f.table).toBe(false);
    const about = files.find((f) => f.table === 'about');
    expect(about?.ext).toBe('txt');
    const text = about!.text;
    expect(text).toContain(`caution: ${CAUTION}`);
    expect(text).toContain('run: 42');
    expect(text).toContain(`panel sha256: ${'ab'.repeat(32)}`);
    expect(text).toMatch(/sample: 2031-01-31 to 2035-12-31, monthly/);
    expect(text).toContain('warning 1: FAILED_WINDOWS: 1 of 5 back-test windows');
    expect(text).toContain('file: per-asset.csv');
  });

  it('puts the metadata in # lines above each table when asked', () => {
    const f = resultToCsv(sampleFit(), sampleRecord(), { comments: true }).find((x) => x.table === 'parameters')!;
    const lines = f.text.split('\r\n');
    expect(lines).toContain(`# caution: ${CAUTION}`);
    expect(lines).toContain('# run: 42');
    const records = parse(f.text, { comment: '#', comment_no_infix: true }) as string[][];
    expect(records[0]).toEqual(['Parameter', 'Estimate', 's.e.', 't', 'p']);
  });

  it('back-test: summary, per-asset, path summary, long-form paths and windows', () => {
    const r = sampleBacktest();
    const tables = resultToCsv(r).filter((f) => f.ext === 'csv').map((f) => f.table);
    expect(tables).toEqual(['summary', 'per-asset', 'path-summary', 'paths', 'windows']);
    const paths = file(r, 'paths');
    const flat = r.paths.flatMap((w) => w.params.map((p) => ({ end: w.end, ...p })));
    expect(paths.rows.length).toBe(flat.length);
    flat.forEach((x, i) => {
      expect(paths.rows[i].slice(0, 2)).toEqual([x.end, x.name]);
      expectSame(paths.rows[i][2], x.estimate, `${x.end} ${x.name} estimate`);
      expectSame(paths.rows[i][3], x.se, `${x.end} ${x.name} se`);
    });
    const s = file(r, 'summary');
    expect(s.header).toEqual(['Measure', 'In sample', 'Out of sample', 'Unit']);
    const row = s.rows.find((x) => x[0] === 'RMSE across assets of mean errors' && x[3] === '% per month')!;
    expectSame(row[2], 100 * r.oos.rmse, 'oos.rmse');
    const yr = s.rows.find((x) => x[0] === 'RMSE across assets of mean errors' && x[3] === '% per year')!;
    expectSame(yr[2], 100 * (r.oos.rmse * 12), 'oos.rmse annualised');
    const pooled = s.rows.find((x) => x[0] === 'pooled RMSE over windows and assets')!;
    expect(pooled[3]).toBe('% per month'); // a dispersion of single-window errors is not annualised
    const w = file(r, 'windows');
    expect(w.rows.map((x) => x[4])).toEqual(r.windowList.map((x) => String(x.ok)));
    expect(w.header.at(-1)).toBe('warnings');
    expect(w.rows.find((x) => x[4] === 'false')!.at(-1)).toBe('FAILED_WINDOWS');
  });

  it('comparison: one row per model in each table, best marks in a "best in" column, failed back-test kept with its reason', () => {
    const r = sampleCompare();
    const m = file(r, 'models');
    expect(m.rows.map((x) => x[0])).toEqual(r.models.map((x) => x.label));
    const f = file(r, 'fit');
    expectSame(f.rows[0][f.header.indexOf('HJ distance (per month)')], r.models[0].hj!.distance, 'models[0].hj');
    const marks = present(r).tables.find((t) => t.id === 'fit')!.marks;
    const bestIn = f.header.indexOf('best in');
    expect(bestIn).toBeGreaterThan(0);
    for (const [key, rows] of Object.entries(marks)) {
      const header = present(r).tables.find((t) => t.id === 'fit')!.columns.find((c) => c.key === key)!.header;
      for (const i of rows) expect(f.rows[i][bestIn]).toContain(header);
    }
    const o = file(r, 'out-of-sample');
    expect(o.rows[2][o.header.indexOf('Status')]).toBe('NO_CONVERGENCE: gamma diverged');
    const h = file(r, 'hj-tests');
    expectSame(h.rows[0][2], 0.0123456789, 'hjTests[0].diff');
  });

  it('keeps -0 and extreme doubles', () => {
    const r = sampleFit();
    r.params[1].estimate = -0;
    r.params[2].estimate = 1.7976931348623157e308;
    const p = file(r, 'parameters');
    expect(p.rows[1][1]).toBe('-0');
    expectSame(p.rows[1][1], -0, 'negative zero');
    expectSame(p.rows[2][1], 1.7976931348623157e308, 'largest double');
  });

  // Second reader: pandas 1.5 (Debian python3-pandas), read_csv(float_precision='round_trip') with no options for comments.
  const py = '/usr/bin/python3';
  const pandas = existsSync(py) && (() => { try { execFileSync(py, ['-c', 'import pandas'], { stdio: 'ignore' }); return true; } catch { return false; } })();
  it.skipIf(!pandas)(`reads back identically in pandas${pandas ? '' : ' (skipped: /usr/bin/python3 with pandas not found)'}`, () => {
    const r = sampleFit();
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-csv-'));
    const f = path.join(dir, 'pe.csv');
    writeFileSync(f, resultToCsv(r, sampleRecord()).find((x) => x.table === 'pricing-errors')!.text);
    const script = [
      'import sys, json, pandas as pd',
      "d = pd.read_csv(sys.argv[1], float_precision='round_trip')",
      "print(json.dumps({'columns': list(d.columns), 'asset': list(d['Asset']), 'alpha': [repr(float(x)) for x in d['alpha (% per month)']], 'predicted': [repr(float(x)) for x in d['predicted (% per month)']]}))",
    ].join('\n');
    const out = JSON.parse(execFileSync(py, ['-c', script, f], { encoding: 'utf8' })) as { columns: string[]; asset: string[]; alpha: string[]; predicted: string[] };
    expect(out.columns[1]).toBe('alpha (% per month)');
    expect(out.asset).toEqual(r.pricingErrors.map((e) => e.asset));
    r.pricingErrors.forEach((e, i) => {
      expectSame(out.alpha[i], 100 * e.alpha, `pandas ${e.asset}.alpha`);
      expectSame(out.predicted[i], 100 * e.predicted, `pandas ${e.asset}.predicted`);
    });
  });
});
