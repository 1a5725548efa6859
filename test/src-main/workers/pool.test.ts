/**
 * The worker pool runs the compiled dist/worker.js (built by the test setup): results
 * equal the same computation in this thread (a back-test bit for bit, with any number
 * of threads), progress reaches the total, errors keep
 * their code, and a cancelled run rejects with CANCELLED and leaves nothing behind.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createPool, type DeflatorPool } from '../../../src-main/workers/pool.js';
import { backtest, windowChunks, windowSchedule } from '../../../shared/backtest/index.js';
import { diffExact, parseExact, stringifyExact } from '../../../shared/records/exact-json.js';
import { backtestRanges } from '../../../src-main/workers/orchestrate.js';
import { compareModels } from '../../../shared/compare/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { parseCompareSpec, parseFitSpec } from '../../../shared/spec.js';
import { seededPanel } from '../../shared/backtest/seeded.js';

let pool: DeflatorPool;
beforeAll(() => {
  pool = createPool({ threads: 2 });
});
afterAll(async () => {
  await pool.close();
});

const panel = seededPanel(300, 8, 2, 41);
const btSpec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { lags: 2 }, backtest: { window: 60, step: 2, horizon: 1 } });

describe('worker pool', () => {
  it('a back-test split across two threads equals the same back-test in this thread', async () => {
    const seen: number[] = [];
    let total = 0;
    const res = await pool.runTask('backtest', { spec: btSpec, panel }, { onProgress: (d, t) => { seen.push(d); total = t; } });
    const local = backtest(btSpec, panel, { fit });
    expect(res.windows).toBe(local.windows);
    expect(res.windows).toBe(120);
    // the sums restart at the same fixed chunks of windows in either case: the same bits
    expect(stringifyExact(res)).toBe(stringifyExact(local));
    expect(total).toBe(120);
    expect(seen[seen.length - 1]).toBe(120);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
  });

  it('a back-test has the same bits with 1, 2 and 3 threads, and in this thread', async () => {
    // Thread-count invariance (a property of the chunking, no outside reference needed):
    // the chunks of windows are fixed by the spec, so every number is the same double.
    const specs = {
      rolling: btSpec, // 120 windows in 4 chunks of 30: tasks [0,120) | [0,60) [60,120) | [0,30) [30,60) [60,120)
      expanding: parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { weight: 'hj', lags: 'auto' }, backtest: { window: 40, step: 1, horizon: 2, expanding: true } }),
      raw: parseFitSpec({ riskfree: 'rf', model: { kind: 'linear-raw', factors: ['f1'] }, estimator: { stage: 'first' }, backtest: { window: 48, step: 3, horizon: 3 } }),
    };
    const one = createPool({ threads: 1 });
    const three = createPool({ threads: 3 });
    try {
      for (const [name, spec] of Object.entries(specs)) {
        const count = windowSchedule(panel.periods.length, spec.backtest ?? btSpec.backtest!).length;
        expect(backtestRanges(spec.backtest!, count, 3, true).length, name).toBe(3);
        const here = stringifyExact(backtest(spec, panel, { fit }));
        const runs = await Promise.all([one, pool, three].map((p) => p.runTask('backtest', { spec, panel })));
        runs.forEach((r, i) => {
          const d = diffExact(r, parseExact(here));
          expect(d.count, `${name}, ${i + 1} thread(s): ${JSON.stringify(d.differences.slice(0, 3))}`).toBe(0);
          expect(stringifyExact(r), `${name}, ${i + 1} thread(s)`).toBe(here);
          expect(JSON.stringify(r), `${name}, ${i + 1} thread(s)`).toBe(JSON.stringify(runs[0]));
        });
      }
    } finally {
      await Promise.all([one.close(), three.close()]);
    }
  });

  it('the tasks of a back-test are whole fixed chunks, whatever the thread count', () => {
    const bt = { window: 60, step: 2, horizon: 1, expanding: false };
    const chunks = windowChunks(bt, 130);
    expect(chunks.map(([a]) => a)).toEqual([0, 30, 60, 90, 120]);
    for (let threads = 1; threads <= 8; threads++) {
      const ranges = backtestRanges(bt, 130, threads, true);
      expect(ranges.length).toBe(Math.min(threads, chunks.length));
      expect(ranges[0][0]).toBe(0);
      expect(ranges[ranges.length - 1][1]).toBe(130);
      ranges.forEach(([a, b], i) => {
        if (i > 0) expect(a).toBe(ranges[i - 1][1]);
        expect(chunks.some(([c]) => c === a)).toBe(true);
        expect(b === 130 || chunks.some(([c]) => c === b)).toBe(true);
      });
    }
  });

  it('a fit in a worker equals fit() here', async () => {
    const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] } });
    const res = await pool.runTask('fit', { spec, panel });
    expect(res).toEqual(fit(spec, panel));
  });

  it('a DeflatorError in a worker arrives with its code, message and hint', async () => {
    const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['nope'] } });
    const err = await pool.runTask('fit', { spec, panel }).catch((e: unknown) => e);
    expect(isDeflatorError(err)).toBe(true);
    expect((err as { code: string }).code).toBe('DATA_MISSING');
    expect((err as Error).message).toMatch(/factor "nope"/);
  });

  it('a comparison in the pool equals the comparison in this thread, bootstrap included', async () => {
    const { spec, fits } = parseCompareSpec({
      riskfree: 'rf',
      bootstrap: { replications: 40, seed: 99 },
      compare: [{ model: { kind: 'linear', factors: ['f1'] } }, { model: { kind: 'linear', factors: ['f1', 'f2'] } }],
    });
    const panels = fits.map(() => panel);
    const res = await pool.runTask('compare', { spec, fits, panels });
    const local = compareModels(spec, fits, panels, { fit });
    expect(res.models.map((m) => m.label)).toEqual(local.models.map((m) => m.label));
    expect(res.hjTests).toEqual(local.hjTests);
    expect(res.best).toEqual(local.best);
    expect(res.hjTests[0].replications).toBe(40);
  });

  it('cancel: the run rejects with CANCELLED, the caller saves nothing, the pool keeps working', async () => {
    const long = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { lags: 2 }, backtest: { window: 60, step: 1, horizon: 1 } });
    const ctl = new AbortController();
    const saved: unknown[] = [];
    let progressAfterAbort = 0;
    let abortedAt = 0;
    const run = pool
      .runTask('backtest', { spec: long, panel, engine: 'fit' }, {
        signal: ctl.signal,
        onProgress: (d) => {
          if (ctl.signal.aborted) progressAfterAbort++;
          if (d >= 3 && !ctl.signal.aborted) {
            abortedAt = Date.now();
            ctl.abort();
          }
        },
      })
      .then((r) => {
        saved.push(r); // what a caller does on success only
        return r;
      });
    const err = await run.catch((e: unknown) => e);
    expect(isDeflatorError(err) && err.code).toBe('CANCELLED');
    expect(Date.now() - abortedAt).toBeLessThan(2000);
    expect(saved).toEqual([]);
    expect(progressAfterAbort).toBeLessThanOrEqual(2);
    const again = await pool.runTask('backtest', { spec: btSpec, panel });
    expect(again.windows).toBe(120);
  });

  it('a task queued behind a cancelled running task starts at once, without waiting for another call', async () => {
    // One thread: the fit waits behind the back-test. Cancelling the running back-test
    // stops its thread; the fit must then get a thread of its own (before the fix it
    // waited in piscina's queue until some later call started a thread: forever here).
    const one = createPool({ threads: 1 });
    try {
      const long = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { lags: 2 }, backtest: { window: 60, step: 1, horizon: 1 } });
      const ctl = new AbortController();
      let started = false;
      const first = one.runTask('backtest', { spec: long, panel, engine: 'fit' }, { signal: ctl.signal, onProgress: () => { started = true; } }).catch((e: unknown) => e);
      const waitingCtl = new AbortController();
      const waiting = one.runTask('fit', { spec: long, panel }, { signal: waitingCtl.signal }).then(
        (r) => r,
        (e: unknown) => e,
      );
      // a third task cancelled while it waits leaves the queue and never runs
      const dropped = new AbortController();
      const third = one.runTask('fit', { spec: long, panel }, { signal: dropped.signal }).catch((e: unknown) => e);
      dropped.abort();
      expect(isDeflatorError(await third) && (await third as { code: string }).code).toBe('CANCELLED');
      while (!started) await new Promise((r) => setTimeout(r, 10));
      ctl.abort();
      expect(isDeflatorError(await first) && (await first as { code: string }).code).toBe('CANCELLED');
      const t0 = Date.now();
      const outcome = await Promise.race([waiting, new Promise((r) => setTimeout(() => r('no reply within 20 s'), 20_000))]);
      expect(outcome).toMatchObject({ kind: 'fit' });
      expect(Date.now() - t0).toBeLessThan(20_000);
    } finally {
      await one.close();
    }
  });

  it('an already aborted signal never starts the task', async () => {
    const ctl = new AbortController();
    ctl.abort();
    await expect(pool.runTask('fit', { spec: btSpec, panel }, { signal: ctl.signal })).rejects.toMatchObject({ code: 'CANCELLED' });
  });
});
