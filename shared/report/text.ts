/**
 * Plain-text tables for the terminal (`deflator show`, `deflator runs`): columns padded
 * to width, numbers right-aligned at the display rounding of their column.
 */
import type { AnyResult } from '../results.js';
import { CAUTION } from '../results.js';
import { recordLines, sampleHeaderLines, type ExportRecord } from './header.js';
import { displayNumber } from './numbers.js';
import { resultTables, resultTitle, type ReportTable } from './tables.js';
import { batchText } from '../batch/text.js';

/** Pads cells into aligned columns; `right[j]` right-aligns column j. */
export function alignColumns(head: string[], rows: string[][], right: boolean[]): string[] {
  const widths = head.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const line = (cells: string[]) =>
    cells
      .map((c, j) => (right[j] ? c.padStart(widths[j]) : c.padEnd(widths[j])))
      .join('  ')
      .trimEnd();
  return [line(head), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)];
}

/** A table as aligned text; columns empty in every row are left out (the exports keep them). */
export function tableToText(t: ReportTable): string {
  const keep = t.columns.map((_, j) => t.rows.some((r) => r[j] !== null && r[j] !== ''));
  const cols = t.columns.filter((_, j) => keep[j]);
  const rows = t.rows.map((row) =>
    row
      .filter((_, j) => keep[j])
      .map((v, j) => (v === null ? '' : typeof v === 'number' ? displayNumber(v, cols[j].format) : typeof v === 'boolean' ? (v ? 'yes' : 'no') : v)),
  );
  return [t.title, ...alignColumns(cols.map((c) => c.label), rows, cols.map((c) => c.type === 'number'))].join('\n');
}

/** The whole result as text: title, caution, sample header, every table, the record. */
export function resultToText(result: AnyResult, record?: ExportRecord): string {
  const kv = (lines: { key: string; value: string }[]) => {
    const w = Math.max(...lines.map((l) => l.key.length));
    return lines.map((l) => `  ${l.key.padEnd(w)}  ${l.value}`).join('\n');
  };
  const parts = [resultTitle(result), CAUTION, '', 'Sample', kv(sampleHeaderLines(result.sample)), ''];
  if (result.kind === 'batch') {
    // thousands of tasks: the ranking's top rows here, every task in the CSV / XLSX export
    parts.push(batchText(result), `Every task, with its settings, ranks and parameters: deflator export ${record ? record.id : 'RUN'} --format csv (or xlsx).`, '');
  } else for (const t of resultTables(result)) parts.push(tableToText(t), '');
  if (result.kind === 'fit' && result.notes.length) parts.push('Notes', ...result.notes.map((n) => `  ${n}`), '');
  if (record) parts.push('Record', kv(recordLines(record)), '');
  return parts.join('\n');
}
