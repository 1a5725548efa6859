/** Tables as the screens show them, copy (tab-separated) and export (CSV, RFC 4180). */
export interface Column<Row> {
  key: string;
  label: string;
  /** Display text (formatted). */
  text: (row: Row) => string;
  /** Machine value for sorting and CSV (full precision); defaults to the text. */
  value?: (row: Row) => number | string | null;
  align?: 'left' | 'right';
  title?: string;
}

function csvCell(v: string): string {
  return /[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

function machine<Row>(c: Column<Row>, r: Row): string {
  const v = c.value ? c.value(r) : c.text(r);
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  return v;
}

/** CSV with full-precision numbers; empty cells where a value is missing. */
export function toCsv<Row>(columns: Column<Row>[], rows: Row[]): string {
  const head = columns.map((c) => csvCell(c.label)).join(',');
  const body = rows.map((r) => columns.map((c) => csvCell(machine(c, r))).join(','));
  return [head, ...body].join('\r\n') + '\r\n';
}

/** Tab-separated text as displayed, for pasting into a spreadsheet. */
export function toTsv<Row>(columns: Column<Row>[], rows: Row[]): string {
  const clean = (s: string) => s.replace(/[\t\n\r]/g, ' ');
  return [columns.map((c) => clean(c.label)).join('\t'), ...rows.map((r) => columns.map((c) => clean(c.text(r))).join('\t'))].join('\n') + '\n';
}

export function sortRows<Row>(rows: Row[], column: Column<Row> | undefined, descending: boolean): Row[] {
  if (!column) return rows;
  const key = (r: Row) => (column.value ? column.value(r) : column.text(r));
  return rows
    .map((r, i) => ({ r, i }))
    .sort((a, b) => {
      const ka = key(a.r);
      const kb = key(b.r);
      let c: number;
      if (ka === null || (typeof ka === 'number' && !Number.isFinite(ka))) c = 1;
      else if (kb === null || (typeof kb === 'number' && !Number.isFinite(kb))) c = -1;
      else if (typeof ka === 'number' && typeof kb === 'number') c = descending ? kb - ka : ka - kb;
      else c = descending ? String(kb).localeCompare(String(ka), undefined, { numeric: true }) : String(ka).localeCompare(String(kb), undefined, { numeric: true });
      return c || a.i - b.i;
    })
    .map((x) => x.r);
}
