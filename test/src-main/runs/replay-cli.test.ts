import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseExact } from '../../../shared/records/exact-json.js';
import type { ReplayReport } from '../../../shared/records/replay-report.js';
import { parseCompareSpec, parseFitSpec } from '../../../shared/spec.js';
import { importPrices } from '../../../src-main/import/index.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { keepRun, listRuns } from '../../../src-main/runs/runs.js';
import { Store } from '../../../src-main/store/store.js';
import { createPool, defaultThreads, type DeflatorPool } from '../../../src-main/workers/pool.js';
import { windowChunks, windowSchedule } from '../../../shared/backtest/index.js';
import { editPrice, forgetImport, makeProject, type Project } from './helpers.js';

const CLI = path.resolve(import.meta.dirname, '../../../dist/cli.js');
const cli = (args: string[], env: NodeJS.ProcessEnv = process.env) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', env });
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
};

const ASSETS = ['brinemoor-ferries', 'corvane-saltworks', 'greyhallow-banking', 'lanternfold-power', 'marrowby-textiles', 'northwick-kelp'];
let p: Project;
let pool: DeflatorPool;
const ids: Record<string, number> = {};
let rollChunks = 0;

beforeAll(async () => {
  p = await makeProject();
  const assets = ASSETS;
  pool = createPool({ threads: 2 });
  // Each kind of run computed as the commands and the app compute it: panel from the store, work in the worker pool.
  const fitSpec = parseFitSpec({ riskfree: 'bill_yield', assets, model: { factors: ['harbor', 'ember'] }, estimator: { stage: 'iterated' } });
  const fitPanel = loadPanel(p.store, fitSpec);
  ids.fit = keepRun(p.store, { spec: fitSpec, result: await pool.runTask('fit', { spec: fitSpec, panel: fitPanel }), panel: fitPanel, threads: pool.threads }).runId!;

  const btSpec = parseFitSpec({ riskfree: 'bill_yield', assets, model: { factors: ['harbor'] }, backtest: { window: 60, step: 6, horizon: 3 } });
  const btPanel = loadPanel(p.store, btSpec);
  ids.backtest = keepRun(p.store, { spec: btSpec, result: await pool.runTask('backtest', { spec: btSpec, panel: btPanel }), panel: btPanel, threads: pool.threads }).runId!;
  // Step 1: windows in chunks of 60, which 1, 2 and 3 threads share out differently.
  const rollSpec = parseFitSpec({ riskfree: 'bill_yield', assets, model: { factors: ['harbor', 'ember'] }, estimator: { weight: 'hj' }, backtest: { window: 60, step: 1, horizon: 1 } });
  const rollPanel = loadPanel(p.store, rollSpec);
  rollChunks = windowChunks(rollSpec.backtest!, windowSchedule(rollPanel.periods.length, rollSpec.backtest!).length).length;
  ids.rolling = keepRun(p.store, { spec: rollSpec, result: await pool.runTask('backtest', { spec: rollSpec, panel: rollPanel }), panel: rollPanel, threads: pool.threads }).runId!;

  const { spec: cmpSpec, fits } = parseCompareSpec({
    riskfree: 'bill_yield',
    assets,
    bootstrap: { replications: 49, block: 6, seed: 7 },
    backtest: { window: 60, step: 4, horizon: 1 },
    compare: [{ model: { factors: ['harbor'] } }, { model: { factors: ['harbor', 'ember', 'ledger'] } }, { model: { kind: 'consumption', consumption: 'household_spending', delta: 1 } }],
  });
  const panels = fits.map((f) => loadPanel(p.store, f));
  ids.compare = keepRun(p.store, { spec: cmpSpec, result: await pool.runTask('compare', { spec: cmpSpec, fits, panels }), panel: panels, threads: pool.threads }).runId!;
  p.store.close();
}, 180_000);

afterAll(async () => {
  await pool?.close();
  p?.store.close();
});

describe('deflator replay (built CLI, worker pool)', () => {
  it.each(['fit', 'backtest', 'rolling', 'compare'])('reproduces a %s run bit for bit and exits 0', (kind) => {
    const r = cli(['replay', String(ids[kind]), '--db', p.dbPath, '--threads', '2']);
    expect(r.code, `${r.out}\n${r.err}`).toBe(0);
    expect(r.out).toMatch(/numbers: all \d+ stored numbers reproduced bit for bit/);
    expect(r.out).toMatch(/panel( 1)?: fingerprint matches/);
    expect(r.out.trim().endsWith('REPLAY OK')).toBe(true);
    const j = parseExact<ReplayReport>(cli(['replay', String(ids[kind]), '--db', p.dbPath, '--json']).out);
    expect(j.ok).toBe(true);
    expect(j.compared).toBeGreaterThan(20);
    expect(j.differing).toBe(0);
    // Replayed with the threads the work needs (at most the default), whatever the run was computed with; the threads are information.
    expect(j.recordedThreads).toBe(2);
    expect(j.usedThreads).toBeGreaterThanOrEqual(1);
    expect(j.usedThreads).toBeLessThanOrEqual(defaultThreads());
    if (kind === 'fit') expect(j.usedThreads).toBe(1); // one fit is one piece of work: computed in process
    expect(j.chunkWindows).toBeUndefined();
  });

  it.each(['backtest', 'rolling', 'compare'])('reproduces a %s run bit for bit with 1 and 3 threads as well: the numbers do not depend on the thread count', (kind) => {
    expect(rollChunks).toBeGreaterThanOrEqual(3);
    for (const threads of ['1', '3']) {
      // the pool itself, with the threads asked for (without it, work this small runs in one thread)
      const r = cli(['replay', String(ids[kind]), '--db', p.dbPath, '--threads', threads], { ...process.env, DEFLATOR_THREADS_EXACT: '1' });
      expect(r.code, `${threads} thread(s): ${r.out}\n${r.err}`).toBe(0);
      expect(r.out).toMatch(/numbers: all \d+ stored numbers reproduced bit for bit/);
      expect(r.out).toContain(`note: recorded with 2 worker thread(s), replayed with ${threads} (the numbers do not depend on the thread count)`);
      expect(r.out.trim().endsWith('REPLAY OK')).toBe(true);
    }
  });

  it('detects a modified data file: stale, fingerprint mismatch, differing numbers, exit 4', async () => {
    const store = new Store(p.dbPath, { mustExist: true });
    try {
      forgetImport(store, 'prices.csv');
      editPrice(p.file('prices.csv'), 'greyhallow-banking', '2015-09-30', 0.97);
      await importPrices(store, p.file('prices.csv'), { layout: 'long' });
      expect(listRuns(store).every((r) => r.stale)).toBe(true);
    } finally {
      store.close();
    }
    const list = cli(['runs', '--db', p.dbPath]);
    expect(list.out.match(/STALE/g)?.length).toBe(4);
    expect(list.out).toContain('asset greyhallow-banking: stored rows changed since the run');
    for (const kind of ['fit', 'backtest', 'rolling', 'compare']) {
      const r = cli(['replay', String(ids[kind]), '--db', p.dbPath]);
      expect(r.code, r.out).toBe(4);
      expect(r.out).toContain('STALE: the data this run read has changed');
      expect(r.out).toContain('fingerprint MISMATCH');
      expect(r.out).toMatch(/numbers: \d+ value\(s\) differ/);
      expect(r.out).toMatch(/\n {4}.+: stored -?[\d.e+-]+, recomputed -?[\d.e+-]+/);
      expect(r.out.trim().endsWith('REPLAY MISMATCH')).toBe(true);
    }
    const show = cli(['show', String(ids.fit), '--db', p.dbPath]);
    expect(show.out).toContain('STALE: the data this run read has changed since it was recorded');
  });

  it('refuses an unknown run with the hint', () => {
    const r = cli(['replay', '99', '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/run 99 is not in/);
  });
});
