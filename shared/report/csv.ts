/**
 * CSV export: one file per table of the presentation model, each holding only the
 * table: one header row (each column's heading with its unit, as every surface prints
 * it) and the data rows, RFC 4180 quoting, CRLF line ends, as spreadsheets and
 * pandas.read_csv read them. Numbers at full precision (the shortest decimal that reads
 * back as the same double, -0 kept); a missing value is an empty cell. A table with
 * "best" marks gets a last column "best in"; one with warnings on rows, "warnings".
 * The run's metadata (record, header, caution, notes, warnings, column definitions) go
 * to a sidecar text file, or with `comments: true` into `#` lines above each table.
 *
 * `csvField` is the one CSV cell writer of the program (the app's CSV buttons and
 * `deflator returns --csv` use it).
 *
 * Formula injection: a spreadsheet opening a CSV file runs a text cell that begins with
 * =, +, -, @ (or a tab or line break before them) as a formula, and text reaches these
 * files from imported names, spec labels and file names. Such a text cell is written with
 * a leading single quote, inside double quotes ("'=1+1"): the spreadsheet shows it as
 * text, a program reading the file sees the quote. This is the common practice of OWASP's
 * CSV-injection guidance. Refusing such names at import was the other choice; it would
 * refuse ordinary names ("-spread", "+carry"), and labels and file names do not pass the
 * import. Numbers are cells of their own type and are never prefixed (-0.5 stays -0.5).
 */
import type { RunResult } from '../results.js';
import { present, type CellValue, type Presentation, type PresentedTable } from '../present/index.js';
import { exactNumber, plainText, tableCellText } from '../present/format.js';
import { reorderRows } from '../present/sort.js';
import { recordLines, type ExportRecord } from './header.js';

export interface CsvFile {
  /** Table id (the sidecar: "about"); the CLI names the file `<prefix>-<id>.csv` or `<dir>/<id>.csv`. */
  table: string;
  text: string;
  /** "csv", or "txt" for the sidecar. */
  ext: 'csv' | 'txt';
}

export const CSV_EOL = '\r\n';

/** Characters that make a spreadsheet read a text cell as a formula when it begins with one (OWASP, CSV injection). */
const FORMULA_START = /^[=+\-@\t\r\n]/;

/** Text as a spreadsheet must show it, not run it: a leading single quote before a formula character. */
export function neutralizeFormula(text: string): string {
  return FORMULA_START.test(text) ? `'${text}` : text;
}

/** One CSV cell: numbers exact, booleans true/false, text quoted when it holds a comma, quote, line break or `#`, or has outer spaces; formula-leading text neutralised (see the file comment). */
export function csvField(v: CellValue): string {
  if (v === null) return '';
  if (typeof v === 'number') return exactNumber(v);
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  if (FORMULA_START.test(v)) return `"${neutralizeFormula(v).replace(/"/g, '""')}"`;
  return /[",\r\n#]/.test(v) || v !== v.trim() ? `"${v.replace(/"/g, '""')}"` : v;
}

/** One CSV line. */
export function csvLine(cells: CellValue[]): string {
  return cells.map(csvField).join(',');
}

/** The columns and rows a machine-read export writes: the table, plus "best in" and "warnings" where they apply. */
export function exportGrid(t: PresentedTable): { header: string[]; rows: CellValue[][] } {
  const markCols = t.columns.filter((c) => (t.marks[c.key] ?? []).length > 0);
  const rowWarn = t.warnings.some((w) => w.rows);
  const header = [...t.columns.map((c) => c.header), ...(markCols.length ? ['best in'] : []), ...(rowWarn ? ['warnings'] : [])];
  const rows = t.rows.map((row, i) => {
    const extra: CellValue[] = [];
    if (markCols.length) {
      const best = markCols.filter((c) => t.marks[c.key].includes(i)).map((c) => c.header);
      extra.push(best.length ? best.join('; ') : null);
    }
    if (rowWarn) {
      const codes = [...new Set(t.warnings.filter((w) => w.rows?.includes(i)).map((w) => w.code))];
      extra.push(codes.length ? codes.join('; ') : null);
    }
    return [...row, ...extra];
  });
  return { header, rows };
}

/** A table alone: header row and data. */
export function tableCsv(t: PresentedTable): string {
  const g = exportGrid(t);
  return [csvLine(g.header), ...g.rows.map(csvLine)].join(CSV_EOL) + CSV_EOL;
}

/** The metadata of an export as `key: value` lines: title, caution, record, header, warnings, each table's columns and notes. */
export function aboutLines(p: Presentation, record?: ExportRecord): string[] {
  const lines = [`deflator: ${p.title}`, `caution: ${p.caution}`];
  if (record) for (const l of recordLines(record)) lines.push(`${l.key}: ${l.value}`);
  for (const h of p.header) lines.push(`${h.key}: ${h.value}`);
  p.warnings.forEach((w, i) => lines.push(`warning ${i + 1}: ${w.code}${w.model ? ` (${w.model})` : ''}: ${w.message}`));
  for (const n of p.notes) lines.push(`note: ${plainText(n)}`);
  return lines;
}

function tableAbout(t: PresentedTable): string[] {
  const lines = [`table ${t.id}: ${t.title}`];
  for (const c of t.columns) if (c.note) lines.push(`  column "${c.header}": ${c.note}`);
  for (const n of t.notes) lines.push(`  note: ${plainText(n)}`);
  for (const w of t.warnings) lines.push(`  warning: ${w.code}${w.model ? ` (${w.model})` : ''}${w.rows ? `, rows ${w.rows.map((r) => r + 1).join(', ')}` : ''}`);
  return lines;
}

export interface CsvOptions {
  /** Put the metadata in `#` lines above each table instead of the sidecar file. */
  comments?: boolean;
}

const flat = (s: string) => s.replace(/[\r\n]+/g, ' ');

/** Every table of the result as a CSV file, and the sidecar "about" text (unless `comments`). */
export function resultToCsv(result: RunResult, record?: ExportRecord, options: CsvOptions = {}): CsvFile[] {
  const p = present(result);
  const files: CsvFile[] = p.tables.map((t) => {
    const body = tableCsv(t);
    if (!options.comments) return { table: t.id, text: body, ext: 'csv' as const };
    const head = [...aboutLines(p, record), ...tableAbout(t)].map((l) => `# ${flat(l)}`);
    return { table: t.id, text: head.join(CSV_EOL) + CSV_EOL + body, ext: 'csv' as const };
  });
  if (!options.comments) {
    const about = [...aboutLines(p, record), '', ...p.tables.flatMap((t) => [...tableAbout(t), `  file: ${t.id}.csv`]), ''].map(flat);
    files.push({ table: 'about', text: about.join(CSV_EOL), ext: 'txt' });
  }
  return files;
}

/** A table as tab-separated display text (the app's Copy button): headings, then the cells as shown, marks as `*`; pasted into a spreadsheet, formula-leading text stays text. */
export function tableTsv(t: PresentedTable, rowOrder: number[] = t.rows.map((_, i) => i)): string {
  const clean = (s: string) => {
    const flat = s.replace(/[\t\n\r]/g, ' ');
    // a shown number ("-0.52", "+1.3") is not text to neutralise; anything else beginning with a formula character is
    return /^[-+]?[\d.,]+(?:e[-+]?\d+)?%?$/i.test(flat.trim()) ? flat : neutralizeFormula(flat);
  };
  const lines = [t.columns.map((c) => clean(c.header)).join('\t')];
  for (const i of rowOrder) lines.push(t.columns.map((c, j) => clean(tableCellText(t, i, j) + ((t.marks[c.key] ?? []).includes(i) ? '*' : ''))).join('\t'));
  return `${lines.join('\n')}\n`;
}

/** A table's CSV with its rows in `rowOrder` (the app's CSV button: the rows as on screen). */
export function tableCsvOrdered(t: PresentedTable, rowOrder: readonly number[]): string {
  return tableCsv(reorderRows(t, rowOrder));
}
