/**
 * The migration that lets a run be a merged batch rebuilds the run table (SQLite cannot
 * change a CHECK constraint in place): ids, rows and subjects survive, the AUTOINCREMENT
 * high-water mark too (an id is never reused), deleting a run still removes its subjects,
 * and a batch run can be stored.
 */
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { MIGRATIONS } from '../../../src-main/store/migrations.js';
import { applyMigrations } from '../../../src-main/store/store.js';
import { RUNS_BATCH_MIGRATION_NAME } from '../../../src-main/runs/migration.js';

const batchVersion = MIGRATIONS.find((m) => m.name === RUNS_BATCH_MIGRATION_NAME)!.version;

function insertRun(db: Database.Database, kind: string): number {
  const id = Number(
    db
      .prepare("INSERT INTO run (kind, label, created_at, version, spec, result, panel, panel_sha256, compute) VALUES (?, 'm', '2026-01-01T00:00:00Z', '0', '{}', '{}', '{}', 'x', ?)")
      .run(kind, kind === 'fit' ? '{"threads":2}' : null).lastInsertRowid,
  );
  db.prepare("INSERT INTO run_subject (run_id, kind, name, sha256) VALUES (?, 'series', 'harbor', 'h'), (?, 'asset', 'a', 'g')").run(id, id);
  return id;
}

describe('migration: batch runs', () => {
  it('keeps runs, subjects and the id high-water mark; batch runs can then be stored', () => {
    const db = new Database(':memory:');
    db.pragma('foreign_keys = ON');
    applyMigrations(db, ':memory:', MIGRATIONS.filter((m) => m.version < batchVersion));
    expect(() => insertRun(db, 'batch')).toThrow(/CHECK constraint failed/);
    insertRun(db, 'fit');
    insertRun(db, 'compare');
    insertRun(db, 'backtest');
    db.prepare('DELETE FROM run WHERE id = 3').run();
    const before = db.prepare('SELECT * FROM run ORDER BY id').all();
    applyMigrations(db, ':memory:');
    expect(db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
    // the same rows; columns later migrations add (result_columns, schema 9) are NULL for them
    const after = db.prepare('SELECT * FROM run ORDER BY id').all() as Record<string, unknown>[];
    const had = Object.keys(before[0] as object);
    expect(after.map((r) => Object.fromEntries(had.map((k) => [k, r[k]])))).toEqual(before);
    for (const r of after) for (const k of Object.keys(r)) if (!had.includes(k)) expect(r[k], k).toBeNull();
    expect(db.prepare('SELECT run_id, name FROM run_subject ORDER BY run_id, name').all()).toEqual([
      { run_id: 1, name: 'a' },
      { run_id: 1, name: 'harbor' },
      { run_id: 2, name: 'a' },
      { run_id: 2, name: 'harbor' },
    ]);
    // id 3 was used and deleted before the migration: the next run is 4
    expect(insertRun(db, 'batch')).toBe(4);
    db.prepare('DELETE FROM run WHERE id = 1').run();
    expect(db.prepare('SELECT count(*) FROM run_subject WHERE run_id = 1').pluck().get()).toBe(0);
    expect(db.pragma('foreign_key_check')).toEqual([]);
    expect(db.prepare("SELECT name FROM sqlite_master WHERE type = 'index' AND name IN ('run_by_time', 'run_subject_by_name') ORDER BY name").pluck().all()).toEqual(['run_by_time', 'run_subject_by_name']);
    expect(db.prepare("SELECT count(*) FROM sqlite_master WHERE name LIKE '%_copy' OR name LIKE '%_new'").pluck().get()).toBe(0);
  });
});
