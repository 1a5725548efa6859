/**
 * The readable terminal report of a present-value analysis (`deflator present-value`,
 * `deflator drift`, and `deflator show` of such a run): title, caution, sample lines,
 * warnings, the tables of value-tables.ts, notes.
 */
import { CAUTION, type DriftResult, type PresentValueResult } from '../results.js';
import { tableToText } from './text.js';
import type { ExportRecord } from './header.js';
import { recordLines } from './header.js';
import { valueHeaderLines, valueTables } from './value-tables.js';

function kv(lines: { key: string; value: string }[]): string {
  const w = Math.max(...lines.map((l) => l.key.length));
  return lines.map((l) => `  ${l.key.padEnd(w)}  ${l.value}`).join('\n');
}

/** The report; with a run record, its record lines (run, version, fingerprints) at the end. */
export function valueResultText(r: PresentValueResult | DriftResult, record?: ExportRecord): string {
  const parts = [r.label, CAUTION, '', 'Sample', kv(valueHeaderLines(r)), ''];
  if (r.warnings.length) parts.push('Warnings', ...r.warnings.map((w) => `  [${w.code}] ${w.message}`), '');
  for (const t of valueTables(r)) parts.push(tableToText(t), '');
  if (r.notes.length) parts.push('Notes', ...r.notes.map((n) => `  ${n}`), '');
  if (record) parts.push('Record', kv(recordLines(record)), '');
  return `${parts.join('\n')}\n`;
}
