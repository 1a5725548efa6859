/**
 * `deflator compare SPEC --db DB [--json]`: fits every model of a {"compare": [...]}
 * spec on the same sample, tabulates J, HJ distance, MAPE, RMSE and R^2 (and the
 * out-of-sample RMSE and R^2 when the spec has a "backtest" block), marks the best per
 * column, and tests equal squared HJ distances by a seeded block bootstrap. Runs in a
 * worker pool sized to the work (fits side by side, bootstrap in chunks) with a progress bar on stderr
 * when it is a terminal; records the run (unless --no-record) after success only.
 */
import type { Command } from 'commander';
import { DeflatorError } from '../../../shared/errors.js';
import { readSpecFile } from '../spec-file.js';
import { isCompareSpec, parseCompareSpec } from '../../../shared/spec.js';
import { runAndPrint } from '../outcome.js';
import { defaultThreads, threadsFlag } from '../compute.js';
import { progressBar } from '../progress.js';
import { positiveInt } from './backtest.js';

interface CompareFlags {
  db: string;
  json?: boolean;
  record: boolean;
  threads?: string;
  replications?: string;
  seed?: string;
  block?: string;
}

export function register(program: Command): void {
  program
    .command('compare')
    .description('compare models on the same sample: tests, HJ distance, fit, out-of-sample fit, bootstrap test of equal HJ distances')
    .argument('<spec>', 'JSON spec with a "compare": [...] list of models (see sample-data/specs/)')
    .requiredOption('--db <path>', 'project database')
    .option('--replications <n>', 'bootstrap replications (overrides spec.bootstrap.replications)')
    .option('--seed <n>', 'bootstrap seed (overrides spec.bootstrap.seed)')
    .option('--block <n>', 'bootstrap block length in periods, or auto = ceil(T^(1/3)) (overrides spec.bootstrap.block)')
    .option('--threads <n>', `worker threads at most (default: the ${defaultThreads()} cores)`)
    .option('--json', 'print the result as JSON: {models: [{label, test, hj, fit, oos}], hjTests, best, ...}')
    .option('--no-record', 'do not record the run in the database')
    .action(async (specFile: string, o: CompareFlags) => {
      const raw = readSpecFile(specFile, 'pass the path of a JSON comparison spec (sample-data/specs/compare-*.json)');
      if (!isCompareSpec(raw)) throw new DeflatorError('SPEC_INVALID', `spec file ${specFile} has no "compare" list`, 'list the models under "compare": [{"model": ...}, ...]; for one model use deflator fit');
      const input = raw as Record<string, unknown>;
      const bs = { ...((input.bootstrap as Record<string, unknown> | undefined) ?? {}) };
      const reps = positiveInt('--replications', o.replications);
      if (reps !== undefined) bs.replications = reps;
      if (o.seed !== undefined) {
        const seed = Number(o.seed);
        if (!Number.isInteger(seed) || seed < 0) throw new DeflatorError('INPUT_INVALID', `--seed: "${o.seed}" is not a whole number >= 0`, 'pass --seed N');
        bs.seed = seed;
      }
      if (o.block !== undefined) bs.block = o.block === 'auto' ? 'auto' : positiveInt('--block', o.block);
      const { spec, fits } = parseCompareSpec(Object.keys(bs).length ? { ...input, bootstrap: bs } : input);
      const threads = threadsFlag(o.threads);
      const bar = progressBar('compare');
      await runAndPrint({ kind: 'compare', spec, fits }, { db: o.db, json: o.json, record: o.record, threads, onProgress: (d, t, stage) => bar.update(d, t, stage), finish: () => bar.finish() });
    });
}
