/**
 * The store: migrations, refusal of foreign or newer databases, the query plan of the hot
 * (asset, date) lookup, bit-exact read-back, portfolios, coverage.
 * References: SQLite's documentation of PRAGMA user_version / journal_mode / foreign_keys
 * and of EXPLAIN QUERY PLAN output (sqlite.org/eqp.html); IEEE 754 binary64 bit patterns.
 */
import Database from 'better-sqlite3';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { MIGRATIONS, SCHEMA_VERSION, type Migration } from '../../../src-main/store/migrations.js';
import { Store, applyMigrations } from '../../../src-main/store/store.js';
import { importPrices } from '../../../src-main/import/index.js';
import { tempDir, write } from '../import/helpers.js';

describe('migrations', () => {
  it('a new file gets every migration, user_version = the last, WAL and foreign keys on', () => {
    const file = path.join(tempDir(), 'new.db');
    const store = new Store(file);
    expect(store.db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    expect(SCHEMA_VERSION).toBe(MIGRATIONS.length); // versions are 1..n, in order
    MIGRATIONS.forEach((m, i) => expect(m.version).toBe(i + 1));
    // sqlite.org/pragma.html: journal_mode returns the new mode; foreign_keys returns 1 when on
    expect(store.db.pragma('journal_mode', { simple: true })).toBe('wal');
    expect(store.db.pragma('foreign_keys', { simple: true })).toBe(1);
    const tables = store.db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").pluck().all();
    expect(tables).toEqual(expect.arrayContaining(['asset', 'import_log', 'observation', 'portfolio', 'portfolio_return', 'series', 'series_observation']));
    store.close();
    // reopening applies nothing twice
    const again = new Store(file);
    expect(again.db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    again.close();
  });

  it('refuses a database written by a newer version and leaves it alone', () => {
    const file = path.join(tempDir(), 'future.db');
    new Store(file).close();
    const raw = new Database(file);
    raw.pragma(`user_version = ${SCHEMA_VERSION + 5}`);
    raw.close();
    expect(() => new Store(file)).toThrow(new RegExp(`written by a newer deflator \\(schema version ${SCHEMA_VERSION + 5}; this build knows versions up to ${SCHEMA_VERSION}\\)`));
    const check = new Database(file);
    expect(check.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION + 5);
    check.close();
  });

  it('refuses an SQLite file that is not a deflator database', () => {
    const file = path.join(tempDir(), 'other.db');
    const raw = new Database(file);
    raw.exec('CREATE TABLE notes (x TEXT)');
    raw.close();
    expect(() => new Store(file)).toThrow(/not a deflator one/);
  });

  it('a failing migration rolls back with its version bump; earlier ones stay', () => {
    const db = new Database(':memory:');
    const list: Migration[] = [
      { version: 1, name: 'one', up: 'CREATE TABLE a (x)' },
      { version: 2, name: 'two', up: 'CREATE TABLE b (x); CREATE TABLE a (y)' }, // second statement fails
    ];
    expect(() => applyMigrations(db, ':memory:', list)).toThrow(/already exists/);
    expect(db.pragma('user_version', { simple: true })).toBe(1);
    expect(db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name").pluck().all()).toEqual(['a']);
    db.close();
  });

  it('the hot (asset, date) lookups use the primary-key index, not a scan', () => {
    const store = new Store(':memory:');
    // sqlite.org/eqp.html: "SEARCH t USING PRIMARY KEY (...)" for a key lookup, "SCAN t" for a full scan
    const plan = (sql: string) => (store.db.prepare(`EXPLAIN QUERY PLAN ${sql}`).all() as { detail: string }[]).map((r) => r.detail).join(' | ');
    const history = plan('SELECT date, price, dividend, adjust, shares FROM observation WHERE asset_id = 1 ORDER BY date');
    expect(history).toMatch(/SEARCH observation USING PRIMARY KEY \(asset_id=\?\)/);
    expect(history).not.toMatch(/TEMP B-TREE/); // ORDER BY date comes from the index order
    expect(plan("SELECT import_id FROM observation WHERE asset_id = 1 AND date = '2020-01-31'")).toMatch(/SEARCH observation USING PRIMARY KEY \(asset_id=\? AND date=\?\)/);
    expect(plan('SELECT date, value FROM series_observation WHERE series_id = 1 ORDER BY date')).toMatch(/SEARCH series_observation USING PRIMARY KEY \(series_id=\?\)/);
    expect(plan("SELECT * FROM import_log WHERE sha256 = 'x'")).toMatch(/USING INDEX import_log_by_hash/);
    store.close();
  });
});

describe('reading back', () => {
  it('doubles come back bit for bit (Object.is), including 0.1+0.2, 1e-300, the largest and smallest doubles', async () => {
    // ECMA-262 Number::toString writes the shortest decimal that reads back as the same
    // double (sec. 6.1.6.1.20), so String(x) in the file must import as exactly x.
    // Each value on an asset of its own: a history running from 1e-300 to MAX_VALUE would
    // have a return beyond the range of a double, which the import refuses.
    const values = [0.1 + 0.2, 1e-300, Number.MAX_VALUE, Number.MIN_VALUE, 2 ** 53 + 2, 1 / 3, Math.PI, 123456.789, 2.2250738585072014e-308, 9.999999999999999e22];
    const dir = tempDir();
    const lines = ['date,asset,price,dividend,adjust,shares'];
    values.forEach((v, i) => lines.push(`2021-01-${String(i + 1).padStart(2, '0')},exact-${i},${String(v)},${String(values[(i + 3) % values.length])},${String(1 + values[i] / 1e300)},${String(values[(i + 5) % values.length])}`));
    const store = new Store(path.join(dir, 'rt.db'));
    await importPrices(store, write(dir, 'rt.csv', `${lines.join('\n')}\n`), { thresholds: { maxReturn: Infinity, maxDividendYield: Infinity } });
    const histories = store.loadHistories(values.map((_, i) => `exact-${i}`));
    values.forEach((v, i) => {
      const h = histories[i];
      expect(Object.is(h.price[0], v), `price ${i}: got ${h.price[0]}, expected ${v}, tolerance 0 (bit-exact)`).toBe(true);
      expect(Object.is(h.dividend[0], values[(i + 3) % values.length])).toBe(true);
      expect(Object.is(h.shares?.[0], values[(i + 5) % values.length])).toBe(true);
      expect(Object.is(h.adjust?.[0] ?? 1, 1 + values[i] / 1e300)).toBe(true);
    });
    store.close();
  });

  it('portfolios round-trip, NaN as a missing return; a name clash with an asset is refused', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'p.db'));
    await importPrices(store, write(dir, 'a.csv', 'date,asset,price\n2020-01-31,alpha,1\n2020-02-28,alpha,2\n'));
    const net = Float64Array.from([0.01, NaN, -0.3, 0.1 + 0.2]);
    store.savePortfolio({ name: 'size-q1', frequency: 'monthly', periods: ['2020-01-31', '2020-02-28', '2020-03-31', '2020-04-30'], net, rules: 'bottom quintile by market value' });
    const [p] = store.loadPortfolios(['size-q1']);
    expect(p.rules).toBe('bottom quintile by market value');
    expect(p.net.length).toBe(4);
    net.forEach((v, i) => expect(Object.is(p.net[i], v)).toBe(true));
    expect(() => store.savePortfolio({ ...p, net })).toThrow(/already exists/);
    store.savePortfolio({ ...p, net: Float64Array.from([1, 2, 3, 4]).map((x) => x / 100) }, { replace: true });
    expect(Array.from(store.loadPortfolios(['size-q1'])[0].net)).toEqual([0.01, 0.02, 0.03, 0.04]);
    expect(() => store.savePortfolio({ name: 'alpha', frequency: 'monthly', periods: [], net: new Float64Array() })).toThrow(/already an asset's name/);
    expect(() => store.loadHistories(['nope'])).toThrow(/asset "nope" is not in/);
    store.close();
  });

  it('info reports coverage, gaps at the detected frequency, dividends and splits', async () => {
    const dir = tempDir();
    const store = new Store(path.join(dir, 'i.db'));
    // month ends with 2020-04 and 2020-05 missing: one spacing of 92 days > 50 (monthly gap rule)
    const csv = 'date,asset,price,dividend,adjust\n2020-01-31,a,10,,\n2020-02-29,a,10.5,0.2,\n2020-03-31,a,11,,\n2020-06-30,a,6,,2\n2020-07-31,a,6.1,,\n';
    await importPrices(store, write(dir, 'g.csv', csv));
    const info = store.info();
    expect(info.schemaVersion).toBe(SCHEMA_VERSION);
    expect(info.assets).toHaveLength(1);
    const a = info.assets[0];
    expect(a).toMatchObject({ name: 'a', first: '2020-01-31', last: '2020-07-31', count: 5, frequency: 'monthly', dividends: 1, splits: 1 });
    // 2020-03-31 -> 2020-06-30 is 91 days (counted on the Gregorian calendar by hand)
    expect(a.gaps).toEqual([{ from: '2020-03-31', to: '2020-06-30', days: 91 }]);
    expect(info.imports).toHaveLength(1);
    expect(info.imports[0]).toMatchObject({ fileName: 'g.csv', kind: 'prices', rowsRead: 5, rowsStored: 5, rowsRejected: 0 });
    store.close();
  });
});
