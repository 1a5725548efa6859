/**
 * Back-tests with instruments (METHODS 9 with 6) against an independent numpy window loop:
 * fixtures/make_backtest_instruments.py (numpy 1.24) builds the scaled returns and scaled
 * factors of each window from the panel's rows, fits every window afresh and prices the
 * held-out periods with the scaled moments. Tolerance: relative 1e-8 on every estimate,
 * standard error, in- and out-of-sample pricing error and summary, for every engine that
 * covers the spec (incremental, sums rebuilt per window, the per-window fit).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { backtest, backtestWindows, engineName, incrementalApplies } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { expectClose, panelFromFixture, type FixturePanelInput } from './helpers.js';

interface FixtureWindow {
  start: number;
  end: number;
  lags: number;
  params: { name: string; estimate: number; se: number }[];
  alphaIn: number[];
  alphaOos: number[];
}
interface FixtureCase {
  name: string;
  kind: 'linear' | 'linear-raw' | 'linear-gross';
  returns: 'excess' | 'gross';
  instruments: { scale: 'returns' | 'factors' | 'both' };
  estimator: { stage: 'first' | 'second'; weight: 'identity' | 'hj'; lags: number | 'auto'; centered: boolean };
  backtest: { window: number; step: number; horizon: number; expanding: boolean };
  windows: FixtureWindow[];
  summary: { rmse: number; rmsePooled: number; r2: number; inRmse: number; inR2: number; inMape: number; perAssetOos: number[]; perAssetIn: number[] };
}
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
    instruments: { series: fx.instrumentNames, scale: c.instruments.scale, lag: 1 },
  });
}
function panelFor(c: FixtureCase): ReturnsPanel {
  return {
    ...panelFromFixture(fx, c.returns),
    instruments: { lag: 1, series: fx.instrumentNames.map((name, j) => ({ name, values: Float64Array.from(fx.instruments[j]) })), lost: [] },
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
            expectClose(p.estimate, ref.params[k].estimate, TOL, `${c.name} window ${w} ${p.name}`); // numpy window fit
            expectClose(p.se, ref.params[k].se, TOL, `${c.name} window ${w} se(${p.name})`); // numpy window fit
          });
          ref.alphaIn.forEach((a, i) => expectClose((r.alphaIn as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaIn[${i}]`, 1e-6)); // numpy scaled moments
          ref.alphaOos.forEach((a, i) => expectClose((r.alphaOos as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaOos[${i}]`, 1e-6)); // numpy held-out scaled moments
        });
      });
    }

    it(`${c.name}: summaries and labels`, () => {
      const res = backtest(spec, panelFor(c), { fit });
      const s = c.summary;
      expect(res.windows).toBe(c.windows.length);
      expect(res.windowsFailed).toBe(0);
      // numpy reference: fixtures/make_backtest_instruments.py (summary block)
      expectClose(res.oos.rmse, s.rmse, TOL, 'oos.rmse');
      expectClose(res.oos.rmsePooled, s.rmsePooled, TOL, 'oos.rmsePooled');
      expectClose(res.oos.r2, s.r2, TOL, 'oos.r2');
      expectClose(res.inSample.rmse, s.inRmse, TOL, 'inSample.rmse');
      expectClose(res.inSample.r2, s.inR2, TOL, 'inSample.r2');
      expectClose(res.inSample.mape, s.inMape, TOL, 'inSample.mape');
      s.perAssetOos.forEach((a, i) => expectClose(res.perAsset[i].alphaOos, a, TOL, `perAsset[${i}].alphaOos`, 1e-6));
      // labels: asset and instrument per payoff, instrument-major
      const N = fx.assets.length;
      const scaled = c.instruments.scale !== 'factors';
      expect(res.perAsset).toHaveLength(scaled ? 3 * N : N);
      expect([res.perAsset[0].asset, res.perAsset[0].instrument]).toEqual([fx.assets[0], 'const']);
      if (scaled) expect([res.perAsset[N + 1].asset, res.perAsset[N + 1].instrument]).toEqual([fx.assets[1], 'dp']);
      expect(res.sample.instruments).toEqual(['const', ...fx.instrumentNames]);
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
