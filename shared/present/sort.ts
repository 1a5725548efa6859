/** Row order of a presented table sorted by one column (the app's sortable headings). Missing values last; ties keep the table's order. */
import type { PresentedTable } from './types.js';

export function sortOrder(t: Pick<PresentedTable, 'rows'>, col: number, descending: boolean): number[] {
  const idx = t.rows.map((_, i) => i);
  if (col < 0) return idx;
  return idx.sort((a, b) => {
    const x = t.rows[a][col];
    const y = t.rows[b][col];
    let c: number;
    if (x === null) c = y === null ? 0 : 1;
    else if (y === null) c = -1;
    else if (typeof x === 'number' && typeof y === 'number') c = descending ? y - x : x - y;
    else c = descending ? String(y).localeCompare(String(x), undefined, { numeric: true }) : String(x).localeCompare(String(y), undefined, { numeric: true });
    return c || a - b;
  });
}

/** The table with the rows `order` (row indices, a subset or a permutation); marks, warnings and row formats follow their rows. */
export function reorderRows(t: PresentedTable, order: readonly number[]): PresentedTable {
  const at = new Map(order.map((r, k) => [r, k]));
  const move = (rows: number[]) => rows.filter((r) => at.has(r)).map((r) => at.get(r) as number);
  return {
    ...t,
    rows: order.map((i) => t.rows[i]),
    rowKeys: order.map((i) => t.rowKeys[i]),
    marks: Object.fromEntries(Object.entries(t.marks).map(([k, rows]) => [k, move(rows)])),
    warnings: t.warnings.map((w) => (w.rows ? { ...w, rows: move(w.rows) } : w)),
    ...(t.rowFormats ? { rowFormats: order.map((i) => (t.rowFormats as NonNullable<PresentedTable['rowFormats']>)[i]) } : {}),
  };
}

/** The rows of a table that pass `keep`, in the table's order. */
export function filterRows(t: PresentedTable, keep: (row: number) => boolean): PresentedTable {
  return reorderRows(t, t.rows.map((_, i) => i).filter(keep));
}
