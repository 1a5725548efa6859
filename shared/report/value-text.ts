/**
 * The readable terminal report of a present-value analysis (`deflator present-value`,
 * `deflator drift`, and `deflator show` of such a run), from the presentation model:
 * title, header, warnings, tables, notes, caution.
 */
import type { DriftResult, PresentValueResult } from '../results.js';
import type { ExportRecord } from './header.js';
import { resultToText } from './text.js';

/** The report from the presentation model; with a run record, its record lines (run, version, fingerprints) at the end. */
export function valueResultText(r: PresentValueResult | DriftResult, record?: ExportRecord): string {
  return resultToText(r, record);
}
