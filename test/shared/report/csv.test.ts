import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { CAUTION, type AnyResult } from '../../../shared/results.js';
import { resultToCsv } from '../../../shared/report/csv.js';
import { sampleBacktest, sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

/** Reader: csv-parse (independent CSV parser), '#' comment lines skipped, RFC 4180 quoting. */
function read(text: string): { header: string[]; rows: string[][]; comments: string[] } {
  const records = parse(text, { comment: '#', comment_no_infix: true, relax_column_count: false }) as string[][];
  const comments = text.split('\r\n').filter((l) => l.startsWith('#'));
  return { header: records[0], rows: records.slice(1), comments };
}

function file(result: AnyResult, table: string): { header: string[]; rows: string[][]; comments: string[] } {
  const f = resultToCsv(result, sampleRecord()).find((x) => x.table === table);
  if (!f) throw new Error(`no CSV for table ${table}`);
  return read(f.text);
}

/** A numeric cell read back must be the stored double itself (Object.is: sign of zero included). */
function expectSame(cell: string, stored: number, where: string): void {
  const back = Number(cell);
  expect(Object.is(back, stored), `${where}: cell "${cell}" read back ${back}, stored ${stored}, tolerance 0 (bit for bit)`).toBe(true);
}

describe('CSV export read back by csv-parse', () => {
  it('fit: parameters and pricing errors equal the result bit for bit', () => {
    const r = sampleFit();
    const p = file(r, 'parameters');
    expect(p.header).toEqual(['parameter', 'estimate', 'se', 't', 'p', 'note']);
    expect(p.rows.length).toBe(r.params.length);
    r.params.forEach((q, i) => {
      expect(p.rows[i][0]).toBe(q.name);
      expectSame(p.rows[i][1], q.estimate, `${q.name}.estimate`);
      expectSame(p.rows[i][2], q.se, `${q.name}.se`);
      expectSame(p.rows[i][3], q.t, `${q.name}.t`);
      expectSame(p.rows[i][4], q.p, `${q.name}.p`);
      expect(p.rows[i][5]).toBe(q.note ?? '');
    });
    const e = file(r, 'pricing-errors');
    expect(e.header).toEqual(['asset', 'alpha', 'se', 't', 'alphaAnnual', 'seAnnual', 'meanReturn', 'predicted']);
    r.pricingErrors.forEach((q, i) => {
      expect(e.rows[i][0]).toBe(q.asset); // names with commas, quotes and '#' survive quoting
      (['alpha', 'se', 't', 'alphaAnnual', 'seAnnual', 'meanReturn', 'predicted'] as const).forEach((k, j) => expectSame(e.rows[i][j + 1], q[k], `${q.asset}.${k}`));
    });
    const t = file(r, 'tests');
    expect(t.rows.map((x) => x[0])).toEqual([r.test.name, ...r.tests.map((x) => x.name)]);
    expectSame(t.rows[2][5], 3.3e-9, 'GRS p');
    expect(t.rows[2][3]).toBe('6');
    expect(t.rows[2][2]).toBe('');
  });

  it('carries the run id, sample header and caution in # lines', () => {
    const { comments } = file(sampleFit(), 'parameters');
    expect(comments).toContain('# run: 42');
    expect(comments).toContain('# sample: 2031-01-31 to 2035-12-31');
    expect(comments).toContain('# T: 60');
    expect(comments).toContain(`# panel sha256: ${'ab'.repeat(32)}`);
    expect(comments).toContain(`# caution: ${CAUTION}`);
  });

  it('back-test: summary, per-asset, long-form paths and windows', () => {
    const r = sampleBacktest();
    const tables = resultToCsv(r).map((f) => f.table);
    expect(tables).toEqual(['summary', 'per-asset', 'paths', 'windows']);
    const paths = file(r, 'paths');
    const flat = r.paths.flatMap((w) => w.params.map((p) => ({ end: w.end, ...p })));
    expect(paths.rows.length).toBe(flat.length);
    flat.forEach((x, i) => {
      expect(paths.rows[i].slice(0, 2)).toEqual([x.end, x.name]);
      expectSame(paths.rows[i][2], x.estimate, `${x.end} ${x.name} estimate`);
      expectSame(paths.rows[i][3], x.se, `${x.end} ${x.name} se`);
    });
    const s = file(r, 'summary');
    expectSame(s.rows.find((x) => x[0] === 'out-of-sample RMSE')![1], r.oos.rmse, 'oos.rmse');
    expectSame(s.rows.find((x) => x[0] === 'in-sample MAPE')![1], r.inSample.mape, 'inSample.mape');
    const w = file(r, 'windows');
    expect(w.rows.map((x) => x[4])).toEqual(r.windowList.map((x) => String(x.ok)));
  });

  it('comparison: one row per model, failed model kept with its error', () => {
    const r = sampleCompare();
    const m = file(r, 'models');
    expect(m.rows.map((x) => x[0])).toEqual(r.models.map((x) => x.label));
    expectSame(m.rows[0][m.header.indexOf('hj')], r.models[0].hj!.distance, 'models[0].hj');
    expect(m.rows[2][m.header.indexOf('error')]).toBe('NO_CONVERGENCE: gamma diverged');
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

  // Second reader: pandas 1.5 (Debian python3-pandas), read_csv(comment='#', float_precision='round_trip').
  it('reads back identically in pandas', () => {
    const py = '/usr/bin/python3';
    if (!existsSync(py)) {
      console.log('pandas check skipped: Debian python3 not found');
      return;
    }
    const r = sampleFit();
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-csv-'));
    const f = path.join(dir, 'pe.csv');
    writeFileSync(f, resultToCsv(r, sampleRecord()).find((x) => x.table === 'pricing-errors')!.text);
    const script = [
      'import sys, json, pandas as pd',
      "d = pd.read_csv(sys.argv[1], comment='#', float_precision='round_trip')",
      "print(json.dumps({'asset': list(d['asset']), 'alpha': [repr(float(x)) for x in d['alpha']], 'predicted': [repr(float(x)) for x in d['predicted']]}))",
    ].join('\n');
    const out = JSON.parse(execFileSync(py, ['-c', script, f], { encoding: 'utf8' })) as { asset: string[]; alpha: string[]; predicted: string[] };
    expect(out.asset).toEqual(r.pricingErrors.map((e) => e.asset));
    r.pricingErrors.forEach((e, i) => {
      expectSame(out.alpha[i], e.alpha, `pandas ${e.asset}.alpha`);
      expectSame(out.predicted[i], e.predicted, `pandas ${e.asset}.predicted`);
    });
  });
});
