/**
 * `deflator present-value --db DB (--asset NAME | --aggregate [--assets a,b,c])
 * [--frequency annual] [--start Y] [--end Y] [--lags L] [--json]`: the dividend-price
 * decomposition of one asset or of the aggregate of a set of assets (METHODS 10).
 * Prints the readable report, or with --json exactly the documented keys plus "warnings".
 */
import type { Command } from 'commander';
import { runAnalysis, type Analysis } from '../../services/analysis.js';
import { inProcess } from '../../services/compute.js';
import { recordedLine } from '../../services/report.js';
import { printOutcome } from '../outcome.js';
import { withStore } from '../compute.js';
import { DeflatorError } from '../../../shared/errors.js';
import { parsePresentValueSpec, type PresentValueSpec } from '../../../shared/spec.js';
import { err } from '../terminal.js';

interface Flags {
  db: string;
  asset?: string;
  aggregate?: boolean;
  assets?: string;
  frequency: string;
  start?: string;
  end?: string;
  lags: string;
  json?: boolean;
  record: boolean;
}

/** "auto" or a whole number of lags, as a spec holds it. */
export function parseLags(flag: string): number | 'auto' {
  if (flag === 'auto') return 'auto';
  if (!/^\d{1,4}$/.test(flag)) throw new DeflatorError('INPUT_INVALID', `--lags: "${flag}" is not a whole number or "auto"`, 'pass --lags auto, --lags 0 (heteroskedasticity only) or a number of lags');
  return Number(flag);
}

/** The spec keys of --start, --end and --lags (both present-value commands). */
export function windowKeys(o: { start?: string; end?: string; lags: string }): { start?: string; end?: string; lags: number | 'auto' } {
  return { ...(o.start !== undefined ? { start: o.start } : {}), ...(o.end !== undefined ? { end: o.end } : {}), lags: parseLags(o.lags) };
}

/** Comma-separated names, trimmed; empty entries dropped. */
export function parseNames(flag: string | undefined): string[] | undefined {
  if (flag === undefined) return undefined;
  const names = flag.split(',').map((s) => s.trim()).filter(Boolean);
  if (!names.length) throw new DeflatorError('INPUT_INVALID', '--assets names no asset', 'pass comma-separated asset names, e.g. --assets a,b,c');
  return names;
}

export function presentValueSpecFromFlags(o: Omit<Flags, 'db' | 'json' | 'record'>): PresentValueSpec {
  if (o.asset !== undefined && o.aggregate) throw new DeflatorError('INPUT_INVALID', '--asset and --aggregate both given', 'pass --asset NAME for one asset, or --aggregate [--assets a,b,c] for their aggregate');
  if (o.asset === undefined && !o.aggregate) throw new DeflatorError('INPUT_INVALID', 'neither --asset nor --aggregate given', 'pass --asset NAME for one asset, or --aggregate [--assets a,b,c] for their aggregate');
  if (o.assets !== undefined && !o.aggregate) throw new DeflatorError('INPUT_INVALID', '--assets lists the assets of an aggregate', 'add --aggregate, or pass one asset with --asset');
  if (o.frequency !== 'annual') throw new DeflatorError('INPUT_INVALID', `--frequency ${o.frequency}: the decomposition is computed on calendar years only`, 'leave --frequency out, or pass --frequency annual');
  const assets = parseNames(o.assets);
  return parsePresentValueSpec(
    {
      analysis: 'present-value',
      ...(o.asset !== undefined ? { asset: o.asset } : { aggregate: true, ...(assets ? { assets } : {}) }),
      frequency: 'annual',
      ...windowKeys(o),
    },
    'options',
  );
}

export function register(program: Command): void {
  program
    .command('present-value')
    .description('dividend-price decomposition of one asset or an aggregate: does the dividend yield forecast returns or dividend growth?')
    .requiredOption('--db <path>', 'project database')
    .option('--asset <name>', 'one asset (prices and dividends per current share)')
    .option('--aggregate', 'the aggregate of a set of assets (sum of market values and of dividends x shares)')
    .option('--assets <names>', 'with --aggregate: comma-separated asset names (default: every stored asset)')
    .option('--frequency <f>', 'annual (calendar years; the only frequency)', 'annual')
    .option('--start <year>', 'first year (YYYY, or a date: its year)')
    .option('--end <year>', 'last year (YYYY, or a date: its year)')
    .option('--lags <L>', 'Newey-West lags: a number, 0 (heteroskedasticity only) or auto = floor(4 (n/100)^(2/9))', 'auto')
    .option('--json', 'print {asset|assets, frequency, sample, rho, regressions, identity, longRun, varianceShares, warnings}')
    .option('--no-record', 'do not record the run in the database')
    .action((o: Flags) => runValueCommand({ kind: 'present-value', spec: presentValueSpecFromFlags(o) }, o));
}

/**
 * Both present-value commands: one small computation in this process, recorded unless
 * --no-record; --json prints the documented keys (the run id goes to stderr).
 */
export async function runValueCommand(a: Analysis & { kind: 'present-value' | 'drift' }, o: { db: string; json?: boolean; record: boolean }): Promise<void> {
  const outcome = await withStore(o.db, (store) => runAnalysis(store, a, inProcess(), { record: o.record, keepUnrecorded: true }), o.record ? 'write' : 'read');
  printOutcome(outcome, a, { json: o.json, db: o.db, threads: 1 });
  if (o.json && outcome.run) err(recordedLine(outcome.run, o.db));
}
