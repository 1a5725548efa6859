/** Helpers that turn fixture JSON into the tool's inputs (dense matrices, returns panels). */
import type { DenseMatrix } from '../../../../shared/linalg/qr.js';

export function fromRowsDense(rows: number[][]): DenseMatrix {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const data = new Float64Array(r * c);
  rows.forEach((row, i) => row.forEach((v, j) => (data[i * c + j] = v)));
  return { rows: r, cols: c, data };
}
