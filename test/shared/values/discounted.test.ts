/**
 * Discounted-value paths of a fit (METHODS 10). Both checks are identities of the
 * definitions, on the seeded panel of the GMM reference fixture
 * (test/shared/estimation/fixtures/gmm_reference.json):
 * - the mean increment of the discounted gains G_i,T / T equals the same fit's pricing
 *   error (1e-12); for gross returns the mean increment ratio of Lambda_t V_i,t is 1 + the
 *   pricing error;
 * - an asset the model prices exactly (an exactly identified GMM fit; a test asset that is
 *   a combination of the factors in the time-series regressions) has zero mean increment.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { fit } from '../../../shared/estimation/fit.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import type { FitResult } from '../../../shared/results.js';
import { parseFitSpec, type FitSpecInput } from '../../../shared/spec.js';
import { discountedPaths, MAX_DISCOUNTED_VALUES } from '../../../shared/values/discountedValue.js';
import { panelFromFixture, type FixtureData } from '../estimation/helpers.js';

const data = (JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../estimation/fixtures/gmm_reference.json'), 'utf8')) as { data: FixtureData }).data;

const factors = ['f1', 'f2', 'f3'];
const SPECS: { name: string; spec: FitSpecInput }[] = [
  { name: 'GMM linear, first stage', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { stage: 'first' } } },
  { name: 'GMM linear, second stage (mean of m is not 1)', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { stage: 'second' } } },
  { name: 'GMM linear-raw, iterated', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear-raw', factors }, estimator: { stage: 'iterated' } } },
  { name: 'GMM consumption on excess returns', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'consumption', consumption: 'cons', delta: 1 }, estimator: { stage: 'second' } } },
  { name: 'time-series regressions', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { method: 'time-series' } } },
  { name: 'two-pass with intercept', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { method: 'two-pass' } } },
  { name: 'two-pass without intercept', spec: { returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { method: 'two-pass', intercept: false } } },
];
const GROSS: { name: string; spec: FitSpecInput }[] = [
  { name: 'GMM linear-gross, second stage', spec: { returns: 'gross', riskfree: 'rf', model: { kind: 'linear-gross', factors }, estimator: { stage: 'second' } } },
  { name: 'GMM consumption on gross returns', spec: { returns: 'gross', riskfree: 'rf', model: { kind: 'consumption', consumption: 'cons' }, estimator: { stage: 'second' } } },
];

function paths(r: FitResult): NonNullable<FitResult['discounted']> {
  expect(r.discounted, 'fit result carries discounted paths').toBeDefined();
  return r.discounted as NonNullable<FitResult['discounted']>;
}

describe('discounted gains: mean increment = the fit\'s pricing error', () => {
  const panel = panelFromFixture(data, 'excess');
  for (const c of SPECS) {
    it(c.name, () => {
      const r = fit(parseFitSpec(c.spec), panel);
      const d = paths(r);
      expect(d.form).toBe('gains');
      expect(d.periods).toEqual(panel.periods);
      expect(Object.keys(d.series)).toEqual(panel.assets);
      const T = panel.periods.length;
      for (const e of r.pricingErrors) {
        const G = d.series[e.asset];
        expect(G.length).toBe(T);
        expect(Math.abs(G[T - 1] / T - e.alpha), `${e.asset}: G_T/T ${G[T - 1] / T} vs alpha ${e.alpha}`).toBeLessThanOrEqual(1e-12);
      }
    });
  }
});

describe('discounted value of gross returns: mean increment ratio = 1 + pricing error', () => {
  const panel = panelFromFixture(data, 'gross');
  for (const c of GROSS) {
    it(c.name, () => {
      const r = fit(parseFitSpec(c.spec), panel);
      const d = paths(r);
      expect(d.form).toBe('value');
      const T = panel.periods.length;
      for (const e of r.pricingErrors) {
        const v = d.series[e.asset];
        let s = v[0];
        for (let t = 1; t < T; t++) s += v[t] / v[t - 1];
        expect(Math.abs(s / T - (1 + e.alpha)), `${e.asset}`).toBeLessThanOrEqual(1e-12);
      }
    });
  }
});

describe('an exactly priced asset has a flat discounted path (zero mean increment)', () => {
  const base = panelFromFixture(data, 'excess');
  it('GMM, second stage: test assets built so that m_t = 1 - 3 (f1_t - mean f1) prices them all exactly give G_T / T = 0', () => {
    const f1 = base.factors[0].values;
    const T = f1.length;
    const fbar = f1.reduce((a, b) => a + b, 0) / T;
    const m = Float64Array.from(f1, (x) => 1 - 3 * (x - fbar));
    const mm = m.reduce((a, x) => a + x * x, 0);
    // Project each fixture asset off m: sum_t m_t R_t = 0, so E_T[m R] = 0 at b = 3.
    const priced = base.returns.slice(0, 5).map((x) => {
      const c = x.reduce((a, v, t) => a + v * m[t], 0) / mm;
      return Float64Array.from(x, (v, t) => v - c * m[t]);
    });
    const panel: ReturnsPanel = { ...base, assets: base.assets.slice(0, 5), returns: priced, factors: [base.factors[0]] };
    const r = fit(parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] }, estimator: { stage: 'second' } }), panel);
    expect(r.params[0].estimate).toBeCloseTo(3, 8);
    for (const a of panel.assets) {
      const G = paths(r).series[a];
      expect(Math.abs(G[T - 1] / T), a).toBeLessThanOrEqual(1e-12);
    }
  });
  it('time-series regressions: a test asset that is 0.8 f1 + 0.3 f2 has intercept 0 and G_T / T = 0', () => {
    const f1 = base.factors[0].values;
    const f2 = base.factors[1].values;
    const exact = Float64Array.from(f1, (x, t) => 0.8 * x + 0.3 * f2[t]);
    const panel: ReturnsPanel = { ...base, assets: [...base.assets, 'replica'], returns: [...base.returns, exact] };
    const r = fit(parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors }, estimator: { method: 'time-series' } }), panel);
    const G = paths(r).series.replica;
    expect(Math.abs(G[G.length - 1] / G.length)).toBeLessThanOrEqual(1e-15);
    // and the priced asset's path is not trivially zero: it wanders around the flat line
    expect(Math.max(...G.map(Math.abs))).toBeGreaterThan(1e-3);
  });
});

describe('record size', () => {
  it(`keeps at most ${MAX_DISCOUNTED_VALUES} values: the assets with the largest |t| stay`, () => {
    const T = 1000;
    const N = 600;
    const d = discountedPaths({
      form: 'gains',
      periods: Array.from({ length: T }, (_, t) => `p${t}`),
      assets: Array.from({ length: N }, (_, i) => `a${i}`),
      returns: Array.from({ length: N }, () => new Float64Array(T).fill(0.01)),
      sdf: new Float64Array(T).fill(1),
      priority: Array.from({ length: N }, (_, i) => (i % 7 === 0 ? 10 + i : i / 1000)),
    });
    const kept = Object.keys(d.series);
    expect(kept.length).toBe(MAX_DISCOUNTED_VALUES / T);
    expect(d.omitted?.count).toBe(N - kept.length);
    for (let i = 0; i < N; i += 7) expect(kept).toContain(`a${i}`);
  });
});
