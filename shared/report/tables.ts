/**
 * The tables of a result, as the presentation model (shared/present) builds them: every
 * export and the terminal read these.
 */
import type { RunResult } from '../results.js';
import { present, type PresentedTable } from '../present/index.js';

export type { CellValue, PresentedColumn as ReportColumn, PresentedTable as ReportTable } from '../present/types.js';
export { allTests } from '../present/fit.js';

/** The tables of any result, in report order. */
export function resultTables(r: RunResult): PresentedTable[] {
  return present(r).tables;
}

/** The result's title: a fit's label, "Back-test: label", "Comparison of n models". */
export function resultTitle(r: RunResult): string {
  return present(r).title;
}
