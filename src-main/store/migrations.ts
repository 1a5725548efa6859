/**
 * The store's schema as an ordered list of numbered migrations. `PRAGMA user_version`
 * holds the number of the last one applied; each runs in its own transaction together
 * with the version bump, so a database is always at exactly one version.
 *
 * To change the schema, APPEND a migration with the next number (never edit or reorder
 * an applied one: databases in the field already ran it). Write it as SQL (or a function
 * for data moves); a test opens a fresh database and checks that every version applies.
 * Example for the run records:
 *   { version: 2, name: 'run records', up: `CREATE TABLE run (...);` },
 */
import type Database from 'better-sqlite3';
import { PACK_TRIGGERS_SQL } from './packs.js';
import { RUNS_BATCH_MIGRATION_NAME, RUNS_BATCH_MIGRATION_SQL, RUNS_COLUMNS_MIGRATION_NAME, RUNS_COLUMNS_MIGRATION_SQL, RUNS_COMPUTE_MIGRATION_NAME, RUNS_COMPUTE_MIGRATION_SQL, RUNS_KINDS_MIGRATION_NAME, RUNS_KINDS_MIGRATION_SQL, RUNS_MIGRATION_NAME, RUNS_MIGRATION_SQL } from '../runs/migration.js';

export interface Migration {
  version: number;
  name: string;
  up: string | ((db: Database.Database) => void);
}

export const MIGRATIONS: Migration[] = [
  {
    version: 1,
    name: 'history store: assets, observations, named series, portfolios, import log',
    up: `
      CREATE TABLE import_log (
        id            INTEGER PRIMARY KEY,
        file_name     TEXT    NOT NULL,
        sha256        TEXT    NOT NULL,
        kind          TEXT    NOT NULL CHECK (kind IN ('prices', 'dividends', 'series')),
        rows_read     INTEGER NOT NULL DEFAULT 0,
        rows_stored   INTEGER NOT NULL DEFAULT 0,
        rows_rejected INTEGER NOT NULL DEFAULT 0,
        warnings      TEXT    NOT NULL DEFAULT '[]',
        options       TEXT    NOT NULL DEFAULT '{}',
        imported_at   TEXT    NOT NULL
      );
      CREATE INDEX import_log_by_hash ON import_log (sha256);

      CREATE TABLE asset (
        id   INTEGER PRIMARY KEY,
        name TEXT NOT NULL UNIQUE
      );

      -- One row per asset and date: the hot lookup is (asset_id, date), the primary key
      -- of a clustered (WITHOUT ROWID) table, so one asset's history is one range scan.
      CREATE TABLE observation (
        asset_id  INTEGER NOT NULL REFERENCES asset (id),
        date      TEXT    NOT NULL,
        price     REAL    NOT NULL,
        dividend  REAL    NOT NULL DEFAULT 0,
        adjust    REAL    NOT NULL DEFAULT 1,
        shares    REAL,
        import_id INTEGER NOT NULL REFERENCES import_log (id),
        PRIMARY KEY (asset_id, date)
      ) WITHOUT ROWID;

      CREATE TABLE series (
        id        INTEGER PRIMARY KEY,
        name      TEXT NOT NULL UNIQUE,
        kind      TEXT NOT NULL CHECK (kind IN ('factor', 'riskfree', 'consumption', 'other')),
        units     TEXT NOT NULL CHECK (units IN ('decimal', 'percent')),
        rf_form   TEXT CHECK (rf_form IS NULL OR rf_form IN ('rate', 'yield-simple', 'yield-annual', 'yield-continuous', 'account', 'flow'))
      );

      CREATE TABLE series_observation (
        series_id INTEGER NOT NULL REFERENCES series (id),
        date      TEXT    NOT NULL,
        value     REAL    NOT NULL,
        import_id INTEGER NOT NULL REFERENCES import_log (id),
        PRIMARY KEY (series_id, date)
      ) WITHOUT ROWID;

      CREATE TABLE portfolio (
        id         INTEGER PRIMARY KEY,
        name       TEXT NOT NULL UNIQUE,
        frequency  TEXT NOT NULL CHECK (frequency IN ('daily', 'weekly', 'monthly', 'quarterly', 'annual')),
        rules      TEXT,
        created_at TEXT NOT NULL
      );

      -- net is NULL where the portfolio had no return (NaN in ReturnSeries).
      CREATE TABLE portfolio_return (
        portfolio_id INTEGER NOT NULL REFERENCES portfolio (id) ON DELETE CASCADE,
        period       TEXT    NOT NULL,
        net          REAL,
        PRIMARY KEY (portfolio_id, period)
      ) WITHOUT ROWID;
    `,
  },
  { version: 2, name: RUNS_MIGRATION_NAME, up: RUNS_MIGRATION_SQL },
  { version: 3, name: RUNS_COMPUTE_MIGRATION_NAME, up: RUNS_COMPUTE_MIGRATION_SQL },
  {
    version: 4,
    name: 'assets stored as returns: asset form/units/excess, return observations, import kind "returns"',
    up: (db) => {
      db.exec(`
        -- form NULL: a price history (rows in observation); otherwise the asset arrived as
        -- returns of that form, in those units, excess returns when excess = 1 (rows in
        -- return_observation, values as written in the file, NULL for a missing-value code).
        ALTER TABLE asset ADD COLUMN form  TEXT    CHECK (form IS NULL OR form IN ('net', 'gross', 'log'));
        ALTER TABLE asset ADD COLUMN units TEXT    CHECK (units IS NULL OR units IN ('decimal', 'percent'));
        ALTER TABLE asset ADD COLUMN excess INTEGER CHECK (excess IS NULL OR excess IN (0, 1));

        CREATE TABLE return_observation (
          asset_id  INTEGER NOT NULL REFERENCES asset (id),
          date      TEXT    NOT NULL,
          value     REAL,
          import_id INTEGER NOT NULL REFERENCES import_log (id),
          PRIMARY KEY (asset_id, date)
        ) WITHOUT ROWID;
      `);
      // import_log.kind gains 'returns'. SQLite cannot alter a CHECK constraint: rebuild the
      // table. Rows of other tables reference it, so the foreign keys are checked at commit
      // (defer_foreign_keys): dropping the old table counts their rows as orphans, and
      // inserting the same ids into the new one counts them back.
      db.pragma('defer_foreign_keys = ON');
      db.exec(`
        CREATE TABLE import_log_copy AS SELECT * FROM import_log;
        DROP TABLE import_log;
        CREATE TABLE import_log (
          id            INTEGER PRIMARY KEY,
          file_name     TEXT    NOT NULL,
          sha256        TEXT    NOT NULL,
          kind          TEXT    NOT NULL CHECK (kind IN ('prices', 'dividends', 'series', 'returns')),
          rows_read     INTEGER NOT NULL DEFAULT 0,
          rows_stored   INTEGER NOT NULL DEFAULT 0,
          rows_rejected INTEGER NOT NULL DEFAULT 0,
          warnings      TEXT    NOT NULL DEFAULT '[]',
          options       TEXT    NOT NULL DEFAULT '{}',
          imported_at   TEXT    NOT NULL
        );
        INSERT INTO import_log (id, file_name, sha256, kind, rows_read, rows_stored, rows_rejected, warnings, options, imported_at)
          SELECT id, file_name, sha256, kind, rows_read, rows_stored, rows_rejected, warnings, options, imported_at FROM import_log_copy;
        DROP TABLE import_log_copy;
        CREATE INDEX import_log_by_hash ON import_log (sha256);
      `);
    },
  },
  { version: 5, name: RUNS_BATCH_MIGRATION_NAME, up: RUNS_BATCH_MIGRATION_SQL },
  { version: 6, name: RUNS_KINDS_MIGRATION_NAME, up: RUNS_KINDS_MIGRATION_SQL },
  {
    version: 7,
    name: 'packed series: one blob per price history or named series beside its rows (src-main/store/packs.ts)',
    up: (db) => {
      db.exec(`
      -- A copy of a subject's rows column by column, with their digest; present only while
      -- current (dropped by every write to the subject, rebuilt by the next read).
      CREATE TABLE subject_pack (
        kind       TEXT    NOT NULL CHECK (kind IN ('asset', 'series')),
        subject_id INTEGER NOT NULL,
        rows       INTEGER NOT NULL,
        -- before the blob: reading the digest does not walk the blob's overflow pages
        sha256     TEXT    NOT NULL,
        -- the ids of the imports its rows came from, as a JSON array (the record's files)
        imports    TEXT    NOT NULL,
        data       BLOB    NOT NULL,
        PRIMARY KEY (kind, subject_id)
      ); -- a rowid table: a WITHOUT ROWID row is read whole, blob and all, to reach any column
    `);
      db.exec(PACK_TRIGGERS_SQL);
    },
  },
  {
    version: 8,
    name: 'panel cache: built returns panels by the digests of the data they came from (src-main/data/panel-cache.ts)',
    up: `
      -- A returns panel as built, under a key naming everything it came from (the spec's
      -- panel keys, each subject's digest and stored kind, the program's build): a copy, so
      -- any change to a packed subject clears it (the trigger below), and a key that no
      -- longer matches is never read.
      CREATE TABLE panel_cache (
        key         TEXT    NOT NULL UNIQUE,
        -- the panel's fingerprint (shared/records/panel-encoding.ts), as JSON
        fingerprint TEXT    NOT NULL,
        -- the subjects the build read, with their digests (the run record's), as JSON
        subjects    TEXT    NOT NULL,
        bytes       INTEGER NOT NULL,
        -- the panel with each series replaced by {"$col": n} (shared/batch/snapshot.ts)
        idx         TEXT    NOT NULL,
        -- the series, float64 little-endian
        columns     BLOB    NOT NULL
      );
      CREATE TRIGGER panel_cache_clear AFTER DELETE ON subject_pack
        BEGIN DELETE FROM panel_cache; END;
    `,
  },
  { version: 9, name: RUNS_COLUMNS_MIGRATION_NAME, up: RUNS_COLUMNS_MIGRATION_SQL },
];

/** The schema version this build writes. */
export const SCHEMA_VERSION = MIGRATIONS[MIGRATIONS.length - 1].version;
