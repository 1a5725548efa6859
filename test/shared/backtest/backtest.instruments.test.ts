/**
 * Back-tests with instruments (METHODS 9 with 6) against an independent numpy window loop:
 * fixtures/make_backtest_instruments.py (numpy 1.24) builds the scaled returns and scaled
 * factors of each window from the panel's rows, fits every window afresh and prices the
 * held-out periods with the scaled moments. Tolerance: relative 1e-8 on every estimate (of
 * the estimate or its s.e., the larger), standard error, in- and out-of-sample pricing error
 * (of the window's largest) and summary, for every engine that covers the spec (incremental, sums rebuilt per window,
 * the per-window fit).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { backtest, backtestWindows, engineName, incrementalApplies } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { expectClose, expectSummaryClose, panelFromFixture, type FixtureCase as BaseCase, type FixturePanelInput } from './helpers.js';

type FixtureCase = BaseCase & {
  instruments: { series: string[]; scale: 'returns' | 'factors' | 'both' };
};
const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/backtest_instruments_numpy.json'), 'utf8')) as FixturePanelInput & {
  instrumentNames: string[];
  instruments: number[][];
  cases: FixtureCase[];
};

const TOL = 1e-8; // relative, against numpy (fixtures/make_backtest_instruments.py)

function specFor(c: FixtureCase) {
  return parseFitSpec({
    returns: c.returns,
    riskfree: 'rf',
    model: { kind: c.kind, factors: fx.factors },
    estimator: { method: 'gmm', ...c.estimator },
    backtest: c.backtest,
    instruments: { series: c.instruments.series, scale: c.instruments.scale, lag: 1 },
  });
}
function panelFor(c: FixtureCase): ReturnsPanel {
  return {
    ...panelFromFixture(fx, c.returns),
    instruments: { lag: 1, series: c.instruments.series.map((name) => ({ name, values: Float64Array.from(fx.instruments[fx.instrumentNames.indexOf(name)]) })), lost: [] },
  };
}

describe('back-test with instruments against a numpy window loop', () => {
  for (const c of fx.cases) {
    const spec = specFor(c);
    const engines = incrementalApplies(spec) ? (['incremental', 'fresh', 'fit'] as const) : (['fit'] as const);
    for (const engine of engines) {
      it(`${c.name} (${engine})`, () => {
        const records = backtestWindows(spec, panelFor(c), { engine, fit });
        expect(records.length).toBe(c.windows.length);
        records.forEach((r, w) => {
          const ref = c.windows[w];
          expect(r.ok, `window ${w}: ${r.reason}`).toBe(true);
          expect(r.lags).toBe(ref.lags);
          const params = r.params ?? [];
          expect(params.map((p) => p.name)).toEqual(ref.params.map((p) => p.name));
          params.forEach((p, k) => {
            // relative to the estimate, or to its s.e. where that is larger: the rolling sums of the
            // incremental engine drift by rounding, which a weakly identified loading on a scaled
            // factor (s.e. above the estimate) magnifies
            expectClose(p.estimate, ref.params[k].estimate, TOL, `${c.name} window ${w} ${p.name}`, ref.params[k].se); // numpy window fit
            expectClose(p.se, ref.params[k].se, TOL, `${c.name} window ${w} se(${p.name})`); // numpy window fit
          });
          // pricing errors relative to the window's largest: payoffs scaled by a spread of 0.01 have errors of 1e-7
          const inScale = Math.max(...ref.alphaIn.map(Math.abs));
          const oosScale = Math.max(...ref.alphaOos.map(Math.abs));
          ref.alphaIn.forEach((a, i) => expectClose((r.alphaIn as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaIn[${i}]`, inScale)); // numpy scaled moments
          ref.alphaOos.forEach((a, i) => expectClose((r.alphaOos as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaOos[${i}]`, oosScale)); // numpy held-out scaled moments
        });
      });
    }

    it(`${c.name}: summaries and labels`, () => {
      const res = backtest(spec, panelFor(c), { fit });
      const s = c.summary;
      expect(res.windows).toBe(c.windows.length);
      expect(res.windowsFailed).toBe(0);
      // numpy reference: fixtures/make_backtest_instruments.py (summary block)
      expectSummaryClose(res, s, TOL);
      const scale = Math.max(...s.perAssetOos.map(Math.abs));
      s.perAssetOos.forEach((a, i) => expectClose(res.perAsset[i].alphaOos, a, TOL, `perAsset[${i}].alphaOos`, scale));
      // labels: asset and instrument per payoff, instrument-major
      const N = fx.assets.length;
      const scaled = c.instruments.scale !== 'factors';
      expect(res.perAsset).toHaveLength(scaled ? (1 + c.instruments.series.length) * N : N);
      expect([res.perAsset[0].asset, res.perAsset[0].instrument]).toEqual([fx.assets[0], 'const']);
      if (scaled) expect([res.perAsset[N + 1].asset, res.perAsset[N + 1].instrument]).toEqual([fx.assets[1], 'dp']);
      expect(res.sample.instruments).toEqual(['const', ...c.instruments.series]);
      expect(res.sample.N).toBe(N);
      expect(res.sample.K).toBe(fx.factors.length);
      expect(res.sample.notes.join(' ')).toContain(`engine: ${engineName(spec)}`);
    });
  }

  it('gross returns scaled by instruments fall back to the per-window fit (the rolling sums price payoffs at 1)', () => {
    const c = fx.cases.find((x) => x.kind === 'linear-gross')!;
    expect(incrementalApplies(specFor(c))).toBe(false);
    expect(fx.cases.filter((x) => x.kind !== 'linear-gross').every((x) => incrementalApplies(specFor(x)))).toBe(true);
  });
});
