/**
 * The HJ bootstrap of the consumption model starts every replication from the full-sample
 * estimate and falls back to the estimator's gamma scan only where that fails or stops in a
 * local minimum (shared/estimation/gmmFit.ts gmmHjSquared). Checks: on the R gmm reference
 * data (../estimation/fixtures/gmm_reference.json, made by make_gmm.R) the full-sample HJ
 * distance equals R gmm's; on resampled periods the warm-started HJ^2 equals the scan-started
 * one; started from every guard point (near and far from the minimum) it still does (the
 * solver reaches the global minimum, or the guard sends it to the scan).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseFitSpec } from '../../../shared/spec.js';
import { gmmHjEstimate, gmmHjSquared, prepareGmm } from '../../../shared/estimation/gmmFit.js';
import { replicationIndices } from '../../../shared/bootstrap/blocks.js';
import { resamplePanel } from '../../../shared/compare/bootstrap.js';
import { expectClose, panelFromFixture, type FixtureData } from '../estimation/helpers.js';

const fixture = JSON.parse(readFileSync(path.join(import.meta.dirname, '../estimation/fixtures/gmm_reference.json'), 'utf8')) as {
  data: FixtureData;
  cases: { name: string; spec: { kind: string }; hj: number }[];
};

for (const kind of ['consumption-gross', 'consumption-excess'] as const) {
  const returns = kind === 'consumption-gross' ? 'gross' : 'excess';
  const panel = panelFromFixture(fixture.data, returns);
  const spec = parseFitSpec({ returns, riskfree: 'rf', model: { kind: 'consumption', consumption: 'cons' }, estimator: { stage: 'second' } });
  const ref = fixture.cases.find((c) => c.spec.kind === kind)!;

  describe(`HJ^2 of the ${kind} model, warm-started`, () => {
    it('full sample: the HJ distance of R gmm (make_gmm.R), from the scan and from its own estimate', () => {
      const cold = gmmHjSquared(spec, panel);
      expectClose(Math.sqrt(cold), ref.hj, 1e-8, 'HJ distance vs R gmm');
      expectClose(gmmHjSquared(spec, panel, gmmHjEstimate(spec, panel)), cold, 1e-10, 'warm vs scan, full sample');
    });

    it('30 moving-block replications: warm-started equals scan-started', () => {
      const warm = gmmHjEstimate(spec, panel);
      const T = panel.periods.length;
      for (let r = 0; r < 30; r++) {
        const p = resamplePanel(panel, replicationIndices(T, 7, 20261201, r));
        expectClose(gmmHjSquared(spec, p, warm), gmmHjSquared(spec, p), 1e-8, `replication ${r}`);
      }
    });

    it('from every guard point, however far from the minimum: the scan-started value', () => {
      const { model } = prepareGmm(spec, panel);
      const points = model.guardPoints!();
      expect(points.length).toBe(23);
      const cold = gmmHjSquared(spec, panel);
      for (const c of points) expectClose(gmmHjSquared(spec, panel, c), cold, 1e-8, `start gamma = ${c[c.length - 1]}`);
    });
  });
}
