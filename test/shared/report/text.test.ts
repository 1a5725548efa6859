import { describe, expect, it } from 'vitest';
import { CAUTION } from '../../../shared/results.js';
import { table, numCol, textCol } from '../../../shared/present/build.js';
import { resultToText, tableToText } from '../../../shared/report/text.js';
import { sampleBacktest, sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

describe('terminal tables', () => {
  it('aligns columns, rounds for display, marks the best and leaves out number columns empty in every row', () => {
    const text = tableToText(
      table({
        id: 't',
        title: 'T',
        columns: [textCol('a', 'name'), numCol('b', 'value', 'value', '% per month'), numCol('c', 'never', 'value'), numCol('d', 'p', 'p')],
        rows: [
          ['x', 1 / 3, null, 0.05],
          ['longer', -12345.678901, null, 0.00001],
        ],
        marks: { b: [0] },
        notes: ['a note'],
      }),
    );
    // 6 significant digits for values and 4 decimals for p (shared/present/format.ts), right-aligned.
    expect(text.split('\n')).toEqual([
      'T',
      '  name            value        p',
      '          (% per month)',
      '  ------  -------------  -------',
      '  x           0.333333*   0.0500',
      '  longer      -12345.7   <0.0001',
      '  a note',
    ]);
  });

  it('prints the title once, the caution, the header, every main table and the record', () => {
    const t = resultToText(sampleFit(), sampleRecord());
    expect(t).toContain(CAUTION);
    expect(t.split('\n').filter((l) => l === 'linear(MKT,SIZE)').length).toBe(1);
    expect(t).toMatch(/sample +2031-01-31 to 2035-12-31, monthly \(12 periods per year\), T = 60/);
    for (const title of ['Parameter estimates', 'Pricing errors', 'Tests of zero pricing errors', 'Cross-sectional fit', 'Record']) expect(t).toContain(title);
    expect(t).toContain(`panel sha256  ${'ab'.repeat(32)}`);
    expect(t).toMatch(/alpha +s\.e\. +t +alpha/);
    expect(t).toContain('(% per month)');
    expect(t).toContain('(% per year)');
    const c = resultToText(sampleCompare());
    expect(c).not.toContain('s.e. (Shanken)'); // no model has it
    expect(c).toContain('pooled RMSE out of sample');
    expect(c).toContain('Tests of equal squared HJ distance');
  });

  it('lists the warnings at the top and flags the tables they qualify', () => {
    const b = resultToText(sampleBacktest());
    expect(b).toMatch(/Warnings\n {2}\[1\] FAILED_WINDOWS: 1 of 5 back-test windows/);
    expect(b).toContain('! warning 1 (FAILED_WINDOWS) applies to this table');
  });
});
