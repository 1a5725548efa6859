/**
 * Wide tables on a page: a table with more columns than fit is split into column
 * groups, each repeating the first (identifying) column, so LaTeX and printed reports
 * never run off the page. Values, marks and warnings travel with their columns.
 */
import type { PresentedTable } from '../present/types.js';

/** Most columns a printed table keeps side by side (the first included). */
export const MAX_PRINT_COLUMNS = 7;

export function splitColumns(t: PresentedTable, max = MAX_PRINT_COLUMNS): PresentedTable[] {
  if (t.columns.length <= max) return [t];
  const rest = t.columns.map((_, j) => j).slice(1);
  const per = max - 1;
  const groups: number[][] = [];
  for (let k = 0; k < rest.length; k += per) groups.push([0, ...rest.slice(k, k + per)]);
  return groups.map((cols, g) => ({
    ...t,
    id: g === 0 ? t.id : `${t.id}-${g + 1}`,
    title: `${t.title} (${g + 1} of ${groups.length})`,
    columns: cols.map((j) => t.columns[j]),
    rows: t.rows.map((r) => cols.map((j) => r[j])),
    notes: g === groups.length - 1 ? t.notes : [],
    warnings: g === 0 ? t.warnings : t.warnings.filter((w) => w.rows),
  }));
}
