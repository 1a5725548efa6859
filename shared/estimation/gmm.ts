/**
 * GMM estimation of a discount-factor model in stages (Hansen 1982; Cochrane, Asset
 * Pricing, rev. ed. 2005, ch. 10-11; METHODS 3):
 *
 * - first: minimise g'Wg with W = I or the Hansen-Jagannathan weight (E[RR'])^{-1} on the
 *   asset moments; a model's pinned moments (the factor means of the demeaned linear
 *   model) are held at zero exactly (mu = fbar). Inference: the sandwich with S from the
 *   first-stage u_t.
 * - second (default): W = S1^{-1} on all moments, S1 from the first-stage u_t; inference
 *   with that S1: Var(theta) = (1/T)(d'S1^{-1}d)^{-1}, J = T g'S1^{-1}g. Optionally S is
 *   re-estimated at the final estimate for inference (inferenceS: 'final').
 * - iterated: repeat the second stage, W = S(theta_k)^{-1}, until
 *   max|theta_k - theta_{k-1}| < 1e-10 (cap maxIterations); inference with S at the
 *   fixed point.
 * - cue: minimise g(theta)'S(theta)^{-1}g(theta) (see cue.ts), started at the second
 *   stage; inference with S at the estimate.
 */
import type { Mat } from '../linalg/matrix.js';
import type { ResultWarning } from '../results.js';
import { warning } from '../warnings.js';
import { solveCue } from './cue.js';
import { solveFixedWeight, STEP_TOL, type FixedWeightSolution } from './gaussNewton.js';
import { gmmInference, type GmmInference, type WeightingForInference } from './gmmInference.js';
import { longRunCovariance } from './longRunCovariance.js';
import type { MomentModel } from './momentModel.js';
import { hjWeighting, identityWeighting, inverseWeighting, type Weighting } from './weighting.js';

export type GmmStage = 'first' | 'second' | 'iterated' | 'cue';

export interface GmmOptions {
  stage: GmmStage;
  /** First-stage weight on the asset moments. */
  firstWeight: 'identity' | 'hj';
  lags: number;
  centered: boolean;
  /** S for inference at the second stage: from the weighting step (default) or at the final estimate. */
  inferenceS: 'weighting' | 'final';
  /** Cap on iterated-GMM weight updates and on each solver's iterations. */
  maxIterations: number;
}

export interface GmmEstimate extends GmmInference {
  stage: GmmStage;
  theta: Float64Array;
  /** g_T at theta. */
  g: Float64Array;
  /** d at theta. */
  d: Mat;
  /** The S used for inference. */
  S: Mat;
  /** g'Wg at theta with the stage's W. */
  objective: number;
  /** True when W = S^{-1} with the same S as inference (J is Hansen's test). */
  efficient: boolean;
  /** The first-stage estimate (every stage starts there). */
  firstStage: Float64Array;
  iterations: number;
  converged: boolean;
  criterion: string;
  /** How W and S were chosen, for the result header. */
  weightingText: string;
  notes: string[];
  /** Reasons not to trust the estimate (ITERATION_CAP); absent when there are none. */
  warnings?: ResultWarning[];
}

/** Long-run covariance of the model's moments at theta. */
export function momentCovariance(model: MomentModel, theta: Float64Array, lags: number, centered: boolean): Mat {
  return longRunCovariance(model.moments(theta), lags, centered);
}

export function sWeighting(model: MomentModel, S: Mat, what: string): Weighting {
  return inverseWeighting(S, {
    name: `the long-run covariance S of the moments (${what})`,
    labels: model.momentNames,
    hint: 'two test assets may be (almost) the same portfolio, a series may be constant, or the sample is too short for this many moments; drop assets or lengthen the sample',
  });
}

/**
 * The first-stage estimate under W1 on the asset moments (pinned block held exactly), from
 * the model's own start (a scan where it has one), or from `from` (e.g. the full-sample
 * estimate, for a bootstrap replication).
 */
export function firstStage(model: MomentModel, W1: Weighting, label: string, maxIterations: number, from?: Float64Array): FixedWeightSolution {
  const start = from ? from.slice() : model.start();
  const assetMoments = Array.from({ length: model.nAssets }, (_, i) => i);
  if (model.pinned) {
    const pin = model.pinned;
    const values = pin.solve();
    pin.params.forEach((k, j) => (start[k] = values[j]));
    const free = [...Array(model.p).keys()].filter((k) => !pin.params.includes(k));
    const sol = solveFixedWeight({ model, weight: W1, moments: assetMoments, free, label, maxIterations: Math.max(maxIterations, 200) }, start);
    return sol;
  }
  return solveFixedWeight({ model, weight: W1, moments: model.q === model.nAssets ? undefined : assetMoments, label, maxIterations: Math.max(maxIterations, 200) }, start);
}

/** The fixed-W stopping rule as met, e.g. "Newton step below 1e-14 (relative)". */
function stepCriterion(sol: FixedWeightSolution): string {
  return sol.atFloor
    ? `${sol.finalStep} step ${sol.lastStep.toExponential(1)} (relative), below 1e-10 and no longer shrinking (rounding floor)`
    : `${sol.finalStep} step below ${STEP_TOL.toExponential(0)} (relative)`;
}

export function firstStageWeight(model: MomentModel, kind: 'identity' | 'hj', assetNames: readonly string[]): Weighting {
  return kind === 'hj' ? hjWeighting(model.returns, assetNames) : identityWeighting(model.nAssets);
}

export function gmmEstimate(model: MomentModel, opts: GmmOptions): GmmEstimate {
  const assetNames = model.momentNames.slice(0, model.nAssets);
  const notes: string[] = [];
  const W1 = firstStageWeight(model, opts.firstWeight, assetNames);
  const w1Text = opts.firstWeight === 'hj' ? "W = (E[RR'])^-1 (Hansen-Jagannathan)" : 'W = I';
  const pinText = model.pinned ? ', factor means held at the sample means' : '';
  const first = firstStage(model, W1, 'first-stage GMM', opts.maxIterations);
  const theta1 = first.theta;
  const S1 = momentCovariance(model, theta1, opts.lags, opts.centered);

  if (opts.stage === 'first') {
    const g = model.meanMoments(theta1);
    const d = model.jacobian(theta1);
    const inf = gmmInference(model, g, d, S1, model.pinned ? { kind: 'pinned', weight: W1 } : { kind: 'fixed', weight: W1 });
    return {
      ...inf,
      stage: 'first',
      theta: theta1,
      g,
      d,
      S: S1,
      objective: first.objective,
      efficient: false,
      firstStage: theta1,
      iterations: first.iterations,
      converged: true,
      criterion: stepCriterion(first),
      weightingText: `first stage, ${w1Text} on the asset moments${pinText}; inference with S from the first-stage moments`,
      notes,
    };
  }

  if (opts.stage === 'second' || opts.stage === 'cue') {
    const W2 = sWeighting(model, S1, 'first-stage estimate');
    const second = solveFixedWeight({ model, weight: W2, label: 'second-stage GMM', maxIterations: Math.max(opts.maxIterations, 200) }, theta1);
    if (opts.stage === 'second') {
      const g = model.meanMoments(second.theta);
      const d = model.jacobian(second.theta);
      let inf: GmmInference;
      let S = S1;
      let efficient = true;
      let sText = 'inference with the same S';
      if (opts.inferenceS === 'final') {
        S = momentCovariance(model, second.theta, opts.lags, opts.centered);
        const w: WeightingForInference = { kind: 'fixed', weight: W2 };
        inf = gmmInference(model, g, d, S, w);
        efficient = false;
        sText = 'inference with S re-estimated at the second-stage estimate (sandwich form)';
        notes.push('Standard errors and tests use S re-estimated at the final estimate; J is T g\'S^-1 g with that S.');
      } else inf = gmmInference(model, g, d, S1, { kind: 'efficient' }, W2.inverseOf?.chol); // S1 is already factored for W2
      return {
        ...inf,
        stage: 'second',
        theta: second.theta,
        g,
        d,
        S,
        objective: second.objective,
        efficient,
        firstStage: theta1,
        iterations: second.iterations,
        converged: true,
        criterion: stepCriterion(second),
        weightingText: `second stage, W = S^-1 on all ${model.q} moments with S from the first stage (${w1Text}${pinText}); ${sText}`,
        notes,
      };
    }
    const cue = solveCue(model, second.theta, opts.lags, opts.centered, Math.max(5 * opts.maxIterations, 500));
    const S = momentCovariance(model, cue.theta, opts.lags, opts.centered);
    const g = model.meanMoments(cue.theta);
    const d = model.jacobian(cue.theta);
    // At the CUE a g = d'S^-1 g is not zero (its first-order condition carries dS/dtheta), so
    // the pricing-error statistic takes the Moore-Penrose inverse on the moments as they are.
    const inf = gmmInference(model, g, d, S, { kind: 'efficient' }, undefined, { equilibrate: false });
    return {
      ...inf,
      stage: 'cue',
      theta: cue.theta,
      g,
      d,
      S,
      objective: cue.Q,
      efficient: true,
      firstStage: theta1,
      iterations: cue.iterations,
      converged: true,
      criterion: 'BFGS step below 1e-12 (relative)',
      weightingText: `continuously updated, W = S(theta)^-1 on all ${model.q} moments, started at the second stage; inference with S at the estimate`,
      notes,
    };
  }

  // Iterated.
  const capWarnings: ResultWarning[] = [];
  let theta = theta1;
  let S = S1;
  let change = Infinity;
  let k = 0;
  let objective = 0;
  while (k < opts.maxIterations) {
    k++;
    const W = sWeighting(model, S, `iteration ${k}`);
    const sol = solveFixedWeight({ model, weight: W, label: `iterated GMM, iteration ${k}`, maxIterations: 200 }, theta);
    change = 0;
    for (let i = 0; i < model.p; i++) change = Math.max(change, Math.abs(sol.theta[i] - theta[i]));
    theta = sol.theta;
    objective = sol.objective;
    S = momentCovariance(model, theta, opts.lags, opts.centered);
    if (change < 1e-10) break;
  }
  // At the cap the last iterate is reported, not converged, with an ITERATION_CAP warning:
  // it is a valid GMM estimate with the weight of the previous iteration, not the fixed point.
  const converged = change < 1e-10;
  if (!converged)
    capWarnings.push(
      warning(
        'ITERATION_CAP',
        `iterated GMM stopped at the cap of ${k} weight updates (estimator.maxIterations) with the estimate still moving by ${change.toExponential(2)} (criterion max|theta_k - theta_k-1| < 1e-10): the numbers are those of the last update, not of the fixed point; raise estimator.maxIterations or use the second stage`,
      ),
    );
  const g = model.meanMoments(theta);
  const d = model.jacobian(theta);
  const inf = gmmInference(model, g, d, S, { kind: 'efficient' });
  return {
    ...inf,
    stage: 'iterated',
    theta,
    g,
    d,
    S,
    objective,
    efficient: true,
    firstStage: theta1,
    iterations: k,
    converged,
    criterion: 'max|theta_k - theta_(k-1)| < 1e-10',
    warnings: capWarnings,
    weightingText: `iterated, W = S^-1 on all ${model.q} moments updated to its fixed point (start: ${w1Text}${pinText}); inference with S at the fixed point`,
    notes,
  };
}
