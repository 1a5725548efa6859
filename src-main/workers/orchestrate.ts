/**
 * Splitting the heavy tasks across the pool's threads and putting the pieces together
 * in the caller (cheap: summaries and the result assembly). A back-test runs as one
 * chunk of consecutive windows per thread (each chunk rebuilds its cross-moment sums
 * once, then rolls them); a comparison runs its fits and back-tests side by side and
 * splits the bootstrap replications into chunks. Progress of the pieces is summed;
 * an abort, or the failure of any piece, cancels the others.
 */
import { DeflatorError } from '../../shared/errors.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { CompareSpec, FitSpec } from '../../shared/spec.js';
import type { BacktestResult, CompareResult } from '../../shared/results.js';
import { engineName, summarizeBacktest, windowSchedule, type BacktestEngine, type WindowRecord } from '../../shared/backtest/index.js';
import { alignPanels, assembleCompare, bootstrapChunk, bootstrapMembers, bootstrapSettings, mergeDraws, type HjBootstrapDraws, type ModelOutcome } from '../../shared/compare/index.js';
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

/** Windows per chunk below which splitting does not pay. */
const MIN_WINDOWS_PER_CHUNK = 8;

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

export async function backtestInPool(run: RawRun, threads: number, payload: { spec: FitSpec; panel: ReturnsPanel; engine?: BacktestEngine }, opts: Opts): Promise<BacktestResult> {
  const { spec, panel } = payload;
  if (!spec.backtest) throw new DeflatorError('SPEC_INVALID', 'spec.backtest: a back-test needs a "backtest" block ({"window": W, "step": s, "horizon": h})', 'add the backtest block to the spec');
  const count = windowSchedule(panel.periods.length, spec.backtest).length;
  const chunks = Math.min(threads, Math.floor(count / MIN_WINDOWS_PER_CHUNK));
  if (chunks <= 1) return run('backtest', payload, opts);
  const ranges = chunkRanges(count, chunks);
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
  const outcomes: ModelOutcome[] = fits.map((f) => ({ label: f.label ?? f.model.kind }));
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
    const ranges = chunkRanges(st.replications, Math.max(1, Math.min(threads, Math.floor(st.replications / 20))));
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
