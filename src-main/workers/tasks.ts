/**
 * What each task kind does inside a worker thread: the domain core's functions with the
 * estimator plugged in, progress and the cancel flag passed through.
 */
import { fit } from '../../shared/estimation/fit.js';
import { gmmHjEstimate, gmmHjSquared } from '../../shared/estimation/gmmFit.js';
import { DeflatorError } from '../../shared/errors.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { FitSpec } from '../../shared/spec.js';
import { backtest, backtestWindows, type CancelToken } from '../../shared/backtest/index.js';
import { compareModels, hjBootstrapDraws, modelOutcome } from '../../shared/compare/index.js';
import { driftAnalysis } from '../../shared/values/drift.js';
import { presentValueOf } from '../../shared/values/presentValue.js';
import type { TaskKind, TaskMap } from './protocol.js';

export interface TaskContext {
  progress: (done: number, total: number, stage?: string) => void;
  signal: CancelToken;
}

/**
 * HJ^2 of a model without a closed form (the consumption model): the estimator's own
 * HJ-weighted first stage (W = E[RR']^{-1}), without the rest of a fit; on a bootstrap
 * replication started from the full-sample estimate (`warm`), the estimator's scan only
 * where that fails or stops in a local minimum.
 */
export function fittedHjSquared(spec: FitSpec, panel: ReturnsPanel, warm?: Float64Array | null): number {
  if (spec.estimator.method !== 'gmm') throw new DeflatorError('SPEC_INVALID', `the HJ bootstrap needs a GMM model; ${spec.label ?? spec.model.kind} uses ${spec.estimator.method}`, 'compare HJ distances of GMM models only');
  return gmmHjSquared(spec, panel, warm);
}

/** The full-sample HJ-weighted estimate: the warm start of the bootstrap replications. */
export function fittedHjStart(spec: FitSpec, panel: ReturnsPanel): Float64Array {
  if (spec.estimator.method !== 'gmm') throw new DeflatorError('SPEC_INVALID', `the HJ bootstrap needs a GMM model; ${spec.label ?? spec.model.kind} uses ${spec.estimator.method}`, 'compare HJ distances of GMM models only');
  return gmmHjEstimate(spec, panel);
}

type Handlers = { [K in TaskKind]: (payload: TaskMap[K]['payload'], ctx: TaskContext) => TaskMap[K]['result'] };

export const handlers: Handlers = {
  fit: (p) => fit(p.spec, p.panel),
  backtest: (p, ctx) => backtest(p.spec, p.panel, { fit, engine: p.engine, onProgress: ctx.progress, signal: ctx.signal }),
  backtestWindows: (p, ctx) => backtestWindows(p.spec, p.panel, { fit, engine: p.engine, range: p.range, onProgress: ctx.progress, signal: ctx.signal }),
  compare: (p, ctx) =>
    compareModels(p.spec, p.fits, p.panels, {
      fit,
      backtest: (s, panel) => backtest(s, panel, { fit, signal: ctx.signal }),
      hjSquared: fittedHjSquared,
      hjStart: fittedHjStart,
      onStage: (stage, done, total) => ctx.progress(done, total, stage),
      signal: ctx.signal,
    }),
  batchTask: (p, ctx) => modelOutcome(p.spec, p.panel, p.backtest, { fit, backtest: (s, panel) => backtest(s, panel, { fit, signal: ctx.signal }) }),
  hjBootstrap: (p, ctx) => hjBootstrapDraws(p, { hjSquared: fittedHjSquared, hjStart: fittedHjStart, onProgress: ctx.progress, signal: ctx.signal }),
  presentValue: (p) => presentValueOf(p.spec, p.assets, p.values),
  drift: (p) => driftAnalysis(p.spec, p.panel),
};
