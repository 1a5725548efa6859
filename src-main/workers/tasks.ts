/**
 * What each task kind does inside a worker thread: the domain core's functions with the
 * estimator plugged in, progress and the cancel flag passed through.
 */
import { fit } from '../../shared/estimation/fit.js';
import { gmmHjSquared } from '../../shared/estimation/gmmFit.js';
import { DeflatorError } from '../../shared/errors.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { FitSpec } from '../../shared/spec.js';
import { backtest, backtestWindows, type CancelToken } from '../../shared/backtest/index.js';
import { compareModels, hjBootstrapDraws } from '../../shared/compare/index.js';
import type { TaskKind, TaskMap } from './protocol.js';

export interface TaskContext {
  progress: (done: number, total: number, stage?: string) => void;
  signal: CancelToken;
}

/**
 * HJ^2 of a model without a closed form (the consumption model): the estimator's own
 * HJ-weighted first stage (W = E[RR']^{-1}), without the rest of a fit.
 */
export function fittedHjSquared(spec: FitSpec, panel: ReturnsPanel): number {
  if (spec.estimator.method !== 'gmm') throw new DeflatorError('SPEC_INVALID', `the HJ bootstrap needs a GMM model; ${spec.label ?? spec.model.kind} uses ${spec.estimator.method}`, 'compare HJ distances of GMM models only');
  return gmmHjSquared(spec, panel);
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
      onStage: (stage, done, total) => ctx.progress(done, total, stage),
      signal: ctx.signal,
    }),
  hjBootstrap: (p, ctx) => hjBootstrapDraws(p, { hjSquared: fittedHjSquared, onProgress: ctx.progress, signal: ctx.signal }),
};
