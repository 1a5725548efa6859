/**
 * The presentation model: what every surface shows of a result. A producer (one per
 * result kind, shared/present/index.ts) turns a result into tables with their columns,
 * units, labels, number formats, notes, "best" marks and warnings; the terminal report,
 * the app's screens and their Copy/CSV buttons, and the CSV, XLSX, LaTeX, HTML and PDF
 * exports render these tables and compute no number, unit or mark of their own.
 */
import type { ResultWarning } from '../results.js';

export type CellValue = string | number | boolean | null;

/**
 * Display rounding of a numeric column (shared/present/format.ts): 'value' estimates,
 * standard errors, distances, gross returns (6 significant digits); 'percent' numbers
 * already in percent (3 decimals); 'stat' test statistics and t (3 decimals); 'p'
 * p-values (4 decimals, "<0.0001" below); 'ratio' R^2 and other ratios (4 decimals);
 * 'integer' counts and degrees of freedom.
 */
export type NumberFormat = 'value' | 'percent' | 'stat' | 'p' | 'ratio' | 'integer';

export interface PresentedColumn {
  /** Machine name, stable across versions (HTML data-key, the sidecar's column list). */
  key: string;
  /** What the column holds, without its unit: "alpha", "MAPE", "R^2 (cross-section)". */
  label: string;
  /** The unit, with the period basis where there is one: "% per month", "% per year", "gross return per month". */
  unit?: string;
  /** `label (unit)`: the heading every surface prints (CSV header row included). */
  header: string;
  type: 'text' | 'number' | 'boolean';
  format?: NumberFormat;
  /** A ranked column: its rule key in shared/present/best.ts. */
  best?: string;
  /** One-line definition (a note under the table, a tooltip on screen). */
  note?: string;
}

/** A warning placed on a table; `rows` are the rows it qualifies (absent: the whole table). */
export interface TableWarning extends ResultWarning {
  rows?: number[];
}

export interface PresentedTable {
  /** File-name-safe id: parameters, pricing-errors, tests, ... (CSV file names, XLSX sheets, HTML ids). */
  id: string;
  title: string;
  /** A short sheet name (XLSX, at most 31 characters). */
  sheet: string;
  columns: PresentedColumn[];
  rows: CellValue[][];
  /** One key per row (asset, model label, parameter): selection and marks on screen. */
  rowKeys: string[];
  /** Column key -> indices of rows marked best (shared/present/best.ts). */
  marks: Record<string, number[]>;
  /** Notes printed under the table: definitions, units, the ranking rule. */
  notes: string[];
  /** Warnings qualifying this table's numbers. */
  warnings: TableWarning[];
  /**
   * Measure tables (a value column whose unit is in the next column): the display role
   * of each row's value; other tables take the role from the column.
   */
  rowFormats?: NumberFormat[];
  /** 'appendix': a long listing (a series) that reports put after the main tables and may leave out. */
  role: 'main' | 'appendix';
}

export interface HeaderLine {
  key: string;
  value: string;
}

/** Everything a surface shows of one result. */
export interface Presentation {
  kind: string;
  title: string;
  /** The caution every surface carries (not investment advice). */
  caution: string;
  /** The sample and estimator header, key/value lines in a fixed order. */
  header: HeaderLine[];
  tables: PresentedTable[];
  /** Result-level notes, each once. */
  notes: string[];
  /** Every warning of the result (tables carry the ones that qualify them). */
  warnings: ResultWarning[];
}
