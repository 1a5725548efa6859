/**
 * The run-record tables, applied as one migration of the store's list
 * (src-main/store/migrations.ts). A run row holds the spec and the result as exact JSON
 * (shared/records/exact-json.ts) so every double reads back bit for bit.
 */
export const RUNS_MIGRATION_NAME = 'run records: spec, result, version, panel and data fingerprints';

export const RUNS_MIGRATION_SQL = `
  CREATE TABLE run (
    id           INTEGER PRIMARY KEY AUTOINCREMENT,  -- never reused: an export names its run
    kind         TEXT NOT NULL CHECK (kind IN ('fit', 'backtest', 'compare')),
    label        TEXT NOT NULL,
    models       TEXT NOT NULL DEFAULT '[]',
    created_at   TEXT NOT NULL,
    version      TEXT NOT NULL,
    spec         TEXT NOT NULL,
    result       TEXT NOT NULL,
    panel        TEXT NOT NULL,
    panel_sha256 TEXT NOT NULL,
    panels       TEXT,
    files        TEXT NOT NULL DEFAULT '[]',
    subjects     TEXT NOT NULL DEFAULT '[]'
  );
  CREATE INDEX run_by_time ON run (created_at);

  -- Which runs read which stored subject: lets the store say which runs a delete or a
  -- re-import makes stale without opening every run.
  CREATE TABLE run_subject (
    run_id INTEGER NOT NULL REFERENCES run (id) ON DELETE CASCADE,
    kind   TEXT NOT NULL CHECK (kind IN ('asset', 'series', 'portfolio')),
    name   TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    PRIMARY KEY (run_id, kind, name)
  ) WITHOUT ROWID;
  CREATE INDEX run_subject_by_name ON run_subject (kind, name);
`;

export const RUNS_COMPUTE_MIGRATION_NAME = 'run records: how a run was computed (worker threads)';

/** How a run was computed (RunRecord.compute: worker threads, back-test engine, windows per chunk), as JSON. */
export const RUNS_COMPUTE_MIGRATION_SQL = `ALTER TABLE run ADD COLUMN compute TEXT;`;

export const RUNS_BATCH_MIGRATION_NAME = 'run records: merged batches (kind batch)';

/**
 * Lets a run be a merged batch. SQLite cannot change a CHECK constraint in place, so the
 * run table is rebuilt (SQLite's documented procedure: new table, copy, drop, rename),
 * keeping every id and the AUTOINCREMENT high-water mark, so ids are still never reused.
 * run_subject is copied aside first: dropping the old run table must not cascade into it.
 */
export const RUNS_BATCH_MIGRATION_SQL = `
  CREATE TABLE run_subject_copy AS SELECT run_id, kind, name, sha256 FROM run_subject;
  DROP TABLE run_subject;
  CREATE TABLE run_new (
    id           INTEGER PRIMARY KEY AUTOINCREMENT,
    kind         TEXT NOT NULL CHECK (kind IN ('fit', 'backtest', 'compare', 'batch')),
    label        TEXT NOT NULL,
    models       TEXT NOT NULL DEFAULT '[]',
    created_at   TEXT NOT NULL,
    version      TEXT NOT NULL,
    spec         TEXT NOT NULL,
    result       TEXT NOT NULL,
    panel        TEXT NOT NULL,
    panel_sha256 TEXT NOT NULL,
    panels       TEXT,
    files        TEXT NOT NULL DEFAULT '[]',
    subjects     TEXT NOT NULL DEFAULT '[]',
    compute      TEXT
  );
  INSERT INTO run_new (id, kind, label, models, created_at, version, spec, result, panel, panel_sha256, panels, files, subjects, compute)
    SELECT id, kind, label, models, created_at, version, spec, result, panel, panel_sha256, panels, files, subjects, compute FROM run;
  DELETE FROM sqlite_sequence WHERE name = 'run_new';
  INSERT INTO sqlite_sequence (name, seq) SELECT 'run_new', seq FROM sqlite_sequence WHERE name = 'run';
  DROP TABLE run;
  ALTER TABLE run_new RENAME TO run;
  CREATE INDEX run_by_time ON run (created_at);
  CREATE TABLE run_subject (
    run_id INTEGER NOT NULL REFERENCES run (id) ON DELETE CASCADE,
    kind   TEXT NOT NULL CHECK (kind IN ('asset', 'series', 'portfolio')),
    name   TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    PRIMARY KEY (run_id, kind, name)
  ) WITHOUT ROWID;
  INSERT INTO run_subject (run_id, kind, name, sha256) SELECT run_id, kind, name, sha256 FROM run_subject_copy;
  DROP TABLE run_subject_copy;
  CREATE INDEX run_subject_by_name ON run_subject (kind, name);
`;

export const RUNS_KINDS_MIGRATION_NAME = 'run records: present-value and drift runs';

/**
 * SQLite cannot change a CHECK constraint in place: both run tables are rebuilt with the
 * same columns and rows, the kind list widened (sqlite.org/lang_altertable.html, "making
 * other kinds of table schema changes"). run_subject goes first so that dropping the old
 * run table deletes nothing through its foreign key; the AUTOINCREMENT counter is carried
 * over so that no run id is ever reused.
 */
export const RUNS_KINDS_MIGRATION_SQL = `
  CREATE TABLE run_next (
    id           INTEGER PRIMARY KEY AUTOINCREMENT,
    kind         TEXT NOT NULL CHECK (kind IN ('fit', 'backtest', 'compare', 'batch', 'present-value', 'drift')),
    label        TEXT NOT NULL,
    models       TEXT NOT NULL DEFAULT '[]',
    created_at   TEXT NOT NULL,
    version      TEXT NOT NULL,
    spec         TEXT NOT NULL,
    result       TEXT NOT NULL,
    panel        TEXT NOT NULL,
    panel_sha256 TEXT NOT NULL,
    panels       TEXT,
    files        TEXT NOT NULL DEFAULT '[]',
    subjects     TEXT NOT NULL DEFAULT '[]',
    compute      TEXT
  );
  INSERT INTO run_next (id, kind, label, models, created_at, version, spec, result, panel, panel_sha256, panels, files, subjects, compute)
    SELECT id, kind, label, models, created_at, version, spec, result, panel, panel_sha256, panels, files, subjects, compute FROM run;
  DELETE FROM sqlite_sequence WHERE name = 'run_next';
  INSERT INTO sqlite_sequence (name, seq) SELECT 'run_next', seq FROM sqlite_sequence WHERE name = 'run';
  CREATE TABLE run_subject_next (
    run_id INTEGER NOT NULL REFERENCES run_next (id) ON DELETE CASCADE,
    kind   TEXT NOT NULL CHECK (kind IN ('asset', 'series', 'portfolio')),
    name   TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    PRIMARY KEY (run_id, kind, name)
  ) WITHOUT ROWID;
  INSERT INTO run_subject_next (run_id, kind, name, sha256) SELECT run_id, kind, name, sha256 FROM run_subject;
  DROP TABLE run_subject;
  DROP TABLE run;
  ALTER TABLE run_next RENAME TO run;
  ALTER TABLE run_subject_next RENAME TO run_subject;
  CREATE INDEX run_by_time ON run (created_at);
  CREATE INDEX run_subject_by_name ON run_subject (kind, name);
`;

export const RUNS_COLUMNS_MIGRATION_NAME = 'run records: the result\'s long number series as float64 columns';

/**
 * The result's long number series (a fit's discounted paths, a bootstrap's draws: arrays of
 * at least COLUMN_MIN numbers) as float64 columns beside its exact JSON, which refers to them
 * by index (shared/records/exact-json.ts stringifyExactColumns). NULL for runs recorded
 * before, whose JSON holds every number.
 */
export const RUNS_COLUMNS_MIGRATION_SQL = `ALTER TABLE run ADD COLUMN result_columns BLOB;`;
