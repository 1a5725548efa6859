/**
 * Return import (METHODS section 8): every bad input is named (file, line, column, what
 * was expected) and leaves the database byte for byte as it was (the whole-file digest of
 * test/robustness/helpers.ts: schema, user_version and every row of every table, read by
 * an independent connection); layouts, forms, units, excess returns, missing codes,
 * delimiters and decimal commas, the same bytes read another way, --replace.
 * References: RFC 4180 (CSV); ISO 8601 dates; r = R - 1, l = ln R (Campbell, Lo and
 * MacKinlay 1997, sec. 1.4); Math.exp / Math.expm1 as the reference for log returns.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { isReturnHistory, type ReturnHistory } from '../../../shared/data.js';
import { returnsTable } from '../../../shared/returns/index.js';
import { importPrices, importReturns, importSeries, type ReturnImportOptions } from '../../../src-main/import/index.js';
import { Store } from '../../../src-main/store/store.js';
import { databaseState } from '../../robustness/helpers.js';
import { rejection, seededStore, tempDir, write } from './helpers.js';

/** A store that holds prices and one earlier return import. */
async function seeded(dir: string): Promise<Store> {
  const store = await seededStore(dir);
  await importReturns(store, write(dir, 'earlier.csv', 'date,harbour-p1\n200101,1.00\n200102,-0.50\n'), { dateFormat: 'YYYYMM', units: 'percent' });
  return store;
}

/** Imports `content`; asserts the failure, its message, a hint, and the unchanged database (whole-file digest). */
async function fails(content: string, message: RegExp, options: ReturnImportOptions = {}) {
  const dir = tempDir();
  const store = await seeded(dir);
  const dbFile = path.join(dir, 'test.db');
  const before = databaseState(dbFile);
  const file = write(dir, 'bad.csv', content);
  const e = await rejection(importReturns(store, file, options));
  expect(e.message, `message: ${e.message}`).toMatch(message);
  expect(e.message.includes('bad.csv'), 'the message names the file').toBe(true);
  expect(e.hint, 'every error says what to do next').toBeTruthy();
  expect(databaseState(dbFile).digest, 'database byte for byte unchanged after a refused import').toBe(before.digest);
  // and the connection still works
  await importReturns(store, write(dir, 'good.csv', 'date,quill-q9\n200101,1\n'), { dateFormat: 'YYYYMM' });
  expect(store.assets()).toContain('quill-q9');
  store.close();
  return e;
}

describe('bad return files: named precisely, database unchanged', () => {
  it('an unknown code in a cell (text that is not a number and not a declared missing code)', async () => {
    const e = await fails('date,p1,p2\n200101,1.2,0.4\n200102,n/a,0.3\n', /bad\.csv, line 3, column 2 \(p1\): "n\/a" is not a number \(expected a return, or a missing-value code: -99\.99\)/, {
      dateFormat: 'YYYYMM',
      units: 'percent',
      missing: ['-99.99'],
    });
    expect(e.hint).toMatch(/--missing "-99\.99,n\/a"/);
  });

  it('a percent file read as decimal: a return below -100 % is refused, with the units named in the hint', async () => {
    const e = await fails('date,p1,p2\n200101,1.25,0.40\n200102,-3.10,2.20\n', /bad\.csv, line 3, column 2 \(p1\): a net return of -3\.1 is a return of -310 %, not above -100 %/, { dateFormat: 'YYYYMM' });
    expect(e.hint).toMatch(/looks like percent .*pass --units percent/);
  });

  it('a missing-value code in a cell when no codes were named: refused, never read as a -99.99 % return', async () => {
    const e = await fails('date,p1,p2\n200101,1.25,0.40\n200102,-99.99,2.20\n', /bad\.csv, line 3, column 2 \(p1\): -99\.99 is a code often used for a missing value, and no missing-value codes were named/, {
      dateFormat: 'YYYYMM',
      units: 'percent',
    });
    expect(e.hint).toMatch(/pass --missing -99\.99/);
    // and with other codes named, -999 where -99.99 was declared is refused the same way
    await fails('date,p1\n200101,1.25\n200102,-999\n', /line 3, column 2 \(p1\): a net return of -999 % is a return of -999 %, not above -100 %/, { dateFormat: 'YYYYMM', units: 'percent', missing: ['-99.99'] });
  });

  it('a date form that does not match the one named', async () => {
    const e = await fails('date,p1\n200101,1.2\n2001-02,0.4\n', /bad\.csv, line 3, column 1 \(date\): "2001-02" is not a date: expected YYYYMM/, { dateFormat: 'YYYYMM', units: 'percent' });
    expect(e.hint).toMatch(/reads as YYYY-MM.*--date-format YYYY-MM/);
    const iso = await fails('date,p1\n200101,1.2\n', /line 2, column 1 \(date\): "200101" is not a date: expected YYYY-MM-DD/, { units: 'percent' });
    expect(iso.hint).toMatch(/--date-format YYYYMM/);
    await fails('date,p1\n2001Q5,1.2\n', /line 2, column 1 \(date\): "2001Q5" is not a calendar date or period \(quarter 5 does not exist\)/, { dateFormat: 'YYYYQn', units: 'percent' });
    await fails('date,p1\n200113,1.2\n', /month 13 does not exist/, { dateFormat: 'YYYYMM', units: 'percent' });
  });

  it('duplicate periods: the same period twice in a wide file, and an (asset, period) twice in a long file', async () => {
    await fails('date,p1\n200101,1.2\n200102,0.4\n200102,0.5\n', /bad\.csv, line 4, column 1 \(date\): period 200102 \(2001-02-28\) appears twice/, { dateFormat: 'YYYYMM', units: 'percent' });
    await fails('date,asset,return\n2001Q1,p1,1.2\n2001Q2,p1,0.4\n2001Q1,p1,0.5\n', /bad\.csv, line 4: duplicate \(asset, date\) = \(p1, 2001-03-31\): that asset and date appear earlier in the same file/, {
      layout: 'long',
      dateFormat: 'YYYYQn',
      units: 'percent',
    });
    await fails('date,p1\n200102,1.2\n200101,0.4\n', /line 3, column 1 \(date\): period 200101 \(2001-01-31\) comes after 2001-02-28: dates are out of order/, { dateFormat: 'YYYYMM', units: 'percent' });
  });

  it('gross and log forms: a gross return that is not positive; not-finite numbers', async () => {
    await fails('date,p1\n2001-01-31,1.01\n2001-02-28,0\n', /line 3, column 2 \(p1\): a gross return of 0 is a return of -100 %, not above -100 %/, { form: 'gross' });
    await fails('date,p1\n2001-01-31,1e400\n', /line 2, column 2 \(p1\): "1e400" is beyond the range of a double/, { form: 'log' });
  });

  it('an asset stored as prices cannot take returns, nor the other way round; returns of another form cannot be appended', async () => {
    await fails('date,alpha\n2020-04-30,0.01\n', /bad\.csv, line 1, column 2: asset "alpha" is stored as prices; this file gives it returns \(net, decimal\)/);
    await fails('date,harbour-p1\n200103,0.01\n', /bad\.csv, line 1, column 2: asset "harbour-p1" is stored as net returns \(percent\); this import says net, decimal/, { dateFormat: 'YYYYMM' });
    const dir = tempDir();
    const store = await seeded(dir);
    const before = databaseState(path.join(dir, 'test.db')).digest;
    const e = await rejection(importPrices(store, write(dir, 'p.csv', 'date,asset,price\n2001-03-30,harbour-p1,10\n')));
    expect(e.message).toMatch(/asset "harbour-p1" is stored as returns \(net, percent\); this file gives it prices/);
    expect(databaseState(path.join(dir, 'test.db')).digest).toBe(before);
    store.close();
  });

  it('structure: no date column, no asset columns, a long file without a return column, a line with the wrong number of fields', async () => {
    await fails('period,p1\n200101,1\n', /line 1: no "date" column in the header \(period, p1\)/, { dateFormat: 'YYYYMM' });
    await fails('date\n200101\n', /line 1: the header has no asset columns/, { dateFormat: 'YYYYMM' });
    await fails('date,asset,ret\n200101,p1,1\n', /line 1: no "return" column in the header/, { layout: 'long', dateFormat: 'YYYYMM' });
    await fails('date,p1,p2\n200101,1\n', /line 2: 2 fields, but the header has 3/, { dateFormat: 'YYYYMM' });
    await fails('date,p1\n200101,,\n', /line 2: 3 fields, but the header has 2/, { dateFormat: 'YYYYMM' });
    await fails('date,p1\n', /has a header but no data rows/, { dateFormat: 'YYYYMM' });
    await fails('date,p1\n200101,-99.99\n200102,-99.99\n', /no asset has a return \(every cell is empty or a missing-value code\)/, { dateFormat: 'YYYYMM', units: 'percent', missing: ['-99.99'] });
  });
});

describe('good return files', () => {
  it('wide, YYYYMM, percent: stored as written with form, units and a gap for the missing code', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    const r = await importReturns(store, write(dir, 'ports.csv', 'date,p1,p2\n200101,-99.99,0.40\n200102,1.25,-99.99\n200103,2.00,0.10\n200104,-0.50,0.20\n'), {
      dateFormat: 'YYYYMM',
      units: 'percent',
      missing: ['-99.99', 'NA'],
    });
    expect(r.status).toBe('imported');
    expect(r.kind).toBe('returns');
    expect(r.subjects).toEqual(['p1', 'p2']);
    expect(r.frequency).toBe('monthly');
    expect([r.first, r.last]).toEqual(['2001-01-31', '2001-04-30']);
    // p1's leading code is no data; p2's code inside is a gap (stored as NULL)
    expect(r.rowsStored).toBe(7);
    expect(r.warnings.map((w) => w.kind)).toContain('missing');
    const [p1, p2] = store.loadAssets() as ReturnHistory[];
    expect(p1.dates).toEqual(['2001-02-28', '2001-03-31', '2001-04-30']);
    expect(Array.from(p1.values)).toEqual([1.25, 2, -0.5]);
    expect(Array.from(p2.values).map((v) => (Number.isNaN(v) ? null : v))).toEqual([0.4, null, 0.1, 0.2]);
    expect([p2.form, p2.units, p2.excess]).toEqual(['net', 'percent', false]);
    const info = store.info().assets;
    expect(info.map((a) => [a.name, a.source, a.count, a.missing])).toEqual([
      ['p1', 'returns', 3, 0],
      ['p2', 'returns', 3, 1],
    ]);
    expect(store.importLog()[0].kind).toBe('returns');
    expect(store.importLog()[0].options).toMatchObject({ layout: 'wide', form: 'net', units: 'percent', dateFormat: 'YYYYMM', missing: ['-99.99', 'NA'] });
    store.close();
  });

  it('long layout with mapped columns, gross and log forms: the same gross returns (Math.exp as the reference for log)', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    const nets = [0.0125, -0.0034, 0.021];
    const dates = ['2001-Q1', '2001-Q2', '2001-Q3'];
    const long = (fn: (r: number) => string) => `when,fund,ret\n${dates.map((d, i) => `${d},F,${fn(nets[i])}`).join('\n')}\n`;
    const columns = { date: 'when', asset: 'fund', return: 'ret' };
    await importReturns(store, write(dir, 'net.csv', long((r) => String(r)).replaceAll(',F,', ',fund-net,')), { layout: 'long', columns, dateFormat: 'YYYY-Qn' });
    await importReturns(store, write(dir, 'gross.csv', long((r) => String(1 + r)).replaceAll(',F,', ',fund-gross,')), { layout: 'long', columns, dateFormat: 'YYYY-Qn', form: 'gross' });
    await importReturns(store, write(dir, 'log.csv', long((r) => String(Math.log1p(r))).replaceAll(',F,', ',fund-log,')), { layout: 'long', columns, dateFormat: 'YYYY-Qn', form: 'log' });
    const t = returnsTable(store.loadAssets(), { frequency: 'quarterly', kind: 'gross' });
    expect(t.periods).toEqual(['2001-03-31', '2001-06-30', '2001-09-30']);
    for (const name of ['fund-net', 'fund-gross', 'fund-log']) {
      t.series[name].forEach((v, i) => expect(Math.abs((v as number) - (1 + nets[i])), `${name} ${i}`).toBeLessThan(1e-15));
    }
    store.close();
  });

  it('semicolons and decimal commas, a tab-separated file, and YYYY periods', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    await importReturns(store, write(dir, 'semi.csv', 'date;p1;p2\n200101;1,25;-0,5\n200102;0,75;NA\n200103;0,10;0,20\n'), { dateFormat: 'YYYYMM', units: 'percent', delimiter: 'semicolon', decimal: 'comma', missing: ['NA'] });
    await importReturns(store, write(dir, 'tab.tsv', 'date\tyearly\n2001\t0.05\n2002\t-0.02\n'), { dateFormat: 'YYYY', delimiter: 'tab' });
    const [p1, p2, yearly] = store.loadAssets() as ReturnHistory[];
    expect(Array.from(p1.values)).toEqual([1.25, 0.75, 0.1]);
    expect(Number.isNaN(p2.values[1])).toBe(true);
    expect(yearly.dates).toEqual(['2001-12-31', '2002-12-31']);
    // a semicolon file read with the default comma: the header error names the delimiter to pass
    const e = await rejection(importReturns(store, write(dir, 'semi2.csv', 'date;p3\n200101;1,25\n'), { dateFormat: 'YYYYMM' }));
    expect(e.message).toMatch(/the header is one column separated by semicolons, not commas/);
    expect(e.hint).toMatch(/--delimiter semicolon/);
    const c = await rejection(importReturns(store, write(dir, 'comma.csv', 'date;p3\n200101;1,25\n'), { dateFormat: 'YYYYMM', delimiter: 'semicolon' }));
    expect(c.message).toMatch(/"1,25" is not a number/);
    expect(c.hint).toMatch(/--decimal comma/);
    store.close();
  });

  it('the same bytes: read the same way, "already imported"; read another way, refused with what differs; --replace takes the earlier import out', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    const file = write(dir, 'ports.csv', 'date,p1,p2\n200101,1.25,0.40\n200102,-0.50,0.10\n');
    const first = await importReturns(store, file, { dateFormat: 'YYYYMM' });
    expect(first.status).toBe('imported');
    expect((await importReturns(store, file, { dateFormat: 'YYYYMM' })).status).toBe('already-imported');
    const before = databaseState(path.join(dir, 'r.db')).digest;
    const e = await rejection(importReturns(store, file, { dateFormat: 'YYYYMM', units: 'percent' }));
    expect(e.code).toBe('CONFLICT');
    expect(e.message).toMatch(/ports\.csv: these bytes were imported before \(import 1, ports\.csv, .*\) and read another way: units: percent now, decimal then/);
    expect(e.hint).toMatch(/--replace/);
    expect(databaseState(path.join(dir, 'r.db')).digest).toBe(before);
    // as a series of another kind: also refused, naming the kind
    const s = await rejection(importSeries(store, file, { kind: 'factor', dateFormat: 'YYYYMM' }));
    expect(s.message).toMatch(/read another way: data kind: series now, returns then/);
    const r = await importReturns(store, file, { dateFormat: 'YYYYMM', units: 'percent', replace: true });
    expect(r.status).toBe('imported');
    expect(r.replaced).toEqual([{ importId: 1, fileName: 'ports.csv', rows: 4, removed: true }]);
    expect(r.warnings[0].message).toMatch(/took out import 1 \(ports\.csv: the same bytes read another way: units: percent now, decimal then\), 4 rows/);
    expect(store.importLog().map((l) => [l.id, l.kind, l.options.units])).toEqual([[2, 'returns', 'percent']]);
    expect((store.loadAssets()[0] as ReturnHistory).units).toBe('percent');
    store.close();
  });

  it('a price file first imported as a series can be brought in as prices with --replace (the wrong kind corrected)', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    const file = write(dir, 'wide.csv', 'date,kelpworks,tidemill\n2021-01-29,10,20\n2021-02-26,11,21\n');
    await importSeries(store, file, { kind: 'factor' });
    const e = await rejection(importPrices(store, file, { layout: 'wide' }));
    expect(e.message).toMatch(/read another way: data kind: prices now, series then/);
    const r = await importPrices(store, file, { layout: 'wide', replace: true });
    expect(r.status).toBe('imported');
    expect(store.seriesList()).toEqual([]);
    expect(store.assets()).toEqual(['kelpworks', 'tidemill']);
    store.close();
  });

  it('excess returns are stored with their flag; --max-rejects skips a bad line whole', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'r.db'));
    const r = await importReturns(store, write(dir, 'ex.csv', 'date,e1,e2\n2001-01-31,0.01,0.02\n2001-02-28,x,0.03\n2001-03-31,0.005,-0.01\n'), { excess: true, maxRejects: 1 });
    expect(r.rowsRejected).toBe(1);
    const [e1] = store.loadAssets() as ReturnHistory[];
    expect(e1.excess).toBe(true);
    expect(e1.dates).toEqual(['2001-01-31', '2001-03-31']);
    expect(store.loadAssets().every(isReturnHistory)).toBe(true);
    store.close();
  });
});
