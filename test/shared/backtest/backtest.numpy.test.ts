/**
 * The back-test checked window by window against an independent numpy computation:
 * fixtures/make_backtest.py (numpy 1.24, Debian's python3-numpy) fits every window
 * afresh from explicit u_t, with Gauss-Newton for the second stage, and writes
 * fixtures/backtest_numpy.json. Tolerance: relative 1e-8 on every estimate, standard
 * error, in-sample and out-of-sample pricing error and summary.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, it, expect } from 'vitest';
import { backtest, backtestWindows } from '../../../shared/backtest/index.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { expectClose, expectSummaryClose, panelFromFixture, type FixtureCase, type FixturePanelInput } from './helpers.js';

const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/backtest_numpy.json'), 'utf8')) as FixturePanelInput & { cases: FixtureCase[] };

const TOL = 1e-8; // relative, against numpy (fixtures/make_backtest.py)

function specFor(c: FixtureCase) {
  return parseFitSpec({
    returns: c.returns,
    riskfree: 'rf',
    model: { kind: c.kind, factors: fx.factors },
    estimator: { method: 'gmm', ...c.estimator },
    backtest: c.backtest,
  });
}

describe('back-test against numpy, window by window', () => {
  for (const c of fx.cases) {
    for (const engine of ['incremental', 'fresh'] as const) {
      it(`${c.name} (${engine})`, () => {
        const spec = specFor(c);
        const panel = panelFromFixture(fx, c.returns);
        const records = backtestWindows(spec, panel, { engine });
        expect(records.length).toBe(c.windows.length);
        records.forEach((r, w) => {
          const ref = c.windows[w];
          expect(r.ok, `window ${w}: ${r.reason}`).toBe(true);
          expect(r.lags).toBe(ref.lags);
          const params = r.params ?? [];
          expect(params.map((p) => p.name)).toEqual(ref.params.map((p) => p.name));
          params.forEach((p, k) => {
            // numpy reference: fixtures/make_backtest.py
            expectClose(p.estimate, ref.params[k].estimate, TOL, `${c.name} window ${w} ${p.name}`);
            expectClose(p.se, ref.params[k].se, TOL, `${c.name} window ${w} se(${p.name})`);
          });
          ref.alphaIn.forEach((a, i) => expectClose((r.alphaIn as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaIn[${i}]`, 1e-6));
          ref.alphaOos.forEach((a, i) => expectClose((r.alphaOos as Float64Array)[i], a, TOL, `${c.name} window ${w} alphaOos[${i}]`, 1e-6));
        });
      });
    }

    it(`${c.name}: summaries`, () => {
      const res = backtest(specFor(c), panelFromFixture(fx, c.returns), { engine: 'incremental' });
      const s = c.summary;
      // numpy reference: fixtures/make_backtest.py (summary block)
      expect(res.windows).toBe(c.windows.length);
      expect(res.windowsFailed).toBe(0);
      expectSummaryClose(res, s, TOL);
      res.perAsset.forEach((row, i) => {
        expectClose(row.alphaOos, s.perAssetOos[i], TOL, `perAsset[${i}].alphaOos`, 1e-6);
        expectClose(row.alphaIn, s.perAssetIn[i], TOL, `perAsset[${i}].alphaIn`, 1e-6);
      });
      expect(res.paths.length).toBe(c.windows.length);
      expect(res.paths[0].end).toBe(fx.periods[c.windows[0].end - 1]);
    });
  }
});
