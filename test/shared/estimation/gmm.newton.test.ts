/**
 * The fixed-weight solver on a large, noisy cross-section, where the residual g is far
 * from zero (J of several hundred) and Gauss-Newton converges only linearly: 100 test
 * assets, T = 240 (seeded, the same design as the browser benchmark's database). Checked
 * against the definition of the estimator rather than a stored number: at a minimiser of
 * Q(theta) = g'Wg the first-order condition d'Wg = 0 holds (Hansen 1982, eq. 2.4 of the
 * minimisation; Cochrane 2005, 10.1), and Q is no smaller at any nearby point. Each check
 * is also shown to fail at a point that is not the minimum (the first-stage estimate), so
 * it cannot pass by accident. The continuously updated estimator, started at the second
 * stage, is checked the same way on its own objective. The models' second derivatives (`momentHessian`, which
 * gives the Newton steps) are checked against central differences of their Jacobians.
 */
import { describe, expect, it } from 'vitest';
import { ConsumptionModel } from '../../../shared/estimation/consumptionSdf.js';
import { cueEvaluate } from '../../../shared/estimation/cue.js';
import { momentCovariance, sWeighting } from '../../../shared/estimation/gmm.js';
import { gmmFitDetailed } from '../../../shared/estimation/gmmFit.js';
import { objectiveAt, solveFixedWeight } from '../../../shared/estimation/gaussNewton.js';
import { DemeanedLinearModel } from '../../../shared/estimation/linearSdf.js';
import type { MomentModel } from '../../../shared/estimation/momentModel.js';
import type { Weighting } from '../../../shared/estimation/weighting.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { monthEnds } from './helpers.js';
import { mulberry32 } from '../../../shared/random.js';

const rng = mulberry32;

/** Two factors and N excess returns with betas spread around 1 and 0, noise 5% a month. */
function noisyPanel(N: number, T: number, seed: number): ReturnsPanel {
  const u = rng(seed);
  const normal = () => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());
  const f1 = Float64Array.from({ length: T }, () => 0.005 + 0.04 * normal());
  const f2 = Float64Array.from({ length: T }, () => 0.002 + 0.03 * normal());
  const returns: Float64Array[] = [];
  for (let i = 0; i < N; i++) {
    const b1 = 0.5 + u();
    const b2 = -0.5 + u();
    returns.push(Float64Array.from({ length: T }, (_, t) => b1 * f1[t] + b2 * f2[t] + 0.05 * normal()));
  }
  return {
    frequency: 'monthly',
    periods: monthEnds(T),
    assets: returns.map((_, i) => `A${String(i + 1).padStart(3, '0')}`),
    returnKind: 'excess',
    returns,
    factors: [
      { name: 'f1', values: f1 },
      { name: 'f2', values: f2 },
    ],
    riskfreeGross: new Float64Array(T).fill(1.002),
    sampleNotes: [],
  };
}

/**
 * max_k |(d'Wg)_k| / sum_i |d_ik| |(Wg)_i|: the first-order condition relative to the size
 * of the terms that cancel in it (0 at a stationary point up to rounding, O(1) elsewhere).
 */
function focResidual(model: MomentModel, W: Weighting, theta: Float64Array): number {
  const g = model.meanMoments(theta);
  const d = model.jacobian(theta);
  const Wg = W.applyVec(g);
  let worst = 0;
  for (let k = 0; k < model.p; k++) {
    let s = 0;
    let scale = 0;
    for (let i = 0; i < model.q; i++) {
      const x = d.data[i * model.p + k] * Wg[i];
      s += x;
      scale += Math.abs(x);
    }
    worst = Math.max(worst, Math.abs(s) / scale);
  }
  return worst;
}

/** The smallest Q(theta + h) - Q(theta) over +-h along each parameter and 16 seeded random directions. */
function smallestRise(model: MomentModel, W: Weighting, theta: Float64Array, rel: number): number {
  const Q0 = objectiveAt({ model, weight: W, label: 'check' }, theta);
  const r = rng(7);
  const dirs: Float64Array[] = [];
  for (let k = 0; k < model.p; k++) {
    const e = new Float64Array(model.p);
    e[k] = 1;
    dirs.push(e, Float64Array.from(e, (x) => -x));
  }
  for (let j = 0; j < 16; j++) dirs.push(Float64Array.from({ length: model.p }, () => 2 * r() - 1));
  let smallest = Infinity;
  for (const e of dirs) {
    const x = Float64Array.from(theta, (t, k) => t + rel * (1 + Math.abs(t)) * e[k]);
    smallest = Math.min(smallest, objectiveAt({ model, weight: W, label: 'check' }, x) - Q0);
  }
  return smallest;
}

const spec = (stage: 'second' | 'iterated' | 'cue') =>
  parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { stage } });

describe('demeaned linear model, N = 100, T = 240, 5% monthly noise (Newton with the exact Hessian)', () => {
  const panel = noisyPanel(100, 240, 20260107);

  it('second stage converges; d\'Wg = 0 at the estimate and Q is smallest there', () => {
    const { estimate: est, prepared } = gmmFitDetailed(spec('second'), panel);
    const model = prepared.model;
    const W = sWeighting(model, momentCovariance(model, est.firstStage, prepared.lags, prepared.options.centered), 'first-stage estimate');
    // A large residual is what makes Gauss-Newton linear here (it took more than 200 steps).
    expect(est.J, 'J at the second stage').toBeGreaterThan(300);
    expect(est.iterations, 'Newton iterations to convergence (quadratic: a handful)').toBeLessThanOrEqual(10);
    expect(est.criterion).toBe('Newton step below 1e-14 (relative)');
    const foc = focResidual(model, W, est.theta);
    expect(foc, `relative |d'Wg| at the second-stage estimate: ${foc.toExponential(2)}`).toBeLessThan(1e-12);
    // The same check is far from zero at the first-stage estimate, which does not minimise this Q.
    expect(focResidual(model, W, est.firstStage), "relative |d'Wg| at the first-stage estimate").toBeGreaterThan(1e-3);
    for (const rel of [1e-3, 1e-5]) {
      const rise = smallestRise(model, W, est.theta, rel);
      expect(rise, `smallest Q(theta + h) - Q(theta), |h_k| = ${rel} (1 + |theta_k|)`).toBeGreaterThan(0);
    }
    expect(smallestRise(model, W, est.firstStage, 1e-3), 'some nearby point lowers Q at the first-stage estimate').toBeLessThan(0);
    // The minimiser does not depend on where the solver starts (here: the factor means and b = 0).
    const again = solveFixedWeight({ model, weight: W, label: 'restart' }, model.start());
    for (let k = 0; k < model.p; k++) expect(Math.abs(again.theta[k] - est.theta[k]), `${model.paramNames[k]} from another start`).toBeLessThan(1e-10 * (1 + Math.abs(est.theta[k])));
  });

  it('iterated GMM converges; its estimate is a fixed point and minimises g\'S(theta)^-1 g there', () => {
    const { estimate: est, prepared } = gmmFitDetailed(spec('iterated'), panel);
    const model = prepared.model;
    expect(est.converged).toBe(true);
    expect(est.iterations, 'weight updates').toBeLessThanOrEqual(prepared.options.maxIterations);
    // W from S at the fixed point: one more solve moves theta by less than the iteration's criterion.
    const W = sWeighting(model, est.S, 'fixed point');
    const sol = solveFixedWeight({ model, weight: W, label: 'one more update' }, est.theta);
    for (let k = 0; k < model.p; k++) expect(Math.abs(sol.theta[k] - est.theta[k]), `${model.paramNames[k]} after one more weight update`).toBeLessThan(1e-10);
    expect(sol.iterations, 'Newton iterations from the fixed point').toBeLessThanOrEqual(4);
    const foc = focResidual(model, W, sol.theta);
    expect(foc, `relative |d'Wg| after the update: ${foc.toExponential(2)}`).toBeLessThan(1e-12);
    expect(smallestRise(model, W, sol.theta, 1e-5), 'smallest rise of Q near the fixed point').toBeGreaterThan(0);
  });

  it('continuously updated GMM (started at the second stage) reaches dQ/dtheta = 0', () => {
    const { estimate: est, prepared } = gmmFitDetailed(spec('cue'), panel);
    const { model, lags } = prepared;
    const centered = prepared.options.centered;
    const grad = cueEvaluate(model, est.theta, lags, centered).grad;
    const grad1 = cueEvaluate(model, est.firstStage, lags, centered).grad;
    const size = (x: Float64Array) => Math.max(...Array.from(x, Math.abs));
    expect(size(grad) / size(grad1), `largest |dQ/dtheta| at the CUE estimate (${size(grad).toExponential(2)}) over that at the first stage (${size(grad1).toExponential(2)})`).toBeLessThan(1e-10);
    const Q = (theta: Float64Array) => cueEvaluate(model, theta, lags, centered, false).Q;
    for (let k = 0; k < model.p; k++)
      for (const sign of [1, -1]) {
        const x = est.theta.slice();
        x[k] += sign * 1e-4 * (1 + Math.abs(x[k]));
        expect(Q(x) - est.objective, `CUE objective moved from ${model.paramNames[k]} by ${sign > 0 ? '+' : '-'}1e-4 (1 + |theta|)`).toBeGreaterThan(0);
      }
  });
});

describe('second derivatives of the moments (momentHessian) against central differences of the Jacobian', () => {
  /** max |sum_a v_a d^2 g_a / dtheta_k dtheta_l - (v'd(theta + h e_l) - v'd(theta - h e_l))_k / 2h| relative to the largest entry. */
  function hessianError(model: MomentModel, theta: Float64Array, v: Float64Array): number {
    const { p, q } = model;
    const H = model.momentHessian?.(theta, v);
    expect(H, 'the model gives its second-order term').toBeDefined();
    let worst = 0;
    let scale = 0;
    for (let l = 0; l < p; l++) {
      const h = 1e-5 * (1 + Math.abs(theta[l]));
      const up = theta.slice();
      const dn = theta.slice();
      up[l] += h;
      dn[l] -= h;
      const du = model.jacobian(up);
      const dd = model.jacobian(dn);
      for (let k = 0; k < p; k++) {
        let s = 0;
        for (let a = 0; a < q; a++) s += v[a] * (du.data[a * p + k] - dd.data[a * p + k]);
        const fd = s / (2 * h);
        const exact = H!.data[k * p + l];
        worst = Math.max(worst, Math.abs(exact - fd));
        scale = Math.max(scale, Math.abs(exact));
      }
    }
    return worst / scale;
  }

  const r = rng(11);
  const normal = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  const T = 120;
  const growth = Float64Array.from({ length: T }, () => Math.exp(0.002 + 0.01 * normal()));
  const returns = Array.from({ length: 6 }, (_, i) => Float64Array.from({ length: T }, () => 1.005 + 0.001 * i + 0.05 * normal()));
  const names = returns.map((_, i) => `A${i + 1}`);
  const v = (q: number) => Float64Array.from({ length: q }, () => normal());

  it('demeaned linear model', () => {
    const panel = noisyPanel(8, T, 3);
    const model = new DemeanedLinearModel(panel.returns, panel.assets, panel.factors);
    const err = hessianError(model, Float64Array.of(2.5, -1.2, 0.006, 0.001), v(model.q));
    expect(err, 'relative error of the analytic second-order term').toBeLessThan(1e-7);
  });

  it('consumption model, gross returns (delta, gamma)', () => {
    const model = new ConsumptionModel(returns, names, growth, 'gross');
    const err = hessianError(model, Float64Array.of(0.98, 4), v(model.q));
    expect(err, 'relative error of the analytic second-order term').toBeLessThan(1e-7);
  });

  it('consumption model, excess returns (gamma, delta fixed)', () => {
    const model = new ConsumptionModel(
      returns.map((x) => Float64Array.from(x, (y) => y - 1.002)),
      names,
      growth,
      'excess',
    );
    const err = hessianError(model, Float64Array.of(7), v(model.q));
    expect(err, 'relative error of the analytic second-order term').toBeLessThan(1e-7);
  });
});
