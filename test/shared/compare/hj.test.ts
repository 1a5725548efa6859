/**
 * Squared HJ distances and their bootstrap: closed form against numpy
 * (fixtures/make_hj.py), the block rule, the resampling scheme, and that the same seed
 * gives the same draws whatever the chunking.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { blockLength, movingBlockIndices, replicationIndices, Xoshiro128 } from '../../../shared/bootstrap/index.js';
import { hjBootstrapDraws, hjDifferenceTest, linearHjSquared, mergeDraws } from '../../../shared/compare/index.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { expectClose, panelFromFixture, type FixturePanelInput } from '../backtest/helpers.js';

const panelFx = JSON.parse(readFileSync(path.join(import.meta.dirname, '../backtest/fixtures/backtest_numpy.json'), 'utf8')) as FixturePanelInput;
const hjFx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/hj_numpy.json'), 'utf8')) as {
  indices: number[][];
  cases: { kind: 'linear' | 'linear-raw' | 'linear-gross'; factors: string[]; hj2: number; resampled: number[] }[];
};

describe('HJ^2 of the linear models against numpy (fixtures/make_hj.py)', () => {
  for (const c of hjFx.cases) {
    it(`${c.kind}(${c.factors.join(',')})`, () => {
      const panel = panelFromFixture(panelFx, c.kind === 'linear-gross' ? 'gross' : 'excess');
      const factors = c.factors.map((n) => (panel.factors.find((f) => f.name === n) as { values: Float64Array }).values);
      expectClose(linearHjSquared(c.kind, panel.returns, factors, null), c.hj2, 1e-10, 'HJ^2 full sample'); // numpy lstsq
      hjFx.indices.forEach((ix, r) => {
        expectClose(linearHjSquared(c.kind, panel.returns, factors, Int32Array.from(ix)), c.resampled[r], 1e-10, `HJ^2 resample ${r}`); // numpy lstsq
      });
    });
  }
});

describe('moving-block bootstrap', () => {
  it('block rule: ceil(T^(1/3)) (common practice), or the number given', () => {
    expect(blockLength(600, 'auto')).toBe(9); // 600^(1/3) = 8.43
    expect(blockLength(27, 'auto')).toBe(3); // exactly 3
    expect(blockLength(28, 'auto')).toBe(4);
    expect(blockLength(100, 6)).toBe(6);
    expect(() => blockLength(10, 11)).toThrow(/exceeds the sample length/);
  });

  it('draws blocks of consecutive periods, starts uniform on 0..T-l', () => {
    const T = 50;
    const l = 4;
    const idx = movingBlockIndices(T, l, new Xoshiro128(1, 0));
    expect(idx.length).toBe(T);
    for (let k = 0; k < T; k += l) {
      for (let j = 1; j < l && k + j < T; j++) expect(idx[k + j]).toBe(idx[k] + 1 * j);
      expect(idx[k]).toBeGreaterThanOrEqual(0);
      expect(idx[k]).toBeLessThanOrEqual(T - l);
    }
    // uniform starts: over many draws each start 0..T-l appears with frequency ~ 1/(T-l+1)
    const counts = new Array(T - l + 1).fill(0);
    const rng = new Xoshiro128(99, 3);
    const draws = 47000;
    for (let i = 0; i < draws; i++) counts[rng.nextInt(T - l + 1)]++;
    const expected = draws / (T - l + 1);
    // chi-square with 46 df: its 0.999 quantile is 81.40 (R 4.2: qchisq(0.999, 46))
    const chi2 = counts.reduce((s, c) => s + (c - expected) ** 2 / expected, 0);
    expect(chi2).toBeLessThan(81.4);
  });

  it('floats are uniform on [0, 1): mean and variance within sampling error', () => {
    const rng = new Xoshiro128(2026, 0);
    const n = 200000;
    let s = 0;
    let s2 = 0;
    let outside = 0;
    for (let i = 0; i < n; i++) {
      const u = rng.nextFloat();
      if (!(u >= 0 && u < 1)) outside++;
      s += u;
      s2 += u * u;
    }
    expect(outside).toBe(0);
    const m = s / n;
    const v = s2 / n - m * m;
    expect(Math.abs(m - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n)); // 5 standard errors
    expect(Math.abs(v - 1 / 12)).toBeLessThan(0.002);
  });

  it('same seed, same draws and same p, however the replications are split', () => {
    const panel = panelFromFixture(panelFx, 'excess');
    const fits = [
      parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['mkt'] } }),
      parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['mkt', 'carry'] } }),
    ];
    const base = { fits, panels: [panel, panel], seed: 4242, block: blockLength(panel.periods.length, 'auto') };
    const whole = hjBootstrapDraws({ ...base, from: 0, to: 60 });
    const parts = [hjBootstrapDraws({ ...base, from: 40, to: 60 }), hjBootstrapDraws({ ...base, from: 0, to: 17 }), hjBootstrapDraws({ ...base, from: 17, to: 40 })];
    const merged = mergeDraws(parts, 60, 2);
    expect(Array.from(merged.values)).toEqual(Array.from(whole.values));
    const again = hjBootstrapDraws({ ...base, from: 0, to: 60 });
    expect(Array.from(again.values)).toEqual(Array.from(whole.values));
    const hat = fits.map((f) => linearHjSquared('linear', panel.returns, f.model.factors.map((n) => (panel.factors.find((x) => x.name === n) as { values: Float64Array }).values), null));
    const t1 = hjDifferenceTest(hat, whole.values, 2, 0, 1);
    const t2 = hjDifferenceTest(hat, merged.values, 2, 0, 1);
    expect(t1).toEqual(t2);
    expect(t1.p).toBeGreaterThan(0);
    expect(t1.p).toBeLessThanOrEqual(1);
    // another seed gives other draws
    const other = hjBootstrapDraws({ ...base, seed: 4243, from: 0, to: 60 });
    expect(Array.from(other.values)).not.toEqual(Array.from(whole.values));
    // replication r is its own stream
    expect(Array.from(replicationIndices(100, 5, 4242, 3))).toEqual(Array.from(replicationIndices(100, 5, 4242, 3)));
  });

  it('p-value: (1 + extreme) / (1 + used), counting |d* - d| >= |d|', () => {
    // hat d = 0.3 - 0.1 = 0.2; draws d* = 0.5, 0.2, -0.1, 0.45 -> |d* - d| = 0.3, 0, 0.3, 0.25
    // -> three of four reach |d| = 0.2 -> p = (1 + 3) / (1 + 4) = 0.8; a NaN row is skipped
    const values = Float64Array.from([0.6, 0.1, 0.3, 0.1, 0.0, 0.1, NaN, 0.2, 0.55, 0.1]);
    const t = hjDifferenceTest([0.3, 0.1], values, 2, 0, 1);
    expect(t.used).toBe(4);
    expectClose(t.diff, 0.2, 1e-15, 'diff');
    expectClose(t.p, 0.8, 1e-15, 'p');
  });
});

describe('closed-form HJ^2 equals the HJ distance the estimator reports', () => {
  // fit() computes it by its own HJ-weighted first stage (shared/estimation/hjDistance.ts)
  for (const kind of ['linear', 'linear-raw', 'linear-gross'] as const) {
    it(kind, async () => {
      const { fit } = await import('../../../shared/estimation/fit.js');
      const panel = panelFromFixture(panelFx, kind === 'linear-gross' ? 'gross' : 'excess');
      const spec = parseFitSpec({ returns: kind === 'linear-gross' ? 'gross' : 'excess', riskfree: 'rf', model: { kind, factors: ['mkt', 'carry'] }, estimator: { lags: 2 } });
      const res = fit(spec, panel);
      const factors = ['mkt', 'carry'].map((n) => (panel.factors.find((f) => f.name === n) as { values: Float64Array }).values);
      expectClose(linearHjSquared(kind, panel.returns, factors, null), (res.hj?.distance ?? NaN) ** 2, 1e-9, `HJ^2 vs fit().hj for ${kind}`);
    });
  }
});
