import { expect } from 'vitest';
import type { ReturnsPanel } from '../../../shared/panel.js';
import type { BacktestResult } from '../../../shared/results.js';

/** |actual - expected| <= tol * max(|expected|, floor); prints value, expected and tolerance on failure. */
export function expectClose(actual: number, expected: number, tol: number, what: string, floor = 1e-12): void {
  const scale = Math.max(Math.abs(expected), floor);
  const err = Math.abs(actual - expected) / scale;
  if (!(err <= tol)) {
    expect.fail(`${what}: got ${actual}, expected ${expected}, relative error ${err.toExponential(3)} > tolerance ${tol}`);
  }
}

export interface FixturePanelInput {
  periods: string[];
  assets: string[];
  factors: string[];
  excess: number[][];
  gross: number[][];
  factorValues: number[][];
}

export function panelFromFixture(fx: FixturePanelInput, kind: 'excess' | 'gross'): ReturnsPanel {
  return {
    frequency: 'monthly',
    periods: fx.periods,
    assets: fx.assets,
    returnKind: kind,
    returns: (kind === 'gross' ? fx.gross : fx.excess).map((r) => Float64Array.from(r)),
    factors: fx.factors.map((name, k) => ({ name, values: Float64Array.from(fx.factorValues[k]) })),
    sampleNotes: [],
  };
}

/** One window of a numpy back-test fixture (make_backtest.py, make_backtest_instruments.py). */
export interface FixtureWindow {
  start: number;
  end: number;
  lags: number;
  params: { name: string; estimate: number; se: number }[];
  alphaIn: number[];
  alphaOos: number[];
}

/** One case of a numpy back-test fixture: the spec's keys, its windows and summaries. */
export interface FixtureCase {
  name: string;
  kind: 'linear' | 'linear-raw' | 'linear-gross';
  returns: 'excess' | 'gross';
  estimator: { stage: 'first' | 'second'; weight: 'identity' | 'hj'; lags: number | 'auto'; centered: boolean };
  backtest: { window: number; step: number; horizon: number; expanding: boolean };
  windows: FixtureWindow[];
  summary: { rmse: number; rmsePooled: number; r2: number; inRmse: number; inR2: number; inMape: number; perAssetOos: number[]; perAssetIn: number[] };
}

/** A back-test's summaries against a fixture's summary block (relative `tol`). */
export function expectSummaryClose(res: BacktestResult, s: FixtureCase['summary'], tol: number): void {
  expectClose(res.oos.rmse, s.rmse, tol, 'oos.rmse');
  expectClose(res.oos.rmsePooled, s.rmsePooled, tol, 'oos.rmsePooled');
  expectClose(res.oos.r2, s.r2, tol, 'oos.r2');
  expectClose(res.inSample.rmse, s.inRmse, tol, 'inSample.rmse');
  expectClose(res.inSample.r2, s.inR2, tol, 'inSample.r2');
  expectClose(res.inSample.mape, s.inMape, tol, 'inSample.mape');
}

export { seededPanel } from './seeded.js';
