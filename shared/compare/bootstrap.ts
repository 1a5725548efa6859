/**
 * Do two models have the same squared HJ distance? A moving-block bootstrap
 * (shared/bootstrap/blocks.ts) of the periods, applied jointly to every series of
 * every model, recomputes each model's HJ^2 on each replication; for a pair (a, b)
 *
 *   d     = HJ_a^2 - HJ_b^2 on the sample,
 *   d*_r  = the same on replication r = 1..R,
 *   p     = (1 + #{ r : |d*_r - d| >= |d| }) / (1 + R'),
 *
 * R' the replications on which both distances could be computed: the two-sided test
 * of d = 0 against the bootstrap distribution of d* - d, centred at the sample value
 * (Hall and Wilson, 1991, "Two guidelines for bootstrap hypothesis testing",
 * Biometrics 47; the +1 in both counts as in Davison and Hinkley, 1997, eq. 4.11).
 * Replication r uses its own random stream (seed, r), so any split of the
 * replications across workers gives the same draws and the same p.
 */
import { DeflatorError } from '../errors.js';
import { mapPanelPeriods, type ReturnsPanel } from '../panel.js';
import type { FitSpec } from '../spec.js';
import { replicationIndices } from '../bootstrap/blocks.js';
import type { CancelToken } from '../backtest/run.js';
import { linearHjApplies, linearHjSquared, modelSeries } from './hjSquared.js';
import { conditionPanel, payoffPrices } from '../estimation/instruments.js';

export interface HjBootstrapChunk {
  /** One spec per model taking part (models with an HJ distance). */
  fits: FitSpec[];
  /** Each model's panel, all on the same periods. */
  panels: ReturnsPanel[];
  seed: number;
  block: number;
  /** Replications [from, to) of the run. */
  from: number;
  to: number;
}

export interface HjBootstrapDraws {
  from: number;
  to: number;
  models: number;
  /** (to - from) x models, row-major: HJ^2 of each model on each replication; NaN where it could not be computed. */
  values: Float64Array;
  /** Why replications failed: per error code, how many model fits and the first message. */
  failures: BootstrapFailure[];
}

export interface BootstrapFailure {
  code: string;
  count: number;
  example: string;
}

export interface HjBootstrapDeps {
  /**
   * HJ^2 for models without a closed form (the consumption model): fitted on the resampled
   * panel, from `warm` (the full-sample estimate) when given, the estimator falling back to
   * its own start where that fails or lands in a local minimum (gmmHjSquared).
   */
  hjSquared?: (spec: FitSpec, panel: ReturnsPanel, warm?: Float64Array | null) => number;
  /** The full-sample HJ-weighted estimate of such a model: the warm start of every replication. */
  hjStart?: (spec: FitSpec, panel: ReturnsPanel) => Float64Array;
  onProgress?: (done: number, total: number) => void;
  signal?: CancelToken;
}

/** The panel on resampled periods (a copy). */
export function resamplePanel(panel: ReturnsPanel, idx: Int32Array): ReturnsPanel {
  const pick = (s: Float64Array): Float64Array => {
    const out = new Float64Array(idx.length);
    for (let t = 0; t < idx.length; t++) out[t] = s[idx[t]];
    return out;
  };
  return mapPanelPeriods(panel, Array.from(idx, (t) => panel.periods[t]), pick);
}

/** HJ^2 of one model on the panel (resampled by idx when given; `warm`: see HjBootstrapDeps.hjSquared). */
export function modelHjSquared(spec: FitSpec, raw: ReturnsPanel, idx: Int32Array | null, deps: HjBootstrapDeps, warm?: Float64Array | null): number {
  const panel = conditionPanel(spec, raw);
  if (linearHjApplies(spec.model)) {
    const { assets, factors } = modelSeries(spec.model, panel, spec.includeRiskfree);
    return linearHjSquared(spec.model.kind as 'linear' | 'linear-raw' | 'linear-gross', assets, factors, idx, payoffPrices(panel));
  }
  if (!deps.hjSquared) throw new DeflatorError('SPEC_INVALID', `the HJ bootstrap of a ${spec.model.kind} model needs the estimator`, 'pass hjSquared (the worker does this)');
  return deps.hjSquared(spec, idx ? resamplePanel(panel, idx) : panel, warm);
}

/** Each model's warm start for the replications: its full-sample estimate where it needs a solver, else null. */
function warmStarts(chunk: HjBootstrapChunk, panels: ReturnsPanel[], deps: HjBootstrapDeps): (Float64Array | null)[] {
  return chunk.fits.map((spec, m) => {
    if (linearHjApplies(spec.model) || !deps.hjStart) return null;
    try {
      return deps.hjStart(spec, panels[m]);
    } catch (e) {
      if (e instanceof DeflatorError && e.code !== 'CANCELLED') return null;
      throw e;
    }
  });
}

/** Replications [from, to) of the bootstrap. */
export function hjBootstrapDraws(chunk: HjBootstrapChunk, deps: HjBootstrapDeps = {}): HjBootstrapDraws {
  const M = chunk.fits.length;
  if (M !== chunk.panels.length) throw new DeflatorError('INPUT_INVALID', `HJ bootstrap: ${M} models but ${chunk.panels.length} panels`, 'pass one panel per model');
  const T = chunk.panels[0].periods.length;
  for (const p of chunk.panels) {
    if (p.periods.length !== T) throw new DeflatorError('INPUT_INVALID', 'HJ bootstrap: the models\' panels have different numbers of periods', 'align the panels on common periods first');
  }
  // Instruments scale each model's payoffs and factors once; a resample then picks periods of the scaled series.
  const panels = chunk.panels.map((p, m) => conditionPanel(chunk.fits[m], p));
  const count = chunk.to - chunk.from;
  const values = new Float64Array(count * M);
  const reasons = new Map<string, BootstrapFailure>();
  const warm = warmStarts(chunk, panels, deps);
  for (let r = chunk.from; r < chunk.to; r++) {
    if (deps.signal?.aborted) throw new DeflatorError('CANCELLED', 'the bootstrap was cancelled', 'nothing was saved; run it again');
    const idx = replicationIndices(T, chunk.block, chunk.seed, r);
    for (let m = 0; m < M; m++) {
      let v = Number.NaN;
      try {
        v = modelHjSquared(chunk.fits[m], panels[m], idx, deps, warm[m]);
      } catch (e) {
        if (!(e instanceof DeflatorError) || e.code === 'CANCELLED' || e.code === 'SPEC_INVALID') throw e;
        const f = reasons.get(e.code);
        if (f) f.count++;
        else reasons.set(e.code, { code: e.code, count: 1, example: e.message });
      }
      values[(r - chunk.from) * M + m] = Number.isFinite(v) ? v : Number.NaN;
    }
    deps.onProgress?.(r - chunk.from + 1, count);
  }
  return { from: chunk.from, to: chunk.to, models: M, values, failures: [...reasons.values()] };
}

/** Joins chunk draws (any order) into one (replications x models) array; failure counts added up by code. */
export function mergeDraws(chunks: HjBootstrapDraws[], replications: number, models: number): { values: Float64Array; failures: string[] } {
  const values = new Float64Array(replications * models).fill(Number.NaN);
  const byCode = new Map<string, BootstrapFailure>();
  for (const c of [...chunks].sort((a, b) => a.from - b.from)) {
    values.set(c.values, c.from * models);
    for (const f of c.failures) {
      const g = byCode.get(f.code);
      if (g) g.count += f.count;
      else byCode.set(f.code, { ...f });
    }
  }
  return { values, failures: describeFailures([...byCode.values()]) };
}

/** "NO_CONVERGENCE in 10 model fits, e.g.: <first message>". */
export function describeFailures(failures: BootstrapFailure[]): string[] {
  return failures.map((f) => `${f.code} in ${f.count} model fit(s), e.g.: ${f.example}`);
}

/** The two-sided bootstrap p-value of HJ_a^2 = HJ_b^2 (see the file comment). */
export function hjDifferenceTest(hat: number[], values: Float64Array, models: number, a: number, b: number): { diff: number; p: number; used: number } {
  const diff = hat[a] - hat[b];
  const R = values.length / models;
  let used = 0;
  let extreme = 0;
  for (let r = 0; r < R; r++) {
    const va = values[r * models + a];
    const vb = values[r * models + b];
    if (Number.isNaN(va) || Number.isNaN(vb)) continue;
    used++;
    if (Math.abs(va - vb - diff) >= Math.abs(diff)) extreme++;
  }
  if (used === 0) throw new DeflatorError('SINGULAR', 'the HJ distances could not be computed on any bootstrap replication', 'use a longer sample or fewer test assets');
  return { diff, p: (1 + extreme) / (1 + used), used };
}
