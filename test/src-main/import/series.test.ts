/**
 * Named-series import: units, kinds, risk-free forms; errors named by file, line and
 * column with nothing stored. Percent conversion checked against x / 100 in IEEE 754
 * arithmetic (the rule docs/methods.md states), bit for bit.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importSeries, type SeriesImportOptions } from '../../../src-main/import/index.js';
import { Store } from '../../../src-main/store/store.js';
import { rejection, seededStore, tempDir, write } from './helpers.js';

async function fails(content: string, options: SeriesImportOptions, message: RegExp) {
  const dir = tempDir();
  const store = await seededStore(dir);
  await importSeries(store, write(dir, 'ok.csv', 'date,harbor\n2020-01-31,0.01\n2020-02-28,-0.02\n'), { kind: 'factor' });
  const before = store.contentDigest();
  const e = await rejection(importSeries(store, write(dir, 'bad.csv', content), options));
  expect(e.message).toMatch(message);
  expect(store.contentDigest(), 'database unchanged').toBe(before);
  store.close();
  return e;
}

describe('series import', () => {
  it('factors in decimals, risk-free in percent (divided by 100), forms and kinds stored; column names kept', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 's.db'));
    const f = await importSeries(store, write(dir, 'f.csv', 'date,Harbor,ember\n2020-01-31,0.0123,-0.004\n2020-02-28,-0.1,\n2020-03-31,1e-300,0.30000000000000004\n'), { kind: 'factor' });
    expect(f.subjects).toEqual(['Harbor', 'ember']);
    expect(f.rowsStored).toBe(5);
    const r = await importSeries(store, write(dir, 'y.csv', 'date,bill\n2020-01-31,3.95\n2020-02-28,4.1\n'), { kind: 'riskfree', units: 'percent', rfForm: 'yield-annual' });
    expect(r.subjects).toEqual(['bill']);
    await importSeries(store, write(dir, 'c.csv', 'date,spend\n2020-01-31,1000\n2020-02-28,1003.5\n'), { kind: 'consumption' });
    const [h, e, bill, spend] = store.loadSeries(['Harbor', 'ember', 'bill', 'spend']);
    expect(Array.from(h.values)).toEqual([0.0123, -0.1, 1e-300]);
    expect(e.dates).toEqual(['2020-01-31', '2020-03-31']);
    expect(Object.is(e.values[1], 0.1 + 0.2)).toBe(true);
    expect(bill).toMatchObject({ kind: 'riskfree', rfForm: 'yield-annual', dates: ['2020-01-31', '2020-02-28'] });
    expect(Object.is(bill.values[0], 3.95 / 100) && Object.is(bill.values[1], 4.1 / 100)).toBe(true);
    expect(spend.kind).toBe('consumption');
    expect(spend.rfForm).toBeUndefined();
    expect(store.seriesList().map((s) => [s.name, s.kind, s.units, s.rfForm ?? null])).toEqual([
      ['Harbor', 'factor', 'decimal', null],
      ['bill', 'riskfree', 'percent', 'yield-annual'],
      ['ember', 'factor', 'decimal', null],
      ['spend', 'consumption', 'decimal', null],
    ]);
    store.close();
  });

  it('a risk-free series without a form is a per-period rate; re-importing the same bytes stores nothing', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const file = write(dir, 'rf.csv', 'date,rf\n2020-01-31,0.001\n');
    await importSeries(store, file, { kind: 'riskfree' });
    expect(store.loadSeries(['rf'])[0].rfForm).toBe('rate');
    const digest = store.contentDigest();
    expect((await importSeries(store, file, { kind: 'riskfree' })).status).toBe('already-imported');
    expect(store.contentDigest()).toBe(digest);
    store.close();
  });

  it('new dates extend a stored series of the same kind; a monthly gap is a warning', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    await importSeries(store, write(dir, 'a.csv', 'date,x\n2020-01-31,1\n2020-02-28,2\n'), { kind: 'other' });
    const r = await importSeries(store, write(dir, 'b.csv', 'date,x\n2020-03-31,3\n2020-04-30,4\n2020-05-29,4\n2020-06-30,4\n2020-10-30,5\n2020-11-30,5\n'), { kind: 'other' });
    expect(store.loadSeries(['x'])[0].dates).toHaveLength(8);
    expect(r.warnings.map((w) => w.message)).toEqual(['x: no observation between 2020-06-30 and 2020-10-30 (122 days; the data are monthly)']);
    store.close();
  });

  it('bad input: named, and nothing stored', async () => {
    await fails('date,harbor\n2020-01-31,0.5\n', { kind: 'factor' }, /line 2: \(series, date\) = \(harbor, 2020-01-31\) is already stored, from ok\.csv/);
    await fails('date,harbor\n2020-03-31,0.5\n', { kind: 'riskfree' }, /series "harbor" is already stored as kind factor, units decimal; this import says kind riskfree, units decimal, rf form rate/);
    await fails('date,x\n2020-01-31,1\n2020-03-31,2\n2020-02-28,3\n', { kind: 'other' }, /bad\.csv, line 4, column 1 \(date\): date 2020-02-28 comes after 2020-03-31: dates are out of order/);
    await fails('date,x\n2020-01-31,1\n2020-01-31,2\n', { kind: 'other' }, /line 3, column 1 \(date\): date 2020-01-31 appears twice/);
    await fails('date,x\n2020-01-31,one\n', { kind: 'other' }, /line 2, column 2 \(x\): "one" is not a number/);
    await fails('date,spend\n2020-01-31,1000\n2020-02-28,0\n', { kind: 'consumption' }, /line 3, column 2 \(spend\): a consumption level must be positive, not 0/);
    await fails('date,acct\n2020-01-31,-1\n', { kind: 'riskfree', rfForm: 'account' }, /an account level must be positive/);
    await fails('date,rf\n2020-01-31,-150\n', { kind: 'riskfree', units: 'percent' }, /a risk-free rate or yield of -1\.5 \(decimal\)/);
    await fails('when,x\n2020-01-31,1\n', { kind: 'other' }, /line 1: no "date" column in the header \(when, x\)/);
    await fails('date\n2020-01-31\n', { kind: 'other' }, /the header has no series columns/);
    await fails('date,x\n', { kind: 'other' }, /has a header but no data rows/);
    await fails('date,x\n2020-02-30,1\n', { kind: 'other' }, /"2020-02-30" is not a calendar date \(2020-02 has no day 30\)/);
  });

  it('option errors: a form for a non-risk-free series, unknown kind or units', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const file = write(dir, 'x.csv', 'date,x\n2020-01-31,1\n');
    await expect(importSeries(store, file, { kind: 'factor', rfForm: 'rate' })).rejects.toThrow(/a risk-free form was given for a factor series/);
    await expect(importSeries(store, file, { kind: 'bogus' as never })).rejects.toThrow(/unknown series kind "bogus"/);
    await expect(importSeries(store, file, { kind: 'factor', units: 'basis-points' as never })).rejects.toThrow(/unknown units/);
    expect(store.importLog()).toEqual([]);
    store.close();
  });

  it('series in the layout return files come in: YYYYMM or quarter keys, percent, missing codes (gaps, not zeros), semicolons and decimal commas', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const r = await importSeries(store, write(dir, 'f.csv', 'date;gust;bill\n200101;0,50;0,30\n200102;-99,99;0,31\n200103;1,25;NA\n'), {
      kind: 'factor',
      units: 'percent',
      dateFormat: 'YYYYMM',
      delimiter: 'semicolon',
      decimal: 'comma',
      missing: ['-99.99', 'NA'],
    });
    expect([r.first, r.last, r.frequency]).toEqual(['2001-01-31', '2001-03-31', 'monthly']);
    const [bill, gust] = store.loadSeries();
    expect(gust.dates).toEqual(['2001-01-31', '2001-03-31']);
    expect(Array.from(gust.values)).toEqual([0.5 / 100, 1.25 / 100]);
    expect(bill.dates).toEqual(['2001-01-31', '2001-02-28']);
    await importSeries(store, write(dir, 'q.csv', 'date,spend\n2001-Q1,100\n2001-Q2,101\n'), { kind: 'consumption', dateFormat: 'YYYY-Qn' });
    expect(store.loadSeries(['spend'])[0].dates).toEqual(['2001-03-31', '2001-06-30']);
    // a -99.99 with no codes named is refused, not read as -99.99 %
    const e = await rejection(importSeries(store, write(dir, 'g.csv', 'date,wind\n200101,0.5\n200102,-99.99\n'), { kind: 'factor', units: 'percent', dateFormat: 'YYYYMM' }));
    expect(e.message).toMatch(/g\.csv, line 3, column 2 \(wind\): -99\.99 is a code often used for a missing value/);
    expect(e.hint).toMatch(/--missing -99\.99/);
    store.close();
  });
});
