/**
 * Splitting the heavy tasks across the pool's threads and putting the pieces together
 * in the caller (cheap: summaries and the result assembly). A back-test's windows fall
 * into fixed chunks (shared/backtest windowChunks, a function of the spec alone: each
 * rebuilds its cross-moment sums at its first window, then rolls them), and each thread
 * runs a contiguous share of the chunks, so the numbers do not depend on the thread
 * count; a comparison runs its fits and back-tests side by side and splits the
 * bootstrap replications into chunks (replication r draws from its own stream).
 * Progress of the pieces is summed; an abort, or the failure of any piece, cancels the
 * others.
 */
import { DeflatorError } from '../../shared/errors.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { BacktestSpec, CompareSpec, FitSpec } from '../../shared/spec.js';
import type { BacktestResult, CompareResult } from '../../shared/results.js';
import { engineName, rollsSums, summarizeBacktest, windowChunks, windowSchedule, type BacktestEngine, type WindowRecord } from '../../shared/backtest/index.js';
import { alignPanels, assembleCompare, outcomeFor, bootstrapChunk, bootstrapMembers, bootstrapSettings, mergeDraws, type HjBootstrapDraws, type ModelOutcome } from '../../shared/compare/index.js';
import type { TaskKind, TaskMap } from './protocol.js';

export type RawRun = <K extends TaskKind>(
  kind: K,
  payload: TaskMap[K]['payload'],
  opts: { onProgress?: (done: number, total: number, stage?: string) => void; signal?: AbortSignal },
) => Promise<TaskMap[K]['result']>;

interface Opts {
  onProgress?: (done: number, total: number, stage?: string) => void;
  signal?: AbortSignal;
}

/** Child abort controller: aborts with the parent, or on its own when a sibling fails. */
function childController(parent?: AbortSignal): { ctl: AbortController; dispose: () => void } {
  const ctl = new AbortController();
  const onAbort = (): void => ctl.abort();
  if (parent?.aborted) ctl.abort();
  parent?.addEventListener('abort', onAbort, { once: true });
  return { ctl, dispose: () => parent?.removeEventListener('abort', onAbort) };
}

/** Runs the pieces together; the first failure cancels the rest and is rethrown. */
async function allOrNothing<T>(pieces: ((signal: AbortSignal) => Promise<T>)[], parent?: AbortSignal): Promise<T[]> {
  const { ctl, dispose } = childController(parent);
  try {
    return await Promise.all(
      pieces.map((p) =>
        p(ctl.signal).catch((e: unknown) => {
          ctl.abort();
          throw e;
        }),
      ),
    );
  } catch (e) {
    if (parent?.aborted) throw new DeflatorError('CANCELLED', 'the task was cancelled', 'nothing was saved; run it again to get results');
    throw e;
  } finally {
    dispose();
  }
}

/** Sums the progress of several pieces into one (done, total). */
function progressSum(total: number, onProgress?: Opts['onProgress'], stage?: string): (piece: number) => (done: number) => void {
  const done = new Map<number, number>();
  let last = -1;
  return (piece) => (d) => {
    done.set(piece, d);
    let s = 0;
    for (const v of done.values()) s += v;
    if (s !== last) {
      last = s;
      onProgress?.(s, total, stage);
    }
  };
}

function chunkRanges(count: number, chunks: number): [number, number][] {
  const out: [number, number][] = [];
  const size = Math.ceil(count / chunks);
  for (let a = 0; a < count; a += size) out.push([a, Math.min(count, a + size)]);
  return out;
}

/** Replications per bootstrap task at least (smaller chunks do not pay for their messages). */
const MIN_REPLICATIONS_PER_TASK = 20;

/** The replication ranges [from, to) of the HJ bootstrap on `threads` threads. */
export function bootstrapRanges(replications: number, threads: number): [number, number][] {
  return chunkRanges(replications, Math.max(1, Math.min(threads, Math.floor(replications / MIN_REPLICATIONS_PER_TASK))));
}

/** Windows per task below which splitting a back-test whose windows are independent does not pay. */
const MIN_WINDOWS_PER_TASK = 8;

/**
 * The windows of each thread's task. With rolling sums: the back-test's fixed chunks of
 * windows (windowChunks: they depend on the spec alone) shared out among the threads as
 * contiguous runs of whole chunks, one task per thread; every chunk restarts its sums at
 * its own first window whichever task runs it, so the result has the same bits for any
 * thread count, and as one 'backtest' task. Without them (per-window fits, or sums
 * rebuilt for every window) each window is computed on its own, and the windows are
 * split evenly.
 */
export function backtestRanges(bt: BacktestSpec, count: number, threads: number, rolling: boolean): [number, number][] {
  if (!rolling) return chunkRanges(count, Math.max(1, Math.min(threads, Math.floor(count / MIN_WINDOWS_PER_TASK))));
  const chunks = windowChunks(bt, count);
  const groups = Math.max(1, Math.min(threads, chunks.length));
  const out: [number, number][] = [];
  for (let g = 0; g < groups; g++) {
    const a = Math.floor((g * chunks.length) / groups);
    const b = Math.floor(((g + 1) * chunks.length) / groups);
    if (b > a) out.push([chunks[a][0], chunks[b - 1][1]]);
  }
  return out;
}

export async function backtestInPool(run: RawRun, threads: number, payload: { spec: FitSpec; panel: ReturnsPanel; engine?: BacktestEngine }, opts: Opts): Promise<BacktestResult> {
  const { spec, panel } = payload;
  if (!spec.backtest) throw new DeflatorError('SPEC_INVALID', 'spec.backtest: a back-test needs a "backtest" block ({"window": W, "step": s, "horizon": h})', 'add the backtest block to the spec');
  const count = windowSchedule(panel.periods.length, spec.backtest).length;
  const ranges = backtestRanges(spec.backtest, count, threads, rollsSums(spec, payload.engine));
  if (ranges.length <= 1) return run('backtest', payload, opts);
  const report = progressSum(count, opts.onProgress, 'windows');
  const parts = await allOrNothing(
    ranges.map((range, c) => (signal: AbortSignal) => {
      const piece = report(c);
      return run('backtestWindows', { ...payload, range }, { signal, onProgress: (d) => piece(d) });
    }),
    opts.signal,
  );
  const records: WindowRecord[] = parts.flat();
  return summarizeBacktest(spec, panel, records, engineName(spec, payload.engine));
}

export async function compareInPool(run: RawRun, threads: number, payload: { spec: CompareSpec; fits: FitSpec[]; panels: ReturnsPanel[] }, opts: Opts): Promise<CompareResult> {
  const { spec, fits } = payload;
  const { panels } = alignPanels(payload.panels);
  const cancelled = (): boolean => opts.signal?.aborted === true;
  const outcomes: ModelOutcome[] = fits.map(outcomeFor);
  let done = 0;
  const total = fits.length;
  // Fits (and back-tests) side by side: each is its own task; a failed fit is a row's error, not the run's.
  await allOrNothing(
    fits.map((f, i) => async (signal: AbortSignal) => {
      try {
        outcomes[i].fit = await run('fit', { spec: f, panel: panels[i] }, { signal });
      } catch (e) {
        if (cancelled() || !(e instanceof DeflatorError) || e.code === 'CANCELLED') throw e;
        outcomes[i].error = `${e.code}: ${e.message}`;
      }
      if (outcomes[i].fit && spec.backtest) {
        try {
          outcomes[i].backtest = await backtestInPool(run, Math.max(1, Math.floor(threads / Math.max(1, fits.length))), { spec: f, panel: panels[i] }, { signal });
        } catch (e) {
          if (cancelled() || !(e instanceof DeflatorError) || e.code === 'CANCELLED') throw e;
          outcomes[i].backtestError = `${e.code}: ${e.message}`;
        }
      }
      done++;
      opts.onProgress?.(done, total, 'models');
    }),
    opts.signal,
  );
  const members = bootstrapMembers(outcomes);
  let bootstrap: { members: number[]; values: Float64Array; failures: string[] } | undefined;
  if (members.length >= 2) {
    const st = bootstrapSettings(spec, panels[0].periods.length);
    const ranges = bootstrapRanges(st.replications, threads);
    const report = progressSum(st.replications, opts.onProgress, 'bootstrap');
    const parts: HjBootstrapDraws[] = await allOrNothing(
      ranges.map(([from, to], c) => (signal: AbortSignal) => {
        const piece = report(c);
        return run('hjBootstrap', bootstrapChunk(spec, fits, panels, members, from, to), { signal, onProgress: (d) => piece(d) });
      }),
      opts.signal,
    );
    const merged = mergeDraws(parts, st.replications, members.length);
    bootstrap = { members, values: merged.values, failures: merged.failures };
  }
  return assembleCompare(spec, panels, outcomes, bootstrap);
}
