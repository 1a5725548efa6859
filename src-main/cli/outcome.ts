/**
 * Printing an analysis outcome (fit, back-test, comparison): the report, and when the run
 * record could not be written, the result saved to a file with the command that records
 * it later, and the exit code of the storage failure (5 busy, 6 not writable, 7 damaged).
 */
import type { RunRecord } from '../../shared/records/run-record.js';
import { runAnalysis, type Analysis, type AnalysisOutcome } from '../services/analysis.js';
import type { RunTaskOptions } from '../services/compute.js';
import { withCompute, withStore } from './compute.js';
import { printedReport } from '../services/report.js';
import { saveUnrecorded } from '../runs/unrecorded.js';
import { exitCodeOf } from './exit-codes.js';
import { out, err } from './terminal.js';

export function printOutcome(outcome: AnalysisOutcome & { run?: Pick<RunRecord, 'id'> }, a: Analysis, o: { json?: boolean; db: string; threads?: number }): void {
  out(printedReport(outcome, o));
  const e = outcome.recordError;
  if (!e) return;
  const saved = saveUnrecorded(o.db, a, outcome.result, outcome.data, o.threads);
  const where = saved
    ? `the result is saved in ${saved}; record it later with: deflator runs --record ${saved} --db ${o.db}`
    : 'it could not be saved to a file either: keep the report above (--json prints every number in full)';
  err(`deflator: the result above is not recorded: ${e.message}\n  -> ${where}\n`);
  process.exitCode = exitCodeOf(e);
}

/**
 * A fit, back-test or comparison from the command line: runs it on the database with a
 * compute of at most `threads` threads (recording it unless `record` is false, keeping
 * a result whose record cannot be written), then prints it with printOutcome.
 */
export async function runAndPrint(a: Analysis, o: { db: string; json?: boolean; record: boolean; threads: number; onProgress?: RunTaskOptions['onProgress']; finish?: () => void }): Promise<void> {
  let used: number | undefined;
  const outcome = await withStore(
    o.db,
    (store) =>
      withCompute(o.threads, (compute) => {
        used = compute.threads;
        return runAnalysis(store, a, compute, { record: o.record, keepUnrecorded: true, ...(o.onProgress ? { onProgress: o.onProgress } : {}) });
      }),
    o.record ? 'write' : 'read',
  ).finally(() => o.finish?.());
  printOutcome(outcome, a, { json: o.json, db: o.db, ...(used !== undefined ? { threads: used } : {}) });
}
