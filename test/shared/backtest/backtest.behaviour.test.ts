/**
 * Back-test behaviour: the incremental sums give the numbers of a fresh computation per
 * window (to 1e-10) over hundreds of steps; failing windows are reported and counted,
 * never fatal; progress reaches the total; cancel stops between windows; any ranges of
 * windows give the whole run's records bit for bit (the sums restart at fixed chunks).
 */
import { describe, expect, it } from 'vitest';
import { backtest, backtestWindows, windowChunks, windowSchedule, windowsPerChunk, type WindowRecord } from '../../../shared/backtest/index.js';
import { stringifyExact } from '../../../shared/records/exact-json.js';
import { DeflatorError } from '../../../shared/errors.js';
import { parseFitSpec } from '../../../shared/spec.js';
import type { FitResult } from '../../../shared/results.js';
import { expectClose, seededPanel } from './helpers.js';

function spec(extra: Record<string, unknown> = {}, backtestBlock: Record<string, unknown> = { window: 120, step: 1, horizon: 1 }) {
  return parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2', 'f3'] }, estimator: { stage: 'second', lags: 3 }, backtest: backtestBlock, ...extra });
}

/** Relative to each parameter's own size (its largest |value| over the windows), so that a near-zero estimate is not judged on its last digits. */
function compareRecords(a: WindowRecord[], b: WindowRecord[], tol: number): void {
  expect(a.length).toBe(b.length);
  const scale = new Map<string, number>();
  for (const r of b) for (const p of r.params ?? []) scale.set(p.name, Math.max(scale.get(p.name) ?? 0, Math.abs(p.estimate)));
  a.forEach((r, w) => {
    const q = b[w];
    expect(r.ok).toBe(q.ok);
    (r.params ?? []).forEach((p, k) => {
      expectClose(p.estimate, (q.params ?? [])[k].estimate, tol, `window ${w} ${p.name}`, scale.get(p.name));
      expectClose(p.se, (q.params ?? [])[k].se, tol, `window ${w} se(${p.name})`);
    });
    (r.alphaOos ?? []).forEach((v, i) => expectClose(v, (q.alphaOos as Float64Array)[i], tol, `window ${w} alphaOos[${i}]`, 1e-4));
    (r.alphaIn ?? []).forEach((v, i) => expectClose(v, (q.alphaIn as Float64Array)[i], tol, `window ${w} alphaIn[${i}]`, 1e-4));
  });
}

describe('incremental sums against a fresh computation per window', () => {
  it('480 rolling windows, N = 25, K = 3, second stage, L = 3: equal to 1e-10', () => {
    const panel = seededPanel(600, 25, 3, 11);
    const s = spec();
    const inc = backtestWindows(s, panel, { engine: 'incremental' });
    const fresh = backtestWindows(s, panel, { engine: 'fresh' });
    expect(inc.length).toBe(480);
    compareRecords(inc, fresh, 1e-10);
  });

  it('step 3, expanding, HJ first-stage weight, automatic lags, uncentred: equal to 1e-10', () => {
    const panel = seededPanel(300, 10, 2, 5);
    const s = parseFitSpec({
      riskfree: 'rf',
      model: { kind: 'linear', factors: ['f1', 'f2'] },
      estimator: { stage: 'second', weight: 'hj', lags: 'auto', centered: false },
      backtest: { window: 60, step: 3, horizon: 2, expanding: true },
    });
    compareRecords(backtestWindows(s, panel, { engine: 'incremental' }), backtestWindows(s, panel, { engine: 'fresh' }), 1e-10);
  });

  it('raw and first-stage models over a long roll: equal to 1e-10', () => {
    const panel = seededPanel(400, 8, 2, 9);
    for (const kind of ['linear-raw', 'linear'] as const) {
      const s = parseFitSpec({ riskfree: 'rf', model: { kind, factors: ['f1', 'f2'] }, estimator: { stage: 'first', lags: 2 }, backtest: { window: 48, step: 1, horizon: 1 } });
      compareRecords(backtestWindows(s, panel, { engine: 'incremental' }), backtestWindows(s, panel, { engine: 'fresh' }), 1e-10);
    }
  });
});

describe('failing windows', () => {
  it('a window with a constant factor is reported with its reason and left out of the summaries', () => {
    const panel = seededPanel(200, 6, 2, 3);
    // f2 constant over periods 50..89: every window lying inside that span has a singular cov(R, f)
    panel.factors[1].values.fill(0.01, 50, 90);
    const s = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { stage: 'second', lags: 1 }, backtest: { window: 30, step: 1, horizon: 1 } });
    const res = backtest(s, panel);
    const schedule = windowSchedule(200, { window: 30, step: 1, horizon: 1, expanding: false });
    const inside = schedule.filter((w) => w.start >= 50 && w.end <= 90).length;
    expect(inside).toBe(11);
    expect(res.windowsFailed).toBe(inside);
    expect(res.failures.length).toBe(inside);
    expect(res.failures[0].reason).toMatch(/SINGULAR/);
    expect(res.windows).toBe(schedule.length);
    expect(res.paths.length).toBe(schedule.length - inside);
    expect(res.windowList.filter((w) => !w.ok).every((w) => typeof w.reason === 'string')).toBe(true);
    // the summaries use the successful windows only: recompute them from those records
    const recs = backtestWindows(s, panel).filter((r) => r.ok);
    const m0 = recs.reduce((acc, r) => acc + (r.alphaOos as Float64Array)[0], 0) / recs.length;
    expectClose(res.perAsset[0].alphaOos, m0, 1e-12, 'perAsset[0].alphaOos over the ok windows');
    for (const v of [res.oos.rmse, res.oos.rmsePooled, res.oos.r2, res.inSample.rmse, res.inSample.r2]) expect(Number.isFinite(v)).toBe(true);
  });

  it('an estimator error in some windows (per-window engine) is reported, not fatal', () => {
    const panel = seededPanel(120, 5, 1, 4);
    const s = parseFitSpec({ riskfree: 'rf', model: { kind: 'consumption', consumption: 'c' }, backtest: { window: 40, step: 10, horizon: 1 } });
    let calls = 0;
    const fit = (): FitResult => {
      calls++;
      throw new DeflatorError('NO_CONVERGENCE', `window ${calls}: the solver did not converge`, 'try another start');
    };
    const recs = backtestWindows(s, panel, { fit });
    expect(recs.length).toBe(8);
    expect(recs.every((r) => !r.ok && /NO_CONVERGENCE/.test(r.reason ?? ''))).toBe(true);
    expect(() => backtest(s, panel, { fit })).toThrow(/every one of the 8 back-test windows failed/);
  });

  it('a programming error is not swallowed', () => {
    const panel = seededPanel(120, 5, 1, 4);
    const s = parseFitSpec({ riskfree: 'rf', model: { kind: 'consumption', consumption: 'c' }, backtest: { window: 40, step: 10, horizon: 1 } });
    expect(() =>
      backtestWindows(s, panel, {
        fit: () => {
          throw new TypeError('boom');
        },
      }),
    ).toThrow(TypeError);
  });
});

describe('progress, cancel and chunks', () => {
  const panel = seededPanel(240, 6, 2, 8);
  const s = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { lags: 2 }, backtest: { window: 60, step: 2, horizon: 1 } });
  const total = windowSchedule(240, s.backtest ?? { window: 60, step: 2, horizon: 1, expanding: false }).length;

  it('progress counts every window and reaches the total', () => {
    const seen: [number, number][] = [];
    backtestWindows(s, panel, { onProgress: (d, t) => seen.push([d, t]) });
    expect(seen.length).toBe(total);
    expect(seen[seen.length - 1]).toEqual([total, total]);
    expect(seen.every(([d], i) => d === i + 1)).toBe(true);
  });

  it('cancel is checked between windows and throws CANCELLED', () => {
    let aborted = false;
    let done = 0;
    const signal = {
      get aborted() {
        return aborted;
      },
    };
    expect(() =>
      backtest(s, panel, {
        signal,
        onProgress: (d) => {
          done = d;
          if (d === 5) aborted = true;
        },
      }),
    ).toThrow(expect.objectContaining({ code: 'CANCELLED' }));
    expect(done).toBe(5);
  });

  it('ranges of windows give the records of the whole run bit for bit, wherever they start', () => {
    // The rolling sums restart at fixed chunk boundaries (windowsPerChunk: 30 windows here),
    // so a window's numbers depend on the schedule alone; a range starting inside a chunk
    // (7, 45) rebuilds at that chunk's start and rolls forward to it.
    expect(windowsPerChunk(s.backtest ?? { window: 60, step: 2, horizon: 1, expanding: false })).toBe(30);
    expect(windowChunks(s.backtest ?? { window: 60, step: 2, horizon: 1, expanding: false }, total)).toEqual([[0, 30], [30, 60], [60, 90]]);
    const whole = backtestWindows(s, panel);
    for (const cuts of [[0, 30, total], [0, 7, 45, total], [0, 1, 2, 59, 60, 61, total]]) {
      const parts = cuts.slice(1).flatMap((to, c) => backtestWindows(s, panel, { range: [cuts[c], to] }));
      expect(parts.map((r) => r.index)).toEqual(whole.map((r) => r.index));
      expect(stringifyExact(parts), `cuts ${cuts.join(', ')}`).toBe(stringifyExact(whole));
    }
  });

  it('a window between chunk starts differs from a rebuilt one in its last digits only (the sums roll inside a chunk)', () => {
    const rolled = backtestWindows(s, panel);
    const fresh = backtestWindows(s, panel, { engine: 'fresh' });
    compareRecords(rolled, fresh, 1e-10);
    // each chunk's first window is computed from sums rebuilt from scratch, as the fresh engine does
    for (const w of [0, 30, 60]) expect(stringifyExact(rolled[w])).toBe(stringifyExact(fresh[w]));
  });

  it('a window longer than the sample is a clear error', () => {
    const bad = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] }, backtest: { window: 240, horizon: 1 } });
    expect(() => backtest(bad, panel)).toThrow(/needs 241 periods; the sample has 240/);
  });
});
