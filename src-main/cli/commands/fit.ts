/**
 * `deflator fit SPEC --db DB [--json]`: estimates one model as the spec file says, on the
 * returns panel built from the project database, in the worker pool; prints the readable
 * report (shared/report/text.ts, from the presentation model) or the result as JSON, and records the run in the
 * database (unless --no-record) so that `deflator show`, `export` and `replay` find it.
 * One fit is one piece of work: it runs in this process (src-main/services).
 */
import type { Command } from 'commander';
import { parseFitSpec, type FitSpec } from '../../../shared/spec.js';
import { runAndPrint } from '../outcome.js';
import { readSpecFile } from '../spec-file.js';

interface FitOptions {
  db: string;
  json?: boolean;
  record: boolean;
}

/** Reads and validates a fit spec file (SPEC_INVALID names the key or the JSON position). */
export function readFitSpec(file: string): FitSpec {
  return parseFitSpec(readSpecFile(file), 'spec');
}

export function register(program: Command): void {
  program
    .command('fit')
    .description('estimate one model (GMM, time-series or two-pass regressions) as a JSON spec says, and print the report')
    .argument('<spec>', 'JSON spec file (see sample-data/specs/)')
    .requiredOption('--db <path>', 'project database')
    .option('--json', 'print the result as JSON (every number in full precision)')
    .option('--no-record', 'do not record the run in the database')
    .action(async (specFile: string, opts: FitOptions) => {
      const spec = readFitSpec(specFile);
      await runAndPrint({ kind: 'fit', spec }, { db: opts.db, json: opts.json, record: opts.record, threads: 1 });
    });
}
