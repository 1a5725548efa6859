/**
 * The report use case: one analysis outcome (./analysis.ts) as the readable terminal
 * report, or as JSON with every number in full precision, the run id and the caution.
 * Every command that prints a fit, back-test or comparison prints it through here.
 */
import { resultToText } from '../../shared/report/text.js';
import { CAUTION, type AnyResult, type RunResult } from '../../shared/results.js';
import type { RunRecord } from '../../shared/records/run-record.js';
import { driftJson, presentValueJson } from '../../shared/values/json.js';

/** The readable report of a result, from the presentation model (shared/report/text.ts); it ends with the caution. */
export function analysisText(result: RunResult): string {
  return resultToText(result);
}

/** The line that tells where a recorded run can be found again. */
export function recordedLine(run: Pick<RunRecord, 'id'>, db: string): string {
  return `Recorded as run ${run.id} (deflator show ${run.id} --db ${db}).\n`;
}

/** The result as the JSON object commands print: the result's keys, `run` when recorded, `caution`. */
export function analysisJson(result: AnyResult, run?: Pick<RunRecord, 'id'>): Record<string, unknown> {
  const { runId: _tag, ...plain } = result as AnyResult & { runId?: number };
  return { ...plain, ...(run ? { run: run.id } : {}), caution: CAUTION };
}

/**
 * What a command prints for an outcome: JSON (--json) or the text report and the recorded-run
 * line. The present-value analyses print their documented JSON keys only (shared/values/json.ts);
 * `deflator show RUN --json` has the whole record.
 */
export function printedReport(outcome: { result: RunResult; run?: Pick<RunRecord, 'id'> }, o: { json?: boolean; db: string }): string {
  if (o.json && outcome.result.kind === 'present-value') return `${JSON.stringify(presentValueJson(outcome.result), null, 2)}\n`;
  if (o.json && outcome.result.kind === 'drift') return `${JSON.stringify(driftJson(outcome.result), null, 2)}\n`;
  if (o.json) return `${JSON.stringify(analysisJson(outcome.result as AnyResult, outcome.run), null, 2)}\n`;
  const text = analysisText(outcome.result);
  if (!outcome.run) return text;
  return `${text}\n${recordedLine(outcome.run, o.db)}`;
}
