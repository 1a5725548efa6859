/**
 * The history store: one SQLite file per user project (better-sqlite3, WAL, foreign keys
 * on, a busy timeout). Reads hand out the domain core's plain types (shared/data.ts);
 * writes of imported rows go through ImportSession (./session.ts) inside one transaction.
 */
import type Database from 'better-sqlite3';
import { sha256Hasher } from './digest.js';
import { openSqlite, preparedOnUse } from './sqlite.js';
import { accessSync, constants, copyFileSync, existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Frequency, NamedSeries, PriceHistory, ReturnForm, ReturnHistory, ReturnSeries, RiskfreeForm, SeriesKind, StoredAsset, ValueUnits } from '../../shared/data.js';
import { FREQUENCIES } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { coverage, type Coverage } from '../data/calendar.js';
import { MIGRATIONS, type Migration } from './migrations.js';
import { notWritableError, storageError } from './errors.js';
import { DateTexts, decodeHistory, decodeSeries, encodeHistory, encodeSeries, historyDigest, Packs, seriesDigest } from './packs.js';
import type { SubjectFingerprint } from '../../shared/records/run-record.js';

export interface StoreOptions {
  /** Refuse to create a new file (commands that only read: info, returns, fit). */
  mustExist?: boolean;
  readonly?: boolean;
  /**
   * 'read': the caller only reads (info, runs, show, export, replay, fit --no-record). A
   * database whose file or folder may not be written (an auditor's copy on a read-only
   * disk) is then opened read-only instead of refused; a database in a read-only folder
   * is read from a private snapshot (SQLite needs its -shm file beside a WAL database,
   * which cannot be made there). 'write' (default): such a database is refused up front
   * with NOT_WRITABLE, before anything is attempted.
   */
  access?: 'read' | 'write';
  /** Milliseconds to wait for another writer (default 5000). */
  busyTimeout?: number;
}

export interface ImportWarning {
  kind: 'gap' | 'stale-price' | 'large-return' | 'large-dividend' | 'ignored-columns' | 'rejected-row' | 'replaced' | 'missing' | 'small-returns' | 'implausible-level' | 'more';
  /** Asset or series name; '' for file-level warnings. */
  subject: string;
  from?: string;
  to?: string;
  message: string;
}

export interface ImportLogEntry {
  id: number;
  fileName: string;
  sha256: string;
  kind: 'prices' | 'dividends' | 'series' | 'returns';
  rowsRead: number;
  rowsStored: number;
  rowsRejected: number;
  warnings: ImportWarning[];
  options: Record<string, unknown>;
  importedAt: string;
}

/** What removeImport took out of the store. */
export interface RemovedImport {
  /** The log entries removed: the import itself, and a wide dividends file logged with its prices. */
  entries: ImportLogEntry[];
  /** Price observations (assets) or series values (series) deleted. */
  rows: number;
  /** Assets or series that had rows from this import, sorted. */
  subjects: string[];
  /** Those of them left with no rows, hence removed from the store too. */
  subjectsRemoved: string[];
}

export interface AssetCoverage extends Coverage {
  name: string;
  /** How the history arrived: prices (and dividends), or returns (METHODS 8). */
  source: 'prices' | 'returns';
  /** Return histories: the form, units and whether they are excess returns, as imported. */
  form?: ReturnForm;
  units?: ValueUnits;
  excess?: boolean;
  /** Return histories: periods whose value was a missing-value code (gaps; `count` excludes them). */
  missing?: number;
  dividends: number;
  splits: number;
}

export interface SeriesCoverage extends Coverage {
  name: string;
  kind: SeriesKind;
  units: 'decimal' | 'percent';
  rfForm?: RiskfreeForm;
}

export interface PortfolioCoverage {
  name: string;
  frequency: Frequency;
  rules?: string;
  first: string | null;
  last: string | null;
  count: number;
}

export interface StoreInfo {
  path: string;
  schemaVersion: number;
  assets: AssetCoverage[];
  series: SeriesCoverage[];
  portfolios: PortfolioCoverage[];
  imports: ImportLogEntry[];
}

interface LogRow {
  id: number;
  file_name: string;
  sha256: string;
  kind: ImportLogEntry['kind'];
  rows_read: number;
  rows_stored: number;
  rows_rejected: number;
  warnings: string;
  options: string;
  imported_at: string;
}

interface AssetRow {
  id: number;
  name: string;
  form: ReturnForm | null;
  units: ValueUnits | null;
  excess: number | null;
}

interface SeriesRow {
  id: number;
  name: string;
  kind: SeriesKind;
  units: 'decimal' | 'percent';
  rf_form: RiskfreeForm | null;
}

const toLogEntry = (r: LogRow): ImportLogEntry => ({
  id: r.id,
  fileName: r.file_name,
  sha256: r.sha256,
  kind: r.kind,
  rowsRead: r.rows_read,
  rowsStored: r.rows_stored,
  rowsRejected: r.rows_rejected,
  warnings: JSON.parse(r.warnings) as ImportWarning[],
  options: JSON.parse(r.options) as Record<string, unknown>,
  importedAt: r.imported_at,
});

/** The store's statements, each prepared when first used (a command uses a few of them). */
function prepareStatements(db: Database.Database) {
  return preparedOnUse(db, {
    assetNames: (d) => d.prepare('SELECT id, name, form, units, excess FROM asset ORDER BY name'),
    assetByName: (d) => d.prepare('SELECT id FROM asset WHERE name = ?').pluck(),
    assetRowByName: (d) => d.prepare('SELECT id, name, form, units, excess FROM asset WHERE name = ?'),
    returnRows: (d) => d.prepare('SELECT date, value FROM return_observation WHERE asset_id = ? ORDER BY date').raw(),
    returnDates: (d) => d.prepare('SELECT date FROM return_observation WHERE asset_id = ? AND value IS NOT NULL ORDER BY date').pluck(),
    returnMissing: (d) => d.prepare('SELECT count(*) FROM return_observation WHERE asset_id = ? AND value IS NULL').pluck(),
    history: (d) => d.prepare('SELECT date, price, dividend, adjust, shares FROM observation WHERE asset_id = ? ORDER BY date').raw(),
    historyDates: (d) => d.prepare('SELECT date FROM observation WHERE asset_id = ? ORDER BY date').pluck(),
    assetEvents: (d) => d.prepare('SELECT sum(dividend <> 0), sum(adjust <> 1) FROM observation WHERE asset_id = ?').raw(),
    seriesAll: (d) => d.prepare('SELECT id, name, kind, units, rf_form FROM series ORDER BY name'),
    seriesByName: (d) => d.prepare('SELECT id, name, kind, units, rf_form FROM series WHERE name = ?'),
    seriesObs: (d) => d.prepare('SELECT date, value FROM series_observation WHERE series_id = ? ORDER BY date').raw(),
    seriesDates: (d) => d.prepare('SELECT date FROM series_observation WHERE series_id = ? ORDER BY date').pluck(),
    portfolioAll: (d) => d.prepare('SELECT id, name, frequency, rules FROM portfolio ORDER BY name'),
    portfolioByName: (d) => d.prepare('SELECT id, name, frequency, rules FROM portfolio WHERE name = ?'),
    portfolioObs: (d) => d.prepare('SELECT period, net FROM portfolio_return WHERE portfolio_id = ? ORDER BY period').raw(),
    portfolioInsert: (d) => d.prepare('INSERT INTO portfolio (name, frequency, rules, created_at) VALUES (?, ?, ?, ?)'),
    portfolioObsInsert: (d) => d.prepare('INSERT INTO portfolio_return (portfolio_id, period, net) VALUES (?, ?, ?)'),
    portfolioDelete: (d) => d.prepare('DELETE FROM portfolio WHERE id = ?'),
    log: (d) => d.prepare('SELECT * FROM import_log ORDER BY id'),
    logByHash: (d) => d.prepare('SELECT * FROM import_log WHERE sha256 = ? AND kind = ? ORDER BY id LIMIT 1'),
    logsByHash: (d) => d.prepare("SELECT * FROM import_log WHERE sha256 = ? AND kind <> 'dividends' ORDER BY id"),
    logById: (d) => d.prepare('SELECT * FROM import_log WHERE id = ?'),
  });
}

type Statements = ReturnType<typeof prepareStatements>;

export { isBusy, lockedError } from './errors.js';

/**
 * Refuses, before anything is written (no pragma that changes the file has run yet), a
 * file written by a newer build and a non-empty SQLite file that is not a deflator
 * database. Returns the schema version.
 */
export function checkSchema(db: Database.Database, file: string, migrations: readonly Migration[] = MIGRATIONS): number {
  const latest = migrations[migrations.length - 1]?.version ?? 0;
  const current = Number(db.pragma('user_version', { simple: true }));
  if (current > latest) {
    throw new DeflatorError(
      'CONFLICT',
      `database ${file} was written by a newer deflator (schema version ${current}; this build knows versions up to ${latest})`,
      'open it with the newer deflator that wrote it; this build will not change it',
    );
  }
  if (current === 0) {
    const tables = db.prepare("SELECT count(*) FROM sqlite_master WHERE type = 'table'").pluck().get() as number;
    if (tables > 0) throw new DeflatorError('CONFLICT', `${file} is an SQLite database, but not a deflator one (it has tables and no deflator schema version)`, 'point --db at a deflator database, or at a new file name');
  }
  return current;
}

/**
 * Brings a database up to the last of `migrations`, each migration and its version bump
 * in one transaction. Refuses a file written by a newer build, and a non-empty SQLite file
 * that is not a deflator database.
 */
export function applyMigrations(db: Database.Database, file: string, migrations: readonly Migration[] = MIGRATIONS, readonly = false): void {
  const current = checkSchema(db, file, migrations);
  const pending = migrations.filter((m) => m.version > current);
  if (pending.length && readonly) {
    throw new DeflatorError('CONFLICT', `database ${file} is at schema version ${current} and needs migrating, but may not be written`, 'open it once where it may be written (copy it to a folder of yours) so that it is migrated');
  }
  for (const m of pending) {
    db.transaction(() => {
      if (typeof m.up === 'string') db.exec(m.up);
      else m.up(db);
      db.pragma(`user_version = ${m.version}`);
    })();
  }
}

const writable = (p: string): boolean => {
  try {
    accessSync(p, constants.W_OK);
    return true;
  } catch {
    return false;
  }
};

export class Store {
  readonly db: Database.Database;
  readonly path: string;
  private readonly st: Statements;

  /** A private snapshot of a database in a read-only folder (removed by close). */
  private snapshotDir: string | undefined;
  /** Opened read-only (asked for, or a database that may not be written opened by a reader). */
  readonly readOnly: boolean;

  constructor(file: string, options: StoreOptions = {}) {
    this.path = file;
    const memory = file === ':memory:';
    if (!memory && options.mustExist && !existsSync(file)) {
      throw new DeflatorError('NOT_FOUND', `database ${file} does not exist`, 'import data first (deflator import prices FILE --db DB), or run `deflator demo`');
    }
    // Who may write where: an existing file that may not be written, or a folder that may
    // not (SQLite writes its -wal and -shm files beside the database)
    const exists = !memory && existsSync(file);
    const folderOk = memory || writable(path.dirname(path.resolve(file)));
    const fileOk = !exists || writable(file);
    let readonly = options.readonly ?? false;
    let openPath = file;
    if (!memory && (!folderOk || !fileOk) && !readonly) {
      if (options.access !== 'read') throw notWritableError(file, !fileOk ? 'the file is read-only' : 'its folder (or disk) is read-only');
      readonly = true;
    }
    if (readonly && !folderOk && exists) openPath = this.snapshot(file);
    this.readOnly = readonly;
    const busyMs = options.busyTimeout ?? 5000;
    try {
      this.db = openSqlite(openPath, { readonly, fileMustExist: options.mustExist ?? false });
    } catch (e) {
      this.dropSnapshot();
      throw storageError(e, file, busyMs) ?? new DeflatorError('INPUT_INVALID', `cannot open database ${file}: ${(e as Error).message}`, 'check the path and that the file is a deflator database');
    }
    try {
      // connection settings only: the file is not touched before its schema is checked
      this.db.pragma(`busy_timeout = ${busyMs}`);
      this.db.pragma('foreign_keys = ON');
      checkSchema(this.db, file);
      if (!readonly) this.db.pragma('journal_mode = WAL');
      this.migrate(readonly);
    } catch (e) {
      this.db.close();
      this.dropSnapshot();
      if (e instanceof DeflatorError) throw e;
      const known = storageError(e, file, busyMs);
      if (known && known.code !== 'DAMAGED') throw known;
      throw new DeflatorError('INPUT_INVALID', `cannot use ${file} as a deflator database: ${(e as Error).message}`, 'point --db at a deflator database, or at a new file name');
    }
    this.st = prepareStatements(this.db);
    this.packs = new Packs(this.db);
  }

  /** Packed series (./packs.ts): one blob per price history or named series, beside its rows. */
  readonly packs: Packs;
  /** Digests of the histories and series this store handed out (from their packs, or computed when packing). */
  private readonly digests = new WeakMap<object, SubjectFingerprint>();

  /** The subject digest of a price history or named series this store loaded, when known (no hashing, no read). */
  loadedDigest(loaded: object): SubjectFingerprint | undefined {
    return this.digests.get(loaded);
  }

  /**
   * Copies a database (and an unfinished -wal beside it) into a new private folder and
   * returns the copy's path: SQLite cannot read a WAL database in a folder where it may
   * not create the -shm file. The copy is read-only for this store and removed by close.
   */
  private snapshot(file: string): string {
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-readonly-'));
    this.snapshotDir = dir;
    const copy = path.join(dir, path.basename(file));
    try {
      copyFileSync(file, copy);
      const wal = `${file}-wal`;
      if (existsSync(wal) && statSync(wal).size > 0) copyFileSync(wal, `${copy}-wal`);
    } catch (e) {
      this.dropSnapshot();
      throw new DeflatorError('NOT_WRITABLE', `database ${file} is in a read-only folder and could not be copied to read it (${(e as { code?: string }).code ?? (e as Error).message})`, 'free space in the temporary folder, or copy the database to a folder of yours');
    }
    return copy;
  }

  private dropSnapshot(): void {
    if (this.snapshotDir) rmSync(this.snapshotDir, { recursive: true, force: true });
    this.snapshotDir = undefined;
  }

  private migrate(readonly: boolean): void {
    applyMigrations(this.db, this.path, MIGRATIONS, readonly);
  }

  close(): void {
    if (this.db.open) this.db.close();
    this.dropSnapshot();
  }

  /** Stored asset names, sorted. */
  assets(): string[] {
    return (this.st.assetNames.all() as { name: string }[]).map((r) => r.name);
  }

  /** Stored named series (name, kind, units, rf form), sorted by name. */
  seriesList(): { name: string; kind: SeriesKind; units: 'decimal' | 'percent'; rfForm?: RiskfreeForm }[] {
    return (this.st.seriesAll.all() as SeriesRow[]).map((r) => ({ name: r.name, kind: r.kind, units: r.units, ...(r.rf_form ? { rfForm: r.rf_form } : {}) }));
  }

  portfolioNames(): string[] {
    return (this.st.portfolioAll.all() as { name: string }[]).map((r) => r.name);
  }

  hasAsset(name: string): boolean {
    return this.st.assetByName.get(name) !== undefined;
  }

  /**
   * Price histories only (see loadAssets for every stored asset). Without `assets`, every
   * stored price history; a named asset stored as returns is INPUT_INVALID.
   */
  loadHistories(assets?: string[]): PriceHistory[] {
    const all = this.loadAssets(assets);
    const out: PriceHistory[] = [];
    for (const h of all) {
      if (h.source !== 'returns') out.push(h);
      else if (assets) throw new DeflatorError('INPUT_INVALID', `asset "${h.asset}" was imported as returns, not prices`, 'use it where returns are read (returns, fit, back-test, comparison, momentum sorts)');
    }
    return out;
  }

  /**
   * Asset histories, dates ascending: price histories, and assets stored as returns
   * (ReturnHistory, values as imported, NaN for a missing-value code). Without `assets`,
   * every stored asset (sorted by name); with it, exactly those in that order (NOT_FOUND
   * names the first unknown one). `texts`: the date strings of a load that also reads series
   * (loadSeries), so that the same trading dates are one shared list for both (packs.ts).
   */
  loadAssets(assets?: string[], texts: DateTexts = new DateTexts()): StoredAsset[] {
    const wanted = assets ?? this.assets();
    const found = wanted.map((name) => {
      const a = this.st.assetRowByName.get(name) as AssetRow | undefined;
      if (a === undefined) throw new DeflatorError('NOT_FOUND', `asset "${name}" is not in ${this.path}`, 'run `deflator info --db DB` to list the stored assets');
      return a;
    });
    const fromPack = (a: AssetRow): PriceHistory | null => {
      const pk = this.packs.get('asset', a.id);
      const h = pk ? decodeHistory(a.name, pk.data, texts) : null;
      if (h && pk) this.digests.set(h, { kind: 'asset', name: a.name, sha256: pk.sha256, rows: pk.rows });
      return h;
    };
    const load = (canPack: boolean): StoredAsset[] =>
      found.map((a) => {
        if (a.form !== null) return this.returnHistory(a);
        const h = fromPack(a) ?? this.historyFromRows(a);
        if (canPack && !this.digests.has(h)) {
          const data = encodeHistory(h);
          const d = historyDigest(h);
          this.digests.set(h, d);
          if (data && h.dates.length > 0) this.packs.put('asset', a.id, d.rows, data, d.sha256);
        }
        return h;
      });
    // Read and pack in one write transaction when some price history has no pack yet.
    const unpacked = found.some((a) => a.form === null && this.packs.digest('asset', a.id) === undefined);
    return unpacked ? this.packs.withWrite(load) : load(false);
  }

  private historyFromRows(a: AssetRow): PriceHistory {
    {
      const name = a.name;
      const id = a.id;
      const rows = this.st.history.all(id) as [string, number, number, number, number | null][];
      const n = rows.length;
      const h: PriceHistory = { asset: name, dates: new Array<string>(n), price: new Float64Array(n), dividend: new Float64Array(n) };
      let adjusted = false;
      let withShares = false;
      const adjust = new Float64Array(n);
      const shares = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const r = rows[i];
        h.dates[i] = r[0];
        h.price[i] = r[1];
        h.dividend[i] = r[2];
        adjust[i] = r[3];
        if (r[3] !== 1) adjusted = true;
        if (r[4] !== null) {
          withShares = true;
          shares[i] = r[4];
        } else shares[i] = NaN;
      }
      if (adjusted) h.adjust = adjust;
      if (withShares) h.shares = shares;
      return h;
    }
  }

  private returnHistory(a: AssetRow): ReturnHistory {
    const rows = this.st.returnRows.all(a.id) as [string, number | null][];
    return {
      asset: a.name,
      source: 'returns',
      dates: rows.map((r) => r[0]),
      values: Float64Array.from(rows, (r) => (r[1] === null ? Number.NaN : r[1])),
      form: a.form as ReturnForm,
      units: a.units ?? 'decimal',
      excess: a.excess === 1,
    };
  }

  /** Named series in decimals, dates ascending; same selection rules as loadHistories. */
  loadSeries(names?: string[], texts: DateTexts = new DateTexts()): NamedSeries[] {
    const rows = names
      ? names.map((name) => {
          const r = this.st.seriesByName.get(name) as SeriesRow | undefined;
          if (!r) throw new DeflatorError('NOT_FOUND', `series "${name}" is not in ${this.path}`, 'run `deflator info --db DB` to list the stored series, or import it with `deflator import series`');
          return r;
        })
      : (this.st.seriesAll.all() as SeriesRow[]);
    const load = (canPack: boolean): NamedSeries[] =>
      rows.map((r) => {
        const pk = this.packs.get('series', r.id);
        const packed = pk ? decodeSeries(pk.data, texts) : null;
        let dates: string[];
        let values: Float64Array;
        if (packed) ({ dates, values } = packed);
        else {
          const obs = this.st.seriesObs.all(r.id) as [string, number][];
          dates = obs.map((o) => o[0]);
          values = Float64Array.from(obs, (o) => o[1]);
        }
        const s: NamedSeries = { name: r.name, kind: r.kind, dates, values };
        if (r.rf_form) s.rfForm = r.rf_form;
        if (packed && pk) this.digests.set(s, { kind: 'series', name: r.name, sha256: pk.sha256, rows: pk.rows });
        else if (canPack) {
          const d = seriesDigest(r.name, s);
          this.digests.set(s, d);
          const data = encodeSeries(s);
          if (data && dates.length > 0) this.packs.put('series', r.id, d.rows, data, d.sha256);
        }
        return s;
      });
    const unpacked = rows.some((r) => this.packs.digest('series', r.id) === undefined);
    return unpacked ? this.packs.withWrite(load) : load(false);
  }

  /** Stored portfolio return series (NaN where a period had no return). */
  loadPortfolios(names?: string[]): ReturnSeries[] {
    type Row = { id: number; name: string; frequency: Frequency; rules: string | null };
    const rows = names
      ? names.map((name) => {
          const r = this.st.portfolioByName.get(name) as Row | undefined;
          if (!r) throw new DeflatorError('NOT_FOUND', `portfolio "${name}" is not in ${this.path}`, 'run `deflator info --db DB` to list the stored portfolios');
          return r;
        })
      : (this.st.portfolioAll.all() as Row[]);
    return rows.map((r) => {
      const obs = this.st.portfolioObs.all(r.id) as [string, number | null][];
      const p: ReturnSeries = { name: r.name, frequency: r.frequency, periods: obs.map((o) => o[0]), net: Float64Array.from(obs, (o) => (o[1] === null ? NaN : o[1])) };
      if (r.rules !== null) p.rules = r.rules;
      return p;
    });
  }

  /**
   * Stores a built portfolio's returns under its name (usable as a test asset by name).
   * An existing portfolio of that name is replaced only with { replace: true }.
   */
  savePortfolio(series: ReturnSeries, options: { replace?: boolean } = {}): void {
    if (!series.name) throw new DeflatorError('INPUT_INVALID', 'a portfolio needs a name', 'give the portfolio a name');
    if (!(FREQUENCIES as readonly string[]).includes(series.frequency)) throw new DeflatorError('INPUT_INVALID', `portfolio "${series.name}": unknown frequency ${series.frequency}`, `use one of ${FREQUENCIES.join(', ')}`);
    if (series.periods.length !== series.net.length) {
      throw new DeflatorError('INPUT_INVALID', `portfolio "${series.name}": ${series.periods.length} periods but ${series.net.length} returns`, 'pass one return per period');
    }
    if (this.hasAsset(series.name)) throw new DeflatorError('CONFLICT', `portfolio name "${series.name}" is already an asset's name`, 'choose another portfolio name');
    for (let i = 0; i < series.net.length; i++) {
      const v = series.net[i];
      if (!Number.isNaN(v) && !Number.isFinite(v)) throw new DeflatorError('INPUT_INVALID', `portfolio "${series.name}": return at ${series.periods[i]} is ${v}`, 'returns must be finite (NaN marks a missing one)');
    }
    this.db.transaction(() => {
      const old = this.st.portfolioByName.get(series.name) as { id: number } | undefined;
      if (old && !options.replace) throw new DeflatorError('CONFLICT', `portfolio "${series.name}" already exists`, 'choose another name, or replace it');
      if (old) this.st.portfolioDelete.run(old.id);
      const id = Number(this.st.portfolioInsert.run(series.name, series.frequency, series.rules ?? null, new Date().toISOString()).lastInsertRowid);
      for (let i = 0; i < series.periods.length; i++) {
        const v = series.net[i];
        this.st.portfolioObsInsert.run(id, series.periods[i], Number.isNaN(v) ? null : v);
      }
    })();
  }

  importLog(): ImportLogEntry[] {
    return (this.st.log.all() as LogRow[]).map(toLogEntry);
  }

  /** Every earlier import (dividends files aside) of a file with these bytes, oldest first. */
  findImports(sha256: string): ImportLogEntry[] {
    return (this.st.logsByHash.all(sha256) as LogRow[]).map(toLogEntry);
  }

  /** The earlier import of a file with these bytes, if any. */
  findImport(sha256: string, kind: ImportLogEntry['kind']): ImportLogEntry | undefined {
    const r = this.st.logByHash.get(sha256, kind) as LogRow | undefined;
    return r ? toLogEntry(r) : undefined;
  }

  importById(id: number): ImportLogEntry | undefined {
    const r = this.st.logById.get(id) as LogRow | undefined;
    return r ? toLogEntry(r) : undefined;
  }

  /**
   * Takes one import back out of the store, in one transaction: the rows it stored (those
   * a later import replaced are that import's now), the assets and series left with no
   * rows, and its log entry (a prices import takes the wide dividends file logged with it
   * along). The entry is deleted, not marked: the rows' import ids and the subjects'
   * digests that run records hold then no longer match, so those runs read as stale, and
   * the same bytes can be imported again. NOT_FOUND for an id not in the log.
   */
  removeImport(importId: number): RemovedImport {
    const db = this.db;
    return db.transaction((): RemovedImport => {
      const entry = this.importById(importId);
      if (!entry) {
        throw new DeflatorError('NOT_FOUND', `import ${importId} is not in the import log of ${this.path}`, '`deflator info --db DB` lists the imports with their ids');
      }
      if (entry.kind === 'dividends') {
        const prices = this.importById(importId - 1);
        const owner = prices && prices.kind === 'prices' && entry.options.prices === prices.fileName ? ` (import ${prices.id}, ${prices.fileName})` : '';
        throw new DeflatorError(
          'CONFLICT',
          `import ${importId} (${entry.fileName}) is a dividends file: its dividends sit on the rows of the prices file imported with it${owner}`,
          'remove the prices import it came with (its id is the one before it in `deflator info --db DB`); that takes the dividends along',
        );
      }
      const entries = [entry];
      const next = this.importById(importId + 1);
      if (entry.kind === 'prices' && next && next.kind === 'dividends' && next.options.prices === entry.fileName && entry.options.dividends === next.fileName) entries.push(next);
      const isAssets = entry.kind === 'prices' || entry.kind === 'returns';
      const table = entry.kind === 'prices' ? 'observation' : entry.kind === 'returns' ? 'return_observation' : 'series_observation';
      const subjectsSql = isAssets
        ? `SELECT id, name FROM asset WHERE id IN (SELECT DISTINCT asset_id FROM ${table} WHERE import_id = ?) ORDER BY name`
        : 'SELECT id, name FROM series WHERE id IN (SELECT DISTINCT series_id FROM series_observation WHERE import_id = ?) ORDER BY name';
      const touched = db.prepare(subjectsSql).all(importId) as { id: number; name: string }[];
      for (const t of touched) this.packs.drop(isAssets ? 'asset' : 'series', t.id); // their rows change (packs.ts)
      const rows = db.prepare(`DELETE FROM ${table} WHERE import_id = ?`).run(importId).changes;
      const hasRows = db
        .prepare(isAssets ? 'SELECT 1 WHERE EXISTS (SELECT 1 FROM observation WHERE asset_id = $id) OR EXISTS (SELECT 1 FROM return_observation WHERE asset_id = $id)' : 'SELECT 1 FROM series_observation WHERE series_id = $id LIMIT 1')
        .pluck();
      const dropSubject = db.prepare(isAssets ? 'DELETE FROM asset WHERE id = ?' : 'DELETE FROM series WHERE id = ?');
      const subjectsRemoved: string[] = [];
      for (const t of touched) {
        if (hasRows.get({ id: t.id }) !== undefined) continue;
        dropSubject.run(t.id);
        subjectsRemoved.push(t.name);
      }
      const dropLog = db.prepare('DELETE FROM import_log WHERE id = ?');
      for (const e of entries) dropLog.run(e.id);
      return { entries, rows, subjects: touched.map((t) => t.name), subjectsRemoved };
    }).immediate();
  }

  /** What is stored: coverage per asset, series and portfolio, and the import log. */
  info(): StoreInfo {
    const assets = (this.st.assetNames.all() as AssetRow[]).map((a): AssetCoverage => {
      if (a.form !== null) {
        return {
          name: a.name,
          source: 'returns',
          form: a.form,
          units: a.units ?? 'decimal',
          excess: a.excess === 1,
          ...coverage(this.st.returnDates.all(a.id) as string[]),
          missing: this.st.returnMissing.get(a.id) as number,
          dividends: 0,
          splits: 0,
        };
      }
      const [dividends, splits] = this.st.assetEvents.get(a.id) as [number | null, number | null];
      return { name: a.name, source: 'prices', ...coverage(this.st.historyDates.all(a.id) as string[]), dividends: dividends ?? 0, splits: splits ?? 0 };
    });
    const series = (this.st.seriesAll.all() as SeriesRow[]).map((s) => ({
      name: s.name,
      kind: s.kind,
      units: s.units,
      ...(s.rf_form ? { rfForm: s.rf_form } : {}),
      ...coverage(this.st.seriesDates.all(s.id) as string[]),
    }));
    const portfolios = this.loadPortfolios().map((p) => ({
      name: p.name,
      frequency: p.frequency,
      ...(p.rules !== undefined ? { rules: p.rules } : {}),
      first: p.periods[0] ?? null,
      last: p.periods[p.periods.length - 1] ?? null,
      count: p.periods.length,
    }));
    return { path: this.path, schemaVersion: Number(this.db.pragma('user_version', { simple: true })), assets, series, portfolios, imports: this.importLog() };
  }

  /**
   * SHA-256 over every stored data row in a fixed order (doubles by their bit pattern):
   * equal digests mean equal contents. Tests use it to show a failed import changed nothing.
   */
  contentDigest(): string {
    const h = sha256Hasher();
    const f = Buffer.alloc(8);
    const put = (v: unknown) => {
      if (v === null) h.update('\u0000N');
      else if (typeof v === 'number') {
        f.writeDoubleLE(v);
        h.update('\u0000D').update(f);
      } else if (typeof v === 'bigint') h.update(`\u0000I${v}`);
      else h.update(`\u0000S${String(v)}`);
    };
    const tables = [
      'SELECT id, name, form, units, excess FROM asset ORDER BY id',
      'SELECT asset_id, date, price, dividend, adjust, shares, import_id FROM observation ORDER BY asset_id, date',
      'SELECT asset_id, date, value, import_id FROM return_observation ORDER BY asset_id, date',
      'SELECT id, name, kind, units, rf_form FROM series ORDER BY id',
      'SELECT series_id, date, value, import_id FROM series_observation ORDER BY series_id, date',
      'SELECT id, name, frequency, rules FROM portfolio ORDER BY id',
      'SELECT portfolio_id, period, net FROM portfolio_return ORDER BY portfolio_id, period',
      'SELECT id, file_name, sha256, kind, rows_read, rows_stored, rows_rejected, warnings, options FROM import_log ORDER BY id',
    ];
    for (const sql of tables) {
      h.update(`\u0001${sql}`);
      for (const row of this.db.prepare(sql).raw().iterate() as Iterable<unknown[]>) for (const v of row) put(v);
    }
    return h.digest('hex');
  }
}
