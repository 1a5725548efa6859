/**
 * `deflator backtest SPEC --db DB [--json]`: fits the spec's model on rolling or
 * expanding windows and prices the held-out periods (docs/methods.md, back-testing), in
 * this process or a worker pool sized to its chunks of windows, with a progress bar on stderr when it is a terminal. The window rules
 * come from the spec's "backtest" block, or from --window/--step/--horizon/--expanding.
 * Prints the readable summary or the result as JSON; records the run (unless
 * --no-record) only after the whole back-test succeeded.
 */
import type { Command } from 'commander';
import { DeflatorError } from '../../../shared/errors.js';
import { parseFitSpec, type FitSpec } from '../../../shared/spec.js';
import { runAndPrint } from '../outcome.js';
import { defaultThreads, threadsFlag } from '../compute.js';
import { progressBar } from '../progress.js';
import { readFitSpec } from './fit.js';

interface BacktestFlags {
  db: string;
  json?: boolean;
  record: boolean;
  threads?: string;
  engine: string;
  window?: string;
  step?: string;
  horizon?: string;
  expanding?: boolean;
}

export function positiveInt(flag: string, v: string | undefined): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1) throw new DeflatorError('INPUT_INVALID', `${flag}: "${v}" is not a positive whole number`, `pass ${flag} N with N >= 1`);
  return n;
}

/** The spec with the window flags applied (they override the spec's backtest block). */
export function withWindowFlags(spec: FitSpec, o: Pick<BacktestFlags, 'window' | 'step' | 'horizon' | 'expanding'>): FitSpec {
  const window = positiveInt('--window', o.window);
  const step = positiveInt('--step', o.step);
  const horizon = positiveInt('--horizon', o.horizon);
  if (window === undefined && step === undefined && horizon === undefined && !o.expanding) {
    if (!spec.backtest) {
      throw new DeflatorError('SPEC_INVALID', 'spec.backtest: the spec has no "backtest" block and no --window was given', 'add "backtest": {"window": 120, "step": 1, "horizon": 1} to the spec, or pass --window N');
    }
    return spec;
  }
  const block = { ...(spec.backtest ?? {}), ...(window !== undefined ? { window } : {}), ...(step !== undefined ? { step } : {}), ...(horizon !== undefined ? { horizon } : {}), ...(o.expanding ? { expanding: true } : {}) };
  if (!('window' in block)) throw new DeflatorError('SPEC_INVALID', 'the back-test needs a window length', 'pass --window N or add "backtest": {"window": N} to the spec');
  return parseFitSpec(JSON.parse(JSON.stringify({ ...spec, backtest: block })));
}

export function register(program: Command): void {
  program
    .command('backtest')
    .description('back-test a model on rolling or expanding windows: out-of-sample pricing errors, RMSE, R^2 and parameter paths')
    .argument('<spec>', 'JSON spec file with a "backtest" block (see sample-data/specs/)')
    .requiredOption('--db <path>', 'project database')
    .option('--window <n>', 'estimation window in periods (overrides the spec)')
    .option('--step <n>', 'periods the window moves each time (overrides the spec)')
    .option('--horizon <n>', 'held-out periods after each window (overrides the spec)')
    .option('--expanding', 'expanding windows from the first period (overrides the spec)')
    .option('--engine <engine>', 'auto (incremental for linear GMM at the first or second stage) | fit (fit every window afresh)', 'auto')
    .option('--threads <n>', `worker threads at most (default: the ${defaultThreads()} cores; fewer when the windows fall into fewer chunks)`)
    .option('--json', 'print the result as JSON (every number in full precision)')
    .option('--no-record', 'do not record the run in the database')
    .action(async (specFile: string, o: BacktestFlags) => {
      if (o.engine !== 'auto' && o.engine !== 'fit') throw new DeflatorError('INPUT_INVALID', `--engine: "${o.engine}" is not auto or fit`, 'pass --engine auto or --engine fit');
      const spec = withWindowFlags(readFitSpec(specFile), o);
      const threads = threadsFlag(o.threads);
      const bar = progressBar('windows');
      await runAndPrint({ kind: 'backtest', spec, engine: o.engine === 'fit' ? 'fit' : 'auto' }, { db: o.db, json: o.json, record: o.record, threads, onProgress: (d, t) => bar.update(d, t, 'windows'), finish: () => bar.finish() });
    });
}
