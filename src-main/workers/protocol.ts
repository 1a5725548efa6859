/**
 * Messages between the caller and the worker threads. One envelope per task: its kind,
 * its payload, a MessagePort for progress (transferred with the task) and a shared
 * cancel flag the worker checks between units of work. The worker answers with a
 * TaskReply: the result, or the error as plain data (code, message, hint) so that a
 * DeflatorError thrown in a worker arrives as a DeflatorError in the caller.
 */
import type { MessagePort } from 'node:worker_threads';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { CompareSpec, DriftSpec, FitSpec, PresentValueSpec } from '../../shared/spec.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult } from '../../shared/results.js';
import type { YearlyValues } from '../../shared/returns/yearly.js';
import type { BacktestEngine, WindowRecord } from '../../shared/backtest/index.js';
import type { HjBootstrapChunk, HjBootstrapDraws, ModelOutcome } from '../../shared/compare/index.js';
import type { ErrorCode } from '../../shared/errors.js';

export interface TaskMap {
  /** One fit of one spec. */
  fit: { payload: { spec: FitSpec; panel: ReturnsPanel }; result: FitResult };
  /** A whole back-test in one worker. */
  backtest: { payload: { spec: FitSpec; panel: ReturnsPanel; engine?: BacktestEngine }; result: BacktestResult };
  /** Windows [from, to) of a back-test (a chunk; the caller merges and summarises). */
  backtestWindows: { payload: { spec: FitSpec; panel: ReturnsPanel; range: [number, number]; engine?: BacktestEngine }; result: WindowRecord[] };
  /** A whole model comparison in one worker. */
  compare: { payload: { spec: CompareSpec; fits: FitSpec[]; panels: ReturnsPanel[] }; result: CompareResult };
  /** One task of a batch: the fit, then the back-test when `backtest` (estimation errors kept as text). */
  batchTask: { payload: { spec: FitSpec; panel: ReturnsPanel; backtest: boolean }; result: ModelOutcome };
  /** Replications [from, to) of the bootstrap of squared HJ distances. */
  hjBootstrap: { payload: HjBootstrapChunk; result: HjBootstrapDraws };
  /** The dividend-price decomposition of yearly values built from `assets`. */
  presentValue: { payload: { spec: PresentValueSpec; assets: string[]; values: YearlyValues }; result: PresentValueResult };
  /** The drift split of a panel with price ratios. */
  drift: { payload: { spec: DriftSpec; panel: ReturnsPanel }; result: DriftResult };
}

export type TaskKind = keyof TaskMap;
export const TASK_KINDS: readonly TaskKind[] = ['fit', 'backtest', 'backtestWindows', 'compare', 'batchTask', 'hjBootstrap', 'presentValue', 'drift'];

export type ProgressMessage = { type: 'progress'; done: number; total: number; stage?: string } | { type: 'end' };

export interface TaskEnvelope<K extends TaskKind = TaskKind> {
  kind: K;
  payload: TaskMap[K]['payload'];
  /** Progress goes back on this port (transferred with the task). */
  port?: MessagePort;
  /** Int32Array over a SharedArrayBuffer; element 0 becomes 1 when the caller cancels. */
  cancel?: Int32Array;
}

export interface WorkerError {
  name: string;
  code?: ErrorCode;
  message: string;
  hint?: string;
  stack?: string;
}

export type TaskReply<K extends TaskKind = TaskKind> = { ok: true; result: TaskMap[K]['result'] } | { ok: false; error: WorkerError };
