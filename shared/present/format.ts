/**
 * Numbers as every surface prints them: one display rounding per column role
 * (NumberFormat), the same text in the terminal, on screen, in HTML, LaTeX and PDF.
 * Machine-read exports (CSV, XLSX cells, HTML data-value) keep the full double
 * (exactNumber). A missing value prints as an empty cell on export and a dash on screen.
 */
import type { CellValue, NumberFormat, PresentedColumn, PresentedTable } from './types.js';

/** The shortest decimal that reads back as the same double (ECMA-262 Number::toString), -0 kept. */
export function exactNumber(x: number): string {
  return Object.is(x, -0) ? '-0' : String(x);
}

/** Fixed decimals; a value that rounds to zero prints without a minus sign. */
export function fixed(x: number, decimals: number): string {
  if (!Number.isFinite(x)) return String(x);
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

/** Significant digits, plain notation between 1e-4 and 1e6, otherwise d.ddde±x. */
export function significant(x: number, digits: number): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-4 && a < 1e6) {
    const s = x.toPrecision(digits);
    if (!s.includes('e')) return s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s;
    return Number(s).toString();
  }
  const [m, e] = x.toExponential(digits - 1).split('e');
  const mant = m.includes('.') ? m.replace(/0+$/, '').replace(/\.$/, '') : m;
  return `${mant}e${e}`;
}

/** Decimals shown per role (the 'value' role shows 6 significant digits instead). */
export const DECIMALS: Record<Exclude<NumberFormat, 'value'>, number> = { percent: 3, stat: 3, p: 4, ratio: 4, integer: 0 };

/** The one p-value text: 4 decimals, "<0.0001" below. */
export function pValueText(p: number): string {
  return p > 0 && p < 0.0001 ? '<0.0001' : fixed(p, DECIMALS.p);
}

/** Display rounding by a column's role. */
export function displayNumber(x: number, format: NumberFormat | undefined): string {
  switch (format) {
    case 'p':
      return pValueText(x);
    case 'percent':
    case 'stat':
    case 'ratio':
    case 'integer':
      return fixed(x, DECIMALS[format]);
    default:
      return significant(x, 6);
  }
}

/** A cell as text: numbers at the column's display rounding, booleans yes/no, missing as `missing`. */
export function cellText(v: CellValue, column: Pick<PresentedColumn, 'format'>, missing = ''): string {
  if (v === null) return missing;
  if (typeof v === 'number') return displayNumber(v, column.format);
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  return v;
}

/** The display role of cell (row, col): a measure table's row role for its value column, else the column's. */
export function cellFormat(t: Pick<PresentedTable, 'rowFormats' | 'columns'>, row: number, col: number): NumberFormat | undefined {
  const c = t.columns[col];
  if (t.rowFormats && c.key === 'value') return t.rowFormats[row] ?? c.format;
  return c.format;
}

/** Cell (row, col) of a table as display text. */
export function tableCellText(t: Pick<PresentedTable, 'rowFormats' | 'columns' | 'rows'>, row: number, col: number, missing = ''): string {
  return cellText(t.rows[row][col], { format: cellFormat(t, row, col) }, missing);
}

/**
 * Notes mark their formulas with backticks (`R^2 = 1 - ...`) so that LaTeX can set them
 * in math mode; every other surface shows the text without the marks.
 */
export function plainText(s: string): string {
  return s.replace(/`/g, '');
}

/** The rounding rules in words, for report notes. */
export const ROUNDING_NOTE =
  'Shown rounded: estimates, standard errors, distances and gross returns to 6 significant digits; percentages, test statistics and t to 3 decimals; R^2 and other ratios to 4; p-values to 4 ("<0.0001" below). CSV and XLSX cells hold the full double.';
