import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fit } from '../../../shared/estimation/fit.js';
import { parseExact } from '../../../shared/records/exact-json.js';
import { CAUTION, type FitResult } from '../../../shared/results.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { recordRun } from '../../../src-main/runs/runs.js';
import { HAVE_CHROMIUM } from '../../shared/report/browser.js';
import { makeProject, type Project } from './helpers.js';

const CLI = path.resolve(import.meta.dirname, '../../../dist/cli.js');

function cli(args: string[]): { code: number; out: string; err: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

let p: Project;
let result: FitResult;

beforeAll(async () => {
  p = await makeProject();
  const spec = parseFitSpec({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks', 'greyhallow-banking'], model: { factors: ['harbor'] } });
  const panel = loadPanel(p.store, spec);
  result = fit(spec, panel);
  recordRun(p.store, { spec, result, panel });
  const twoPass = parseFitSpec({ riskfree: 'bill_yield', assets: 'all', model: { factors: ['harbor', 'ember', 'ledger'] }, estimator: { method: 'two-pass' } });
  const tpPanel = loadPanel(p.store, twoPass);
  recordRun(p.store, { spec: twoPass, result: fit(twoPass, tpPanel), panel: tpPanel });
  p.store.close();
});
afterAll(() => p?.store.close());

describe('deflator runs / show / export (built CLI)', () => {
  it('runs lists the run, as text and JSON', () => {
    const t = cli(['runs', '--db', p.dbPath]);
    expect(t.code, t.err).toBe(0);
    expect(t.out).toMatch(/^run\s+kind/);
    expect(t.out).toMatch(/\n\s*2\s+fit\s+.*two-pass/);
    expect(t.out).toMatch(/\n\s*1\s+fit\s+\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2}\s+linear\(harbor\)/);
    const j = cli(['runs', '--db', p.dbPath, '--json']);
    const list = JSON.parse(j.out) as { id: number; stale: boolean; panelSha256: string }[];
    expect(list).toHaveLength(2);
    expect(list[1].stale).toBe(false);
    expect(list[0].panelSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(cli(['runs', '--db', p.dbPath, '--kind', 'nope']).err).toMatch(/not a run kind/);
  });

  it('show prints the tables and record; --json is the exact record', () => {
    const t = cli(['show', '1', '--db', p.dbPath]);
    expect(t.code, t.err).toBe(0);
    expect(t.out).toContain('Parameter estimates');
    expect(t.out).toContain('Pricing errors');
    expect(t.out).toContain(CAUTION);
    expect(t.out).toContain('Data: unchanged since the run');
    const j = parseExact<{ result: FitResult; stale: boolean }>(cli(['show', '1', '--db', p.dbPath, '--json']).out);
    expect(j.stale).toBe(false);
    j.result.params.forEach((q, i) => expect(Object.is(q.estimate, result.params[i].estimate)).toBe(true));
    const missing = cli(['show', '9', '--db', p.dbPath]);
    expect(missing.code).toBe(1);
    expect(missing.err).toMatch(/run 9 is not in .*\n\s+-> run `deflator runs --db DB`/);
  });

  it('export csv into a folder: the tables alone, every cell parses back to the presented double (csv-parse), metadata in about.txt', () => {
    const dir = path.join(p.dir, 'csv-out') + path.sep;
    const r = cli(['export', '1', '--db', p.dbPath, '--format', 'csv', '--out', dir]);
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(dir).sort()).toEqual(
      ['about.txt', 'fit.csv', 'parameters.csv', 'pricing-errors.csv', 'tests.csv'].concat(result.sdf || result.bound ? ['discount-factor.csv'] : []).concat(result.sdf ? ['sdf.csv'] : []).concat(result.bound?.curve?.length ? ['bound.csv'] : []).concat(result.discounted ? ['discounted.csv'] : []).sort(),
    );
    const rows = parse(readFileSync(path.join(dir, 'pricing-errors.csv'), 'utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.map((x) => x.Asset)).toEqual(result.pricingErrors.map((e) => e.asset));
    const cols: [string, (e: FitResult['pricingErrors'][number]) => number][] = [
      ['alpha (% per month)', (e) => 100 * e.alpha],
      ['s.e. (% per month)', (e) => 100 * e.se],
      ['t', (e) => e.t],
      ['alpha (% per year)', (e) => 100 * e.alphaAnnual],
      ['s.e. (% per year)', (e) => 100 * e.seAnnual],
      ['mean return (% per month)', (e) => 100 * e.meanReturn],
      ['predicted (% per month)', (e) => 100 * e.predicted],
    ];
    rows.forEach((x, i) => {
      for (const [k, f] of cols) expect(Object.is(Number(x[k]), f(result.pricingErrors[i])), `${x.Asset}.${k}: ${x[k]} vs ${f(result.pricingErrors[i])}`).toBe(true);
    });
    expect(readFileSync(path.join(dir, 'about.txt'), 'utf8')).toContain(`caution: ${CAUTION}`);
    // A prefix instead of a folder.
    const pre = cli(['export', '1', '--db', p.dbPath, '--format', 'csv', '--out', path.join(p.dir, 'pre', 'run1')]);
    expect(pre.code, pre.err).toBe(0);
    expect(existsSync(path.join(p.dir, 'pre', 'run1-parameters.csv'))).toBe(true);
  });

  it('export xlsx, latex and html write files whose numbers are the stored ones', async () => {
    const x = path.join(p.dir, 'run1.xlsx');
    expect(cli(['export', '1', '--db', p.dbPath, '--format', 'xlsx', '--out', x]).code).toBe(0);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile(x);
    const ws = wb.getWorksheet('Parameters')!;
    result.params.forEach((q, i) => expect(Object.is(ws.getCell(i + 2, 2).value, q.estimate), q.name).toBe(true));
    expect(wb.getWorksheet('Record')).toBeDefined();

    const tex = path.join(p.dir, 'run1.tex');
    expect(cli(['export', '1', '--db', p.dbPath, '--format', 'tex', '--out', tex]).code).toBe(0);
    expect(readFileSync(tex, 'utf8')).toContain('\\toprule');

    const html = path.join(p.dir, 'run1.html');
    expect(cli(['export', '1', '--db', p.dbPath, '--format', 'html', '--out', html]).code).toBe(0);
    const doc = readFileSync(html, 'utf8');
    for (const q of result.params) expect(doc).toContain(`data-value="${String(q.estimate)}"`);
    expect(doc).toContain('<svg');

    expect(cli(['export', '1', '--db', p.dbPath, '--format', 'docx', '--out', html]).err).toMatch(/unknown export format "docx"/);
  });

  // Compiler check: Debian's texlive (pdflatex) where installed; skipped with the reason otherwise.
  it('export latex of a two-pass fit (Shanken s.e. in brackets) compiles with pdflatex', () => {
    const tex = path.join(p.dir, 'run2.tex');
    expect(cli(['export', '2', '--db', p.dbPath, '--format', 'latex', '--out', tex]).code).toBe(0);
    const body = readFileSync(tex, 'utf8');
    expect(body).toContain('s.e. (Shanken)');
    const which = spawnSync('sh', ['-c', 'command -v pdflatex'], { encoding: 'utf8' });
    if (which.status !== 0) {
      console.log('pdflatex check skipped: pdflatex not on PATH (Debian: apt-get install texlive-latex-recommended)');
      return;
    }
    writeFileSync(path.join(p.dir, 'doc.tex'), '\\documentclass{article}\n\\usepackage[T1]{fontenc}\n\\usepackage{booktabs}\n\\begin{document}\n\\input{run2.tex}\n\\end{document}\n');
    const r = spawnSync(which.stdout.trim(), ['-interaction=nonstopmode', '-halt-on-error', 'doc.tex'], { cwd: p.dir, encoding: 'utf8' });
    expect(r.status, r.stdout.slice(-2000)).toBe(0);
    expect(existsSync(path.join(p.dir, 'doc.pdf'))).toBe(true);
  });

  it.runIf(HAVE_CHROMIUM)('export pdf through headless Chromium', () => {
    const out = path.join(p.dir, 'run1.pdf');
    const r = cli(['export', '1', '--db', p.dbPath, '--format', 'pdf', '--out', out]);
    expect(r.code, r.err).toBe(0);
    expect(readFileSync(out).subarray(0, 5).toString('latin1')).toBe('%PDF-');
  });

  it('export pdf without a Chromium says so and suggests HTML', () => {
    const r = spawnSync(process.execPath, [CLI, 'export', '1', '--db', p.dbPath, '--format', 'pdf', '--out', path.join(p.dir, 'x.pdf')], {
      encoding: 'utf8',
      env: { ...process.env, PATH: '', DEFLATOR_CHROMIUM: '' },
    });
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/PDF export needs a Chromium browser/);
    expect(r.stderr).toMatch(/--format html/);
  });
});
