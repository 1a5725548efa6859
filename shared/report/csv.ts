/**
 * CSV export: one file per table (RFC 4180 quoting, CRLF line ends), each opening with
 * a block of `#` comment lines that carry the run id, the sample header and the
 * caution, then one header row of column keys. Numbers are written at full precision
 * (shortest round-trip decimal, -0 kept), so parsing a cell gives back the stored double.
 * Readers: pandas `read_csv(f, comment='#')`, csv-parse `{ comment: '#' }`, R
 * `read.csv(f, comment.char = '#')`. A text cell holding `#` is always quoted.
 */
import type { AnyResult } from '../results.js';
import { CAUTION } from '../results.js';
import { recordLines, sampleHeaderLines, type ExportRecord } from './header.js';
import { exactNumber } from './numbers.js';
import { resultTables, resultTitle, type CellValue, type ReportTable } from './tables.js';

export interface CsvFile {
  /** Table id; the CLI names the file `<prefix>-<id>.csv` or `<dir>/<id>.csv`. */
  table: string;
  text: string;
}

const EOL = '\r\n';

export function csvField(v: CellValue): string {
  if (v === null) return '';
  if (typeof v === 'number') return exactNumber(v);
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  return /[",\r\n#]/.test(v) || v !== v.trim() ? `"${v.replace(/"/g, '""')}"` : v;
}

/** A comment line: `# key: value`, with line breaks in the value flattened. */
function comment(key: string, value: string): string {
  return `# ${key}: ${value.replace(/[\r\n]+/g, ' ')}`;
}

export function tableToCsv(table: ReportTable, result: AnyResult, record?: ExportRecord): string {
  const lines: string[] = [comment('deflator', `${table.title} (${resultTitle(result)})`)];
  if (record) lines.push(comment('run', String(record.id)), comment('recorded', record.createdAt), comment('version', record.version), comment('panel sha256', record.panel.sha256));
  for (const h of sampleHeaderLines(result.sample)) lines.push(comment(h.key, h.value));
  if (record) for (const h of recordLines(record).filter((l) => l.key === 'file sha256')) lines.push(comment(h.key, h.value));
  lines.push(comment('caution', CAUTION));
  lines.push(table.columns.map((c) => csvField(c.key)).join(','));
  for (const row of table.rows) lines.push(row.map(csvField).join(','));
  return lines.join(EOL) + EOL;
}

/** Every table of the result as a CSV file. */
export function resultToCsv(result: AnyResult, record?: ExportRecord): CsvFile[] {
  return resultTables(result).map((t) => ({ table: t.id, text: tableToCsv(t, result, record) }));
}
