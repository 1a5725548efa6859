/**
 * GMM fit of a discount-factor model to a returns panel: builds the moment model from
 * the spec, runs the configured stage (gmm.ts), and assembles the FitResult with
 * parameters, pricing errors, the pricing-error test and Hansen's J, the
 * Hansen-Jagannathan distance, cross-sectional fit, the fitted discount factor and the
 * volatility bound (METHODS 2, 3, 5, 7).
 */
import { PERIODS_PER_YEAR } from '../data.js';
import { DeflatorError } from '../errors.js';
import type { Conditioning, ReturnsPanel } from '../panel.js';
import type { FitResult, ParamEstimate, PricingErrorRow, ResultWarning, TestResult } from '../results.js';
import { BOUND_TOLERANCE, fewPeriodsWarning, nearSingularWarning, warning } from '../warnings.js';
import type { FitSpec } from '../spec.js';
import { chiSquareSf, normalTwoSidedP } from '../stats/distributions.js';
import { ConsumptionModel } from './consumptionSdf.js';
import { crossSectionFit } from './crossSectionFit.js';
import { assertAllFinite } from './finiteGuard.js';
import { firstStage, gmmEstimate, type GmmEstimate, type GmmOptions } from './gmm.js';
import { standardErrors } from './gmmInference.js';
import { hjDistance } from './hjDistance.js';
import { checkInstruments, conditionPanel, instrumentHeader, instrumentWarnings, modelFactorNames, payoffPrices } from './instruments.js';
import { assertFiniteSeries, checkAssets, checkFactors, checkIdentification, checkSampleLength } from './inputChecks.js';
import { DemeanedLinearModel, GrossLinearModel, RawLinearModel } from './linearSdf.js';
import { lagsChoice } from './longRunCovariance.js';
import { discountedPaths } from '../values/discountedValue.js';
import { mean, type MomentModel } from './momentModel.js';
import { factorCovariance, riskPremia, RISK_PREMIA_NOTE } from './riskPremia.js';
import { boundAtModel, sdfMoments, volatilityBound } from './volatilityBound.js';
import { hjWeighting, type Weighting } from './weighting.js';
import type { FixedWeightSolution } from './gaussNewton.js';

export interface PreparedGmm {
  model: MomentModel;
  assets: string[];
  factorNames: string[];
  factors: Float64Array[];
  lags: number;
  lagsRule: string;
  options: GmmOptions;
  notes: string[];
  /** Notes on the sample itself (alignment, added test assets) for the header. */
  sampleNotes: string[];
  /** With instruments: what each test asset (payoff) and factor of the model is (METHODS 9). */
  conditioning?: Conditioning;
}

/** Default label of a fit, e.g. "linear(mkt,size)". */
export function defaultFitLabel(spec: FitSpec): string {
  const m = spec.model;
  return m.kind === 'consumption' ? `consumption(${m.consumption ?? ''})` : `${m.kind}(${m.factors.join(',')})`;
}

/** Spec + panel -> the moment model, with every input check (METHODS 7). */
export function prepareGmm(spec: FitSpec, rawPanel: ReturnsPanel): PreparedGmm {
  const conditioned = rawPanel.conditioning !== undefined;
  const panel = conditionPanel(spec, rawPanel);
  // A window of an already conditioned panel: its instruments must still move independently.
  if (conditioned) checkInstruments(panel);
  const notes: string[] = [];
  const sampleNotes: string[] = panel.sampleNotes.map((s) => `${s.subject}: ${s.reason}`);
  const T = panel.periods.length;
  if (panel.returnKind !== spec.returns)
    throw new DeflatorError('INPUT_INVALID', `the panel holds ${panel.returnKind} returns but the spec asks for ${spec.returns} returns`, 'rebuild the panel from the same spec');
  if (T === 0 || panel.assets.length === 0) throw new DeflatorError('DATA_MISSING', 'the panel has no periods or no test assets after alignment', 'check the sample window and the asset list');
  const assets = [...panel.assets];
  const returns = [...panel.returns];
  returns.forEach((r, i) => {
    if (r.length !== T) throw new DeflatorError('INPUT_INVALID', `test asset "${assets[i]}" has ${r.length} periods, the panel ${T}`, 'the panel must be balanced');
    assertFiniteSeries(`test asset "${assets[i]}"`, r, panel.periods);
  });
  if (spec.includeRiskfree) {
    const name = spec.riskfree ?? 'riskfree';
    if (!panel.riskfreeGross) throw new DeflatorError('DATA_MISSING', `includeRiskfree is set but the panel has no risk-free series "${name}"`, 'name the risk-free series in "riskfree"');
    if (!assets.includes(name)) {
      assertFiniteSeries(`risk-free series "${name}"`, panel.riskfreeGross, panel.periods);
      assets.push(name);
      returns.push(panel.riskfreeGross);
      sampleNotes.push(`The risk-free asset "${name}" is one of the test assets.`);
    } else if (panel.conditioning && !conditioned && !rawPanel.assets.includes(name)) {
      // conditionPanel put it among the test assets (before scaling them).
      sampleNotes.push(`The risk-free asset "${name}" is one of the test assets.`);
    }
  }
  const kind = spec.model.kind;
  const factorNames: string[] = [];
  const factors: Float64Array[] = [];
  if (kind !== 'consumption') {
    for (const name of modelFactorNames(spec, panel)) {
      const f = panel.factors.find((x) => x.name === name);
      if (!f) throw new DeflatorError('DATA_MISSING', `factor "${name}" is not in the panel (it has: ${panel.factors.map((x) => x.name).join(', ') || 'none'})`, 'import the factor series or fix model.factors');
      if (f.values.length !== T) throw new DeflatorError('INPUT_INVALID', `factor "${name}" has ${f.values.length} periods, the panel ${T}`, 'the panel must be balanced');
      assertFiniteSeries(`factor "${name}"`, f.values, panel.periods);
      factorNames.push(name);
      factors.push(f.values);
    }
    checkFactors(factorNames.map((name, k) => ({ name, values: factors[k] })));
  }
  checkAssets(assets, returns, spec.returns);
  const named = factorNames.map((name, k) => ({ name, values: factors[k] }));
  let model: MomentModel;
  if (kind === 'linear') model = new DemeanedLinearModel(returns, assets, named);
  else if (kind === 'linear-raw') model = new RawLinearModel(returns, assets, named);
  else if (kind === 'linear-gross') model = new GrossLinearModel(returns, assets, named, payoffPrices(panel));
  else {
    const growth = panel.consumptionGrowth;
    const cname = spec.model.consumption ?? 'consumption';
    if (!growth) throw new DeflatorError('DATA_MISSING', `the panel has no consumption growth for "${cname}"`, 'import the consumption series and name it in model.consumption');
    if (growth.length !== T) throw new DeflatorError('INPUT_INVALID', `consumption growth has ${growth.length} periods, the panel ${T}`, 'the panel must be balanced');
    assertFiniteSeries(`consumption growth "${cname}"`, growth, panel.periods);
    model = new ConsumptionModel(returns, assets, growth, spec.returns, spec.model.delta ?? 1, payoffPrices(panel));
    factorNames.push(cname);
    factors.push(growth);
    if (spec.returns === 'excess') notes.push(`delta is fixed at ${spec.model.delta ?? 1} (excess returns do not identify it).`);
  }
  const e = spec.estimator;
  const { lags, rule: lagsRule } = lagsChoice(e.lags, T);
  checkIdentification(model.q, model.p, model.nAssets, `the ${kind} model`);
  checkSampleLength(T, model.q, lags);
  return {
    model,
    assets,
    factorNames,
    factors,
    lags,
    lagsRule,
    options: { stage: e.stage, firstWeight: e.weight, lags, centered: e.centered, inferenceS: e.inferenceS, maxIterations: e.maxIterations },
    notes,
    sampleNotes,
    ...(panel.conditioning ? { conditioning: panel.conditioning } : {}),
  };
}

/**
 * HJ^2 = min g_A'(E[RR'])^{-1} g_A of the spec's model on the panel, without the rest of
 * the fit (no inference, no p-value): the quantity a bootstrap of HJ distances needs per
 * draw. Equals `fit(spec, panel).hj.distance ** 2`.
 */
export function gmmHjSquared(spec: FitSpec, panel: ReturnsPanel, warm?: Float64Array | null): number {
  const { model } = prepareGmm(spec, panel);
  const W = hjWeighting(model.returns, model.momentNames.slice(0, model.nAssets));
  const label = 'Hansen-Jagannathan distance';
  if (warm && warm.length === model.p) {
    const sol = warmFirstStage(model, W, label, spec.estimator.maxIterations, warm);
    if (sol) return Math.max(0, sol.objective);
  }
  return Math.max(0, firstStage(model, W, label, spec.estimator.maxIterations).objective);
}

/** The HJ-weighted first-stage estimate theta on the panel (the warm start gmmHjSquared takes on resampled panels). */
export function gmmHjEstimate(spec: FitSpec, panel: ReturnsPanel): Float64Array {
  const { model } = prepareGmm(spec, panel);
  const W = hjWeighting(model.returns, model.momentNames.slice(0, model.nAssets));
  return firstStage(model, W, 'Hansen-Jagannathan distance', spec.estimator.maxIterations).theta;
}

/**
 * The first stage started from `warm` (a bootstrap replication: the full-sample estimate),
 * or null when that does not serve and the model's own start (the scan) must be used: the
 * solver failed from there, or the local-minimum guard found a guard point
 * (model.guardPoints) with a lower objective than the solution, so the solution is a local
 * minimum the scan would not have chosen.
 */
function warmFirstStage(model: MomentModel, W: Weighting, label: string, maxIterations: number, warm: Float64Array): FixedWeightSolution | null {
  let sol: FixedWeightSolution;
  try {
    sol = firstStage(model, W, label, maxIterations, warm);
  } catch (e) {
    if (e instanceof DeflatorError && e.code !== 'CANCELLED') return null;
    throw e;
  }
  const N = model.nAssets;
  const guard = model.guardMoments?.() ?? (model.guardPoints?.() ?? []).map((theta) => ({ theta, g: model.meanMoments(theta).subarray(0, N) }));
  for (const { g } of guard) {
    const Wg = W.applyVec(g);
    let q = 0;
    for (let i = 0; i < N; i++) q += g[i] * Wg[i];
    if (q < sol.objective * (1 - 1e-9)) return null;
  }
  return sol;
}

function param(name: string, estimate: number, se: number, note?: string): ParamEstimate {
  const t = se > 0 ? estimate / se : 0;
  const out: ParamEstimate = { name, estimate, se, t, p: se > 0 ? normalTwoSidedP(t) : 1 };
  if (note) out.note = note;
  return out;
}

export interface GmmFitDetail {
  result: FitResult;
  estimate: GmmEstimate;
  prepared: PreparedGmm;
}

/** The full GMM fit; `gmmFitDetailed` also returns the internal estimate. */
export function gmmFit(spec: FitSpec, panel: ReturnsPanel): FitResult {
  return gmmFitDetailed(spec, panel).result;
}

export function gmmFitDetailed(spec: FitSpec, panel: ReturnsPanel): GmmFitDetail {
  const prep = prepareGmm(spec, panel);
  const { model, assets, lags } = prep;
  const T = model.T;
  const N = model.nAssets;
  const ppy = PERIODS_PER_YEAR[panel.frequency];
  const est = gmmEstimate(model, prep.options);
  const cond = prep.conditioning;
  const notes = [...prep.notes, ...est.notes];

  const seTheta = standardErrors(est.covTheta, model.paramNames, 'parameter estimates');
  const params: ParamEstimate[] = model.paramNames.map((n, k) => param(n, est.theta[k], seTheta[k]));
  if (model instanceof DemeanedLinearModel) {
    const K = prep.factors.length;
    const sigmaF = factorCovariance(prep.factors);
    const covB = { rows: K, cols: K, data: new Float64Array(K * K) };
    for (let i = 0; i < K; i++) for (let j = 0; j < K; j++) covB.data[i * K + j] = est.covTheta.data[i * model.p + j];
    const rp = riskPremia(sigmaF, est.theta.subarray(0, K), covB);
    const seL = standardErrors(rp.cov, prep.factorNames.map((f) => `lambda.${f}`), 'risk premia');
    prep.factorNames.forEach((f, k) => params.push(param(`lambda.${f}`, rp.lambda[k], seL[k], RISK_PREMIA_NOTE)));
    notes.push(`Risk premia lambda = Sigma_f b; standard errors by the ${RISK_PREMIA_NOTE}.`);
  }

  const seG = standardErrors(est.covG, model.momentNames, 'pricing errors');
  const m = model.sdf(est.theta);
  const sdfStats = sdfMoments(m);
  const meanReturns = model.returns.map((r) => mean(r));
  const pricingErrors: PricingErrorRow[] = [];
  const alpha = new Float64Array(N);
  const payoffs = prep.conditioning?.payoffs;
  for (let i = 0; i < N; i++) {
    const a = est.g[i];
    alpha[i] = a;
    const se = seG[i];
    pricingErrors.push({
      asset: payoffs ? payoffs[i].base : assets[i],
      ...(payoffs ? { instrument: payoffs[i].instrument } : {}),
      alpha: a,
      se,
      t: se > 0 ? a / se : 0,
      alphaAnnual: a * ppy,
      seAnnual: se * ppy,
      meanReturn: meanReturns[i],
      predicted: meanReturns[i] - a / sdfStats.mean,
    });
  }

  const df = est.df;
  const peTest: TestResult = {
    name: 'pricing errors chi-square',
    stat: est.pricingErrorStat,
    df,
    p: chiSquareSf(est.pricingErrorStat, df),
    note: "g' Var(g)^+ g with the Moore-Penrose inverse; chi2(moments - parameters)",
  };
  const tests: TestResult[] = [peTest];
  if (est.stage !== 'first')
    tests.push({
      name: 'Hansen J',
      stat: est.J,
      df,
      p: chiSquareSf(est.J, df),
      note: est.efficient ? "T g'S^-1 g at the efficient stage" : "T g'S^-1 g with S re-estimated at the final estimate",
    });

  const hj = hjDistance(model, lags, prep.options.centered);
  const fit = crossSectionFit(alpha, meanReturns, ppy);
  if (!fit.r2Defined) notes.push('R^2_cs is not defined (all test assets have the same mean return); reported as 0.');
  const warnings: ResultWarning[] = [];
  const few = fewPeriodsWarning(T, model.q);
  if (few) warnings.push(few);
  const nearSingular = nearSingularWarning(est.sPivot.share, model.momentNames[est.sPivot.index] ?? `moment ${est.sPivot.index + 1}`);
  if (nearSingular) warnings.push(nearSingular);
  if (est.warnings) warnings.push(...est.warnings);
  if (model instanceof ConsumptionModel) warnings.push(...model.scanWarnings(est.theta[model.p - 1]));
  warnings.push(...instrumentWarnings(prep.conditioning, panel.instruments));
  let bound: FitResult['bound'];
  try {
    const prices = model.prices ? Float64Array.from(model.prices, (z) => (z ? mean(z) : 1)) : undefined;
    const b = volatilityBound({ returns: model.returns, assetNames: assets, kind: spec.returns, sdf: m, ...(prices ? { prices } : {}) });
    bound = { curve: b.curve, maxSharpe: b.maxSharpe, model: b.model };
    const at = boundAtModel(b, spec.returns);
    if (at !== undefined && Number.isFinite(at)) {
      bound.atModel = at;
      if (b.model && b.model.sigma < at * (1 - BOUND_TOLERANCE))
        warnings.push(
          warning(
            'BELOW_VOLATILITY_BOUND',
            `the fitted discount factor has sigma(m) = ${b.model.sigma.toPrecision(4)} at E[m] = ${b.model.mean.toPrecision(6)}, below the Hansen-Jagannathan bound ${at.toPrecision(4)} there: no discount factor this smooth prices the test assets, so the model's pricing errors cannot all be small`,
          ),
        );
    }
    if (b.riskless.length) notes.push(`Volatility bound: ${b.riskless.join(', ')} left out of the bound (riskless over the sample).`);
  } catch (e) {
    if (!(e instanceof DeflatorError)) throw e;
    notes.push(`Volatility bound not drawn: ${e.message}.`);
  }
  notes.push('Pricing errors are the sample moments g_T at the estimate, per period; annualised figures multiply by the periods per year.');

  const result: FitResult = {
    kind: 'fit',
    label: spec.label ?? defaultFitLabel(spec),
    sample: {
      start: panel.periods[0],
      end: panel.periods[T - 1],
      T,
      N: cond ? cond.baseAssets.length : N,
      K: cond && spec.model.kind !== 'consumption' ? cond.baseFactors.length : prep.factorNames.length,
      lags,
      frequency: panel.frequency,
      periodsPerYear: ppy,
      returns: spec.returns,
      method: 'gmm',
      model: spec.model.kind,
      stage: est.stage,
      weighting: est.weightingText,
      centered: prep.options.centered,
      lagsRule: prep.lagsRule,
      assets: cond ? [...cond.baseAssets] : assets,
      factors: cond && spec.model.kind !== 'consumption' ? [...cond.baseFactors] : prep.factorNames,
      notes: prep.sampleNotes,
      ...(cond ? instrumentHeader(cond) : {}),
    },
    params,
    pricingErrors,
    test: peTest,
    tests,
    hj: { distance: hj.distance, p: hj.p, method: hj.method },
    fit: { mape: fit.mape, rmse: fit.rmse, r2: fit.r2, mapeAnnual: fit.mapeAnnual, rmseAnnual: fit.rmseAnnual },
    sdf: { periods: [...panel.periods], values: Array.from(m), mean: sdfStats.mean, std: sdfStats.sigma },
    bound,
    convergence: { iterations: est.iterations, converged: est.converged, criterion: est.criterion },
    notes,
    discounted: discountedPaths({
      form: spec.returns === 'excess' ? 'gains' : 'value',
      periods: panel.periods,
      assets,
      returns: model.returns,
      sdf: m,
      priority: pricingErrors.map((e) => e.t),
    }),
    warnings,
  };
  assertAllFinite(result);
  return { result, estimate: est, prepared: prep };
}
