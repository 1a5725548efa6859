/**
 * One import = one write transaction. The session opens it (BEGIN IMMEDIATE), writes the
 * import-log entry first (rows reference it), inserts observations in multi-row batches
 * through statements prepared once, and either commits with the final counts and warnings
 * or rolls everything back: a failed import leaves the database exactly as it was.
 */
import type Database from 'better-sqlite3';
import type { RiskfreeForm, SeriesKind } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { isoDayNumber } from '../data/calendar.js';
import type { ImportLogEntry, ImportWarning, Store } from './store.js';

const BATCH = 64;
const OBS_COLS = 7;
const SERIES_COLS = 4;

export interface LogDraft {
  fileName: string;
  sha256: string;
  kind: ImportLogEntry['kind'];
  options: Record<string, unknown>;
}

/** Where a row came from, for error messages. */
export interface RowOrigin {
  file: string;
  line: number;
}

function valuesList(rows: number, cols: number): string {
  const one = `(${new Array(cols).fill('?').join(',')})`;
  return new Array(rows).fill(one).join(',');
}

const isPrimaryKeyClash = (e: unknown) => typeof e === 'object' && e !== null && (e as { code?: string }).code === 'SQLITE_CONSTRAINT_PRIMARYKEY';

function sessionStatements(db: Database.Database) {
  return {
    begin: db.prepare('BEGIN IMMEDIATE'),
    commit: db.prepare('COMMIT'),
    rollback: db.prepare('ROLLBACK'),
    logInsert: db.prepare("INSERT INTO import_log (file_name, sha256, kind, options, imported_at) VALUES (?, ?, ?, ?, strftime('%Y-%m-%dT%H:%M:%fZ', 'now'))"),
    logFinish: db.prepare('UPDATE import_log SET rows_read = ?, rows_stored = ?, rows_rejected = ?, warnings = ? WHERE id = ?'),
    assetGet: db.prepare('SELECT id FROM asset WHERE name = ?').pluck(),
    assetHasRows: db.prepare('SELECT 1 FROM observation WHERE asset_id = ? LIMIT 1').pluck(),
    assetInsert: db.prepare('INSERT INTO asset (name) VALUES (?)'),
    obsOne: db.prepare(`INSERT INTO observation (asset_id, date, price, dividend, adjust, shares, import_id) VALUES ${valuesList(1, OBS_COLS)}`),
    obsMany: db.prepare(`INSERT INTO observation (asset_id, date, price, dividend, adjust, shares, import_id) VALUES ${valuesList(BATCH, OBS_COLS)}`),
    obsOwner: db.prepare('SELECT import_id FROM observation WHERE asset_id = ? AND date = ?').pluck(),
    history: db.prepare('SELECT date, price, dividend, adjust FROM observation WHERE asset_id = ? ORDER BY date').raw(),
    setDividend: db.prepare('UPDATE observation SET dividend = ? WHERE asset_id = ? AND date = ? AND import_id = ?'),
    seriesGet: db.prepare('SELECT id, kind, units, rf_form FROM series WHERE name = ?'),
    seriesInsert: db.prepare('INSERT INTO series (name, kind, units, rf_form) VALUES (?, ?, ?, ?)'),
    serOne: db.prepare(`INSERT INTO series_observation (series_id, date, value, import_id) VALUES ${valuesList(1, SERIES_COLS)}`),
    serMany: db.prepare(`INSERT INTO series_observation (series_id, date, value, import_id) VALUES ${valuesList(BATCH, SERIES_COLS)}`),
    serOwner: db.prepare('SELECT import_id FROM series_observation WHERE series_id = ? AND date = ?').pluck(),
  };
}

export class ImportSession {
  readonly db: Database.Database;
  private readonly store: Store;
  private open = false;
  private readonly logIds: number[] = [];
  /** Import id the observation rows point at (the first log entry of the session). */
  importId = 0;

  private readonly assetIds = new Map<string, number>();
  /** Assets that had rows before this import (their checks re-read the stored history). */
  readonly preexisting = new Set<number>();
  private readonly seriesIds = new Map<string, number>();

  private readonly obsBuf: (string | number | null)[] = [];
  private readonly obsLines: number[] = [];
  private readonly obsFiles: string[] = [];
  private readonly serBuf: (string | number)[] = [];
  private readonly serLines: number[] = [];
  private readonly serNames: string[] = [];
  rowsStored = 0;

  private readonly st: ReturnType<typeof sessionStatements>;

  constructor(store: Store) {
    this.store = store;
    this.db = store.db;
    this.st = sessionStatements(this.db);
  }

  /** Opens the transaction and writes the log entry; returns its id. */
  begin(draft: LogDraft): number {
    if (this.db.inTransaction) throw new DeflatorError('CONFLICT', 'another write is in progress on this database connection', 'wait for it to finish');
    this.st.begin.run();
    this.open = true;
    this.importId = this.addLog(draft);
    return this.importId;
  }

  /** A further log entry in the same transaction (e.g. a wide dividends file). */
  addLog(draft: LogDraft): number {
    const id = Number(this.st.logInsert.run(draft.fileName, draft.sha256, draft.kind, JSON.stringify(draft.options)).lastInsertRowid);
    this.logIds.push(id);
    return id;
  }

  assetId(name: string): number {
    let id = this.assetIds.get(name);
    if (id !== undefined) return id;
    const found = this.st.assetGet.get(name) as number | undefined;
    if (found !== undefined) {
      id = found;
      if (this.st.assetHasRows.get(id) !== undefined) this.preexisting.add(id);
    } else {
      id = Number(this.st.assetInsert.run(name).lastInsertRowid);
    }
    this.assetIds.set(name, id);
    return id;
  }

  assetName(id: number): string {
    for (const [name, v] of this.assetIds) if (v === id) return name;
    return String(id);
  }

  /** Queues one observation; rows reach the database in batches. */
  observation(assetId: number, date: string, price: number, dividend: number, adjust: number, shares: number | null, origin: RowOrigin): void {
    this.obsBuf.push(assetId, date, price, dividend, adjust, shares, this.importId);
    this.obsLines.push(origin.line);
    this.obsFiles.push(origin.file);
    if (this.obsLines.length === BATCH) this.flushObservations();
  }

  flushObservations(): void {
    const n = this.obsLines.length;
    if (n === 0) return;
    if (n === BATCH) {
      try {
        this.st.obsMany.run(this.obsBuf);
        this.rowsStored += n;
        this.clearObs();
        return;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        // The statement was undone as a whole; replay row by row to name the clash.
      }
    }
    for (let r = 0; r < n; r++) {
      const row = this.obsBuf.slice(r * OBS_COLS, (r + 1) * OBS_COLS);
      try {
        this.st.obsOne.run(row);
        this.rowsStored++;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        const assetId = row[0] as number;
        const date = row[1] as string;
        this.clash('asset', this.assetName(assetId), date, this.st.obsOwner.get(assetId, date) as number, { file: this.obsFiles[r], line: this.obsLines[r] });
      }
    }
    this.clearObs();
  }

  private clearObs(): void {
    this.obsBuf.length = 0;
    this.obsLines.length = 0;
    this.obsFiles.length = 0;
  }

  private clash(what: 'asset' | 'series', name: string, date: string, owner: number, origin: RowOrigin): never {
    if (this.logIds.includes(owner)) {
      throw new DeflatorError('INPUT_INVALID', `${origin.file}, line ${origin.line}: duplicate (${what}, date) = (${name}, ${date}): that ${what} and date appear earlier in the same file`, 'keep one row per asset and date; remove the repeated row');
    }
    const earlier = this.store.importById(owner);
    throw new DeflatorError(
      'CONFLICT',
      `${origin.file}, line ${origin.line}: (${what}, date) = (${name}, ${date}) is already stored, from ${earlier ? `${earlier.fileName} (imported ${earlier.importedAt})` : `import ${owner}`}`,
      'import only dates that are not stored yet, or import into a new database; nothing from this file was stored',
    );
  }

  /** Sets the dividend of a row this import stored; false when there is no such row. */
  setDividend(assetId: number, date: string, dividend: number): boolean {
    this.flushObservations();
    return this.st.setDividend.run(dividend, assetId, date, this.importId).changes === 1;
  }

  /** Stored rows of one asset, dates ascending (this import's rows included): [date, day, price, dividend, adjust]. */
  *storedHistory(assetId: number): Generator<[string, number, number, number, number]> {
    this.flushObservations();
    for (const r of this.st.history.iterate(assetId) as Iterable<[string, number, number, number]>) yield [r[0], isoDayNumber(r[0]), r[1], r[2], r[3]];
  }

  /**
   * Id of a named series, created if new. A series that exists must have the same kind,
   * units and risk-free form (new dates are appended to it).
   */
  seriesId(name: string, kind: SeriesKind, units: 'decimal' | 'percent', rfForm: RiskfreeForm | null, origin: RowOrigin): number {
    let id = this.seriesIds.get(name);
    if (id !== undefined) return id;
    const found = this.st.seriesGet.get(name) as { id: number; kind: string; units: string; rf_form: string | null } | undefined;
    if (found) {
      if (found.kind !== kind || found.units !== units || found.rf_form !== rfForm) {
        throw new DeflatorError(
          'CONFLICT',
          `${origin.file}, line ${origin.line}: series "${name}" is already stored as kind ${found.kind}, units ${found.units}${found.rf_form ? `, rf form ${found.rf_form}` : ''}; this import says kind ${kind}, units ${units}${rfForm ? `, rf form ${rfForm}` : ''}`,
          'import it with the same --kind/--units/--rf-form, or rename the column',
        );
      }
      id = found.id;
    } else {
      id = Number(this.st.seriesInsert.run(name, kind, units, rfForm).lastInsertRowid);
    }
    this.seriesIds.set(name, id);
    return id;
  }

  seriesValue(seriesId: number, name: string, date: string, value: number, origin: RowOrigin): void {
    this.serBuf.push(seriesId, date, value, this.importId);
    this.serLines.push(origin.line);
    this.serNames.push(name);
    if (this.serLines.length === BATCH) this.flushSeries(origin.file);
  }

  flushSeries(file: string): void {
    const n = this.serLines.length;
    if (n === 0) return;
    if (n === BATCH) {
      try {
        this.st.serMany.run(this.serBuf);
        this.rowsStored += n;
        this.clearSeries();
        return;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
      }
    }
    for (let r = 0; r < n; r++) {
      const row = this.serBuf.slice(r * SERIES_COLS, (r + 1) * SERIES_COLS);
      try {
        this.st.serOne.run(row);
        this.rowsStored++;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        const id = row[0] as number;
        const date = row[1] as string;
        this.clash('series', this.serNames[r], date, this.st.serOwner.get(id, date) as number, { file, line: this.serLines[r] });
      }
    }
    this.clearSeries();
  }

  private clearSeries(): void {
    this.serBuf.length = 0;
    this.serLines.length = 0;
    this.serNames.length = 0;
  }

  /** Writes the counts and warnings of one log entry. */
  finishLog(id: number, counts: { read: number; stored: number; rejected: number }, warnings: ImportWarning[]): void {
    this.st.logFinish.run(counts.read, counts.stored, counts.rejected, JSON.stringify(warnings), id);
  }

  commit(): void {
    if (!this.open) return;
    this.st.commit.run();
    this.open = false;
  }

  /** Undoes everything this session wrote (safe to call twice, or after a failed COMMIT). */
  rollback(): void {
    if (!this.open) return;
    this.open = false;
    if (this.db.inTransaction) this.st.rollback.run();
  }
}
