/**
 * The GMM engine against R's gmm 1.7 and sandwich 3.0.2 (fixture made by
 * fixtures/make_gmm.R; library versions and the exact calls are in the fixture). Every
 * number is compared at relative 1e-8 (p-values 1e-6), relative to the number itself or,
 * for entries of a vector that are close to zero, to the vector's largest entry.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, it } from 'vitest';
import { parseFitSpec } from '../../../shared/spec.js';
import { gmmFitDetailed } from '../../../shared/estimation/gmmFit.js';
import { hjDistance } from '../../../shared/estimation/hjDistance.js';
import { longRunCovariance } from '../../../shared/estimation/longRunCovariance.js';
import { columns, expectClose, panelFromFixture, type FixtureData, type GmmReferenceCase } from './helpers.js';

type RefCase = GmmReferenceCase<{ kind: string; stage: string; weight: string; lags: number | 'auto'; centered: boolean; includeRiskfree?: boolean; delta?: number; inferenceS?: string }>;

const fixture = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/gmm_reference.json'), 'utf8')) as {
  data: FixtureData;
  cases: RefCase[];
  hac: { u: number[][]; cases: { lags: number; centered: boolean; S: number[][] }[] };
};

const REL = 1e-8;
const REL_P = 1e-6;

function vecClose(value: ArrayLike<number>, expected: number[], rel: number, what: string): void {
  const scale = Math.max(...expected.map(Math.abs));
  expected.forEach((e, i) => expectClose(value[i], e, rel, `${what}[${i}]`, 1e-3 * scale));
}

function specFor(c: RefCase) {
  const s = c.spec;
  const consumption = s.kind.startsWith('consumption');
  const returns = s.kind === 'linear-gross' || s.kind === 'consumption-gross' ? 'gross' : 'excess';
  return parseFitSpec({
    returns,
    riskfree: 'rf',
    includeRiskfree: s.includeRiskfree ?? false,
    model: consumption ? { kind: 'consumption', consumption: 'cons', ...(s.delta !== undefined && returns === 'excess' ? { delta: s.delta } : {}) } : { kind: s.kind, factors: ['f1', 'f2', 'f3'] },
    estimator: { stage: s.stage, weight: s.weight, lags: s.lags, centered: s.centered, ...(s.inferenceS ? { inferenceS: s.inferenceS } : {}) },
  });
}

describe('longRunCovariance against sandwich::NeweyWest(lag = L, prewhite = FALSE, adjust = FALSE)', () => {
  const u = columns(fixture.hac.u);
  for (const h of fixture.hac.cases)
    it(`lags ${h.lags}, ${h.centered ? 'centered' : 'uncentered'}`, () => {
      const S = longRunCovariance(u, h.lags, h.centered);
      const q = u.length;
      for (let i = 0; i < q; i++) for (let j = 0; j < q; j++) expectClose(S.data[i * q + j], h.S[i][j], 1e-12, `S[${i}][${j}]`, 1e-3 * Math.abs(h.S[i][i])); // sandwich::NeweyWest
    });
});

describe('GMM fits against R gmm (fixtures/make_gmm.R)', () => {
  for (const c of fixture.cases)
    it(c.name, () => {
      const spec = specFor(c);
      const panel = panelFromFixture(fixture.data, spec.returns);
      const { result, prepared } = gmmFitDetailed(spec, panel);
      expectClose(result.sample.lags, c.lags, 0, 'lags');
      const est = result.params.slice(0, c.p);
      vecClose(est.map((x) => x.estimate), c.theta, REL, 'theta'); // R gmm coef()
      vecClose(est.map((x) => x.se), c.se, REL, 'se(theta)'); // R gmm sqrt(diag(vcov()))
      vecClose(result.pricingErrors.map((x) => x.alpha), c.alpha, REL, 'pricing error'); // colMeans(gmm $gt)
      vecClose(result.pricingErrors.map((x) => x.se), c.alphaSe, REL, 'se(pricing error)'); // R: sqrt(diag(M S M'/T))
      expectClose(result.test.stat, c.peStat, REL, 'pricing-error chi-square'); // R: g' MASS::ginv(Var g) g
      expectClose(result.test.df ?? -1, c.peDf, 0, 'df');
      expectClose(result.test.p, c.peP, REL_P, 'pricing-error p', 1e-3); // R pchisq(lower.tail = FALSE)
      const J = result.tests.find((t) => t.name === 'Hansen J');
      if (c.J === null) expectClose(J === undefined ? 1 : 0, 1, 0, 'no J at the first stage');
      else {
        expectClose(J!.stat, c.J, REL, 'Hansen J'); // R gmm specTest()
        expectClose(J!.p, c.JP!, REL_P, 'J p-value', 1e-3); // R pchisq
      }
      expectClose(result.hj!.distance, c.hj, REL, 'HJ distance'); // R gmm objective with weightsMatrix = solve(E[RR'])
      const hj = hjDistance(prepared.model, prepared.lags, spec.estimator.centered);
      vecClose(hj.weights, c.hjWeights, REL, 'HJ weights'); // R eigen(S^1/2 M'W M S^1/2)
      expectClose(hj.p, c.hjPImhof, REL_P, 'HJ p vs R integrate() of Imhof', 1e-3); // R integrate(), Imhof (1961)
      const simSe = Math.sqrt((c.hjPSim! * (1 - c.hjPSim!)) / c.hjSimDraws!);
      expectClose(hj.p, c.hjPSim!, (4 * simSe + 1e-12) / Math.max(c.hjPSim!, 1e-12), 'HJ p vs seeded simulation (4 s.e.)'); // R seeded simulation, 1e6 draws
      expectClose(result.sdf!.mean, c.sdfMean, REL, 'E[m]');
      expectClose(result.sdf!.std, c.sdfStd, REL, 'sigma(m)');
    });
});
