/**
 * The CLI's Compute sizes the pool to the work (src-main/services/compute.ts): one fit or a
 * small back-test runs in this process, without starting a worker; a large back-test gets
 * as many threads as its chunks and its estimated work allow. (That the numbers are the same
 * bits on any route is checked in test/src-main/workers/pool.test.ts.)
 */
import { describe, expect, it } from 'vitest';
import { estimatedSeconds, sizedCompute, threadsFor } from '../../../src-main/services/compute.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { seededPanel } from '../../shared/backtest/helpers.js';

const spec = (window: number, factors: string[]) => parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { stage: 'second', lags: 3 }, backtest: { window, step: 1, horizon: 1 } });

describe('pool sized to the work', () => {
  it('a fit and a small back-test: one thread; a large back-test: up to the threads asked for', () => {
    const small = seededPanel(600, 25, 3, 1);
    const f3 = ['f1', 'f2', 'f3'];
    expect(threadsFor('fit', { spec: spec(120, f3), panel: small }, 8)).toBe(1);
    expect(estimatedSeconds('backtest', { spec: spec(120, f3), panel: small })).toBeLessThan(0.5);
    expect(threadsFor('backtest', { spec: spec(120, f3), panel: small }, 8)).toBe(1);
    const large = seededPanel(1200, 100, 5, 2);
    const f5 = ['f1', 'f2', 'f3', 'f4', 'f5'];
    expect(estimatedSeconds('backtest', { spec: spec(240, f5), panel: large })).toBeGreaterThan(1);
    expect(threadsFor('backtest', { spec: spec(240, f5), panel: large }, 2)).toBe(2);
    expect(threadsFor('backtest', { spec: spec(240, f5), panel: large }, 1)).toBe(1);
  });

  it('work of one thread never starts the pool', async () => {
    const panel = seededPanel(300, 8, 2, 3);
    const s = spec(60, ['f1', 'f2']);
    let started = 0;
    const compute = sizedCompute({
      threads: 4,
      pool: async () => {
        started++;
        throw new Error('no pool wanted');
      },
    });
    const local = await compute.runTask('backtest', { spec: s, panel });
    expect(started).toBe(0);
    expect(compute.used).toEqual({ threads: 1, inProcess: true });
    expect(local.windows).toBe(240);
    await compute.close();
  });
});
