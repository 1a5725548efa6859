/**
 * Price import: every bad input names file, line and column and leaves the database as it
 * was; layouts, re-import, quoting, dates, thousands separators, warnings, rejects.
 * References: RFC 4180 (CSV), ISO 8601 calendar dates on the Gregorian calendar, the
 * Unicode standard's UTF-8 well-formedness table (Unicode 15, table 3-7); return
 * definition R_t = (P_t + D_t) / P_{t-1} (Campbell, Lo and MacKinlay 1997, sec. 1.4).
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importPrices, type PriceImportOptions } from '../../../src-main/import/index.js';
import { Store } from '../../../src-main/store/store.js';
import { rejection, seededStore, tempDir, write } from './helpers.js';

/** Imports `content` into a store that already holds rows; asserts the failure and that nothing changed. */
async function fails(content: string | Uint8Array, message: RegExp, options: PriceImportOptions = {}, extra?: { name: string; content: string }) {
  const dir = tempDir();
  const store = await seededStore(dir);
  const before = store.contentDigest();
  const logBefore = store.importLog().length;
  const file = write(dir, 'bad.csv', content);
  const opts = extra ? { ...options, dividends: write(dir, extra.name, extra.content) } : options;
  const e = await rejection(importPrices(store, file, opts));
  expect(e.message, `message: ${e.message}`).toMatch(message);
  expect(e.message.startsWith(file) || e.message.includes(path.basename(file)) || (extra !== undefined && e.message.includes(extra.name))).toBe(true);
  expect(e.hint, 'every error says what to do next').toBeTruthy();
  expect(store.contentDigest(), 'database unchanged after a failed import').toBe(before);
  expect(store.importLog().length).toBe(logBefore);
  // and the connection is usable again: a good import still works
  await importPrices(store, write(dir, 'good.csv', 'date,asset,price\n2021-01-29,gamma,5\n'));
  expect(store.assets()).toContain('gamma');
  store.close();
  return e;
}

describe('bad input: named precisely, nothing stored', () => {
  it('non-numeric price', () => fails('date,asset,price\n2020-04-30,alpha,12\n2020-05-29,alpha,abc\n', /bad\.csv, line 3, column 3 \(price\): "abc" is not a number/));
  it('price of zero and negative price', async () => {
    await fails('date,asset,price\n2020-04-30,alpha,0\n', /line 2, column 3 \(price\): price 0 is not positive/);
    await fails('date,asset,price\n2020-04-30,alpha,-3.5\n', /line 2, column 3 \(price\): price -3.5 is not positive/);
  });
  it('negative dividend', () => fails('date,asset,price,dividend\n2020-04-30,alpha,12,-0.1\n', /line 2, column 4 \(dividend\): dividend -0.1 is negative/));
  it('negative shares and a non-positive adjustment factor', async () => {
    await fails('date,asset,price,shares\n2020-04-30,alpha,12,-1\n', /line 2, column 4 \(shares\): shares outstanding -1 is negative/);
    await fails('date,asset,price,adjust\n2020-04-30,alpha,12,0\n', /line 2, column 4 \(adjust\): adjustment factor 0 is not positive/);
  });
  it('unparseable date', () => fails('date,asset,price\n2020-04-30,alpha,12\n30 April 2020,beta,3\n', /line 3, column 1 \(date\): "30 April 2020" is not a date: expected YYYY-MM-DD/));
  it('impossible dates (2023-02-30; 2023-02-29 outside a leap year; month 13)', async () => {
    await fails('date,asset,price\n2023-02-30,alpha,12\n', /line 2, column 1 \(date\): "2023-02-30" is not a calendar date \(2023-02 has no day 30\)/);
    await fails('date,asset,price\n2023-02-29,alpha,12\n', /2023-02 has no day 29/);
    await fails('date,asset,price\n2023-13-01,alpha,12\n', /month 13 does not exist/);
  });
  it('duplicate (asset, date) inside the file', () =>
    fails('date,asset,price\n2020-04-30,alpha,12\n2020-05-29,alpha,13\n2020-04-30,alpha,12.5\n', /line 4: duplicate \(asset, date\) = \(alpha, 2020-04-30\)/));
  it('rows that clash with rows from another file: the first clash is named, with the earlier file', () =>
    fails('date,asset,price\n2020-04-30,gamma,1\n2020-02-28,beta,21\n2020-01-31,alpha,10\n', /bad\.csv, line 3: \(asset, date\) = \(beta, 2020-02-28\) is already stored, from base\.csv/));
  it('the first clash in file order is named even when rows are written in asset order', () =>
    // rows go to the database grouped by asset (alpha's lines 2 and 4 before beta's line 3)
    fails('date,asset,price\n2020-05-29,alpha,13\n2020-01-31,beta,20\n2020-01-31,alpha,10\n', /bad\.csv, line 3: \(asset, date\) = \(beta, 2020-01-31\) is already stored, from base\.csv/));
  it('a duplicate far apart in a large file (rows written in several chunks) is found, with its line', async () => {
    const lines = ['date,asset,price'];
    for (let d = 0; d < 3000; d++) {
      const date = new Date(Date.UTC(2000, 0, 1 + d)).toISOString().slice(0, 10);
      for (let a = 0; a < 100; a++) lines.push(`${date},big${a},${(10 + a + d / 1000).toFixed(3)}`);
    }
    lines.push('2000-01-01,big7,99'); // line 300,002: same key as line 9
    await fails(`${lines.join('\n')}\n`, /line 300002: duplicate \(asset, date\) = \(big7, 2000-01-01\)/);
  });
  it('wide file: dates out of order, and a date twice', async () => {
    await fails('date,alpha,beta\n2020-04-30,1,2\n2020-06-30,1,2\n2020-05-29,1,2\n', /line 4, column 1 \(date\): date 2020-05-29 comes after 2020-06-30: dates are out of order/, { layout: 'wide' });
    await fails('date,alpha,beta\n2020-04-30,1,2\n2020-04-30,1,2\n', /line 3, column 1 \(date\): date 2020-04-30 appears twice/, { layout: 'wide' });
  });
  it('wide file: a bad cell names its asset column', () => fails('date,alpha,beta\n2020-04-30,1,2\n2020-05-29,1,x\n', /line 3, column 3 \(beta\): "x" is not a number/, { layout: 'wide' }));
  it('missing header column, and a header without asset columns', async () => {
    await fails('date,ticker,price\n2020-04-30,alpha,12\n', /line 1: no "asset" column in the header \(date, ticker, price\)/);
    await fails('date,asset,close\n2020-04-30,alpha,12\n', /no "price" column/);
    await fails('date\n2020-04-30\n', /the header has no asset columns/, { layout: 'wide' });
    await fails('date,asset,price,price\n', /column "price" appears twice in the header/);
  });
  it('a mapped column that is not there', () => fails('date,asset,price\n2020-04-30,alpha,12\n', /no "payout" column/, { columns: { dividend: 'payout' } }));
  it('empty file, and a header without rows', async () => {
    await fails('', /bad\.csv is empty/);
    await fails('date,asset,price\n', /has a header but no data rows/);
  });
  it('bytes that are not UTF-8 (Latin-1 e-acute), with line and column', () =>
    fails(Buffer.concat([Buffer.from('date,asset,price\n2020-04-30,alpha,12\n2020-04-30,caf'), Buffer.from([0xe9]), Buffer.from(',3\n')]), /line 3, column 15: byte 0xe9 is not valid UTF-8/));
  it('overlong and surrogate encodings are rejected too (Unicode table 3-7)', async () => {
    await fails(Buffer.concat([Buffer.from('date,asset,price\n2020-04-30,a'), Buffer.from([0xc0, 0xaf]), Buffer.from(',3\n')]), /line 2, column 13: byte 0xc0 is not valid UTF-8/);
    await fails(Buffer.concat([Buffer.from('date,asset,price\n2020-04-30,a'), Buffer.from([0xed, 0xa0, 0x80]), Buffer.from(',3\n')]), /line 2, column 13: byte 0xed is not valid UTF-8/);
  });
  it('a UTF-16 file', () => fails(Buffer.from('\ufeffdate,asset,price\n', 'utf16le'), /line 1, column 1: the file is UTF-16 encoded/));
  it('a line with the wrong number of fields', () => fails('date,asset,price\n2020-04-30,alpha,12\n2020-05-29,alpha,12,7\n', /line 3: 4 fields, but the header has 3/));
  it('RFC 4180 violations: a quote inside an unquoted field, text after a closing quote, an unclosed quote', async () => {
    await fails('date,asset,price\n2020-04-30,al"pha,12\n', /line 2, column 14: a double quote inside an unquoted field/);
    await fails('date,asset,price\n2020-04-30,"alpha"x,12\n', /line 2, column 19: unexpected text after a closing double quote/);
    await fails('date,asset,price\n2020-04-30,"alpha,12\n2020-05-29,beta,3\n', /line 2, column 12: a quoted field is never closed/);
  });
  it('an error after a quoted line break reports the physical line', () =>
    fails('date,asset,price\n2020-04-30,"two\nline name",12\n2020-05-29,alpha,bad\n', /line 4, column 3 \(price\): "bad" is not a number/));
  it('wide dividends: a dividend without a price that day, a column without prices, a negative dividend', async () => {
    const prices = 'date,alpha,beta\n2020-04-30,10,20\n2020-05-29,11,\n';
    await fails(prices, /divs\.csv, line 3, column 3 \(beta\): a dividend of beta on 2020-05-29, but .*bad\.csv has no price for beta on that date/, { layout: 'wide' }, { name: 'divs.csv', content: 'date,alpha,beta\n2020-04-30,,\n2020-05-29,0.1,0.2\n' });
    await fails(prices, /divs\.csv, line 1, column 2: dividend column "gamma" has no price column/, { layout: 'wide' }, { name: 'divs.csv', content: 'date,gamma\n2020-04-30,1\n' });
    await fails(prices, /divs\.csv, line 2, column 2 \(alpha\): dividend -1 is negative/, { layout: 'wide' }, { name: 'divs.csv', content: 'date,alpha\n2020-04-30,-1\n' });
  });
  it('a number with a thousands separator when none was allowed, or a bad grouping', async () => {
    await fails('date,asset,price\n2020-04-30,alpha,"1,234.5"\n', /"1,234.5" is not a number/);
    await fails('date,asset,price\n2020-04-30,alpha,"12,34.5"\n', /"12,34.5" is not a number/, { thousands: 'comma' });
  });
  it('a day-first or month-first date without a named format is never guessed', async () => {
    const e = await fails('date,asset,price\n03/04/2020,alpha,12\n', /"03\/04\/2020" is not a date: expected YYYY-MM-DD/);
    expect(e.hint).toMatch(/never guesses.*--date-format/);
  });
  it('more bad rows than --max-rejects allows', () => fails('date,asset,price\n2020-04-30,alpha,x\n2020-05-29,alpha,y\n2020-06-30,alpha,3\n', /line 3, column 3 \(price\): "y" is not a number/, { maxRejects: 1 }));
});

describe('good input', () => {
  it('long and wide layouts store identical histories (dividends from the second wide file)', async () => {
    const dir = tempDir();
    const long = 'date,asset,price,dividend\n2020-01-31,alpha,10,\n2020-01-31,beta,20,\n2020-02-28,alpha,10.5,0.25\n2020-02-28,beta,19.75,\n2020-03-31,beta,21,1.5\n2020-04-30,alpha,11,\n2020-04-30,beta,22,\n';
    const wide = 'date,alpha,beta\n2020-01-31,10,20\n2020-02-28,10.5,19.75\n2020-03-31,,21\n2020-04-30,11,22\n';
    const divs = 'date,alpha,beta\n2020-02-28,0.25,\n2020-03-31,,1.5\n';
    const a = new Store(path.join(dir, 'long.db'));
    const b = new Store(path.join(dir, 'wide.db'));
    await importPrices(a, write(dir, 'long.csv', long));
    const r = await importPrices(b, write(dir, 'wide.csv', wide), { layout: 'wide', dividends: write(dir, 'divs.csv', divs) });
    expect(r.rowsStored).toBe(7);
    const ha = a.loadHistories();
    const hb = b.loadHistories();
    expect(hb).toEqual(ha);
    expect(ha.map((h) => h.asset)).toEqual(['alpha', 'beta']);
    expect(Array.from(ha[1].dividend)).toEqual([0, 0, 1.5, 0]);
    expect(b.importLog().map((l) => [l.fileName, l.kind, l.rowsStored])).toEqual([
      ['wide.csv', 'prices', 7],
      ['divs.csv', 'dividends', 2],
    ]);
    a.close();
    b.close();
  });

  it('re-importing the same bytes (even under another name) is detected by SHA-256 and stores nothing', async () => {
    const dir = tempDir();
    const store = await seededStore(dir);
    const before = store.contentDigest();
    const again = await importPrices(store, write(dir, 'copy-of-base.csv', 'date,asset,price,dividend\n2020-01-31,alpha,10,\n2020-02-28,alpha,11,0.5\n2020-03-31,alpha,12,\n2020-01-31,beta,20,\n2020-02-28,beta,21,\n'));
    expect(again.status).toBe('already-imported');
    expect(again.importId).toBe(1);
    // the log holds the SHA-256 (FIPS 180-4) of the bytes, as OpenSSL computes it through node:crypto
    expect(again.sha256).toBe(createHash('sha256').update(readFileSync(path.join(dir, 'base.csv'))).digest('hex'));
    expect(store.importLog()[0].sha256).toBe(again.sha256);
    expect(store.contentDigest()).toBe(before);
    store.close();
  });

  it('the same bytes again are "already imported" even when this time a bad row would stop them', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const file = write(dir, 'r.csv', 'date,asset,price\n2020-04-30,alpha,x\n2020-05-29,alpha,12\n');
    expect((await importPrices(store, file, { maxRejects: 1 })).rowsRejected).toBe(1);
    const digest = store.contentDigest();
    const again = await importPrices(store, file);
    expect(again.status).toBe('already-imported');
    expect(store.contentDigest()).toBe(digest);
    store.close();
  });

  it('new dates for a stored asset are appended; its checks see the whole history', async () => {
    const dir = tempDir();
    const store = await seededStore(dir);
    // alpha closes at 12 on 2020-03-31; 30 on 2020-04-30 is a 150% return across the two files
    const r = await importPrices(store, write(dir, 'more.csv', 'date,asset,price\n2020-04-30,alpha,30\n2020-05-29,alpha,31\n'));
    expect(r.warnings.map((w) => w.message)).toEqual(['alpha: return 150.0% from 2020-03-31 to 2020-04-30 (beyond 50.0%; a missing split factor?)']);
    expect(store.loadHistories(['alpha'])[0].dates).toEqual(['2020-01-31', '2020-02-28', '2020-03-31', '2020-04-30', '2020-05-29']);
    store.close();
  });

  it('byte-order mark, CRLF, quoted names with commas, doubled quotes and line breaks (RFC 4180 sec. 2)', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'q.db'));
    const csv = '\ufeffDate,"Asset",PRICE\r\n2020-01-31,"Harbor, Ltd",1.5\r\n2020-01-31,"the ""best"" fund",2\r\n2020-01-31,"two\r\nlines",3\r\n2020-01-31,plain,4';
    const r = await importPrices(store, write(dir, 'q.csv', csv));
    expect(r.rowsStored).toBe(4);
    expect(store.assets()).toEqual(['Harbor, Ltd', 'plain', 'the "best" fund', 'two\r\nlines']);
    store.close();
  });

  it('named date formats: day-first, month-first, compact; one-digit days and months where a separator is named', async () => {
    const dir = tempDir();
    const cases: [string, string, string][] = [
      ['DD/MM/YYYY', '03/04/2020', '2020-04-03'],
      ['MM/DD/YYYY', '03/04/2020', '2020-03-04'],
      ['DD.MM.YYYY', '3.4.2020', '2020-04-03'],
      ['MM-DD-YYYY', '12-31-1999', '1999-12-31'],
      ['YYYYMMDD', '20240229', '2024-02-29'],
      ['YYYY/MM/DD', '2000/02/29', '2000-02-29'], // 2000 is a leap year (divisible by 400)
    ];
    for (const [fmt, text, iso] of cases) {
      const store = new Store(path.join(dir, `${cases.findIndex((c) => c[0] === fmt)}.db`));
      await importPrices(store, write(dir, 'd.csv', `date,asset,price\n${text},a,1\n`), { dateFormat: fmt });
      expect(store.loadHistories()[0].dates, `${fmt} ${text}`).toEqual([iso]);
      store.close();
    }
    const store = new Store(':memory:');
    // 1900 is not a leap year (divisible by 100, not by 400)
    expect((await rejection(importPrices(store, write(dir, 'e.csv', 'date,asset,price\n29/02/1900,a,1\n'), { dateFormat: 'DD/MM/YYYY' }))).message).toMatch(/1900-02 has no day 29/);
    expect((await rejection(importPrices(store, write(dir, 'f.csv', 'date,asset,price\n2020-04-03,a,1\n'), { dateFormat: 'DD/MM/YYYY' }))).message).toMatch(/expected DD\/MM\/YYYY/);
    await expect(importPrices(store, write(dir, 'g.csv', 'date,asset,price\n2020-04-03,a,1\n'), { dateFormat: 'D/M/Y' })).rejects.toThrow(/unknown date format "D\/M\/Y"/);
    store.close();
  });

  it('thousands separators when asked for; column names mapped case-insensitively', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 't.db'));
    const csv = 'Day,Ticker,Close,Cash\n2020-01-31,a,"1,234.5",\n2020-02-28,a,"1,234,567",12\n';
    await importPrices(store, write(dir, 't.csv', csv), { thousands: 'comma', columns: { date: 'DAY', asset: 'ticker', price: 'close', dividend: 'cash' }, thresholds: { maxReturn: Infinity } });
    const [h] = store.loadHistories();
    expect(Array.from(h.price)).toEqual([1234.5, 1234567]);
    expect(Array.from(h.dividend)).toEqual([0, 12]);
    store.close();
  });

  it('warnings: gap, stale price, large return, large dividend; named by asset and dates, stored in the log', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'w.db'));
    const rows = ['date,asset,price,dividend'];
    const months = ['2020-01-31', '2020-02-28', '2020-03-31', '2020-04-30', '2020-05-29', '2020-06-30', '2020-07-31', '2020-08-31', '2020-09-30', '2020-10-30', '2020-11-30', '2020-12-31'];
    months.forEach((m, i) => rows.push(`${m},steady,${i < 8 ? 10 : 10 + (i - 7) / 10},`)); // unchanged 2020-01-31..2020-08-31: 7 periods
    months.forEach((m, i) => {
      if (i === 4 || i === 5 || i === 6) return; // gap 2020-04-30 -> 2020-08-31
      rows.push(`${m},gappy,${20 + i},${i === 9 ? 8 : ''}`); // dividend 8 on a price of 29: 27.6%
    });
    months.forEach((m, i) => rows.push(`${m},jumpy,${i === 3 ? 100 : 40 + i / 2},`)); // 41 -> 100 -> 42: +143.9%, then -58%
    const r = await importPrices(store, write(dir, 'w.csv', `${rows.join('\n')}\n`));
    const messages = r.warnings.map((w) => w.message);
    expect(messages).toEqual(
      expect.arrayContaining([
        'steady: price unchanged at 10 for 7 periods, 2020-01-31 to 2020-08-31',
        'gappy: no observation between 2020-04-30 and 2020-08-31 (123 days; the data are monthly)',
        'gappy: dividend 8 on 2020-10-30 is 27.6% of the price 29 (beyond 25.0%)',
        'jumpy: return 143.9% from 2020-03-31 to 2020-04-30 (beyond 50.0%; a missing split factor?)',
        'jumpy: return -58.0% from 2020-04-30 to 2020-05-29 (beyond 50.0%; a missing split factor?)',
      ]),
    );
    expect(messages, messages.join("\n")).toHaveLength(5);
    expect(store.importLog()[0].warnings).toEqual(r.warnings);
    // thresholds are options
    const quiet = new Store(':memory:');
    const q = await importPrices(quiet, write(dir, 'w2.csv', `${rows.join('\n')}\n`), { thresholds: { maxReturn: 2, maxDividendYield: 0.5, stalePeriods: 8 } });
    expect(q.warnings.map((w) => w.kind)).toEqual(['gap']);
    quiet.close();
    store.close();
  });

  it('a split factor keeps the return check quiet: (P_t + D_t) / (P_{t-1} / f_t)', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const r = await importPrices(store, write(dir, 's.csv', 'date,asset,price,dividend,adjust\n2020-01-31,a,100,,\n2020-02-28,a,51,0.5,2\n'));
    // (51 + 0.5) / (100 / 2) - 1 = 3%: no warning
    expect(r.warnings).toEqual([]);
    store.close();
  });

  it('--max-rejects skips bad rows, lists each, counts them in the log', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const r = await importPrices(store, write(dir, 'r.csv', 'date,asset,price\n2020-04-30,alpha,x\n2020-05-29,alpha,12\n2023-02-30,alpha,3\n'), { maxRejects: 2 });
    expect(r.rowsRead).toBe(3);
    expect(r.rowsStored).toBe(1);
    expect(r.rowsRejected).toBe(2);
    expect(r.warnings.filter((w) => w.kind === 'rejected-row').map((w) => w.message)).toEqual([
      expect.stringMatching(/row skipped: .*line 2, column 3 \(price\): "x" is not a number/),
      expect.stringMatching(/row skipped: .*line 4, column 1 \(date\): "2023-02-30" is not a calendar date/),
    ]);
    expect(store.importLog()[0].rowsRejected).toBe(2);
    expect(store.assets()).toEqual(['alpha']);
    store.close();
  });

  it('a file larger than one write chunk stores every row, each asset in date order', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'big.db'));
    const lines = ['date,asset,price'];
    const dates: string[] = [];
    for (let d = 0; d < 2800; d++) dates.push(new Date(Date.UTC(2001, 0, 1 + d)).toISOString().slice(0, 10));
    dates.forEach((date, d) => {
      for (let a = 0; a < 100; a++) lines.push(`${date},n${a},${(1 + a / 7 + d / 1e4).toFixed(6)}`);
    });
    const r = await importPrices(store, write(dir, 'big.csv', `${lines.join('\n')}\n`));
    expect(r.rowsStored).toBe(280000);
    expect(r.frequency).toBe('daily');
    const [h] = store.loadHistories(['n42']);
    expect(h.dates).toEqual(dates);
    expect(h.price[2799]).toBe(Number((1 + 42 / 7 + 2799 / 1e4).toFixed(6)));
    store.close();
  });

  it('progress: bytes read rise to the file size', async () => {
    const dir = tempDir();
    const store = new Store(':memory:');
    const lines = ['date,asset,price'];
    for (let i = 0; i < 30000; i++) lines.push(`2020-01-${String((i % 28) + 1).padStart(2, '0')},a${Math.floor(i / 28)},${1 + (i % 7)}`);
    const content = `${lines.join('\n')}\n`;
    const seen: [number, number][] = [];
    await importPrices(store, write(dir, 'p.csv', content), { onProgress: (read, total) => seen.push([read, total]), thresholds: { maxReturn: Infinity } });
    const size = Buffer.byteLength(content);
    expect(seen.length).toBeGreaterThan(0);
    expect(seen.every(([, total]) => total === size)).toBe(true);
    expect(seen.at(-1)?.[0]).toBe(size);
    for (let i = 1; i < seen.length; i++) expect(seen[i][0]).toBeGreaterThanOrEqual(seen[i - 1][0]);
    store.close();
  });
});

describe('reading options shared with return files', () => {
  it('a semicolon file with decimal commas, YYYYMM dates and a missing-value code where a price stands', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'p.db'));
    const r = await importPrices(store, write(dir, 'semi.csv', 'date;asset;price;dividend\n200101;kelp;10,50;\n200102;kelp;NA;0,25\n200103;kelp;11,25;\n'), {
      dateFormat: 'YYYYMM',
      delimiter: 'semicolon',
      decimal: 'comma',
      missing: ['NA'],
    });
    expect(r.rowsRead).toBe(3);
    expect(r.rowsStored).toBe(2);
    const [h] = store.loadHistories();
    expect(h.dates).toEqual(['2001-01-31', '2001-03-31']);
    expect(Array.from(h.price)).toEqual([10.5, 11.25]);
    // a tab-separated wide file, thousands with points under decimal commas
    await importPrices(store, write(dir, 'tab.tsv', 'date\ttin\n2001-01-31\t1.234,5\n2001-02-28\t1.240,0\n'), { layout: 'wide', delimiter: 'tab', decimal: 'comma', thousands: 'point' });
    expect(Array.from(store.loadHistories(['tin'])[0].price)).toEqual([1234.5, 1240]);
    // a comma cannot be both the decimal mark and the delimiter
    await expect(importPrices(store, write(dir, 'x.csv', 'date,asset,price\n'), { decimal: 'comma' })).rejects.toThrow(/a comma cannot be both the decimal mark and the field delimiter/);
    store.close();
  });
});
