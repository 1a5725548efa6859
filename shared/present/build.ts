/** Small constructors for presented columns and tables (shared/present/types.ts). */
import type { ResultWarning } from '../results.js';
import type { CellValue, NumberFormat, PresentedColumn, PresentedTable, TableWarning } from './types.js';

export function header(label: string, unit?: string): string {
  return unit ? `${label} (${unit})` : label;
}

export function textCol(key: string, label: string, note?: string): PresentedColumn {
  return { key, label, header: label, type: 'text', ...(note ? { note } : {}) };
}

export function numCol(key: string, label: string, format: NumberFormat, unit?: string, extra: Partial<PresentedColumn> = {}): PresentedColumn {
  return { key, label, ...(unit ? { unit } : {}), header: header(label, unit), type: 'number', format, ...extra };
}

export function boolCol(key: string, label: string): PresentedColumn {
  return { key, label, header: label, type: 'boolean' };
}

export const opt = <T>(x: T | undefined): T | null => (x === undefined ? null : x);

/** Only finite numbers reach a table: anything else is a missing cell. */
export function finite(x: number | undefined | null): number | null {
  return x === undefined || x === null || !Number.isFinite(x) ? null : x;
}

export interface TableInput {
  id: string;
  title: string;
  sheet?: string;
  columns: PresentedColumn[];
  /**
   * The rows, or a function that builds them: then `rows` (and `rowKeys` when not given) are
   * built when a surface first reads them and kept. For long appendix listings (a daily
   * fit's discounted paths: 10,000 rows of 100 assets), which the text report names but
   * does not print.
   */
  rows: CellValue[][] | (() => CellValue[][]);
  rowKeys?: string[];
  marks?: Record<string, number[]>;
  notes?: string[];
  warnings?: TableWarning[];
  role?: 'main' | 'appendix';
  rowFormats?: NumberFormat[];
}

/** A table; numbers that are not finite become missing cells, so no NaN reaches a surface. */
export function table(t: TableInput): PresentedTable {
  const finiteRows = (rows: CellValue[][]) => rows.map((r) => r.map((v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v)));
  const keysOf = (rows: CellValue[][]) => t.rowKeys ?? rows.map((r, i) => (typeof r[0] === 'string' ? r[0] : String(i)));
  const out: PresentedTable = {
    id: t.id,
    title: t.title,
    sheet: (t.sheet ?? t.title).slice(0, 31),
    columns: t.columns,
    rows: [],
    rowKeys: [],
    marks: t.marks ?? {},
    notes: [...new Set(t.notes ?? [])],
    warnings: t.warnings ?? [],
    role: t.role ?? 'main',
    ...(t.rowFormats ? { rowFormats: t.rowFormats } : {}),
  };
  const given = t.rows;
  if (typeof given !== 'function') {
    out.rows = finiteRows(given);
    out.rowKeys = keysOf(out.rows);
    return out;
  }
  // Built on first read, then kept as plain data properties (enumerable, in the same places,
  // so copies, JSON and structured clones see an ordinary table).
  let rows: CellValue[][] | undefined;
  const built = () => (rows ??= finiteRows(given()));
  const settle = (key: 'rows' | 'rowKeys', value: CellValue[][] | string[]) => {
    Object.defineProperty(out, key, { value, writable: true, enumerable: true, configurable: true });
    return value;
  };
  Object.defineProperty(out, 'rows', { get: () => settle('rows', built()), set: (v: CellValue[][]) => settle('rows', v), enumerable: true, configurable: true });
  Object.defineProperty(out, 'rowKeys', { get: () => settle('rowKeys', keysOf(built())), set: (v: string[]) => settle('rowKeys', v), enumerable: true, configurable: true });
  return out;
}

/** The warnings among `all` whose code is in `codes`, placed on the whole table. */
export function tableWarnings(all: readonly ResultWarning[], codes: readonly string[]): TableWarning[] {
  return all.filter((w) => codes.includes(w.code)).map((w) => ({ ...w }));
}

/** Each warning's number in a result's warning list (1-based; 0 when it is not there): every surface numbers them alike. */
export function warningNumbers(all: readonly ResultWarning[]): (w: ResultWarning) => number {
  return (w) => all.findIndex((x) => x.code === w.code && x.message === w.message && (x.model ?? '') === (w.model ?? '')) + 1;
}
