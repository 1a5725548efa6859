/**
 * `deflator drift --db DB [--assets a,b,c] [--frequency F] [--start D] [--end D] [--lags L]
 * [--json]`: per asset, the annualised drift of the return split into price growth and
 * dividend yield, sigma, and the log drift beside mu - sigma^2/2 (METHODS 10).
 */
import type { Command } from 'commander';
import { runAnalysis } from '../../services/analysis.js';
import { inProcess } from '../../services/compute.js';
import { recordedLine } from '../../services/report.js';
import { printOutcome } from '../outcome.js';
import { withStore } from '../compute.js';
import { FREQUENCIES } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { parseDriftSpec, type DriftSpec } from '../../../shared/spec.js';
import { parseLags, parseNames } from './present-value.js';

interface Flags {
  db: string;
  assets?: string;
  frequency: string;
  start?: string;
  end?: string;
  lags: string;
  json?: boolean;
  record: boolean;
}

export function driftSpecFromFlags(o: Omit<Flags, 'db' | 'json' | 'record'>): DriftSpec {
  if (!(FREQUENCIES as readonly string[]).includes(o.frequency)) throw new DeflatorError('INPUT_INVALID', `--frequency: "${o.frequency}" is not one of ${FREQUENCIES.join(', ')}`, `pass --frequency ${FREQUENCIES.join('|')}`);
  const assets = parseNames(o.assets);
  return parseDriftSpec(
    {
      analysis: 'drift',
      ...(assets ? { assets } : {}),
      frequency: o.frequency,
      ...(o.start !== undefined ? { start: o.start } : {}),
      ...(o.end !== undefined ? { end: o.end } : {}),
      lags: parseLags(o.lags),
    },
    'options',
  );
}

export function register(program: Command): void {
  program
    .command('drift')
    .description('split each asset\'s return drift into price growth and dividend yield, with sigma and the log drift')
    .requiredOption('--db <path>', 'project database')
    .option('--assets <names>', 'comma-separated asset names (default: every stored asset)')
    .option('--frequency <f>', FREQUENCIES.join(' | '), 'monthly')
    .option('--start <date>', 'first period end to include (YYYY-MM-DD)')
    .option('--end <date>', 'last period end to include (YYYY-MM-DD)')
    .option('--lags <L>', 'Newey-West lags for the s.e. of the means: a number, 0, or auto = floor(4 (T/100)^(2/9))', 'auto')
    .option('--json', 'print {frequency, assets: [{asset, drift, priceGrowth, dividendYield, sigma, logDrift, se}], sample, warnings}')
    .option('--no-record', 'do not record the run in the database')
    .action(async (o: Flags) => {
      const spec = driftSpecFromFlags(o);
      const a = { kind: 'drift', spec } as const;
      const outcome = await withStore(o.db, (store) => runAnalysis(store, a, inProcess(), { record: o.record, keepUnrecorded: true }), o.record ? 'write' : 'read');
      printOutcome(outcome, a, { json: o.json, db: o.db, threads: 1 });
      if (o.json && outcome.run) process.stderr.write(recordedLine(outcome.run, o.db));
    });
}
