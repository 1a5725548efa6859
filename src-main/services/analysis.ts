/**
 * The analysis use cases, one service each, called by the CLI commands and by the app's
 * bridge handlers alike (and by replay, batch and any new command): nothing else in
 * src-main strings them together.
 *
 *   loadAnalysisData(store, analysis)       load panel: the returns panel(s) the spec reads
 *   computeAnalysis(analysis, data, compute) run: the fit, back-test or comparison on a Compute
 *   recordAnalysis(store, analysis, ...)    record: the run record (src-main/runs)
 *   runAnalysis(store, analysis, compute)   all three in order; the result carries its run id
 *
 * and the report use case in ./report.ts. An `Analysis` is the parsed request: which
 * kind, its spec(s), and for a back-test the engine asked for.
 */
import type { ReturnsPanel } from '../../shared/panel.js';
import type { AnyResult, BacktestResult, CompareResult, FitResult } from '../../shared/results.js';
import type { RunRecord, RunTag, SubjectFingerprint } from '../../shared/records/run-record.js';
import { parseCompareSpec, type CompareSpec, type FitSpec } from '../../shared/spec.js';
import type { BacktestEngine } from '../../shared/backtest/index.js';
import { DeflatorError } from '../../shared/errors.js';
import { loadPanelInput } from '../data/panel.js';
import { buildPanel } from '../../shared/returns/index.js';
import { loadedDigests } from '../runs/dependencies.js';
import { recordRun } from '../runs/runs.js';
import type { Store } from '../store/store.js';
import type { Compute, RunTaskOptions } from './compute.js';

export type Analysis =
  | { kind: 'fit'; spec: FitSpec }
  | { kind: 'backtest'; spec: FitSpec; engine?: BacktestEngine }
  | { kind: 'compare'; spec: CompareSpec; fits: FitSpec[] };

export type ResultOf<A extends Analysis> = A extends { kind: 'fit' } ? FitResult : A extends { kind: 'backtest' } ? BacktestResult : CompareResult;

/** A comparison request from its spec (the models' fit specs read off its "compare" list). */
export function compareAnalysis(spec: CompareSpec): Analysis & { kind: 'compare' } {
  const parsed = parseCompareSpec(JSON.parse(JSON.stringify(spec)));
  return { kind: 'compare', spec: parsed.spec, fits: parsed.fits };
}

/** What the load step read: one panel per fit spec (a fit or back-test has one). */
export interface AnalysisData {
  panels: ReturnsPanel[];
  /** Digests of the stored subjects the load read, from the rows it read (for the run record). */
  subjects?: SubjectFingerprint[];
}

/** The fit specs an analysis reads panels for, in order. */
export function analysisFits(a: Analysis): FitSpec[] {
  return a.kind === 'compare' ? a.fits : [a.spec];
}

/** Load panel: reads exactly what the spec(s) name from the store and builds the panel(s). */
export function loadAnalysisData(store: Store, a: Analysis, opts: { digests?: boolean } = {}): AnalysisData {
  const panels: ReturnsPanel[] = [];
  const subjects = new Map<string, SubjectFingerprint>();
  for (const f of analysisFits(a)) {
    const input = loadPanelInput(store, f);
    panels.push(buildPanel(input));
    if (opts.digests) for (const s of loadedDigests(input)) subjects.set(`${s.kind}\u0000${s.name}`, s);
  }
  return opts.digests ? { panels, subjects: [...subjects.values()] } : { panels };
}

/** Run: the fit, back-test or comparison of the loaded data, on `compute` (the pool, or this thread). */
export async function computeAnalysis<A extends Analysis>(a: A, data: AnalysisData, compute: Compute, opts: RunTaskOptions = {}): Promise<ResultOf<A>> {
  const o: RunTaskOptions = { ...(opts.onProgress ? { onProgress: opts.onProgress } : {}), ...(opts.signal ? { signal: opts.signal } : {}) };
  switch (a.kind) {
    case 'fit':
      return (await compute.runTask('fit', { spec: a.spec, panel: data.panels[0] }, o)) as ResultOf<A>;
    case 'backtest':
      if (!a.spec.backtest) {
        throw new DeflatorError('SPEC_INVALID', 'spec.backtest: a back-test needs "backtest": {"window": W, ...}', 'add "backtest": {"window": 120, "step": 1, "horizon": 1} to the spec (the window length in periods)');
      }
      return (await compute.runTask('backtest', { spec: a.spec, panel: data.panels[0], ...(a.engine && a.engine !== 'auto' ? { engine: a.engine } : {}) }, o)) as ResultOf<A>;
    case 'compare':
      return (await compute.runTask('compare', { spec: a.spec, fits: a.fits, panels: data.panels }, o)) as ResultOf<A>;
  }
}

/** Record: stores the run (spec, result, data fingerprints, how it was computed). */
export function recordAnalysis(store: Store, a: Analysis, result: AnyResult, data: AnalysisData, threads?: number): RunRecord {
  return recordRun(store, {
    spec: a.spec,
    result,
    panel: a.kind === 'compare' ? data.panels : data.panels[0],
    ...(threads !== undefined ? { threads } : {}),
    ...(data.subjects ? { subjects: data.subjects } : {}),
    ...(a.kind === 'backtest' && a.engine && a.engine !== 'auto' ? { engine: a.engine } : {}),
  });
}

export interface RunAnalysisOptions extends RunTaskOptions {
  /** Record the run (default true). */
  record?: boolean;
}

export interface AnalysisOutcome<A extends Analysis = Analysis> {
  /** The result, tagged with its run id when recorded. */
  result: ResultOf<A> & Partial<RunTag>;
  run?: RunRecord;
  data: AnalysisData;
}

/**
 * Load, run and record: the whole sequence of a fit, back-test or comparison. The run is
 * recorded only after the computation succeeded (a cancelled or failed run leaves nothing).
 */
export async function runAnalysis<A extends Analysis>(store: Store, a: A, compute: Compute, opts: RunAnalysisOptions = {}): Promise<AnalysisOutcome<A>> {
  const data = loadAnalysisData(store, a, { digests: opts.record !== false });
  const result = await computeAnalysis(a, data, compute, opts);
  if (opts.record === false) return { result: result as ResultOf<A> & Partial<RunTag>, data };
  // A cancelled call records nothing: checked in the same synchronous step as the record
  // is written, so a cancel either comes first (no record, CANCELLED) or after the record
  // (the reply is the recorded result, src-main/app/dispatch.ts).
  if (opts.signal?.aborted) throw new DeflatorError('CANCELLED', 'the task was cancelled', 'nothing was saved; run it again to get results');
  const run = recordAnalysis(store, a, result, data, compute.threads);
  return { result: Object.assign(result, { runId: run.id }), run, data };
}
