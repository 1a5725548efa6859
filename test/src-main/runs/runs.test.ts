import { createHash } from 'node:crypto';
import { readFileSync, rmSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { backtest, windowsPerChunk } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import { diffExact } from '../../../shared/records/exact-json.js';
import { encodePanel, fingerprintPanel } from '../../../shared/records/panel-encoding.js';
import type { FitResult } from '../../../shared/results.js';
import { parseFitSpec, type FitSpec } from '../../../shared/spec.js';
import { importPrices } from '../../../src-main/import/index.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { replayRun, formatReplay, type Recompute } from '../../../src-main/runs/replay.js';
import { kernelIdentity } from '../../../shared/linalg/identity.js';
import { deleteRun, getRun, listRuns, parseRunId, recordRun, staleItems } from '../../../src-main/runs/runs.js';
import { Store } from '../../../src-main/store/store.js';
import { VERSION } from '../../../src-main/version.js';
import { presentValueOf } from '../../../shared/values/presentValue.js';
import { driftAnalysis } from '../../../shared/values/drift.js';
import type { YearlyValues } from '../../../shared/returns/yearly.js';
import { editPrice, forgetImport, makeProject, type Project } from './helpers.js';

/** In-process recompute with the same estimator entry points the worker calls. */
const inProcess: Recompute = {
  fit: async (spec, panel) => fit(spec, panel),
  backtest: async (spec, panel) => backtest(spec, panel, { fit }),
  compare: async () => {
    throw new Error('compare is replayed in test/src-main/runs/replay-cli.test.ts');
  },
  presentValue: async (s, data) => presentValueOf(s, data.yearly?.assets ?? [], data.yearly?.values as YearlyValues),
  drift: async (s, panel) => driftAnalysis(s, panel),
};

const sha256 = (file: string) => createHash('sha256').update(readFileSync(file)).digest('hex');

let p: Project;
const ASSETS = ['brinemoor-ferries', 'corvane-saltworks', 'greyhallow-banking', 'lanternfold-power'];
let spec: FitSpec;
let btSpec: FitSpec;

beforeAll(async () => {
  p = await makeProject();
  spec = parseFitSpec({ riskfree: 'bill_yield', assets: ASSETS, model: { factors: ['harbor', 'ember'] } });
  btSpec = parseFitSpec({ riskfree: 'bill_yield', assets: ASSETS, model: { factors: ['harbor'] }, backtest: { window: 60, step: 24 } });
});
afterAll(() => p?.store.close());

describe('run records', () => {
  it('stores spec, result, version and fingerprints; the result reads back bit for bit', () => {
    const panel = loadPanel(p.store, spec);
    const result = fit(spec, panel);
    const rec = recordRun(p.store, { spec, result, panel, createdAt: new Date('2030-05-06T07:08:09.000Z') });
    expect(rec.id).toBe(1);
    expect(rec.kind).toBe('fit');
    expect(rec.version).toBe(VERSION);
    expect(rec.createdAt).toBe('2030-05-06T07:08:09.000Z');
    expect(rec.spec).toEqual(spec);
    const back = getRun(p.store, rec.id);
    expect(diffExact(back.result, result)).toEqual({ count: 0, differences: [] });
    // Reference: node:crypto SHA-256 over the canonical bytes.
    expect(back.panel.sha256).toBe(createHash('sha256').update(encodePanel(panel)).digest('hex'));
    expect(back.panel).toMatchObject({ encoding: 1, frequency: 'monthly', T: panel.periods.length, N: 4, K: 2, start: panel.periods[0] });
    // Reference: node:crypto SHA-256 of each imported file's bytes, as the import log recorded them.
    const files = Object.fromEntries(back.files.map((f) => [f.file, f]));
    expect(Object.keys(files).sort()).toEqual(['bill_yield.csv', 'factors.csv', 'prices.csv']);
    expect(files['prices.csv'].sha256).toBe(sha256(p.file('prices.csv')));
    expect(files['factors.csv'].sha256).toBe(sha256(p.file('factors.csv')));
    expect(files['bill_yield.csv'].sha256).toBe(sha256(p.file('bill_yield.csv')));
    expect(files['prices.csv'].subjects.sort()).toEqual([...ASSETS].sort());
    expect(files['factors.csv'].subjects.sort()).toEqual(['ember', 'harbor']);
    expect(back.subjects.map((s) => `${s.kind}:${s.name}`)).toEqual([...ASSETS.map((a) => `asset:${a}`), 'series:bill_yield', 'series:ember', 'series:harbor']);
    expect(back.models).toEqual([result.label, 'linear']);
    expect(back.label).toBe(result.label);
    expect(staleItems(p.store, back)).toEqual([]);
  });

  it('keeps -0, typed arrays and every awkward double exactly', () => {
    const panel = loadPanel(p.store, spec);
    const result = structuredClone(fit(spec, panel)) as FitResult & { extra?: unknown };
    result.params[0].estimate = -0;
    result.params[1].se = 5e-324;
    result.extra = { path: Float64Array.of(0.1, -0, 1 / 3) };
    const rec = recordRun(p.store, { spec, result, panel });
    const back = getRun(p.store, rec.id).result as FitResult & { extra?: { path: Float64Array } };
    expect(Object.is(back.params[0].estimate, -0)).toBe(true);
    expect(back.params[1].se).toBe(5e-324);
    expect(back.extra?.path).toBeInstanceOf(Float64Array);
    expect(diffExact(back, result).count).toBe(0);
    deleteRun(p.store, rec.id);
    expect(() => getRun(p.store, rec.id)).toThrow(/run 2 is not in/);
  });

  it('lists runs newest first and filters by model, kind and date', () => {
    const panel = loadPanel(p.store, btSpec);
    recordRun(p.store, { spec: btSpec, result: backtest(btSpec, panel, { fit }), panel, createdAt: new Date('2030-06-01T00:00:00Z') });
    const all = listRuns(p.store);
    expect(all.map((r) => [r.id, r.kind])).toEqual([
      [3, 'backtest'],
      [1, 'fit'],
    ]);
    expect(all.every((r) => !r.stale)).toBe(true);
    expect(listRuns(p.store, { kind: 'fit' }).map((r) => r.id)).toEqual([1]);
    expect(listRuns(p.store, { model: 'HARBOR,EMBER' }).map((r) => r.id)).toEqual([1]);
    expect(listRuns(p.store, { model: 'linear' }).map((r) => r.id)).toEqual([3, 1]);
    expect(listRuns(p.store, { from: '2030-05-07' }).map((r) => r.id)).toEqual([3]);
    expect(listRuns(p.store, { to: '2030-05-06' }).map((r) => r.id)).toEqual([1]);
    expect(parseRunId('run3')).toBe(3);
    expect(() => parseRunId('x')).toThrow(/not a run id/);
  });

  it('replays a fit and a back-test bit for bit', async () => {
    for (const id of [1, 3]) {
      const r = await replayRun(p.store, id, inProcess);
      expect(r.stale).toBe(false);
      expect(r.panels.every((x) => x.matches)).toBe(true);
      expect(r.compared).toBeGreaterThan(50);
      expect(r.differences, formatReplay(r)).toEqual([]);
      expect(r.ok).toBe(true);
      expect(formatReplay(r)).toMatch(/REPLAY OK$/);
    }
  });

  it('recorded by this version with these kernels: bit for bit is required, and the kernel identity is recorded', async () => {
    const r = await replayRun(p.store, 1, inProcess);
    expect(r.mode).toBe('exact');
    expect([r.recordedKernels, r.currentKernels]).toEqual([kernelIdentity().revision, kernelIdentity().revision]);
  });

  it('reports a changed number with its path, stored and recomputed values', async () => {
    const off: Recompute = {
      ...inProcess,
      fit: async (s, panel) => {
        const r = fit(s, panel);
        r.pricingErrors[2].alpha += 2 ** -60;
        return r;
      },
    };
    const r = await replayRun(p.store, 1, off);
    expect(r.ok).toBe(false);
    expect(r.differing).toBe(1);
    expect(r.differences[0].path).toBe(`pricingErrors[2:${ASSETS[2]}].alpha`);
    expect(r.differences[0].stored).not.toBe(r.differences[0].recomputed);
    expect(formatReplay(r)).toContain(`pricingErrors[2:${ASSETS[2]}].alpha: stored `);
  });

  it('a back-test records its windows per chunk; one recorded before the chunks were fixed by the spec still replays, a difference explained', async () => {
    expect(getRun(p.store, 1).compute).toEqual({ kernels: kernelIdentity() }); // a fit has no chunks, and no threads were given
    expect(getRun(p.store, 3).compute).toEqual({ chunkWindows: windowsPerChunk({ window: 60, step: 24 }), kernels: kernelIdentity() });
    expect(windowsPerChunk({ window: 60, step: 24 })).toBe(16);
    const saved = p.store.db.prepare('SELECT compute FROM run WHERE id = 3').pluck().get();
    // as a run of the previous schema-3 records looks: the thread count only
    p.store.db.prepare('UPDATE run SET compute = ? WHERE id = 3').run(JSON.stringify({ threads: 2 }));
    try {
      const same = await replayRun(p.store, 3, inProcess, { threads: 1 });
      expect(same.ok, formatReplay(same)).toBe(true);
      expect([same.recordedThreads, same.usedThreads]).toEqual([2, 1]);
      expect(same.chunkWindows).toBeUndefined();
      expect(formatReplay(same)).toContain('recorded with 2 worker thread(s), replayed with 1 (the numbers do not depend on the thread count)');
      const off: Recompute = {
        ...inProcess,
        backtest: async (s, panel) => {
          const r = backtest(s, panel, { fit });
          r.oos.rmse *= 1 + 2 ** -50; // a few units in the last place
          return r;
        },
      };
      // recorded without a kernel identity (an earlier kernel revision): held to the cross-version tolerance
      const r = await replayRun(p.store, 3, off);
      expect(r.mode).toBe('tolerance');
      expect(r.recordedKernels).toBe('linalg-1');
      expect(r.ok, formatReplay(r)).toBe(true);
      expect(r.error).toBeUndefined();
      expect(r.differing).toBe(1);
      expect(r.beyondTolerance).toBe(0);
      expect(r.largest?.path).toBe('oos.rmse');
      expect(r.largest!.relative).toBeGreaterThan(0);
      expect(r.largest!.relative).toBeLessThan(1e-14);
      expect(r.chunkWindows).toEqual({ recorded: null, current: 16 });
      expect(formatReplay(r)).toContain("recorded before a back-test's chunks of windows were fixed by its spec");
      expect(formatReplay(r)).toMatch(/within it; 1 differ in the last bits, the largest by .* at oos\.rmse\nREPLAY OK \(within the cross-version tolerance\)$/);
      const far: Recompute = {
        ...inProcess,
        backtest: async (s, panel) => {
          const b = backtest(s, panel, { fit });
          b.oos.rmse *= 1 + 1e-6;
          return b;
        },
      };
      const bad = await replayRun(p.store, 3, far);
      expect(bad.ok).toBe(false);
      expect(bad.beyondTolerance).toBe(1);
      expect(formatReplay(bad)).toMatch(/1 beyond the cross-version tolerance 1e-8 relative/);
      // a key a later version adds to results is noted, not counted against the run
      const more: Recompute = { ...inProcess, backtest: async (s, panel) => Object.assign(backtest(s, panel, { fit }), { extra: [1, 2] }) };
      const added = await replayRun(p.store, 3, more);
      expect(added.ok, formatReplay(added)).toBe(true);
      expect(added.addedKeys).toEqual(['extra']);
      expect(formatReplay(added)).toContain('this version adds extra to the result');
    } finally {
      p.store.db.prepare('UPDATE run SET compute = ? WHERE id = 3').run(saved);
    }
  });

  it('flags a run stale when a data file is re-imported with a change, and replay says so', async () => {
    // Re-import a corrected prices file: one close of a test asset changes by 1%.
    forgetImport(p.store, 'prices.csv');
    editPrice(p.file('prices.csv'), 'corvane-saltworks', '2010-06-30', 1.01);
    await importPrices(p.store, p.file('prices.csv'), { layout: 'long' });
    const [bt, f] = listRuns(p.store);
    for (const run of [bt, f]) {
      expect(run.stale).toBe(true);
      const what = run.staleItems.map((s) => s.what);
      expect(what).toContain('asset corvane-saltworks');
      expect(what).toContain('file prices.csv');
      expect(what).not.toContain('asset brinemoor-ferries');
    }
    const item = f.staleItems.find((s) => s.what === 'file prices.csv')!;
    expect(item.current).toBe(sha256(p.file('prices.csv')));
    expect(item.recorded).not.toBe(item.current);
    const r = await replayRun(p.store, 1, inProcess);
    expect(r.stale).toBe(true);
    expect(r.ok).toBe(false);
    expect(r.panels[0].matches).toBe(false);
    expect(r.differing).toBeGreaterThan(0);
    const text = formatReplay(r);
    expect(text).toContain('STALE');
    expect(text).toContain('fingerprint MISMATCH');
    expect(text).toMatch(/REPLAY MISMATCH$/);
  });

  it('a run whose series was deleted is stale and its replay fails with the cause', async () => {
    forgetImport(p.store, 'factors.csv');
    const run = listRuns(p.store, { kind: 'fit' })[0];
    // removeImport takes a series left with no rows out of the store
    expect(run.staleItems.find((s) => s.what === 'series harbor')).toMatchObject({ current: null, reason: expect.stringContaining('no longer in the store') });
    expect(run.staleItems.find((s) => s.what === 'file factors.csv')?.reason).toMatch(/no longer in the store/);
    const r = await replayRun(p.store, 1, inProcess);
    expect(r.ok).toBe(false);
    expect(r.error).toMatch(/DATA_MISSING|SAMPLE_TOO_SHORT|harbor/);
    expect(formatReplay(r)).toContain('recompute FAILED');
  });

  it('lists the runs of a database opened read-only', () => {
    const ro = new Store(p.dbPath, { mustExist: true, readonly: true });
    try {
      expect(listRuns(ro).length).toBe(2);
    } finally {
      ro.close();
    }
  });
});

describe('run list: factor counts of a run on several panels', () => {
  it('lists each panel\'s K when they differ (K alone would show the first model\'s)', async () => {
    const { formatRuns } = await import('../../../src-main/cli/commands/runs.js');
    const { factorCountText } = await import('../../../shared/records/run-record.js');
    const q = await makeProject(); // its own database: the tests above change theirs
    try {
      const two = loadPanel(q.store, spec);
      const one = loadPanel(q.store, btSpec);
      recordRun(q.store, { spec: btSpec, result: fit(btSpec, one), panel: one });
      const rec = recordRun(q.store, { spec, result: fit(spec, two), panel: [two, one] });
      const row = listRuns(q.store).find((r) => r.id === rec.id)!;
      expect(row.K).toBe(2);
      expect(row.factorCounts).toEqual([2, 1]);
      expect(factorCountText(row)).toBe('2, 1');
      expect(formatRuns([row]).split('\n')[2]).toMatch(/ 2, 1 +ok$/);
      // one panel (or equal counts): the number alone
      const single = listRuns(q.store).find((r) => r.id !== rec.id)!;
      expect(single.factorCounts).toBeUndefined();
      expect(factorCountText(single)).toBe(String(single.K));
      expect(factorCountText({ K: 3, factorCounts: [3, 3] })).toBe('3');
    } finally {
      q.store.close();
      rmSync(q.dir, { recursive: true, force: true });
    }
  });
});
