import { describe, expect, it } from 'vitest';
import { diffRuns } from '../../../shared/report/run-diff.js';
import { sampleFit, sampleRecord } from './sample-results.js';

const side = (id: number, seed: number, trim = false) => {
  const result = sampleFit(seed);
  if (trim) result.params = result.params.filter((p) => !p.name.endsWith('SIZE'));
  return { ...sampleRecord(id), label: result.label, result };
};

describe('two runs side by side', () => {
  it('matches rows by table and text cells and reports B - A for every shared number', () => {
    const a = side(1, 7);
    const b = side(2, 8, true);
    b.result.sample = { ...b.result.sample, start: '2032-01-31' };
    const d = diffRuns(a, b);
    expect(d.samePanel).toBe(true);
    expect(d.header.find((h) => h.key === 'sample')).toEqual({ key: 'sample', a: '2031-01-31 to 2035-12-31, monthly (12 periods per year), T = 60', b: '2032-01-31 to 2035-12-31, monthly (12 periods per year), T = 60', same: false });
    expect(d.header.find((h) => h.key === 'factors')?.same).toBe(true);
    const est = d.cells.find((c) => c.table === 'parameters' && c.row === 'b.MKT' && c.column === 'Estimate')!;
    expect(est.a).toBe(a.result.params[0].estimate);
    expect(est.b).toBe(b.result.params[0].estimate);
    expect(est.diff).toBe(b.result.params[0].estimate - a.result.params[0].estimate);
    const alpha = d.cells.find((c) => c.table === 'pricing-errors' && c.row === 'Fir~Co' && c.column === 'alpha (% per month)')!;
    expect(alpha.diff).toBe(100 * b.result.pricingErrors[5].alpha - 100 * a.result.pricingErrors[5].alpha);
    expect(d.onlyA.sort()).toEqual(['parameters: b.SIZE', 'parameters: lambda.SIZE', 'parameters: mu.SIZE']);
    expect(d.onlyB).toEqual([]);
    // a run against itself: every difference is exactly zero
    expect(diffRuns(a, a).cells.every((c) => c.diff === 0)).toBe(true);
  });
});
