/**
 * Model comparison: every model of a {"compare": [...]} spec fitted on the same sample,
 * one row each (parameters, the pricing-error test, HJ distance, cross-sectional fit,
 * and the back-test's out-of-sample RMSE and R^2 when the spec has a backtest block),
 * the best model per column, and pairwise bootstrap tests of equal squared HJ
 * distances (bootstrap.ts).
 *
 * The same sample: each model's panel is cut to the periods all the panels share, so
 * a factor with a shorter history shortens every model's sample (stated in the notes).
 */
import { DeflatorError, isDeflatorError } from '../errors.js';
import { mapPanelPeriods, type ReturnsPanel } from '../panel.js';
import type { CompareSpec, FitSpec } from '../spec.js';
import type { BacktestResult, CompareResult, CompareRow, FitResult } from '../results.js';
import { blockLength } from '../bootstrap/blocks.js';
import type { CancelToken, FitFunction } from '../backtest/run.js';
import { describeFailures, hjBootstrapDraws, hjDifferenceTest, type HjBootstrapChunk, type HjBootstrapDeps } from './bootstrap.js';

export const BLOCK_RULE = 'auto: ceil(T^(1/3)) periods (common practice; Hall, Horowitz and Jing, 1995)';
export const HJ_TEST_METHOD =
  'moving-block bootstrap of periods, all series jointly; p = (1 + #{|d* - d| >= |d|}) / (1 + replications used), d = HJ_a^2 - HJ_b^2';

/** Each panel restricted to the periods every panel has (by period label). */
export function alignPanels(panels: ReturnsPanel[]): { panels: ReturnsPanel[]; dropped: number } {
  if (panels.length === 0) return { panels, dropped: 0 };
  const common = new Set(panels[0].periods);
  for (const p of panels.slice(1)) {
    const here = new Set(p.periods);
    for (const l of [...common]) if (!here.has(l)) common.delete(l);
  }
  if (common.size === 0) throw new DeflatorError('DATA_MISSING', 'the models of the comparison share no periods', 'check the factor series each model names');
  let dropped = 0;
  const out = panels.map((p) => {
    const keep: number[] = [];
    p.periods.forEach((l, t) => {
      if (common.has(l)) keep.push(t);
    });
    dropped = Math.max(dropped, p.periods.length - keep.length);
    if (keep.length === p.periods.length) return p;
    const pick = (s: Float64Array): Float64Array => Float64Array.from(keep, (t) => s[t]);
    return mapPanelPeriods(
      p,
      keep.map((t) => p.periods[t]),
      pick,
      [...p.sampleNotes, { subject: '*', reason: `cut to the ${keep.length} periods all compared models share` }],
    );
  });
  return { panels: out, dropped };
}

/** What happened to one model. */
export interface ModelOutcome {
  label: string;
  fit?: FitResult;
  error?: string;
  backtest?: BacktestResult;
  backtestError?: string;
}

/** The models that take part in the HJ bootstrap: fitted, with an HJ distance. */
export function bootstrapMembers(outcomes: ModelOutcome[]): number[] {
  return outcomes.map((o, i) => (o.fit?.hj ? i : -1)).filter((i) => i >= 0);
}

/** Bootstrap chunk description for the given members (replications [from, to)). */
export function bootstrapChunk(spec: CompareSpec, fits: FitSpec[], panels: ReturnsPanel[], members: number[], from: number, to: number): HjBootstrapChunk {
  const bs = spec.bootstrap ?? { replications: 499, block: 'auto' as const, seed: 20261201 };
  const T = panels[0].periods.length;
  return { fits: members.map((i) => fits[i]), panels: members.map((i) => panels[i]), seed: bs.seed, block: blockLength(T, bs.block), from, to };
}

export function bootstrapSettings(spec: CompareSpec, T: number): { replications: number; block: number; seed: number } {
  const bs = spec.bootstrap ?? { replications: 499, block: 'auto' as const, seed: 20261201 };
  return { replications: bs.replications, block: blockLength(T, bs.block), seed: bs.seed };
}

export type Column = { key: string; value: (r: CompareRow) => number | undefined; better: 'max' | 'min' };
/** The comparison's columns and which way is better: the one rule for best marks and batch rankings. */
export const COLUMNS: Column[] = [
  { key: 'test.p', value: (r) => r.test.p, better: 'max' },
  { key: 'hj.distance', value: (r) => r.hj?.distance, better: 'min' },
  { key: 'hj.p', value: (r) => r.hj?.p, better: 'max' },
  { key: 'fit.mape', value: (r) => r.fit.mape, better: 'min' },
  { key: 'fit.rmse', value: (r) => r.fit.rmse, better: 'min' },
  { key: 'fit.r2', value: (r) => r.fit.r2, better: 'max' },
  { key: 'oos.rmse', value: (r) => r.oos?.rmse, better: 'min' },
  { key: 'oos.r2', value: (r) => r.oos?.r2, better: 'max' },
];

/** Column key -> label of the best row (first on ties); columns no row has are left out. */
export function bestPerColumn(rows: CompareRow[]): Record<string, string> {
  const best: Record<string, string> = {};
  for (const c of COLUMNS) {
    let label: string | undefined;
    let v = 0;
    for (const r of rows) {
      const x = c.value(r);
      if (x === undefined || !Number.isFinite(x)) continue;
      if (label === undefined || (c.better === 'max' ? x > v : x < v)) {
        label = r.label;
        v = x;
      }
    }
    if (label !== undefined) best[c.key] = label;
  }
  return best;
}

/** The table row of a fitted model: its parameters, test, HJ distance, fit and out-of-sample errors. */
export function outcomeRow(o: ModelOutcome): CompareRow {
  const f = o.fit;
  if (!f) throw new DeflatorError('INPUT_INVALID', `model ${o.label} has no fit to tabulate`, 'tabulate fitted models only');
  const row: CompareRow = { label: o.label, params: f.params, test: f.test, fit: f.fit };
  if (f.hj) row.hj = f.hj;
  if (o.backtest) row.oos = { ...o.backtest.oos };
  if (o.backtestError) row.error = `back-test failed: ${o.backtestError}`;
  return row;
}

/** Builds the comparison result from the per-model outcomes and the bootstrap draws. */
export function assembleCompare(
  spec: CompareSpec,
  panels: ReturnsPanel[],
  outcomes: ModelOutcome[],
  bootstrap?: { members: number[]; values: Float64Array; failures: string[] },
): CompareResult {
  const ok = outcomes.filter((o) => o.fit);
  if (ok.length === 0) {
    throw new DeflatorError('SINGULAR', `no model of the comparison could be fitted; ${outcomes.map((o) => `${o.label}: ${o.error}`).join('; ')}`, 'fix the first error named above');
  }
  const rows: CompareRow[] = ok.map(outcomeRow);
  const first = (ok[0].fit as FitResult).sample;
  const sample = {
    ...first,
    model: `comparison of ${outcomes.length} models`,
    notes: [...first.notes, ...(spec.backtest ? [`out-of-sample columns: back-test with windows of ${spec.backtest.window}, step ${spec.backtest.step}, horizon ${spec.backtest.horizon}${spec.backtest.expanding ? ', expanding' : ''}`] : [])],
  };
  const result: CompareResult = { kind: 'compare', sample, models: rows, hjTests: [], best: bestPerColumn(rows) };
  const failures = outcomes.filter((o) => !o.fit).map((o) => ({ label: o.label, error: o.error ?? 'failed' }));
  if (failures.length) result.failures = failures;
  if (bootstrap && bootstrap.members.length >= 2) {
    const st = bootstrapSettings(spec, panels[0].periods.length);
    const hat = bootstrap.members.map((i) => (outcomes[i].fit?.hj?.distance ?? 0) ** 2);
    const M = bootstrap.members.length;
    for (let a = 0; a < M; a++) {
      for (let b = a + 1; b < M; b++) {
        const t = hjDifferenceTest(hat, bootstrap.values, M, a, b);
        result.hjTests.push({ a: outcomes[bootstrap.members[a]].label, b: outcomes[bootstrap.members[b]].label, diff: t.diff, p: t.p, replications: st.replications, block: st.block, seed: st.seed, used: t.used });
      }
    }
    const bs = spec.bootstrap;
    result.bootstrap = {
      replications: st.replications,
      block: st.block,
      blockRule: bs && bs.block !== 'auto' ? `fixed: ${bs.block} periods` : BLOCK_RULE,
      seed: st.seed,
      method: HJ_TEST_METHOD,
      failures: bootstrap.failures,
    };
  }
  return result;
}

export interface CompareDeps extends HjBootstrapDeps {
  fit: FitFunction;
  /** Back-test of one model (when the spec has a backtest block). */
  backtest?: (spec: FitSpec, panel: ReturnsPanel) => BacktestResult;
  onStage?: (stage: string, done: number, total: number) => void;
  signal?: CancelToken;
}

/** An estimation error as the row's text (`SINGULAR: ...`); cancellation and programming errors propagate. */
export function outcomeError(e: unknown): string {
  if (isDeflatorError(e)) {
    if (e.code === 'CANCELLED') throw e;
    return `${e.code}: ${e.message}`;
  }
  throw e;
}

/**
 * One model's fit, then its back-test when `withBacktest` (and the fit succeeded). An
 * estimation error is kept as text in the outcome (`error`, `backtestError`) so the
 * other models go on; a comparison and every task of a batch go through here.
 */
export function modelOutcome(f: FitSpec, panel: ReturnsPanel, withBacktest: boolean, deps: Pick<CompareDeps, 'fit' | 'backtest'>): ModelOutcome {
  const out: ModelOutcome = { label: f.label ?? f.model.kind };
  try {
    out.fit = deps.fit(f, panel);
  } catch (e) {
    out.error = outcomeError(e);
  }
  if (out.fit && withBacktest && deps.backtest) {
    try {
      out.backtest = deps.backtest(f, panel);
    } catch (e) {
      out.backtestError = outcomeError(e);
    }
  }
  return out;
}

/** The whole comparison in this thread. */
export function compareModels(spec: CompareSpec, fits: FitSpec[], rawPanels: ReturnsPanel[], deps: CompareDeps): CompareResult {
  const { panels } = alignPanels(rawPanels);
  const outcomes: ModelOutcome[] = fits.map((f, i) => {
    if (deps.signal?.aborted) throw new DeflatorError('CANCELLED', 'the comparison was cancelled', 'nothing was saved; run it again');
    const o = modelOutcome(f, panels[i], spec.backtest !== undefined, deps);
    deps.onStage?.('fit', i + 1, fits.length);
    return o;
  });
  const members = bootstrapMembers(outcomes);
  let bootstrap: { members: number[]; values: Float64Array; failures: string[] } | undefined;
  if (members.length >= 2) {
    const st = bootstrapSettings(spec, panels[0].periods.length);
    const draws = hjBootstrapDraws(bootstrapChunk(spec, fits, panels, members, 0, st.replications), {
      hjSquared: deps.hjSquared,
      ...(deps.hjStart ? { hjStart: deps.hjStart } : {}),
      signal: deps.signal,
      onProgress: (d, t) => deps.onStage?.('bootstrap', d, t),
    });
    bootstrap = { members, values: draws.values, failures: describeFailures(draws.failures) };
  }
  return assembleCompare(spec, panels, outcomes, bootstrap);
}


