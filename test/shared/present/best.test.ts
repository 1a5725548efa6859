/**
 * The one "best in the column" rule (shared/present/best.ts), on rows built by hand: the
 * expected marks are worked out from the rule's text, which docs/methods.md states.
 */
import { describe, expect, it } from 'vitest';
import type { CompareRow } from '../../../shared/results.js';
import { bestPerColumn, bestRows } from '../../../shared/present/best.js';

const row = (label: string, x: { stat?: number; p?: number; df?: number; hj?: number; hjP?: number; rmse?: number; r2?: number; oos?: number; oosR2?: number; failedWindows?: number; error?: string; returns?: 'excess' | 'gross' } = {}): CompareRow => ({
  label,
  returns: x.returns ?? 'excess',
  params: [],
  test: { name: 'Hansen J', stat: x.stat ?? 10, df: x.df ?? 5, p: x.p ?? 0.1 },
  ...(x.hj !== undefined ? { hj: { distance: x.hj, p: x.hjP ?? 0.5, method: 'Imhof' } } : {}),
  fit: { mape: x.rmse ?? 0.01, rmse: x.rmse ?? 0.01, r2: x.r2 ?? 0, mapeAnnual: 12 * (x.rmse ?? 0.01), rmseAnnual: 12 * (x.rmse ?? 0.01) },
  ...(x.oos !== undefined ? { oos: { rmse: x.oos, rmsePooled: x.oos * 2, r2: x.oosR2 ?? 0 }, oosWindowsFailed: x.failedWindows ?? 0 } : {}),
  ...(x.error ? { error: x.error } : {}),
});

describe('best in the column', () => {
  it('never ranks test statistics or their p-values, even with different degrees of freedom', () => {
    const best = bestRows([row('a', { stat: 1, p: 0.9, df: 1 }), row('b', { stat: 50, p: 0.01, df: 30 })]);
    expect(Object.keys(best)).not.toContain('test.stat');
    expect(Object.keys(best)).not.toContain('test.p');
  });

  it('marks the smallest HJ distance and errors, the largest HJ p and R^2; ties all marked, `best` names the first', () => {
    const rows = [row('a', { hj: 0.3, hjP: 0.2, rmse: 0.02, r2: 0.1 }), row('b', { hj: 0.2, hjP: 0.4, rmse: 0.01, r2: 0.5 }), row('c', { hj: 0.2, hjP: 0.1, rmse: 0.03, r2: -1 })];
    const best = bestRows(rows);
    expect(best['hj.distance']).toEqual([1, 2]);
    expect(best['hj.p']).toEqual([1]);
    expect(best['fit.rmse']).toEqual([1]);
    expect(best['fit.r2']).toEqual([1]);
    expect(bestPerColumn(rows)['hj.distance']).toBe('b');
  });

  it('marks nothing with one model, or with one model holding a value', () => {
    expect(bestRows([row('a', { hj: 0.3, oos: 0.01 })])).toEqual({});
    expect(bestRows([row('a', { hj: 0.3 }), row('b')])['hj.distance']).toBeUndefined();
  });

  it('does not rank a model whose back-test failed or lost windows on out-of-sample columns, but still in sample', () => {
    const rows = [row('a', { oos: 0.001, rmse: 0.001, error: 'back-test failed: SINGULAR' }), row('b', { oos: 0.002, failedWindows: 3 }), row('c', { oos: 0.003 }), row('d', { oos: 0.004 })];
    const best = bestRows(rows);
    expect(best['oos.rmse']).toEqual([2]);
    expect(best['oos.r2']).toEqual([2, 3]);
    expect(best['fit.rmse']).toEqual([0]);
  });

  it('ranks nothing when the models price different returns', () => {
    expect(bestRows([row('a', { hj: 0.1 }), row('b', { hj: 0.2, returns: 'gross' })])).toEqual({});
  });
});
