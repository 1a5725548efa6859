/**
 * `deflator drift --db DB [--assets a,b,c] [--frequency F] [--start D] [--end D] [--lags L]
 * [--json]`: per asset, the annualised drift of the return split into price growth and
 * dividend yield, sigma, and the log drift beside mu - sigma^2/2 (METHODS 10).
 */
import type { Command } from 'commander';
import { FREQUENCIES } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { parseDriftSpec, type DriftSpec } from '../../../shared/spec.js';
import { parseNames, runValueCommand, windowKeys } from './present-value.js';

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
      ...windowKeys(o),
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
    .action((o: Flags) => runValueCommand({ kind: 'drift', spec: driftSpecFromFlags(o) }, o));
}
