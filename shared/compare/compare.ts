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
import type { BacktestResult, CompareResult, CompareRow, EstimatorIdentity, FitResult, ResultWarning } from '../results.js';
import { bestPerColumn } from '../present/best.js';
import { warning } from '../warnings.js';
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
  /** The model's full spec (its estimator identifies it beside its kind and factors). */
  spec?: FitSpec;
  fit?: FitResult;
  error?: string;
  backtest?: BacktestResult;
  backtestError?: string;
}

/** A model's outcome before anything ran: its label and spec. */
export function outcomeFor(f: FitSpec): ModelOutcome {
  return { label: f.label ?? f.model.kind, spec: f };
}

/** The estimator that fitted a model: method, stage, first-stage weight, lags (spec and used). */
export function estimatorIdentity(spec: FitSpec, fit: FitResult): EstimatorIdentity {
  return { method: spec.estimator.method, stage: spec.estimator.stage, weight: spec.estimator.weight, lags: spec.estimator.lags, lagsUsed: fit.sample.lags };
}

/** One value if every model shares it, else a pointer to the per-model column. */
function common(values: string[], what: string): string {
  return new Set(values).size === 1 ? values[0] : `per model (see the ${what} column)`;
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

/** The table row of a fitted model: its identity (kind, factors, estimator), parameters, test, HJ distance, fit, out-of-sample errors and warnings. */
export function outcomeRow(o: ModelOutcome): CompareRow {
  const f = o.fit;
  if (!f) throw new DeflatorError('INPUT_INVALID', `model ${o.label} has no fit to tabulate`, 'tabulate fitted models only');
  const row: CompareRow = { label: o.label, model: f.sample.model, returns: f.sample.returns, factors: f.sample.factors, params: f.params, test: f.test, fit: f.fit };
  if (o.spec) {
    row.estimator = estimatorIdentity(o.spec, f);
    if (o.spec.model.kind === 'consumption') row.factors = [o.spec.model.consumption ?? 'consumption'];
  } else {
    // Without the spec (a batch task read back from its result file): what the fit's header says.
    const weight = f.sample.method !== 'gmm' ? '' : /Hansen-Jagannathan/.test(f.sample.weighting) ? 'hj' : 'identity';
    row.estimator = { method: f.sample.method, stage: f.sample.stage, weight, lags: f.sample.lags, lagsUsed: f.sample.lags };
  }
  if (f.hj) row.hj = f.hj;
  if (o.backtest) {
    row.oos = { ...o.backtest.oos };
    row.oosWindowsFailed = o.backtest.windowsFailed;
  }
  if (o.backtestError) row.error = `back-test failed: ${o.backtestError}`;
  row.warnings = [...(f.warnings ?? []), ...(o.backtest?.warnings ?? [])];
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
  const warnings: ResultWarning[] = rows.flatMap((r) => (r.warnings ?? []).map((w) => ({ ...w, model: r.label })));
  const fitted = ok.map((o) => (o.fit as FitResult).sample);
  const first = fitted[0];
  const sample = {
    ...first,
    model: `comparison of ${outcomes.length} models`,
    method: common(fitted.map((x) => x.method), 'estimator'),
    stage: common(fitted.map((x) => x.stage), 'estimator'),
    weighting: common(fitted.map((x) => x.weighting), 'estimator'),
    lagsRule: new Set(fitted.map((x) => `${x.lags} (${x.lagsRule})`)).size === 1 ? first.lagsRule : 'per model (see the estimator column)',
    returns: first.returns,
    factors: [...new Set(fitted.flatMap((x) => x.factors))],
    notes: [...first.notes, ...(spec.backtest ? [`out-of-sample columns: back-test with windows of ${spec.backtest.window}, step ${spec.backtest.step}, horizon ${spec.backtest.horizon}${spec.backtest.expanding ? ', expanding' : ''}`] : [])],
  };
  const result: CompareResult = { kind: 'compare', sample, models: rows, hjTests: [], best: bestPerColumn(rows), warnings };
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
    if (bootstrap.failures.length) {
      const lost = Math.max(0, ...result.hjTests.map((t) => st.replications - (t.used ?? st.replications)));
      warnings.push(
        warning(
          'FAILED_REPLICATIONS',
          `${lost > 0 ? `up to ${lost} of ${st.replications}` : 'some'} bootstrap replications could not be computed and are left out of the HJ-distance p-values (${bootstrap.failures.join('; ')}); each p-value counts only the replications it used`,
        ),
      );
    }
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
    const o = { ...modelOutcome(f, panels[i], spec.backtest !== undefined, deps), spec: f };
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


