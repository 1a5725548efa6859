import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunRecord, RunSummary, StaleItem } from '../../../shared/records/run-record.js';
import type { ReplayReport } from '../../../shared/records/replay-report.js';
import type { FitResult } from '../../../shared/results.js';
import { openApp, type OpenedApp } from '../../../src-main/app/open.js';
import { createPool, type DeflatorPool } from '../../../src-main/workers/pool.js';
import { makeProject, type Project } from './helpers.js';

let p: Project;
let pool: DeflatorPool;
let app: OpenedApp;

async function call<T>(name: string, req: unknown): Promise<T> {
  const env = await app.dispatcher.dispatch(name, req);
  if (!env.ok) throw new Error(`${name}: ${env.error.code} ${env.error.message}`);
  return env.value as T;
}

beforeAll(async () => {
  p = await makeProject();
  p.store.close();
  pool = createPool({ threads: 2 });
  app = await openApp({ dbPath: p.dbPath, dataDir: mkdtempSync(path.join(tmpdir(), 'deflator-app-')), pool });
}, 120_000);

afterAll(async () => {
  app?.close();
  await pool?.close();
});

describe('run history through the bridge (the app)', () => {
  const spec = { riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks', 'lanternfold-power'], model: { factors: ['harbor'] } };

  it('a fit from the app is recorded and its reply carries the run id', async () => {
    const fit = await call<FitResult & { runId?: number }>('fit', { spec });
    expect(fit.runId).toBe(1);
    const list = await call<RunSummary[]>('runs', {});
    expect(list.map((r) => [r.id, r.kind, r.label, r.stale])).toEqual([[1, 'fit', fit.label, false]]);
    expect(await call<RunSummary[]>('runs', { model: 'no-such-model' })).toEqual([]);
    const { record, staleItems } = await call<{ record: RunRecord; staleItems: StaleItem[] }>('run', { id: 1 });
    expect(staleItems).toEqual([]);
    // The stored result is the reply without the run tag, number for number.
    const { runId: _tag, ...plain } = fit;
    expect(record.result).toEqual(plain);
    expect(record.files.map((f) => f.file).sort()).toEqual(['bill_yield.csv', 'factors.csv', 'prices.csv']);
  });

  it('exportRun returns the files; CSV and XLSX read back to the stored numbers', async () => {
    const { record } = await call<{ record: RunRecord }>('run', { id: 1 });
    const result = record.result as FitResult;
    const csv = await call<{ files: { name: string; mime: string; base64: string }[] }>('exportRun', { id: 1, format: 'csv' });
    const pe = csv.files.find((f) => f.name === 'pricing-errors.csv')!;
    expect(pe.mime).toBe('text/csv');
    // Reader: csv-parse.
    const rows = parse(Buffer.from(pe.base64, 'base64').toString('utf8'), { columns: true }) as Record<string, string>[];
    rows.forEach((row, i) => expect(Object.is(Number(row['alpha (% per month)']), 100 * result.pricingErrors[i].alpha), row.Asset).toBe(true));
    expect(csv.files.some((f) => f.name === 'about.txt')).toBe(true);
    const xlsx = await call<{ files: { name: string; base64: string }[] }>('exportRun', { id: 1, format: 'xlsx' });
    expect(xlsx.files[0].name).toBe('run-1.xlsx');
    // Reader: exceljs.
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(Buffer.from(xlsx.files[0].base64, 'base64') as unknown as ArrayBuffer);
    result.params.forEach((q, i) => expect(Object.is(wb.getWorksheet('Parameters')!.getCell(i + 2, 2).value, q.estimate)).toBe(true));
    const bad = await app.dispatcher.dispatch('exportRun', { id: 1, format: 'docx' });
    expect(bad.ok).toBe(false);
  });

  it('replayRun reproduces the run; deleteRun removes it', async () => {
    const r = await call<ReplayReport>('replayRun', { id: 1 });
    expect(r.ok).toBe(true);
    expect(r.differing).toBe(0);
    expect(await call<{ deleted: number }>('deleteRun', { id: 1 })).toEqual({ deleted: 1 });
    const gone = await app.dispatcher.dispatch('run', { id: 1 });
    expect(gone.ok).toBe(false);
    if (!gone.ok) expect(gone.error.code).toBe('NOT_FOUND');
  });

  it('back-tests and comparisons from the app are recorded too', async () => {
    const bt = await call<{ runId?: number; kind: string }>('backtest', { spec: { ...spec, backtest: { window: 60, step: 24 } } });
    const cmp = await call<{ runId?: number; kind: string }>('compare', {
      spec: { riskfree: 'bill_yield', assets: spec.assets, bootstrap: { replications: 19, seed: 3 }, compare: [{ model: { factors: ['harbor'] } }, { model: { factors: ['harbor', 'ember'] } }] },
    });
    expect([bt.runId, cmp.runId]).toEqual([2, 3]);
    const list = await call<RunSummary[]>('runs', {});
    expect(list.map((r) => r.kind)).toEqual(['compare', 'backtest']);
    for (const id of [2, 3]) expect((await call<ReplayReport>('replayRun', { id })).ok).toBe(true);
  });
});
