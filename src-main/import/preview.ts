/**
 * The import preview: the first rows of a file as an import would read them, before
 * anything is stored. Each cell shows what the shared Reading (delimiter, decimal mark,
 * missing-value codes, date layout) makes of it under its column's role; then the import
 * pipeline itself runs on those rows into a scratch in-memory store, so the problem the
 * preview reports is exactly the one the import would stop on (its line and column
 * pointing into the preview). The project database is never touched.
 */
import type { ImportPreview, PreviewCell } from '../../shared/bridge/types.js';
import { isDeflatorError } from '../../shared/errors.js';
import { netOf, returnProblem } from '../../shared/returns/stored-returns.js';
import { Store } from '../store/store.js';
import { readHeader, logName } from './common.js';
import type { CsvRow } from './csv.js';
import { PRICE_COLUMNS, importPrices, type PriceImportOptions } from './prices.js';
import { Reading } from './reading.js';
import { RETURN_COLUMNS, importReturns, type ReturnImportOptions } from './returns.js';
import { importSeries, type SeriesImportOptions } from './series.js';

export type PreviewOptions =
  | { kind: 'prices'; options: PriceImportOptions }
  | { kind: 'series'; options: SeriesImportOptions }
  | { kind: 'returns'; options: ReturnImportOptions };

type Role = ImportPreview['columns'][number]['role'];

/** What the import does with each header column (the importers' own column rules). */
function roles(p: PreviewOptions, names: string[]): Role[] {
  const lower = names.map((n) => n.toLowerCase());
  const at = (name: string | undefined, fallback: string) => lower.indexOf((name ?? fallback).toLowerCase());
  if (p.kind === 'series') {
    const d = at(p.options.dateColumn, 'date');
    return names.map((_, i) => (i === d ? 'date' : 'value'));
  }
  const layout = p.options.layout ?? (p.kind === 'prices' ? 'long' : 'wide');
  const columns = (p.options.columns ?? {}) as Record<string, string | undefined>;
  if (layout === 'wide') {
    const d = at(columns.date, 'date');
    return names.map((_, i) => (i === d ? 'date' : p.kind === 'prices' ? 'price' : 'return'));
  }
  const out: Role[] = names.map(() => 'unused');
  const list = p.kind === 'prices' ? PRICE_COLUMNS : RETURN_COLUMNS;
  for (const c of list) {
    const i = at(columns[c], c);
    if (i >= 0) out[i] = c as Role;
  }
  return out;
}

const num = (v: number) => String(v);

/** One cell as the import reads it under its role. */
function cell(p: PreviewOptions, reading: Reading, row: CsvRow, i: number, role: Role): PreviewCell {
  const text = i < row.count ? row.text(i) : '';
  if (role === 'unused') return { text, status: 'unused' };
  if (role === 'asset') return text.trim() === '' ? { text, status: 'error', note: 'the asset name is empty' } : { text, status: 'name' };
  if (role === 'date') {
    const d = reading.dates.parse(row.buf, row.start[i], row.end[i]);
    return typeof d === 'number' ? { text, status: 'ok', read: reading.dates.text(d) } : { text, status: 'error', note: `not a date: ${d}` };
  }
  const v = reading.value(row, i);
  if (v === undefined) return { text, status: 'missing', note: row.blank(i) ? 'empty: no value' : 'a missing-value code: no value (a gap, not a zero)' };
  if (Number.isNaN(v)) return { text, status: 'error', note: `${reading.numberProblem(text)}` };
  if (p.kind === 'returns') {
    const suspect = reading.suspectedCode(v);
    if (suspect) return { text, status: 'error', note: suspect.what };
    const form = p.options.form ?? 'net';
    const units = p.options.units ?? 'decimal';
    const problem = returnProblem(v, form, units);
    if (problem) return { text, status: 'error', note: problem };
    return { text, status: 'ok', read: num(netOf(v, form, units)), note: `net return ${(netOf(v, form, units) * 100).toPrecision(6).replace(/\.?0+$/, '')} %${p.options.excess ? ' (excess)' : ''}` };
  }
  if (p.kind === 'series') {
    const suspect = reading.suspectedCode(v);
    if (suspect) return { text, status: 'error', note: suspect.what };
    const x = p.options.units === 'percent' ? v / 100 : v;
    return { text, status: 'ok', read: num(x) };
  }
  if (role === 'price' && !(v > 0)) return { text, status: 'error', note: `price ${v} is not positive` };
  if ((role === 'dividend' || role === 'shares') && v < 0) return { text, status: 'error', note: `${role} ${v} is negative` };
  if (role === 'adjust' && !(v > 0)) return { text, status: 'error', note: `adjustment factor ${v} is not positive` };
  return { text, status: 'ok', read: num(v) };
}

/** "FILE, line 7, column 3 (x): ..." -> line 7, column 3. */
function located(message: string, file: string): { line?: number; column?: number } {
  const at = message.indexOf(file);
  const rest = at >= 0 ? message.slice(at + file.length) : message;
  const m = /^,? line (\d+)(?:, column (\d+))?/.exec(rest) ?? /line (\d+)(?:, column (\d+))?/.exec(rest);
  if (!m) return {};
  return { line: Number(m[1]), ...(m[2] ? { column: Number(m[2]) } : {}) };
}

/** The first `rows` data rows of `file` read as an import of `kind` would, with the import's own verdict on them. */
export async function previewImport(file: string, p: PreviewOptions, rows = 20): Promise<ImportPreview> {
  const reading = new Reading({ ...p.options, maxDataRows: rows + 1 });
  const out: ImportPreview = { file: logName(file), kind: p.kind, columns: [], rows: [], more: false };
  let names: string[] | null = null;
  let colRoles: Role[] = [];
  try {
    await reading.read(file, (row) => {
      if (!names) {
        names = readHeader(row, file, reading.delimiterName).names;
        colRoles = roles(p, names);
        out.columns = names.map((name, i) => ({ name, role: colRoles[i] }));
        return;
      }
      if (out.rows.length === rows) {
        out.more = true;
        return;
      }
      out.rows.push({ line: row.line, cells: colRoles.map((role, i) => cell(p, reading, row, i, role)) });
    });
  } catch (e) {
    if (!isDeflatorError(e)) throw e;
    out.problem = { code: e.code, ...located(e.message, file), message: e.message, ...(e.hint ? { hint: e.hint } : {}) };
    return out;
  }
  // the import itself, on these rows, into a scratch store: its first refusal is the preview's problem
  const scratch = new Store(':memory:');
  try {
    const r =
      p.kind === 'prices'
        ? await importPrices(scratch, file, { ...p.options, dividends: undefined, maxDataRows: rows })
        : p.kind === 'series'
          ? await importSeries(scratch, file, { ...p.options, maxDataRows: rows })
          : await importReturns(scratch, file, { ...p.options, maxDataRows: rows });
    out.reads = { names: r.subjects, first: r.first, last: r.last, frequency: r.frequency, warnings: r.warnings.slice(0, 20).map((w) => w.message) };
  } catch (e) {
    if (!isDeflatorError(e)) throw e;
    out.problem = { code: e.code, ...located(e.message, file), message: e.message, ...(e.hint ? { hint: e.hint } : {}) };
  } finally {
    scratch.close();
  }
  return out;
}

