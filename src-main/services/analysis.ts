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
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult, RunResult } from '../../shared/results.js';
import type { RunRecord, RunTag, SubjectFingerprint } from '../../shared/records/run-record.js';
import { fingerprintYearly } from '../../shared/records/panel-encoding.js';
import type { YearlyValues } from '../../shared/returns/yearly.js';
import { parseCompareSpec, type CompareSpec, type DriftSpec, type FitSpec, type PresentValueSpec } from '../../shared/spec.js';
import { presentValueHistories, presentValueInputs } from '../../shared/values/presentValue.js';
import { driftPanelSpec } from '../../shared/values/drift.js';
import type { BacktestEngine } from '../../shared/backtest/index.js';
import { DeflatorError } from '../../shared/errors.js';
import { loadPanelInput, loadPresentValueHistories } from '../data/panel.js';
import { cachedPanel, cachePanel } from '../data/panel-cache.js';
import { buildPanel } from '../../shared/returns/index.js';
import { loadedDigests } from '../runs/dependencies.js';
import { recordRun } from '../runs/runs.js';
import { storageError } from '../store/errors.js';
import type { Store } from '../store/store.js';
import type { Compute, RunTaskOptions } from './compute.js';

export type Analysis =
  | { kind: 'fit'; spec: FitSpec }
  | { kind: 'backtest'; spec: FitSpec; engine?: BacktestEngine }
  | { kind: 'compare'; spec: CompareSpec; fits: FitSpec[] }
  | { kind: 'present-value'; spec: PresentValueSpec }
  | { kind: 'drift'; spec: DriftSpec };

export type ResultOf<A extends Analysis> = A extends { kind: 'fit' }
  ? FitResult
  : A extends { kind: 'backtest' }
    ? BacktestResult
    : A extends { kind: 'present-value' }
      ? PresentValueResult
      : A extends { kind: 'drift' }
        ? DriftResult
        : CompareResult;

/** A comparison request from its spec (the models' fit specs read off its "compare" list). */
export function compareAnalysis(spec: CompareSpec): Analysis & { kind: 'compare' } {
  const parsed = parseCompareSpec(JSON.parse(JSON.stringify(spec)));
  return { kind: 'compare', spec: parsed.spec, fits: parsed.fits };
}

/**
 * What the load step read: one panel per fit spec (a fit or back-test has one; a drift
 * split one with price ratios); a present-value analysis reads the yearly values of its
 * assets instead (no panel).
 */
export interface AnalysisData {
  panels: ReturnsPanel[];
  /** Digests of the stored subjects the load read, from the rows it read (for the run record). */
  subjects?: SubjectFingerprint[];
  yearly?: { assets: string[]; values: YearlyValues };
}

/** The fit specs an analysis reads panels for, in order (none for the present-value analyses). */
export function analysisFits(a: Analysis): FitSpec[] {
  return a.kind === 'compare' ? a.fits : a.kind === 'fit' || a.kind === 'backtest' ? [a.spec] : [];
}

/**
 * Load panel: reads exactly what the spec(s) name from the store and builds the panel(s) (or
 * the yearly values). A panel the store's panel cache holds for the same data and settings
 * is read from there (src-main/data/panel-cache.ts); `cache: false` (replay) always builds.
 */
export function loadAnalysisData(store: Store, a: Analysis, opts: { digests?: boolean; cache?: boolean } = {}): AnalysisData {
  if (a.kind === 'present-value') {
    const histories = loadPresentValueHistories(store, a.spec);
    const yearly = { assets: presentValueHistories(a.spec, histories).map((h) => h.asset), values: presentValueInputs(a.spec, histories) };
    return { panels: [], yearly, ...(opts.digests ? { subjects: loadedDigests({ histories, series: [] }) } : {}) };
  }
  const panels: ReturnsPanel[] = [];
  const subjects = new Map<string, SubjectFingerprint>();
  const add = (list: readonly SubjectFingerprint[]) => {
    for (const s of list) subjects.set(`${s.kind}\u0000${s.name}`, s);
  };
  const priceRatios = a.kind === 'drift';
  const specs = a.kind === 'drift' ? [driftPanelSpec(a.spec)] : analysisFits(a);
  for (const spec of specs) {
    const hit = opts.cache === false ? null : cachedPanel(store, spec, priceRatios);
    if (hit) {
      panels.push(hit.panel);
      if (opts.digests) add(hit.subjects);
      continue;
    }
    const input = { ...loadPanelInput(store, spec), ...(priceRatios ? { priceRatios: true } : {}) };
    const panel = buildPanel(input);
    panels.push(panel);
    if (opts.cache !== false) cachePanel(store, input, panel);
    if (opts.digests) add(loadedDigests(input, (x) => store.loadedDigest(x)));
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
    case 'present-value': {
      if (!data.yearly) throw new DeflatorError('INPUT_INVALID', 'a present-value analysis needs its yearly values loaded', 'load them with loadAnalysisData');
      return (await compute.runTask('presentValue', { spec: a.spec, assets: data.yearly.assets, values: data.yearly.values }, o)) as ResultOf<A>;
    }
    case 'drift':
      return (await compute.runTask('drift', { spec: a.spec, panel: data.panels[0] }, o)) as ResultOf<A>;
  }
}

/** The fingerprint(s) a run of this analysis records for the data it used. */
export function recordedData(a: Analysis, data: AnalysisData) {
  if (a.kind === 'present-value' && data.yearly) {
    const v = data.yearly.values;
    return fingerprintYearly({ closes: v.closes, assets: data.yearly.assets, weighting: v.weighting, price: v.price, dividend: v.dividend });
  }
  return a.kind === 'compare' ? data.panels : data.panels[0];
}

/** Record: stores the run (spec, result, data fingerprints, how it was computed). */
export function recordAnalysis(store: Store, a: Analysis, result: RunResult, data: AnalysisData, threads?: number): RunRecord {
  return recordRun(store, {
    spec: a.spec,
    result,
    panel: recordedData(a, data),
    ...(threads !== undefined ? { threads } : {}),
    ...(data.subjects ? { subjects: data.subjects } : {}),
    ...(a.kind === 'backtest' && a.engine && a.engine !== 'auto' ? { engine: a.engine } : {}),
  });
}

export interface RunAnalysisOptions extends RunTaskOptions {
  /** Record the run (default true). */
  record?: boolean;
  /**
   * When the record cannot be written (the database busy, read-only, full or damaged:
   * src-main/store/errors.ts), return the outcome with `recordError` instead of throwing,
   * so that the computed result is not lost (the caller prints or saves it).
   */
  keepUnrecorded?: boolean;
}

export interface AnalysisOutcome<A extends Analysis = Analysis> {
  /** The result, tagged with its run id when recorded. */
  result: ResultOf<A> & Partial<RunTag>;
  run?: RunRecord;
  data: AnalysisData;
  /** Why the result is not recorded (only with keepUnrecorded). */
  recordError?: DeflatorError;
}

/** Storage failures after which a computed result is kept rather than thrown away. */
const KEEPABLE = new Set(['BUSY', 'NOT_WRITABLE', 'DAMAGED']);

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
  let run: RunRecord;
  try {
    run = recordAnalysis(store, a, result, data, compute.threads);
  } catch (e) {
    const err = storageError(e, store.path);
    if (opts.keepUnrecorded && err && KEEPABLE.has(err.code)) return { result: result as ResultOf<A> & Partial<RunTag>, data, recordError: err };
    throw err ?? e;
  }
  return { result: Object.assign(result, { runId: run.id }), run, data };
}
