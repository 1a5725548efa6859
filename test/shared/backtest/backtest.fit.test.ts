/**
 * The incremental back-test gives the numbers of the estimator fitted afresh on each
 * window (shared/estimation fit(), itself checked against R's gmm and sandwich), to a
 * relative 1e-10: estimates, standard errors, in-sample and out-of-sample pricing errors.
 * Plus the per-window engine for the models the incremental one does not cover.
 */
import { describe, expect, it } from 'vitest';
import { backtest, backtestWindows, type WindowRecord } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import { parseFitSpec } from '../../../shared/spec.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { expectClose } from './helpers.js';
import { seededPanel } from './seeded.js';

const TOL = 1e-10;

/**
 * Estimates relative to each parameter's largest |value| over the windows; pricing errors
 * relative to the largest |mean return| of the panel (they are differences of such numbers,
 * so their own last digits carry the estimator's convergence tolerance).
 */
function agree(inc: WindowRecord[], ref: WindowRecord[], panel: ReturnsPanel): void {
  expect(inc.length).toBe(ref.length);
  const gross = panel.returnKind === 'gross' ? 1 : 0;
  const alphaScale = Math.max(...panel.returns.map((r) => Math.abs(r.reduce((a, v) => a + v, 0) / r.length - gross)));
  const scale = new Map<string, number>();
  for (const r of ref) for (const p of r.params ?? []) scale.set(p.name, Math.max(scale.get(p.name) ?? 0, Math.abs(p.estimate)));
  inc.forEach((r, w) => {
    const q = ref[w];
    expect(r.ok, r.reason).toBe(true);
    expect(q.ok, q.reason).toBe(true);
    expect((r.params ?? []).map((p) => p.name)).toEqual((q.params ?? []).map((p) => p.name));
    (r.params ?? []).forEach((p, k) => {
      const e = (q.params ?? [])[k];
      expectClose(p.estimate, e.estimate, TOL, `window ${w} ${p.name} vs fit()`, scale.get(p.name));
      expectClose(p.se, e.se, TOL, `window ${w} se(${p.name}) vs fit()`);
    });
    (r.alphaIn ?? []).forEach((v, i) => expectClose(v, (q.alphaIn as Float64Array)[i], TOL, `window ${w} alphaIn[${i}] vs fit()`, alphaScale));
    (r.alphaOos ?? []).forEach((v, i) => expectClose(v, (q.alphaOos as Float64Array)[i], TOL, `window ${w} alphaOos[${i}] vs fit()`, alphaScale));
  });
}

function gross(p: ReturnsPanel): ReturnsPanel {
  const rf = new Float64Array(p.periods.length).map((_, t) => 1.002 + 0.0004 * Math.cos(t / 9));
  return { ...p, returnKind: 'gross', returns: p.returns.map((r) => r.map((v, t) => rf[t] + v)), riskfreeGross: rf };
}

const cases: { name: string; spec: Record<string, unknown>; panel: () => ReturnsPanel }[] = [
  { name: 'demeaned, second stage, L = 3', spec: { model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { stage: 'second', lags: 3 } }, panel: () => seededPanel(220, 10, 2, 27) },
  { name: 'demeaned, first stage, HJ weight', spec: { model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { stage: 'first', weight: 'hj', lags: 2 } }, panel: () => seededPanel(220, 10, 2, 22) },
  { name: 'demeaned, second stage, automatic lags, expanding', spec: { model: { kind: 'linear', factors: ['f1'] }, estimator: { stage: 'second', lags: 'auto' }, backtest: { window: 80, step: 9, horizon: 3, expanding: true } }, panel: () => seededPanel(220, 8, 1, 23) },
  { name: 'raw, second stage, uncentred', spec: { model: { kind: 'linear-raw', factors: ['f1', 'f2'] }, estimator: { stage: 'second', lags: 1, centered: false } }, panel: () => seededPanel(220, 8, 2, 24) },
  { name: 'gross, second stage, with the risk-free asset', spec: { returns: 'gross', includeRiskfree: true, model: { kind: 'linear-gross', factors: ['f1', 'f2'] }, estimator: { stage: 'second', lags: 2 } }, panel: () => gross(seededPanel(220, 8, 2, 25)) },
];

describe('incremental back-test against fit() on every window', () => {
  for (const c of cases) {
    it(c.name, () => {
      const spec = parseFitSpec({ riskfree: 'rf', backtest: { window: 60, step: 8, horizon: 2 }, ...c.spec });
      const panel = c.panel();
      const inc = backtestWindows(spec, panel, { engine: 'incremental' });
      const ref = backtestWindows(spec, panel, { engine: 'fit', fit });
      expect(inc.length).toBeGreaterThan(10);
      agree(inc, ref, panel);
      if (spec.includeRiskfree) expect((inc[0].alphaOos as Float64Array).length).toBe(panel.assets.length + 1);
    });
  }
});

describe('per-window engine for the other estimators', () => {
  it('consumption model: every window fitted, m_t = delta g^-gamma out of sample', () => {
    const base = seededPanel(200, 6, 1, 31);
    const g = new Float64Array(200).map((_, t) => 1.004 + 0.5 * base.factors[0].values[t]);
    const panel: ReturnsPanel = { ...base, factors: [], consumptionGrowth: g };
    const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'consumption', consumption: 'cg' }, estimator: { stage: 'first' }, backtest: { window: 80, step: 30, horizon: 2 } });
    const res = backtest(spec, panel, { fit });
    expect(res.sample.notes.join(' ')).toContain('per-window fit');
    expect(res.windows).toBe(4);
    // the first window's OOS error from its own gamma, by hand: mean over 2 held-out periods of R m
    const recs = backtestWindows(spec, panel, { fit });
    const gamma = (recs[0].params ?? []).find((p) => p.name === 'gamma')?.estimate as number;
    const m = [80, 81].map((t) => Math.pow(g[t], -gamma)); // delta fixed at 1 (excess returns)
    const a0 = (panel.returns[0][80] * m[0] + panel.returns[0][81] * m[1]) / 2;
    expectClose((recs[0].alphaOos as Float64Array)[0], a0, 1e-13, 'consumption OOS error');
  });

  it('time-series regressions: held-out mean of R - beta f with the window betas', () => {
    const panel = seededPanel(160, 5, 2, 32);
    const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { method: 'time-series' }, backtest: { window: 60, step: 25, horizon: 1 } });
    const recs = backtestWindows(spec, panel, { fit });
    expect(recs.every((r) => r.ok)).toBe(true);
    const sub = { ...panel, periods: panel.periods.slice(0, 60), returns: panel.returns.map((r) => r.subarray(0, 60)), factors: panel.factors.map((f) => ({ name: f.name, values: f.values.subarray(0, 60) })) };
    const betas = fit({ ...spec, backtest: undefined }, sub).betas ?? [];
    const b = (asset: string, f: string) => betas.find((x) => x.asset === asset && x.factor === f)?.estimate as number;
    const expected = panel.returns[2][60] - b('p3', 'f1') * panel.factors[0].values[60] - b('p3', 'f2') * panel.factors[1].values[60];
    expectClose((recs[0].alphaOos as Float64Array)[2], expected, 1e-12, 'time-series OOS error');
  });

  it('two-pass: held-out mean return less lambda_0 + beta lambda', () => {
    const panel = seededPanel(160, 6, 1, 33);
    const spec = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] }, estimator: { method: 'two-pass' }, backtest: { window: 60, step: 40, horizon: 4 } });
    const recs = backtestWindows(spec, panel, { fit });
    expect(recs.every((r) => r.ok)).toBe(true);
    const sub = { ...panel, periods: panel.periods.slice(40, 100), returns: panel.returns.map((r) => r.subarray(40, 100)), factors: panel.factors.map((f) => ({ name: f.name, values: f.values.subarray(40, 100) })) };
    const res = fit({ ...spec, backtest: undefined }, sub);
    const lam0 = res.params.find((p) => p.name === 'lambda.const')?.estimate as number;
    const lam = res.params.find((p) => p.name === 'lambda.f1')?.estimate as number;
    const beta = res.betas?.find((x) => x.asset === 'p1')?.estimate as number;
    const meanR = (panel.returns[0][100] + panel.returns[0][101] + panel.returns[0][102] + panel.returns[0][103]) / 4;
    expectClose((recs[1].alphaOos as Float64Array)[0], meanR - lam0 - beta * lam, 1e-12, 'two-pass OOS error');
  });
});
