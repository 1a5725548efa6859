/**
 * Present-value and drift analyses as recorded runs: recorded with the fingerprint of the
 * data they used (the yearly values; the panel with its price ratios), replayed bit for
 * bit, listed, and stale once a price they read changes (a re-imported file).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseDriftSpec, parsePresentValueSpec } from '../../../shared/spec.js';
import { fingerprintYearly } from '../../../shared/records/panel-encoding.js';
import { runAnalysis } from '../../../src-main/services/analysis.js';
import { inProcess } from '../../../src-main/services/compute.js';
import { formatReplay, poolRecompute, replayRun } from '../../../src-main/runs/replay.js';
import { getRun, listRuns } from '../../../src-main/runs/runs.js';
import { importPrices } from '../../../src-main/import/index.js';
import { editPrice, forgetImport, makeProject, type Project } from './helpers.js';
import { execFileSync } from 'node:child_process';
import ExcelJS from 'exceljs';
import type { DriftResult, FitResult, PresentValueResult } from '../../../shared/results.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { renderExport } from '../../../src-main/export/run-export.js';

const hasChromium = (() => {
  if (process.env.DEFLATOR_CHROMIUM) return true;
  try {
    return execFileSync('sh', ['-c', 'command -v chromium'], { encoding: 'utf8' }).trim() !== '';
  } catch {
    return false;
  }
})();
import Database from 'better-sqlite3';
import { applyMigrations } from '../../../src-main/store/store.js';
import { MIGRATIONS, SCHEMA_VERSION } from '../../../src-main/store/migrations.js';

let p: Project;
beforeAll(async () => {
  p = await makeProject();
});
afterAll(() => p?.store.close());

describe('schema: the run kinds widened (migration 5)', () => {
  it('keeps the runs and subjects of a version-3 database and never reuses a run id', () => {
    const db = new Database(':memory:');
    applyMigrations(db, ':memory:', MIGRATIONS.filter((m) => m.version <= 3));
    const insert = db.prepare("INSERT INTO run (kind, label, created_at, version, spec, result, panel, panel_sha256, compute) VALUES ('fit', ?, 't', 'v', '{}', '{}', '{}', 'x', '{\"threads\":2}')");
    for (const label of ['a', 'b', 'c']) insert.run(label);
    db.prepare("INSERT INTO run_subject (run_id, kind, name, sha256) VALUES (2, 'asset', 'x', 'y')").run();
    db.prepare('DELETE FROM run WHERE id = 3').run();
    expect(() => db.prepare("INSERT INTO run (kind, label, created_at, version, spec, result, panel, panel_sha256) VALUES ('drift', 'd', 't', 'v', '{}', '{}', '{}', 'x')").run()).toThrow(/CHECK/);
    applyMigrations(db, ':memory:', MIGRATIONS);
    expect(db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    expect(db.prepare('SELECT id, label, compute FROM run ORDER BY id').all()).toEqual([
      { id: 1, label: 'a', compute: '{"threads":2}' },
      { id: 2, label: 'b', compute: '{"threads":2}' },
    ]);
    expect(db.prepare('SELECT run_id, name FROM run_subject').all()).toEqual([{ run_id: 2, name: 'x' }]);
    const id = db.prepare("INSERT INTO run (kind, label, created_at, version, spec, result, panel, panel_sha256) VALUES ('drift', 'd', 't', 'v', '{}', '{}', '{}', 'x')").run().lastInsertRowid;
    expect(Number(id)).toBe(4);
    db.prepare('DELETE FROM run WHERE id = 2').run();
    expect(db.prepare('SELECT COUNT(*) AS n FROM run_subject').get()).toEqual({ n: 0 });
    expect(db.pragma('foreign_key_check')).toEqual([]);
    db.close();
  });
});

describe('present-value and drift runs', () => {
  let pvRun = 0;
  let driftRun = 0;
  let otherRun = 0;

  it('are recorded with their data fingerprints and subjects', async () => {
    const pvSpec = parsePresentValueSpec({ analysis: 'present-value', asset: 'lanternfold-power' });
    const pv = await runAnalysis(p.store, { kind: 'present-value', spec: pvSpec }, inProcess());
    expect(pv.run).toBeDefined();
    pvRun = pv.run?.id as number;
    const rec = getRun(p.store, pvRun);
    expect(rec.kind).toBe('present-value');
    const { runId: _tag, ...plain } = pv.result;
    expect(rec.result).toEqual(plain);
    expect(rec.subjects.map((s) => `${s.kind} ${s.name}`)).toEqual(['asset lanternfold-power']);
    const y = pv.data.yearly;
    expect(y).toBeDefined();
    if (y) expect(rec.panel).toEqual(fingerprintYearly({ closes: y.values.closes, assets: y.assets, weighting: y.values.weighting, price: y.values.price, dividend: y.values.dividend }));
    expect(rec.panel).toMatchObject({ frequency: 'annual', T: 24, N: 1, K: 0 });

    const driftSpec = parseDriftSpec({ analysis: 'drift', assets: ['lanternfold-power', 'harrowind-timber'], frequency: 'quarterly' });
    const dr = await runAnalysis(p.store, { kind: 'drift', spec: driftSpec }, inProcess());
    driftRun = dr.run?.id as number;
    const drec = getRun(p.store, driftRun);
    expect(drec.subjects.map((s) => s.name)).toEqual(['harrowind-timber', 'lanternfold-power']);
    expect(drec.panel).toMatchObject({ frequency: 'quarterly', N: 2, K: 0 });

    const other = await runAnalysis(p.store, { kind: 'present-value', spec: parsePresentValueSpec({ analysis: 'present-value', asset: 'harrowind-timber' }) }, inProcess());
    otherRun = other.run?.id as number;
    expect(listRuns(p.store, { kind: 'present-value' }).map((r) => r.id)).toEqual([otherRun, pvRun]);
    expect(listRuns(p.store, { kind: 'drift' }).map((r) => r.id)).toEqual([driftRun]);
  });

  it('replay bit for bit', async () => {
    for (const id of [pvRun, driftRun]) {
      const r = await replayRun(p.store, id, poolRecompute(inProcess()));
      expect(r.differences, formatReplay(r)).toEqual([]);
      expect(r.compared).toBeGreaterThan(20);
      expect(r.ok, formatReplay(r)).toBe(true);
    }
  });

  it('export in every format from the stored result: CSV and XLSX read back exactly, LaTeX tables, HTML with its charts (PDF where a Chromium is installed)', async () => {
    const pv = getRun(p.store, pvRun);
    const r = pv.result as PresentValueResult;
    const csv = await renderExport(pv, 'csv');
    expect(csv.map((f) => f.name)).toEqual(expect.arrayContaining(['summary.csv', 'regressions.csv', 'long-run.csv', 'years.csv', 'covariance.csv', 'about.txt']));
    const regs = csv.find((f) => f.name === 'regressions.csv')?.data.toString('utf8') ?? '';
    const rows = regs.trim().split('\r\n').map((l) => l.split(','));
    const bCol = rows[0].findIndex((h) => h.startsWith('b '));
    expect(Number(rows[1][bCol])).toBe(r.regressions.r.b);
    expect(Number(rows[3][bCol])).toBe(r.regressions.dp.b);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load((await renderExport(pv, 'xlsx'))[0].data as unknown as ArrayBuffer);
    const values = wb.worksheets.flatMap((ws) => ws.getSheetValues().flat().filter((v): v is number => typeof v === 'number'));
    expect(values).toContain(r.longRun.r.se);
    expect((await renderExport(pv, 'latex'))[0].data.toString('utf8')).toContain('\\toprule');
    const html = (await renderExport(pv, 'html'))[0].data.toString('utf8');
    expect(html).toContain('id="chart-dp"');
    expect(html).toContain(`data-slope="${r.regressions.r.b}"`);
    expect(html).toContain('not investment advice');
    const dr = getRun(p.store, driftRun);
    const dhtml = (await renderExport(dr, 'html'))[0].data.toString('utf8');
    expect(dhtml).toContain('id="chart-drift-split"');
    const d = dr.result as DriftResult;
    expect(dhtml).toContain(`data-value="${d.assets[0].priceGrowth! * 100}"`);
    expect((await renderExport(dr, 'csv')).map((f) => f.name)).toContain('drift.csv');
  });

  it.skipIf(!hasChromium)('PDF of a present-value run (skipped: no Chromium)', async () => {
    const pdf = (await renderExport(getRun(p.store, pvRun), 'pdf'))[0].data;
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
  });

  it('a fit\'s HTML report draws its discounted-value paths; CSV and XLSX carry them as a table', async () => {
    const fitSpec = parseFitSpec({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks', 'lanternfold-power'], model: { factors: ['harbor'] } });
    const out = await runAnalysis(p.store, { kind: 'fit', spec: fitSpec }, inProcess());
    const rec = getRun(p.store, out.run?.id as number);
    const html = (await renderExport(rec, 'html'))[0].data.toString('utf8');
    expect(html).toContain('id="chart-discounted"');
    const csv = await renderExport(rec, 'csv');
    const table = csv.find((f) => f.name === 'discounted.csv')?.data.toString('utf8') ?? '';
    const lines = table.trim().split('\r\n');
    expect(lines.length).toBe(rec.result.kind === 'fit' ? rec.result.sample.T + 1 : 0);
    const last = lines[lines.length - 1].split(',');
    const fitResult = rec.result as FitResult;
    expect(Number(last[1]) / fitResult.sample.T).toBeCloseTo(fitResult.pricingErrors[0].alpha, 12);
  });

  it('a changed price of lanternfold-power makes its runs stale, and their replay says so; the other asset\'s run stays fresh', async () => {
    editPrice(p.file('prices.csv'), 'lanternfold-power', '2012-12-31', 1.1);
    forgetImport(p.store, 'prices.csv');
    await importPrices(p.store, p.file('prices.csv'), { layout: 'long' });
    const runs = listRuns(p.store);
    expect(runs.find((r) => r.id === pvRun)?.stale).toBe(true);
    expect(runs.find((r) => r.id === driftRun)?.stale).toBe(true);
    const pv = await replayRun(p.store, pvRun, poolRecompute(inProcess()));
    expect(pv.stale).toBe(true);
    expect(pv.ok).toBe(false);
    expect(pv.panels[0].matches).toBe(false);
    expect(formatReplay(pv)).toContain('STALE');
    // harrowind-timber's rows were re-imported from the same new file: stale by the file check, numbers unchanged
    const other = await replayRun(p.store, otherRun, poolRecompute(inProcess()));
    expect(other.differing).toBe(0);
    expect(other.panels[0].matches).toBe(true);
  });
});
