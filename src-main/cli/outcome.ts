/**
 * Printing an analysis outcome (fit, back-test, comparison): the report, and when the run
 * record could not be written, the result saved to a file with the command that records
 * it later, and the exit code of the storage failure (5 busy, 6 not writable, 7 damaged).
 */
import type { RunRecord } from '../../shared/records/run-record.js';
import type { Analysis, AnalysisOutcome } from '../services/analysis.js';
import { printedReport } from '../services/report.js';
import { saveUnrecorded } from '../runs/unrecorded.js';
import { exitCodeOf } from './exit-codes.js';

export function printOutcome(outcome: AnalysisOutcome & { run?: Pick<RunRecord, 'id'> }, a: Analysis, o: { json?: boolean; db: string; threads?: number }): void {
  process.stdout.write(printedReport(outcome, o));
  const e = outcome.recordError;
  if (!e) return;
  const saved = saveUnrecorded(o.db, a, outcome.result, outcome.data, o.threads);
  const where = saved
    ? `the result is saved in ${saved}; record it later with: deflator runs --record ${saved} --db ${o.db}`
    : 'it could not be saved to a file either: keep the report above (--json prints every number in full)';
  process.stderr.write(`deflator: the result above is not recorded: ${e.message}\n  -> ${where}\n`);
  process.exitCode = exitCodeOf(e);
}
