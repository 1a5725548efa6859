/**
 * Two recorded runs side by side (the run-history screen's "compare two runs"): the
 * sample-header lines, whether they used the same panel, and every number of the tables
 * both results have, matched by table, row (its text cells) and column, with B - A.
 */
import type { RunRecord } from '../records/run-record.js';
import { present } from '../present/index.js';

export interface RunDiffCell {
  table: string;
  tableTitle: string;
  /** The row's key in the presentation model (e.g. "b.harbor", "2030-01-31|b.harbor", "MAPE % per year"). */
  row: string;
  column: string;
  a: number;
  b: number;
  /** b - a. */
  diff: number;
}

export interface RunDiff {
  a: { id: number; label: string; createdAt: string };
  b: { id: number; label: string; createdAt: string };
  samePanel: boolean;
  /** Every sample-header line, with whether it agrees. */
  header: { key: string; a: string; b: string; same: boolean }[];
  cells: RunDiffCell[];
  /** Rows ("table: row") one run has and the other lacks. */
  onlyA: string[];
  onlyB: string[];
}

type Side = Pick<RunRecord, 'id' | 'label' | 'createdAt' | 'result' | 'panel'>;

function rowsByKey(r: Side): Map<string, { title: string; columns: string[]; values: Map<string, number> }> {
  const out = new Map<string, { title: string; columns: string[]; values: Map<string, number> }>();
  for (const t of present(r.result).tables) {
    t.rows.forEach((row, i) => {
      const values = new Map<string, number>();
      t.columns.forEach((c, j) => {
        const v = row[j];
        if (typeof v === 'number') values.set(c.header, v);
      });
      out.set(`${t.id}\u0000${t.rowKeys[i]}`, { title: t.title, columns: t.columns.map((c) => c.header), values });
    });
  }
  return out;
}

export function diffRuns(a: Side, b: Side): RunDiff {
  const ha = present(a.result).header;
  const hb = present(b.result).header;
  const keys = [...new Set([...ha.map((l) => l.key), ...hb.map((l) => l.key)])];
  const header = keys.map((key) => {
    const va = ha.filter((l) => l.key === key).map((l) => l.value).join('; ');
    const vb = hb.filter((l) => l.key === key).map((l) => l.value).join('; ');
    return { key, a: va, b: vb, same: va === vb };
  });
  const ra = rowsByKey(a);
  const rb = rowsByKey(b);
  const cells: RunDiffCell[] = [];
  const label = (k: string) => k.replace('\u0000', ': ');
  for (const [k, rowA] of ra) {
    const rowB = rb.get(k);
    if (!rowB) continue;
    const [table, row] = k.split('\u0000');
    for (const col of rowA.columns) {
      const x = rowA.values.get(col);
      const y = rowB.values.get(col);
      if (x === undefined || y === undefined) continue;
      cells.push({ table, tableTitle: rowA.title, row, column: col, a: x, b: y, diff: y - x });
    }
  }
  return {
    a: { id: a.id, label: a.label, createdAt: a.createdAt },
    b: { id: b.id, label: b.label, createdAt: b.createdAt },
    samePanel: a.panel.sha256 === b.panel.sha256,
    header,
    cells,
    onlyA: [...ra.keys()].filter((k) => !rb.has(k)).map(label),
    onlyB: [...rb.keys()].filter((k) => !ra.has(k)).map(label),
  };
}
