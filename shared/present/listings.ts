/** Tables of the stored data (not results) in the same presentation model: the coverage of each history. */
import type { CoverageRow } from '../bridge/types.js';
import { numCol, table, textCol } from './build.js';
import type { PresentedTable } from './types.js';

export function coverageTable(rows: readonly CoverageRow[]): PresentedTable {
  return table({
    id: 'coverage',
    title: 'Coverage',
    columns: [
      textCol('name', 'Name'),
      textCol('kind', 'Kind'),
      textCol('data', 'Data', 'how an asset was stored: prices, or returns'),
      textCol('first', 'First'),
      textCol('last', 'Last'),
      numCol('count', 'Observations', 'integer'),
      numCol('gaps', 'Gaps', 'integer', undefined, { note: 'steps longer than twice the usual spacing' }),
      numCol('longestGap', 'Longest gap', 'integer', 'days'),
      numCol('missing', 'Missing', 'integer', undefined, { note: 'periods whose value was a missing-value code (gaps, not zeros)' }),
    ],
    rows: rows.map((r) => [r.name, r.rfForm ? `${r.kind} (${r.rfForm})` : r.kind, r.kind === 'asset' ? (r.data ?? 'prices') : null, r.first, r.last, r.count, r.gaps, r.longestGapDays ?? null, r.missing ?? null]),
    rowKeys: rows.map((r) => `${r.kind}:${r.name}`),
  });
}
