/**
 * The schema step for assets stored as returns: a database written before it (prices,
 * series, dividends files and runs in it) opens, migrates in one transaction, keeps every
 * row and import id, passes SQLite's own foreign-key and integrity checks, and then takes
 * return imports (import kind "returns").
 */
import Database from 'better-sqlite3';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importPrices, importReturns, importSeries } from '../../../src-main/import/index.js';
import { MIGRATIONS } from '../../../src-main/store/migrations.js';
import { Store, applyMigrations } from '../../../src-main/store/store.js';
import { tempDir, write } from '../import/helpers.js';

const RETURNS_STEP = MIGRATIONS.findIndex((m) => m.name.startsWith('assets stored as returns'));

describe('migration to assets stored as returns', () => {
  it('keeps every row of an older database and enforces the foreign keys after', async () => {
    expect(RETURNS_STEP).toBeGreaterThan(0);
    const dir = tempDir();
    const file = path.join(dir, 'old.db');
    // an older database: the schema before the step, filled through today's importers' SQL
    const raw = new Database(file);
    raw.pragma('foreign_keys = ON');
    applyMigrations(raw, file, MIGRATIONS.slice(0, RETURNS_STEP));
    raw.exec(`
      INSERT INTO import_log (id, file_name, sha256, kind, rows_read, rows_stored, options, imported_at) VALUES
        (1, 'p.csv', 'aa', 'prices', 2, 2, '{"layout":"wide","dividends":"d.csv"}', '2024-01-01T00:00:00Z'),
        (2, 'd.csv', 'bb', 'dividends', 2, 1, '{"layout":"wide","prices":"p.csv"}', '2024-01-01T00:00:00Z'),
        (3, 's.csv', 'cc', 'series', 2, 2, '{"kind":"factor","units":"decimal"}', '2024-01-02T00:00:00Z');
      INSERT INTO asset (id, name) VALUES (1, 'kelpworks');
      INSERT INTO observation (asset_id, date, price, dividend, import_id) VALUES (1, '2021-01-29', 10, 0, 1), (1, '2021-02-26', 11, 0.5, 1);
      INSERT INTO series (id, name, kind, units) VALUES (1, 'gale', 'factor', 'decimal');
      INSERT INTO series_observation (series_id, date, value, import_id) VALUES (1, '2021-01-29', 0.01, 3), (1, '2021-02-26', -0.02, 3);
    `);
    const logBefore = raw.prepare('SELECT * FROM import_log ORDER BY id').all();
    raw.close();

    const store = new Store(file);
    expect(store.info().schemaVersion).toBe(MIGRATIONS[MIGRATIONS.length - 1].version);
    expect(store.db.prepare('SELECT * FROM import_log ORDER BY id').all()).toEqual(logBefore);
    expect(store.db.pragma('foreign_key_check')).toEqual([]);
    expect(store.db.pragma('integrity_check', { simple: true })).toBe('ok');
    expect(store.loadHistories()[0].price).toEqual(Float64Array.from([10, 11]));
    expect(store.info().assets[0]).toMatchObject({ name: 'kelpworks', source: 'prices', dividends: 1 });
    // the rebuilt log still refuses an unknown kind and keeps its index
    expect(() => store.db.prepare("INSERT INTO import_log (file_name, sha256, kind, imported_at) VALUES ('x', 'y', 'weights', 'now')").run()).toThrow(/CHECK constraint failed/);
    expect(store.db.prepare("SELECT name FROM sqlite_master WHERE type = 'index' AND name = 'import_log_by_hash'").pluck().get()).toBe('import_log_by_hash');
    // foreign keys still hold: a row pointing at no import is refused
    expect(() => store.db.prepare("INSERT INTO series_observation (series_id, date, value, import_id) VALUES (1, '2021-03-31', 0, 99)").run()).toThrow(/FOREIGN KEY/);
    // and it takes returns, then removes them again
    const r = await importReturns(store, write(dir, 'r.csv', 'date,tide-q1\n202101,1.5\n202102,-0.5\n'), { dateFormat: 'YYYYMM', units: 'percent' });
    expect(r.kind).toBe('returns');
    expect(store.removeImport(r.importId).subjectsRemoved).toEqual(['tide-q1']);
    await importPrices(store, write(dir, 'p2.csv', 'date,asset,price\n2021-03-31,kelpworks,12\n'));
    await importSeries(store, write(dir, 's2.csv', 'date,gale\n2021-03-31,0.03\n'), { kind: 'factor' });
    expect(store.db.pragma('foreign_key_check')).toEqual([]);
    store.close();
  });
});
