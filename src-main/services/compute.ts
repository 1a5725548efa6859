/**
 * Where an analysis is computed: the `Compute` port the analysis service (analysis.ts)
 * runs tasks on. Three implementations, the same numbers to the last bit:
 *
 * - `inProcess()`: the task handlers (src-main/workers/tasks.ts) in this thread. No
 *   worker start-up, no copy of the panel; the CLI uses it whenever the work is one
 *   piece. It blocks the event loop while it runs: never use it where a server or a
 *   window must stay responsive.
 * - the worker pool (src-main/workers/pool.ts `createPool`): the app keeps one for its
 *   whole session, so that the main thread stays free and a task can be cancelled.
 * - `sizedCompute({ threads })`: the CLI's. Per task it counts the pieces the work
 *   splits into (`workPieces`) and estimates its seconds in one thread
 *   (`estimatedSeconds`); one piece, work too small to pay for a worker's start
 *   (MIN_SECONDS_PER_THREAD per added thread), or one thread asked for, runs in process;
 *   otherwise it starts a pool of that many workers (once) and splits the work there. A
 *   single fit, a small back-test or a comparison without bootstrap never pays for workers
 *   (measured: two workers made the 480-window back-test of N = 25 take 0.9 s of CPU
 *   instead of 0.5 s in process).
 */
import { DeflatorError } from '../../shared/errors.js';
import { rollsSums, windowSchedule } from '../../shared/backtest/index.js';
import { bootstrapSettings } from '../../shared/compare/index.js';
import { availableParallelism } from 'node:os';
import type { TaskKind, TaskMap } from '../workers/protocol.js';
import { handlers } from '../workers/tasks.js';
import { backtestRanges, bootstrapRanges } from '../workers/orchestrate.js';

export interface RunTaskOptions {
  onProgress?: (done: number, total: number, stage?: string) => void;
  signal?: AbortSignal;
}

/** Runs the tasks of src-main/workers/protocol.ts; a worker pool is one. */
export interface Compute {
  /** Threads it computes with (recorded with each run as information: the numbers do not depend on them). */
  readonly threads?: number;
  runTask<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], opts?: RunTaskOptions): Promise<TaskMap[K]['result']>;
}

/** A Compute that owns resources (a pool) to release. */
export interface ClosableCompute extends Compute {
  close(): Promise<void>;
}

/** The cores this machine offers: the default thread count of pools and of --threads. */
export function defaultThreads(): number {
  return Math.max(1, availableParallelism());
}

function cancelled(): DeflatorError {
  return new DeflatorError('CANCELLED', 'the task was cancelled', 'nothing was saved; run it again to get results');
}

/** The task handlers in this thread (see the file comment for when that is right). */
export function inProcess(): ClosableCompute {
  return {
    threads: 1,
    async runTask<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], opts: RunTaskOptions = {}): Promise<TaskMap[K]['result']> {
      if (opts.signal?.aborted) throw cancelled();
      const handler = handlers[kind] as unknown as (p: TaskMap[K]['payload'], ctx: { progress: NonNullable<RunTaskOptions['onProgress']>; signal: { readonly aborted: boolean } }) => TaskMap[K]['result'];
      const signal = opts.signal ?? { aborted: false };
      const result = handler(payload, { progress: opts.onProgress ?? (() => {}), signal });
      if (opts.signal?.aborted) throw cancelled();
      return result;
    },
    async close() {},
  };
}

/**
 * How many pieces a task splits into across threads (1: it is one piece). Back-test: its
 * fixed chunks of windows (or windows in eights when each is computed on its own);
 * comparison: its models side by side, or its bootstrap chunks, whichever is more.
 */
export function workPieces<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload']): number {
  if (kind === 'backtest') {
    const p = payload as TaskMap['backtest']['payload'];
    if (!p.spec.backtest) return 1;
    const count = windowSchedule(p.panel.periods.length, p.spec.backtest).length;
    return backtestRanges(p.spec.backtest, count, Number.MAX_SAFE_INTEGER, rollsSums(p.spec, p.engine)).length;
  }
  if (kind === 'compare') {
    const p = payload as TaskMap['compare']['payload'];
    const T = p.panels[0]?.periods.length ?? 0;
    const gmm = p.fits.filter((f) => f.estimator.method === 'gmm').length;
    const boot = gmm >= 2 && T > 0 ? bootstrapRanges(bootstrapSettings(p.spec, T).replications, Number.MAX_SAFE_INTEGER).length : 1;
    return Math.max(p.fits.length, boot);
  }
  return 1;
}

/**
 * Seconds a task would take in one thread, roughly (for the pool-size decision only; it
 * never changes a number). Back-test: windows x (N + K)^2.5 at 4e-8 s (incremental engine)
 * or 1e-6 s (a fit per window); comparison: each fit (N^2 T at 2e-9 s) and its back-test,
 * and the bootstrap, per replication N^2 T at 1e-9 s per linear model and 5e-6 s per
 * asset-period for a model fitted numerically. Calibrated on this project's benchmarks
 * (bench/process.ts): 480 windows of N = 25 take about 0.07 s, 960 of N = 100 about 4 s.
 */
export function estimatedSeconds<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload']): number {
  if (kind === 'backtest') {
    const p = payload as TaskMap['backtest']['payload'];
    if (!p.spec.backtest) return 0;
    const windows = windowSchedule(p.panel.periods.length, p.spec.backtest).length;
    const m = p.panel.returns.length + p.panel.factors.length;
    return windows * m ** 2.5 * (rollsSums(p.spec, p.engine) ? 4e-8 : 1e-6);
  }
  if (kind === 'compare') {
    const p = payload as TaskMap['compare']['payload'];
    let s = 0;
    p.fits.forEach((f, i) => {
      const panel = p.panels[i];
      if (!panel) return;
      const N = panel.returns.length;
      const T = panel.periods.length;
      s += N * N * T * 2e-9;
      if (p.spec.backtest) s += estimatedSeconds('backtest', { spec: { ...f, backtest: p.spec.backtest }, panel });
      const reps = bootstrapSettings(p.spec, T).replications;
      if (f.estimator.method === 'gmm') s += reps * (f.model.kind === 'consumption' ? N * T * 5e-6 : N * N * T * 1e-9);
    });
    return s;
  }
  return 0;
}

/** Work below this many seconds per added worker thread runs in fewer threads (a worker's start and the copy of the panel cost about 0.2 s). */
export const MIN_SECONDS_PER_THREAD = 0.5;

/** Threads worth using for a task: at most `threads` and its pieces, and one per MIN_SECONDS_PER_THREAD of estimated work. */
export function threadsFor<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], threads: number): number {
  const byWork = 1 + Math.floor(estimatedSeconds(kind, payload) / MIN_SECONDS_PER_THREAD);
  return Math.max(1, Math.min(threads, workPieces(kind, payload), byWork));
}

export interface SizedComputeOptions {
  /** Threads at most (the CLI's --threads, default the cores). */
  threads: number;
  /**
   * Use the threads asked for (up to the work's pieces) whatever the estimated work: for
   * checks and benchmarks of the pool itself (the CLI sets it from DEFLATOR_THREADS_EXACT=1).
   */
  exact?: boolean;
  /** Starts the pool of n threads (src-main/workers/pool.ts createPool); loaded only when needed. */
  pool: (threads: number) => Promise<ClosableCompute>;
}

/** The CLI's Compute: in process for one piece of work, else a pool sized to the pieces. */
export function sizedCompute(o: SizedComputeOptions): ClosableCompute & { readonly used: { threads: number; inProcess: boolean } } {
  const local = inProcess();
  let pool: ClosableCompute | undefined;
  let used = { threads: 1, inProcess: true };
  return {
    get threads() {
      return used.threads;
    },
    get used() {
      return used;
    },
    async runTask<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], opts: RunTaskOptions = {}): Promise<TaskMap[K]['result']> {
      const want = o.exact ? Math.max(1, Math.min(o.threads, workPieces(kind, payload))) : threadsFor(kind, payload, o.threads);
      if (want <= 1 && !pool) {
        used = { threads: 1, inProcess: true };
        return local.runTask(kind, payload, opts);
      }
      pool ??= await o.pool(want);
      used = { threads: pool.threads ?? want, inProcess: false };
      return pool.runTask(kind, payload, opts);
    },
    async close() {
      await pool?.close();
    },
  };
}
