/**
 * Replay: recompute a recorded run from the data now in the store and its stored spec,
 * and compare every number of the new result with the stored one bit for bit. The
 * report also says whether the run is stale (its data changed since it was recorded)
 * and whether the returns panel rebuilt today has the recorded fingerprint. A stale run
 * is never reported as fine, even where its numbers happen to agree. The numbers do not
 * depend on the number of worker threads (a back-test's chunks of windows are fixed by
 * its spec), so any pool replays any run; the recorded thread count is information.
 */
import type { ReturnsPanel } from '../../shared/panel.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult, RunResult } from '../../shared/results.js';
import { DeflatorError, describeError, isDeflatorError } from '../../shared/errors.js';
import type { TaskOutcome } from '../../shared/batch/assemble.js';
import { recomputeBatch } from '../batch/recompute.js';
import { diffExact } from '../../shared/records/exact-json.js';
import { fingerprintPanel, fingerprintYearly } from '../../shared/records/panel-encoding.js';
import type { PanelFingerprint, RunRecord } from '../../shared/records/run-record.js';
import { judgeDifferences, type ReplayReport } from '../../shared/records/replay-report.js';
import { KERNEL_REVISION, KERNEL_REVISION_UNRECORDED, REPLAY_TOLERANCE } from '../../shared/linalg/identity.js';
import { parseCompareSpec, parseDriftSpec, parseFitSpec, parsePresentValueSpec, type BacktestSpec, type CompareSpec, type DriftSpec, type FitSpec, type PresentValueSpec } from '../../shared/spec.js';
import { windowsPerChunk, type BacktestEngine } from '../../shared/backtest/index.js';
import { computeAnalysis, loadAnalysisData, type Analysis, type AnalysisData } from '../services/analysis.js';
import type { Compute } from '../services/compute.js';
import type { Store } from '../store/store.js';
import { VERSION } from '../version.js';
import { nodeSha256 } from '../store/digest.js';
import { getRun, staleItems } from './runs.js';

export type { ReplayReport };

/** How to compute each kind of run: the same code paths the commands use. */
export interface Recompute {
  fit(spec: FitSpec, panel: ReturnsPanel): Promise<FitResult>;
  backtest(spec: FitSpec, panel: ReturnsPanel, engine?: BacktestEngine): Promise<BacktestResult>;
  compare(spec: CompareSpec, fits: FitSpec[], panels: ReturnsPanel[]): Promise<CompareResult>;
  /** One task of a batch (a merged batch replays task by task). */
  batchTask?(spec: FitSpec, panel: ReturnsPanel, backtest: boolean): Promise<TaskOutcome>;
  /** Tasks of a batch run side by side (default 2). */
  concurrency?: number;
  presentValue(spec: PresentValueSpec, data: AnalysisData): Promise<PresentValueResult>;
  drift(spec: DriftSpec, panel: ReturnsPanel): Promise<DriftResult>;
}

export interface RecomputeOptions {
  onProgress?: (done: number, total: number, stage?: string) => void;
  signal?: AbortSignal;
}

/**
 * Recompute on a Compute (src-main/services/compute.ts: the worker pool, or this process
 * sized to the work) through the analysis service, the path the commands and the app take.
 */
export function poolRecompute(compute: Compute): Recompute {
  return {
    fit: (spec, panel) => computeAnalysis({ kind: 'fit', spec }, { panels: [panel] }, compute),
    backtest: (spec, panel, engine) => computeAnalysis({ kind: 'backtest', spec, ...(engine ? { engine } : {}) }, { panels: [panel] }, compute),
    compare: (spec, fits, panels) => computeAnalysis({ kind: 'compare', spec, fits }, { panels }, compute),
    batchTask: (spec, panel, backtest) => compute.runTask('batchTask', { spec, panel, backtest }),
    concurrency: 2 * (compute.threads ?? 1),
    presentValue: (spec, data) => computeAnalysis({ kind: 'present-value', spec }, data, compute),
    drift: (spec, panel) => computeAnalysis({ kind: 'drift', spec }, { panels: [panel] }, compute),
  };
}

const ENGINES: readonly BacktestEngine[] = ['auto', 'incremental', 'fresh', 'fit'];
const isEngine = (e: string | undefined): e is BacktestEngine => e !== undefined && (ENGINES as readonly string[]).includes(e);

function countNumbers(x: unknown): number {
  if (typeof x === 'number') return 1;
  if (x instanceof Float64Array) return x.length;
  if (Array.isArray(x)) return x.reduce((n: number, v) => n + countNumbers(v), 0);
  if (x !== null && typeof x === 'object') return Object.values(x).reduce((n: number, v) => n + countNumbers(v), 0);
  return 0;
}

function recordedPanels(r: RunRecord): PanelFingerprint[] {
  return r.panels?.length ? r.panels : [r.panel];
}

/** Recomputes one run and compares it with the stored result. */
export async function replayRun(store: Store, id: number, recompute: Recompute, opts: { limit?: number; threads?: number } = {}): Promise<ReplayReport> {
  const record = getRun(store, id);
  const stale = staleItems(store, record);
  const report: ReplayReport = {
    run: record.id,
    kind: record.kind,
    label: record.label,
    recordedVersion: record.version,
    currentVersion: VERSION,
    stale: stale.length > 0,
    staleItems: stale,
    panels: recordedPanels(record).map((p) => ({ recorded: p.sha256, current: null, matches: false })),
    compared: 0,
    differing: 0,
    differences: [],
    ok: false,
  };
  if (record.compute) report.recordedThreads = record.compute.threads;
  if (opts.threads !== undefined) report.usedThreads = opts.threads;
  let result: RunResult;
  let current: PanelFingerprint[];
  let backtestBlock: BacktestSpec | undefined;
  try {
    if (record.kind === 'batch') {
      const run = recompute.batchTask;
      if (!run) throw new DeflatorError('INPUT_INVALID', 'this replay cannot recompute batch tasks', 'replay the run with `deflator replay ID --db DB`');
      const b = await recomputeBatch(store, record.spec, run, { concurrency: recompute.concurrency ?? 2 });
      result = b.result;
      current = uniqueFingerprints(b.panels);
    } else {
      const engine = record.compute?.engine;
      const analysis: Analysis =
        record.kind === 'compare'
          ? { kind: 'compare', ...parseCompareSpec(record.spec) }
          : record.kind === 'fit'
            ? { kind: 'fit', spec: parseFitSpec(record.spec) }
            : record.kind === 'present-value'
              ? { kind: 'present-value', spec: parsePresentValueSpec(record.spec) }
              : record.kind === 'drift'
                ? { kind: 'drift', spec: parseDriftSpec(record.spec) }
                : { kind: 'backtest', spec: parseFitSpec(record.spec), ...(isEngine(engine) ? { engine } : {}) };
      backtestBlock = analysis.kind === 'fit' || analysis.kind === 'backtest' || analysis.kind === 'compare' ? analysis.spec.backtest : undefined;
      // built from the stored rows, never read from the panel cache: replay checks the whole path
      const data = loadAnalysisData(store, analysis, { cache: false });
      const panels = data.panels;
      switch (analysis.kind) {
        case 'compare':
          result = await recompute.compare(analysis.spec, analysis.fits, panels);
          break;
        case 'fit':
          result = await recompute.fit(analysis.spec, panels[0]);
          break;
        case 'backtest':
          result = await recompute.backtest(analysis.spec, panels[0], analysis.engine);
          break;
        case 'present-value':
          result = await recompute.presentValue(analysis.spec, data);
          break;
        case 'drift':
          result = await recompute.drift(analysis.spec, panels[0]);
          break;
      }
      if (data.yearly) {
        const v = data.yearly.values;
        current = [fingerprintYearly({ closes: v.closes, assets: data.yearly.assets, weighting: v.weighting, price: v.price, dividend: v.dividend })];
      } else current = uniqueFingerprints(panels);
    }
  } catch (e) {
    report.error = isDeflatorError(e) ? `${e.code}: ${describeError(e)}` : describeError(e);
    return report;
  }
  const recorded = recordedPanels(record);
  report.panels = recorded.map((p, i) => {
    const now = current[i]?.sha256 ?? null;
    return { recorded: p.sha256, current: now, matches: now === p.sha256 };
  });
  if (current.length > recorded.length) {
    for (const extra of current.slice(recorded.length)) report.panels.push({ recorded: '(none)', current: extra.sha256, matches: false });
  }
  const d = diffExact(record.result, result, Number.POSITIVE_INFINITY);
  report.compared = countNumbers(record.result);
  report.differing = d.count;
  report.differences = d.differences.slice(0, opts.limit ?? 200);
  const recordedKernels = record.compute?.kernels?.revision ?? KERNEL_REVISION_UNRECORDED;
  report.recordedKernels = recordedKernels;
  report.currentKernels = KERNEL_REVISION;
  report.mode = record.version === VERSION && recordedKernels === KERNEL_REVISION ? 'exact' : 'tolerance';
  const judged = judgeDifferences(d.differences, REPLAY_TOLERANCE);
  if (judged.largest) report.largest = judged.largest;
  if (report.mode === 'tolerance') {
    report.tolerance = { ...REPLAY_TOLERANCE };
    report.beyondTolerance = judged.beyond;
    if (judged.added.length) report.addedKeys = judged.added;
  }
  if (d.count > 0 && (record.kind === 'backtest' || record.kind === 'compare') && backtestBlock) {
    // The chunks where the rolling sums restart: fixed by the spec now, by the threads before.
    const current = windowsPerChunk(backtestBlock);
    const recorded = record.compute?.chunkWindows ?? null;
    if (recorded !== current) report.chunkWindows = { recorded, current };
  }
  report.ok = !report.stale && report.panels.every((p) => p.matches) && (report.mode === 'exact' ? d.count === 0 : judged.beyond === 0);
  return report;
}

/** Fingerprints of the distinct panels, in first-seen order (how recordRun stores them). */
export function uniqueFingerprints(panels: ReturnsPanel[]): PanelFingerprint[] {
  const seen = new Set<string>();
  const out: PanelFingerprint[] = [];
  for (const p of panels) {
    const fp = fingerprintPanel(p, nodeSha256);
    if (seen.has(fp.sha256)) continue;
    seen.add(fp.sha256);
    out.push(fp);
  }
  return out;
}

const show = (v: unknown): string => {
  const text = typeof v === 'number' ? (Object.is(v, -0) ? '-0' : String(v)) : (JSON.stringify(v) ?? String(v));
  return text.length > 120 ? `${text.slice(0, 117)}...` : text;
};

export function formatReplay(r: ReplayReport): string {
  const lines = [`Replay of run ${r.run} (${r.kind}: ${r.label})`];
  if (r.recordedVersion !== r.currentVersion) lines.push(`  note: recorded by deflator ${r.recordedVersion}, recomputed by ${r.currentVersion}`);
  if (r.mode === 'tolerance' && r.recordedKernels !== r.currentKernels) lines.push(`  note: recorded with numerical kernels ${r.recordedKernels}, recomputed with ${r.currentKernels}: numbers are compared to a tolerance, not bit for bit`);
  if (r.recordedThreads !== undefined && r.usedThreads !== undefined && r.recordedThreads !== r.usedThreads) {
    lines.push(`  note: recorded with ${r.recordedThreads} worker thread(s), replayed with ${r.usedThreads} (the numbers do not depend on the thread count)`);
  }
  if (r.chunkWindows) {
    lines.push(
      r.chunkWindows.recorded === null
        ? `  note: recorded before a back-test's chunks of windows were fixed by its spec (they followed the worker threads), now chunks of ${r.chunkWindows.current}: the last bits of its rolling sums can differ`
        : `  note: its back-test restarted its rolling sums every ${r.chunkWindows.recorded} windows, now every ${r.chunkWindows.current}: the last bits can differ`,
    );
  }
  if (r.stale) {
    lines.push('  STALE: the data this run read has changed since it was recorded:');
    for (const s of r.staleItems) lines.push(`    ${s.what}: ${s.reason}`);
  } else lines.push('  data: every recorded file and subject digest matches the store');
  r.panels.forEach((p, i) => {
    const tag = r.panels.length > 1 ? ` ${i + 1}` : '';
    if (p.matches) lines.push(`  panel${tag}: fingerprint matches (${p.recorded})`);
    else lines.push(`  panel${tag}: fingerprint MISMATCH: recorded ${p.recorded}, now ${p.current ?? '(could not rebuild)'}`);
  });
  if (r.error) {
    lines.push(`  recompute FAILED: ${r.error}`);
  } else if (r.differing === 0) {
    lines.push(`  numbers: all ${r.compared} stored numbers reproduced bit for bit`);
  } else if (r.mode === 'tolerance' && r.tolerance && r.beyondTolerance === 0) {
    lines.push(
      `  numbers: compared across versions (recorded with kernels ${r.recordedKernels}, recomputed with ${r.currentKernels}) to the tolerance |a - b| <= ${r.tolerance.relative} max(|a|, |b|) + ${r.tolerance.absolute}: all ${r.compared} stored numbers within it; ${r.differing - (r.addedKeys?.length ?? 0)} differ in the last bits${r.largest ? `, the largest by ${r.largest.relative.toExponential(2)} (relative) at ${r.largest.path}` : ''}`,
    );
    if (r.addedKeys?.length) lines.push(`  note: this version adds ${r.addedKeys.join(', ')} to the result (not in the stored one)`);
  } else {
    const why = r.mode === 'tolerance' && r.tolerance ? ` (${r.beyondTolerance} beyond the cross-version tolerance ${r.tolerance.relative} relative + ${r.tolerance.absolute})` : '';
    lines.push(`  numbers: ${r.differing} value(s) differ (of ${r.compared} stored numbers)${why}${r.largest ? `; largest relative difference ${r.largest.relative.toExponential(2)} at ${r.largest.path}` : ''}:`);
    for (const d of r.differences) lines.push(`    ${d.path}: stored ${show(d.stored)}, recomputed ${show(d.recomputed)}`);
    if (r.differing > r.differences.length) lines.push(`    ... and ${r.differing - r.differences.length} more`);
  }
  lines.push(r.ok ? (r.mode === 'tolerance' && r.differing > (r.addedKeys?.length ?? 0) ? 'REPLAY OK (within the cross-version tolerance)' : 'REPLAY OK') : 'REPLAY MISMATCH');
  return lines.join('\n');
}
