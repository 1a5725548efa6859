/**
 * What each task kind does inside a worker thread: the domain core's functions with the
 * estimator plugged in, progress and the cancel flag passed through.
 */
import { fit } from '../../shared/estimation/fit.js';
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
 * HJ^2 of a model without a closed form (the consumption model): the HJ distance the
 * estimator reports, i.e. the first stage with W = E[RR']^{-1}.
 */
export function fittedHjSquared(spec: FitSpec, panel: ReturnsPanel): number {
  const res = fit({ ...spec, estimator: { ...spec.estimator, method: 'gmm', stage: 'first', weight: 'hj' }, backtest: undefined }, panel);
  if (!res.hj) throw new DeflatorError('NOT_FOUND', `the fit of ${spec.model.kind} reports no HJ distance`, 'use a GMM model');
  return res.hj.distance ** 2;
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
