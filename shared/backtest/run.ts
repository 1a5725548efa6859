/**
 * The back-test (METHODS 6): fit the spec's model on each window, price the held-out
 * periods with the window's estimate, and summarise.
 *
 * Two engines give the same numbers:
 * - incremental (linear models, GMM, first or second stage, inference with the
 *   weighting S): the window's cross-moment sums are updated as it moves
 *   (crossMoments.ts) and the estimate is computed from them (linearWindow.ts), so the
 *   cost per window does not grow with the window length;
 * - per-window: the spec is fitted afresh on each window by the estimator (`fit`), for
 *   every model, method and stage it supports.
 * A window whose fit fails (singular matrix, no convergence, too short) is recorded
 * with its reason and left out of the summaries; it never stops the run.
 */
import { warning } from '../warnings.js';
import { DeflatorError, isDeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { FitSpec } from '../spec.js';
import type { BacktestResult, FitResult, ResultWarning, SampleHeader } from '../results.js';
import { PERIODS_PER_YEAR } from '../data.js';
import { conditionPanel, instrumentHeader, meanPrice, payoffKey, payoffPrices } from '../estimation/instruments.js';
import { CrossMoments } from './crossMoments.js';
import { fitLinearWindow, parameterNames, type LinearKind, type WindowParam } from './linearWindow.js';
import { heldOutErrors } from './oos.js';
import { slicePanel, windowLags, windowSchedule, windowsPerChunk, type WindowBounds } from './windows.js';

/** Anything with an `aborted` flag: an AbortSignal, or the worker's shared cancel flag. */
export interface CancelToken {
  readonly aborted: boolean;
}

export type FitFunction = (spec: FitSpec, panel: ReturnsPanel) => FitResult;

export type BacktestEngine = 'auto' | 'incremental' | 'fresh' | 'fit';

export interface BacktestOptions {
  /** The estimator, used for every window the incremental engine does not cover. */
  fit?: FitFunction;
  /** 'auto' (default): incremental where it applies, else fit. 'fresh': the incremental formulas with the sums rebuilt for every window. */
  engine?: BacktestEngine;
  onProgress?: (done: number, total: number) => void;
  signal?: CancelToken;
  /** Only windows [from, to) of the schedule (chunks run in separate workers). */
  range?: [number, number];
}

export interface WindowRecord {
  index: number;
  ok: boolean;
  reason?: string;
  lags?: number;
  params?: WindowParam[];
  alphaIn?: Float64Array;
  benchIn?: Float64Array;
  alphaOos?: Float64Array;
  benchOos?: Float64Array;
  meanOos?: Float64Array;
}

/** Does the incremental engine cover this spec? */
export function incrementalApplies(spec: FitSpec): boolean {
  const e = spec.estimator;
  const k = spec.model.kind;
  return e.method === 'gmm' && (k === 'linear' || k === 'linear-raw' || k === 'linear-gross') && (e.stage === 'first' || e.stage === 'second') && e.inferenceS === 'weighting' && !scaledGrossPayoffs(spec);
}

/**
 * Gross returns scaled by instruments: the payoff R z costs z, not 1, which the rolling
 * sums (built for E[m R] = 1) do not carry; such back-tests fit each window
 * (docs/methods.md, back-testing with instruments).
 */
function scaledGrossPayoffs(spec: FitSpec): boolean {
  const ins = spec.instruments;
  return spec.returns === 'gross' && ins !== undefined && ins.series.length > 0 && ins.scale !== 'factors';
}

/** Does this back-test roll its cross-moment sums from window to window (so that its chunks matter)? */
export function rollsSums(spec: FitSpec, engine: BacktestEngine = 'auto'): boolean {
  return (engine === 'incremental' || engine === 'auto') && incrementalApplies(spec);
}

function cancelled(): DeflatorError {
  return new DeflatorError('CANCELLED', 'the back-test was cancelled', 'nothing was saved; run it again to get results');
}

/**
 * The panel the back-test prices: with "includeRiskfree" the risk-free asset is one of
 * the test assets (appended under the spec's riskfree name), in and out of sample.
 */
export function backtestPanel(spec: FitSpec, raw: ReturnsPanel): ReturnsPanel {
  // With instruments the test assets are the scaled payoffs and the factors the scaled ones (METHODS 9).
  const panel = conditionPanel(spec, raw);
  if (!spec.includeRiskfree) return panel;
  const name = spec.riskfree ?? 'riskfree';
  if (panel.assets.includes(name)) return panel;
  if (!panel.riskfreeGross) throw new DeflatorError('DATA_MISSING', `includeRiskfree is set but the panel has no risk-free series "${name}"`, 'name the risk-free series in "riskfree"');
  return { ...panel, assets: [...panel.assets, name], returns: [...panel.returns, panel.riskfreeGross] };
}

/** Runs the windows of the schedule (or of opts.range) and returns one record per window. */
export function backtestWindows(spec: FitSpec, rawPanel: ReturnsPanel, opts: BacktestOptions = {}): WindowRecord[] {
  const panel = backtestPanel(spec, rawPanel);
  if (!spec.backtest) throw new DeflatorError('SPEC_INVALID', 'spec.backtest: a back-test needs a "backtest" block ({"window": W, "step": s, "horizon": h})', 'add the backtest block to the spec');
  const schedule = windowSchedule(panel.periods.length, spec.backtest);
  const [from, to] = opts.range ?? [0, schedule.length];
  const engine = opts.engine ?? 'auto';
  const useIncremental = engine === 'incremental' || engine === 'fresh' || (engine === 'auto' && incrementalApplies(spec));
  if (useIncremental && !incrementalApplies(spec)) {
    throw new DeflatorError('SPEC_INVALID', `the incremental back-test covers linear models by GMM at the first or second stage; this spec is ${spec.model.kind} / ${spec.estimator.method} / ${spec.estimator.stage}`, 'use engine "auto" or "fit"');
  }
  if (!useIncremental && !opts.fit) throw new DeflatorError('SPEC_INVALID', 'this back-test needs the estimator to fit each window', 'pass the fit function (the worker does this)');
  if (!(Number.isInteger(from) && Number.isInteger(to) && 0 <= from && from <= to && to <= schedule.length)) {
    throw new DeflatorError('INPUT_INVALID', `backtestWindows: range [${from}, ${to}) is not inside the ${schedule.length} windows of the schedule`, 'pass whole window indices 0 <= from <= to <= windows');
  }
  const total = to - from;
  const records: WindowRecord[] = [];
  const cm = useIncremental ? new CrossMoments(panel, { assetSecondMoments: spec.estimator.weight === 'hj' }) : null;
  const names = parameterNames(panel.factors.map((f) => f.name));
  const chunk = windowsPerChunk(spec.backtest);
  for (let w = from; w < to; w++) {
    if (opts.signal?.aborted) throw cancelled();
    const win = schedule[w];
    const lags = windowLags(spec.estimator.lags, win.end - win.start);
    try {
      if (cm) positionSums(cm, spec, schedule, chunk, w, w === from, engine === 'fresh');
      records.push(cm ? runIncremental(spec, panel, cm, win, w, lags, names) : runWithFit(spec, panel, opts.fit as FitFunction, win, w, lags));
    } catch (e) {
      if (!isDeflatorError(e) || e.code === 'CANCELLED') throw e;
      records.push({ index: w, ok: false, reason: `${e.code}: ${e.message}`, lags });
    }
    opts.onProgress?.(w - from + 1, total);
  }
  return records;
}

/**
 * Brings the rolling sums to window w. They restart from scratch at the first window of
 * every chunk (windowsPerChunk) and roll from there, so the sums of window w, to the bit,
 * depend on the schedule and w alone: not on where a range of windows starts, nor on how
 * the chunks are shared out among threads. A range that starts inside a chunk rebuilds
 * the sums at that chunk's first window and rolls them forward to w (the same additions
 * in the same order as a run from the chunk's start). The restarts also bound rounding
 * drift: at most one chunk of updates separates any sums from a rebuild.
 */
function positionSums(cm: CrossMoments, spec: FitSpec, schedule: WindowBounds[], chunk: number, w: number, first: boolean, fresh: boolean): void {
  const lagsOf = (k: number): number => windowLags(spec.estimator.lags, schedule[k].end - schedule[k].start);
  const win = schedule[w];
  if (fresh || w % chunk === 0) {
    cm.reset(win.start, win.end, lagsOf(w));
    return;
  }
  if (first) {
    const c0 = w - (w % chunk);
    cm.reset(schedule[c0].start, schedule[c0].end, lagsOf(c0));
    for (let k = c0 + 1; k < w; k++) cm.moveTo(schedule[k].start, schedule[k].end, lagsOf(k));
  }
  cm.moveTo(win.start, win.end, lagsOf(w));
}

function runIncremental(spec: FitSpec, panel: ReturnsPanel, cm: CrossMoments, win: WindowBounds, index: number, lags: number, names: ReturnType<typeof parameterNames>): WindowRecord {
  const stage = spec.estimator.stage === 'first' ? 'first' : 'second';
  const fit = fitLinearWindow(cm, {
    kind: spec.model.kind as LinearKind,
    stage,
    weight: spec.estimator.weight,
    lags,
    centered: spec.estimator.centered,
    factorNames: panel.factors.map((f) => f.name),
    names,
  });
  const N = panel.assets.length;
  const gross = panel.returnKind === 'gross' ? 1 : 0;
  const benchIn = new Float64Array(N);
  for (let i = 0; i < N; i++) benchIn[i] = cm.meanReturn(i) - gross;
  // Held out: m_t = a - b'(f_t - mu) with a = 1 (excess) and mu = 0 (raw, gross); see oos.ts.
  const h = win.oosEnd - win.oosStart;
  const K = panel.factors.length;
  const m = new Float64Array(h);
  for (let t = win.oosStart; t < win.oosEnd; t++) {
    let v = fit.a ?? 1;
    for (let k = 0; k < K; k++) v -= fit.b[k] * (panel.factors[k].values[t] - (fit.mu ? fit.mu[k] : 0));
    m[t - win.oosStart] = v;
  }
  const alphaOos = new Float64Array(N);
  const benchOos = new Float64Array(N);
  const meanOos = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    const r = panel.returns[i];
    let s = 0;
    let sm = 0;
    for (let t = win.oosStart; t < win.oosEnd; t++) {
      s += r[t];
      sm += r[t] * m[t - win.oosStart];
    }
    meanOos[i] = s / h;
    benchOos[i] = meanOos[i] - gross;
    alphaOos[i] = sm / h - gross;
  }
  checkFinite(fit.params, fit.alpha, alphaOos);
  return { index, ok: true, lags, params: fit.params, alphaIn: fit.alpha, benchIn, alphaOos, benchOos, meanOos };
}

function runWithFit(spec: FitSpec, panel: ReturnsPanel, fit: FitFunction, win: WindowBounds, index: number, lags: number): WindowRecord {
  const sub = slicePanel(panel, win.start, win.end);
  const windowSpec: FitSpec = { ...spec, estimator: { ...spec.estimator, lags }, backtest: undefined };
  const res = fit(windowSpec, sub);
  const params = res.params.map((p) => ({ name: p.name, estimate: p.estimate, se: p.se }));
  // the beta-representation fits report their betas apart from the parameters
  const oosParams = [...params, ...(res.betas ?? []).map((b) => ({ name: `beta.${b.asset}.${b.factor}`, estimate: b.estimate }))];
  const N = panel.assets.length;
  const alphaIn = new Float64Array(N);
  const benchIn = new Float64Array(N);
  const gross = panel.returnKind === 'gross';
  const prices = payoffPrices(panel);
  for (let i = 0; i < N; i++) {
    const row = res.pricingErrors.find((r) => payoffKey(r) === panel.assets[i]);
    if (!row) throw new DeflatorError('NOT_FOUND', `the window's fit has no pricing error for asset ${panel.assets[i]}`, 'report this with the spec');
    alphaIn[i] = row.alpha;
    let s = 0;
    for (let t = win.start; t < win.end; t++) s += panel.returns[i][t];
    benchIn[i] = s / (win.end - win.start) - (gross ? meanPrice(prices?.[i] ?? null, win.start, win.end) : 0);
  }
  const oos = heldOutErrors(spec, panel, oosParams, win.oosStart, win.oosEnd);
  checkFinite(params, alphaIn, oos.alpha);
  return { index, ok: true, lags, params, alphaIn, benchIn, alphaOos: oos.alpha, benchOos: oos.benchmark, meanOos: oos.meanReturn };
}

function checkFinite(params: WindowParam[], a: Float64Array, b: Float64Array): void {
  for (const p of params) {
    if (!Number.isFinite(p.estimate) || !Number.isFinite(p.se)) throw new DeflatorError('SINGULAR', `parameter ${p.name} is not finite in this window (${p.estimate}, s.e. ${p.se})`, 'the window is degenerate; use a longer window');
  }
  for (const v of a) if (!Number.isFinite(v)) throw new DeflatorError('SINGULAR', 'an in-sample pricing error is not finite in this window', 'the window is degenerate; use a longer window');
  for (const v of b) if (!Number.isFinite(v)) throw new DeflatorError('SINGULAR', 'an out-of-sample pricing error is not finite (a held-out return or factor is extreme)', 'check the held-out data');
}

function mean(xs: number[]): number {
  let s = 0;
  for (const x of xs) s += x;
  return s / xs.length;
}

/** The result header for a back-test: the sample, estimator and window rules. */
export function backtestHeader(spec: FitSpec, panel: ReturnsPanel, firstLags: number, engineUsed: string): SampleHeader {
  const e = spec.estimator;
  const bt = spec.backtest;
  const notes = [
    `back-test: ${bt?.expanding ? 'expanding' : 'rolling'} windows of ${bt?.window} periods, step ${bt?.step}, ${bt?.horizon} held-out period(s) each`,
    `engine: ${engineUsed}`,
    'out-of-sample pricing error: mean over the held-out periods of the pricing moment at the window estimate (docs/methods.md, back-testing)',
    'in-sample and out-of-sample R^2 both against the zero-alpha benchmark m = 1',
    ...panel.sampleNotes.map((n) => `${n.subject}: ${n.reason}`),
  ];
  const cond = panel.conditioning;
  return {
    start: panel.periods[0],
    end: panel.periods[panel.periods.length - 1],
    T: panel.periods.length,
    N: cond ? cond.baseAssets.length : panel.assets.length,
    K: cond ? cond.baseFactors.length : panel.factors.length,
    lags: firstLags,
    frequency: panel.frequency,
    periodsPerYear: PERIODS_PER_YEAR[panel.frequency],
    returns: panel.returnKind,
    method: e.method,
    model: spec.model.kind,
    stage: e.stage,
    weighting: e.weight,
    centered: e.centered,
    lagsRule: e.lags === 'auto' ? 'auto: floor(4 (n/100)^(2/9)), n = window length' : `fixed: ${e.lags}`,
    assets: cond ? cond.baseAssets.slice() : panel.assets.slice(),
    factors: cond ? cond.baseFactors.slice() : panel.factors.map((f) => f.name),
    notes,
    ...(cond ? instrumentHeader(cond) : {}),
  };
}

/** Summaries over the successful windows (METHODS 6). */
export function summarizeBacktest(spec: FitSpec, rawPanel: ReturnsPanel, records: WindowRecord[], engineUsed: string): BacktestResult {
  if (!spec.backtest) throw new DeflatorError('SPEC_INVALID', 'spec.backtest is missing', 'add the backtest block');
  const panel = backtestPanel(spec, rawPanel);
  const schedule = windowSchedule(panel.periods.length, spec.backtest);
  const sorted = records.slice().sort((a, b) => a.index - b.index);
  const ok = sorted.filter((r) => r.ok);
  const failed = sorted.filter((r) => !r.ok);
  if (ok.length === 0) {
    const first = failed[0]?.reason ?? 'no windows';
    throw new DeflatorError('SINGULAR', `every one of the ${sorted.length} back-test windows failed; the first: ${first}`, 'use a longer window, fewer lags or fewer test assets');
  }
  const N = panel.assets.length;
  const perAsset = panel.assets.map((asset, i) => {
    const alphaOos = mean(ok.map((r) => (r.alphaOos as Float64Array)[i]));
    const alphaIn = mean(ok.map((r) => (r.alphaIn as Float64Array)[i]));
    const meanReturnOos = mean(ok.map((r) => (r.meanOos as Float64Array)[i]));
    const part = panel.conditioning?.payoffs[i];
    return part ? { asset: part.base, instrument: part.instrument, alphaOos, alphaIn, meanReturnOos } : { asset, alphaOos, alphaIn, meanReturnOos };
  });
  const benchOos = panel.assets.map((_, i) => mean(ok.map((r) => (r.benchOos as Float64Array)[i])));
  const benchIn = panel.assets.map((_, i) => mean(ok.map((r) => (r.benchIn as Float64Array)[i])));
  let ssOos = 0;
  let ssIn = 0;
  let sbOos = 0;
  let sbIn = 0;
  let absIn = 0;
  let pooled = 0;
  for (let i = 0; i < N; i++) {
    ssOos += perAsset[i].alphaOos ** 2;
    ssIn += perAsset[i].alphaIn ** 2;
    sbOos += benchOos[i] ** 2;
    sbIn += benchIn[i] ** 2;
    absIn += Math.abs(perAsset[i].alphaIn);
  }
  for (const r of ok) for (const v of r.alphaOos as Float64Array) pooled += v * v;
  if (!(sbOos > 0) || !(sbIn > 0)) throw new DeflatorError('SINGULAR', 'the zero-alpha benchmark errors are all zero, so R^2 is undefined', 'check that the test-asset returns are not all zero');
  const windowList = sorted.map((r) => {
    const w = schedule[r.index];
    const row: BacktestResult['windowList'][number] = {
      start: panel.periods[w.start],
      end: panel.periods[w.end - 1],
      oosStart: panel.periods[w.oosStart],
      oosEnd: panel.periods[w.oosEnd - 1],
      ok: r.ok,
    };
    if (!r.ok) row.reason = r.reason;
    else {
      let s = 0;
      for (const v of r.alphaOos as Float64Array) s += v * v;
      row.oosRmse = Math.sqrt(s / N);
    }
    return row;
  });
  return {
    kind: 'backtest',
    label: spec.label ?? `${spec.model.kind}(${spec.model.factors.join(',')})`,
    sample: backtestHeader(spec, panel, ok[0].lags ?? 0, engineUsed),
    windows: sorted.length,
    windowsFailed: failed.length,
    failures: failed.map((r) => ({ end: panel.periods[schedule[r.index].end - 1], reason: r.reason ?? 'failed' })),
    oos: { rmse: Math.sqrt(ssOos / N), rmsePooled: Math.sqrt(pooled / (ok.length * N)), r2: 1 - ssOos / sbOos },
    inSample: { rmse: Math.sqrt(ssIn / N), r2: 1 - ssIn / sbIn, mape: absIn / N },
    perAsset,
    paths: ok.map((r) => ({ end: panel.periods[schedule[r.index].end - 1], params: r.params as WindowParam[] })),
    windowList,
    spec: { window: spec.backtest.window, step: spec.backtest.step, horizon: spec.backtest.horizon, expanding: spec.backtest.expanding },
    warnings: failed.length ? [failedWindowsWarning(failed.length, sorted.length, failed[0].reason ?? 'failed')] : [],
  };
}

/** FAILED_WINDOWS: how many windows failed, the first reason, and what the summaries leave out. */
export function failedWindowsWarning(failed: number, total: number, firstReason: string): ResultWarning {
  return warning(
    'FAILED_WINDOWS',
    `${failed} of ${total} back-test windows could not be estimated and are left out of every summary (first reason: ${firstReason}); the out-of-sample figures describe the other ${total - failed} windows only`,
  );
}

export function engineName(spec: FitSpec, engine: BacktestEngine = 'auto'): string {
  if (engine === 'fit' || (engine === 'auto' && !incrementalApplies(spec))) return 'per-window fit';
  if (engine === 'fresh') return 'cross-moment sums rebuilt per window';
  return 'incremental (rolling cross-moment sums)';
}

/** The whole back-test in this thread. */
export function backtest(spec: FitSpec, panel: ReturnsPanel, opts: BacktestOptions = {}): BacktestResult {
  const records = backtestWindows(spec, panel, { ...opts, range: undefined });
  return summarizeBacktest(spec, panel, records, engineName(spec, opts.engine));
}

