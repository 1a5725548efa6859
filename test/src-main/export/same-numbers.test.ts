/**
 * One fit, one back-test and one comparison of the demo market, each shown on every
 * surface: every number of the presentation model must reach the terminal report (`show`),
 * the CSV files and the XLSX workbook with the same value and the same heading (unit
 * included). The CSV and XLSX files are read by independent readers, pandas and openpyxl
 * (test/src-main/export/read_exports.py, Debian's /usr/bin/python3); the test is skipped,
 * saying so, where they are missing. The comparison holds the same model at two stages:
 * both rows, with their estimators, appear in the table, the record, `show`, `runs` and
 * every export (HTML and LaTeX included). The app's screens are checked against the same
 * model in the browser suite (test/e2e/flow.ts).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { parseExact } from '../../../shared/records/exact-json.js';
import type { RunRecord } from '../../../shared/records/run-record.js';
import { present, type PresentedTable } from '../../../shared/present/index.js';
import { tableCellText } from '../../../shared/present/format.js';
import { exportGrid } from '../../../shared/report/csv.js';
import type { CompareResult } from '../../../shared/results.js';

const ROOT = path.resolve(import.meta.dirname, '../../..');
const CLI = path.join(ROOT, 'dist/cli.js');
const PY = '/usr/bin/python3';
const READER = path.join(import.meta.dirname, 'read_exports.py');
const havePython = existsSync(PY) && spawnSync(PY, ['-c', 'import pandas, openpyxl'], { stdio: 'ignore' }).status === 0;

function cli(args: string[]): string {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: ROOT, env: { ...process.env, DEFLATOR_THREADS_EXACT: '1' } });
  if (r.status !== 0) throw new Error(`deflator ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return r.stdout;
}

type Read = { header: unknown[]; rows: unknown[][] };
type Cell = null | boolean | string | { num: string };

/** A cell read back must be the presented value: a double bit for bit (a spreadsheet has no -0), text as text. */
function expectCell(got: unknown, want: unknown, where: string, spreadsheet = false): void {
  const g = got as Cell;
  if (want === null) return void expect(g, where).toBeNull();
  if (typeof want === 'number') {
    expect(g !== null && typeof g === 'object', `${where}: expected the number ${want}, read ${JSON.stringify(g)}`).toBe(true);
    const back = Number((g as { num: string }).num);
    const same = spreadsheet && Object.is(want, -0) ? back === 0 : Object.is(back, want);
    return void expect(same, `${where}: read ${back}, shown ${want} (tolerance 0)`).toBe(true);
  }
  if (typeof want === 'boolean') return void expect(g === want || g === String(want), `${where}: ${JSON.stringify(g)} vs ${want}`).toBe(true);
  expect(g, where).toBe(want);
}

function expectTable(t: PresentedTable, read: Read | undefined, surface: string, spreadsheet: boolean): void {
  expect(read, `${surface}: table ${t.id} is missing`).toBeDefined();
  const grid = exportGrid(t);
  expect(read!.header, `${surface} ${t.id}: headings (with units)`).toEqual(grid.header);
  expect(read!.rows.length, `${surface} ${t.id}: rows`).toBe(grid.rows.length);
  grid.rows.forEach((row, i) => row.forEach((v, j) => expectCell(read!.rows[i][j], v, `${surface} ${t.id} row ${i + 1} "${grid.header[j]}"`, spreadsheet)));
}

/** Every main table's rows in the terminal report: the cells as displayed, in order, on one line, under the table's title and headings. */
function expectTerminal(text: string, tables: PresentedTable[]): void {
  for (const t of tables.filter((x) => x.role === 'main')) {
    const at = text.indexOf(`\n${t.title}\n`);
    expect(at, `terminal: title "${t.title}"`).toBeGreaterThanOrEqual(0);
    const block = text.slice(at, text.indexOf('\n\n', at + 1));
    for (const c of t.columns) {
      if (!c.unit) continue;
      if (c.type === 'number' && t.rows.every((r) => r[t.columns.indexOf(c)] === null)) continue;
      expect(block, `terminal ${t.id}: heading ${c.label} with its unit`).toContain(`(${c.unit})`);
    }
    t.rows.forEach((row, i) => {
      const cells = row
        .map((v, j) => (v === null ? null : tableCellText(t, i, j) + ((t.marks[t.columns[j].key] ?? []).includes(i) ? '*' : '')))
        .filter((x): x is string => x !== null && x !== '');
      const re = new RegExp(cells.map((c) => c.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')).join('.*?'));
      expect(block.split('\n').some((l) => re.test(l)), `terminal ${t.id} row ${i + 1}: ${cells.join(' | ')}`).toBe(true);
    });
  }
}

describe.skipIf(!havePython)(`every number the same on every surface${havePython ? '' : ' (skipped: /usr/bin/python3 with pandas and openpyxl not found)'}`, () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-same-'));
  const db = path.join(dir, 'demo.db');
  const runs: Record<'fit' | 'backtest' | 'compare', number> = { fit: 0, backtest: 0, compare: 0 };

  beforeAll(() => {
    cli(['demo', '--db', db, '--json']);
    runs.fit = (JSON.parse(cli(['fit', 'sample-data/specs/linear-second.json', '--db', db, '--json'])) as { run: number }).run;
    runs.backtest = (JSON.parse(cli(['backtest', 'sample-data/specs/backtest-linear-rolling.json', '--db', db, '--step', '24', '--json'])) as { run: number }).run;
    // The same model at two stages, left unlabelled: the default labels name the estimator.
    const spec = path.join(dir, 'two-stages.json');
    writeFileSync(
      spec,
      JSON.stringify({
        returns: 'excess',
        riskfree: 'bill_yield',
        backtest: { window: 120, step: 24, horizon: 12 },
        bootstrap: { replications: 49, seed: 7 },
        compare: [
          { model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] }, estimator: { stage: 'first' } },
          { model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] }, estimator: { stage: 'second' } },
          { label: 'board only', model: { kind: 'linear', factors: ['harbor'] } },
        ],
      }),
    );
    runs.compare = (JSON.parse(cli(['compare', spec, '--db', db, '--json'])) as { run: number }).run;
  }, 240_000);

  for (const kind of ['fit', 'backtest', 'compare'] as const) {
    it(`${kind}: terminal, CSV (pandas) and XLSX (openpyxl) carry the presentation's numbers and headings`, () => {
      const id = String(runs[kind]);
      const record = parseExact<RunRecord>(cli(['show', id, '--db', db, '--json']));
      const p = present(record.result);
      expectTerminal(cli(['show', id, '--db', db]), p.tables);
      const csvDir = path.join(dir, `${kind}-csv`) + path.sep;
      const xlsx = path.join(dir, `${kind}.xlsx`);
      cli(['export', id, '--db', db, '--format', 'csv', '--out', csvDir]);
      cli(['export', id, '--db', db, '--format', 'xlsx', '--out', xlsx]);
      const read = JSON.parse(execFileSync(PY, [READER, csvDir, xlsx], { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 })) as { csv: Record<string, Read>; xlsx: Record<string, Read> };
      const sheets = Object.keys(read.xlsx);
      p.tables.forEach((t, k) => {
        expectTable(t, read.csv[t.id], 'CSV (pandas)', false);
        expectTable(t, read.xlsx[sheets[k]], 'XLSX (openpyxl)', true);
        expect(sheets[k].length).toBeLessThanOrEqual(31);
      });
      expect(readFileSync(path.join(csvDir, 'about.txt'), 'utf8')).toContain('not investment advice');
      for (const w of p.warnings) expect(readFileSync(path.join(csvDir, 'about.txt'), 'utf8')).toContain(w.code);
    }, 120_000);
  }

  it('the same model at two stages: two rows with their estimators in the table, the record, show, runs and every export', () => {
    const id = String(runs.compare);
    const record = parseExact<RunRecord>(cli(['show', id, '--db', db, '--json']));
    const r = record.result as CompareResult;
    const first = 'linear(harbor,ember,ledger) [GMM first, W = I, lags auto]';
    const second = 'linear(harbor,ember,ledger) [GMM second, start W = I, lags auto]';
    expect(r.models.map((m) => [m.label, m.estimator?.stage])).toEqual([
      [first, 'first'],
      [second, 'second'],
      ['board only', 'second'],
    ]);
    expect(r.sample.stage).toMatch(/^per model/);
    const show = cli(['show', id, '--db', db]);
    for (const s of [first, second, 'GMM first, W = I, lags auto = 5', 'GMM second, start W = I, lags auto = 5']) expect(show).toContain(s);
    expect(cli(['runs', '--db', db, '--kind', 'compare'])).toContain('GMM first');
    const html = path.join(dir, 'two.html');
    const tex = path.join(dir, 'two.tex');
    cli(['export', id, '--db', db, '--format', 'html', '--out', html]);
    cli(['export', id, '--db', db, '--format', 'latex', '--out', tex]);
    const h = readFileSync(html, 'utf8');
    const t = readFileSync(tex, 'utf8');
    for (const s of ['GMM first, W = I, lags auto = 5', 'GMM second, start W = I, lags auto = 5']) {
      expect(h).toContain(s);
      expect(t).toContain(s);
    }
    const models = readFileSync(path.join(dir, 'compare-csv', 'models.csv'), 'utf8');
    expect(models).toContain(`"${first}"`);
    expect(models).toContain('"GMM first, W = I, lags auto = 5"');
    expect(models).toContain('"GMM second, start W = I, lags auto = 5"');
  }, 120_000);
});
