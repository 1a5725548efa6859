/** Helpers that turn fixture JSON into the tool's inputs (dense matrices, returns panels). */
import type { DenseMatrix } from '../../../../shared/linalg/qr.js';

export function fromRowsDense(rows: number[][]): DenseMatrix {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const data = new Float64Array(r * c);
  rows.forEach((row, i) => row.forEach((v, j) => (data[i * c + j] = v)));
  return { rows: r, cols: c, data };
}

import type { ReturnsPanel } from '../../../../shared/panel.js';

export interface ComparatorData {
  assets: string[];
  factors: string[];
  periods: string[];
  /** returns[i][t], asset by asset. */
  returns: number[][];
  /** factor_values[k][t], factor by factor. */
  factor_values: number[][];
}

/** A monthly excess-return panel straight from a fixture's data (no store, no returns engine). */
export function panelFromFixture(d: ComparatorData): ReturnsPanel {
  return {
    frequency: 'monthly',
    periods: [...d.periods],
    assets: [...d.assets],
    returnKind: 'excess',
    returns: d.returns.map((r) => Float64Array.from(r)),
    factors: d.factors.map((name, k) => ({ name, values: Float64Array.from(d.factor_values[k]) })),
    sampleNotes: [],
  };
}
