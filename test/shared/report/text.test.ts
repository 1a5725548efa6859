import { describe, expect, it } from 'vitest';
import { CAUTION } from '../../../shared/results.js';
import { resultToText, tableToText } from '../../../shared/report/text.js';
import { sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

describe('terminal tables', () => {
  it('aligns columns, rounds for display and leaves out columns empty in every row', () => {
    const text = tableToText({
      id: 't',
      title: 'T',
      columns: [
        { key: 'a', label: 'name', type: 'text' },
        { key: 'b', label: 'value', type: 'number', format: 'value' },
        { key: 'c', label: 'never', type: 'number' },
        { key: 'd', label: 'p', type: 'number', format: 'p' },
      ],
      rows: [
        ['x', 1 / 3, null, 0.05],
        ['longer', -12345.678901, null, 0.00001],
      ],
    });
    // 6 significant digits for values and 4 decimals for p (shared/report/numbers.ts), right-aligned.
    expect(text.split('\n')).toEqual(['T', 'name       value        p', '------  --------  -------', 'x       0.333333   0.0500', 'longer  -12345.7  <0.0001']);
  });

  it('prints the caution, the sample header, every table and the record', () => {
    const t = resultToText(sampleFit(), sampleRecord());
    expect(t).toContain(CAUTION);
    expect(t).toContain('sample     2031-01-31 to 2035-12-31');
    for (const title of ['Parameter estimates', 'Pricing errors', 'Tests', 'Cross-sectional fit and distance', 'Record']) expect(t).toContain(title);
    expect(t).toContain(`panel sha256  ${'ab'.repeat(32)}`);
    const c = resultToText(sampleCompare());
    expect(c).not.toContain('s.e. (Shanken)'); // no model has it
    expect(c).toContain('RMSE out of sample (pooled)'); // one model has it
    expect(c).toContain('Tests of equal HJ distance');
  });
});
