/**
 * One import = one write transaction. The session opens it (BEGIN IMMEDIATE), writes the
 * import-log entry first (rows reference it), inserts observations in multi-row batches
 * through statements prepared once, and either commits with the final counts and warnings
 * or rolls everything back: a failed import leaves the database exactly as it was.
 */
import type Database from 'better-sqlite3';
import type { ReturnForm, RiskfreeForm, SeriesKind, ValueUnits } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { isoDayNumber } from '../data/calendar.js';
import { suspendTriggers } from './packs.js';
import { isBusy, lockedError, type ImportLogEntry, type ImportWarning, type Store } from './store.js';

const BATCH = 64;
/** Observations held before a sorted write (about 15 MB). */
const CHUNK = 1 << 18;
/**
 * Page cache while an import runs (KiB, negative as SQLite wants it): a large file's key
 * B-tree then stays in memory instead of being re-read for every chunk (5M rows: 3x faster).
 */
const IMPORT_CACHE_KIB = -131072;
const DEFAULT_CACHE_KIB = -2000;
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
    logHash: db.prepare('UPDATE import_log SET sha256 = ? WHERE id = ?'),
    logFinish: db.prepare('UPDATE import_log SET rows_read = ?, rows_stored = ?, rows_rejected = ?, warnings = ? WHERE id = ?'),
    assetGet: db.prepare('SELECT id, form, units, excess FROM asset WHERE name = ?'),
    assetHasRows: db.prepare('SELECT 1 FROM observation WHERE asset_id = ? LIMIT 1').pluck(),
    assetHasReturns: db.prepare('SELECT 1 FROM return_observation WHERE asset_id = ? LIMIT 1').pluck(),
    assetInsert: db.prepare('INSERT INTO asset (name) VALUES (?)'),
    returnAssetInsert: db.prepare('INSERT INTO asset (name, form, units, excess) VALUES (?, ?, ?, ?)'),
    returnAssetSet: db.prepare('UPDATE asset SET form = ?, units = ?, excess = ? WHERE id = ?'),
    retOne: db.prepare(`INSERT INTO return_observation (asset_id, date, value, import_id) VALUES ${valuesList(1, SERIES_COLS)}`),
    retMany: db.prepare(`INSERT INTO return_observation (asset_id, date, value, import_id) VALUES ${valuesList(BATCH, SERIES_COLS)}`),
    retOwner: db.prepare('SELECT import_id FROM return_observation WHERE asset_id = ? AND date = ?').pluck(),
    retDelete: db.prepare('DELETE FROM return_observation WHERE asset_id = ? AND date = ?'),
    // missing values (NULL) of this import before an asset's first or after its last return: not gaps, just no data yet
    retTrim: db.prepare(`
      DELETE FROM return_observation AS o WHERE import_id = ? AND value IS NULL AND (
        date < coalesce((SELECT min(date) FROM return_observation r WHERE r.asset_id = o.asset_id AND r.value IS NOT NULL), '~')
        OR date > coalesce((SELECT max(date) FROM return_observation r WHERE r.asset_id = o.asset_id AND r.value IS NOT NULL), '')
      )`),
    assetDelete: db.prepare('DELETE FROM asset WHERE id = ?'),
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
    obsDelete: db.prepare('DELETE FROM observation WHERE asset_id = ? AND date = ?'),
    serDelete: db.prepare('DELETE FROM series_observation WHERE series_id = ? AND date = ?'),
    importHasRows: db.prepare('SELECT EXISTS (SELECT 1 FROM observation WHERE import_id = $id) OR EXISTS (SELECT 1 FROM series_observation WHERE import_id = $id) OR EXISTS (SELECT 1 FROM return_observation WHERE import_id = $id)').pluck(),
    logDelete: db.prepare('DELETE FROM import_log WHERE id = ?'),
  };
}

interface AssetMeta {
  id: number;
  form: ReturnForm | null;
  units: ValueUnits | null;
  excess: number | null;
}

/** How a file's returns are written (METHODS 8): stored with each asset. */
export interface ReturnMeta {
  form: ReturnForm;
  units: ValueUnits;
  excess: boolean;
}

function newChunk(size: number) {
  return {
    n: 0,
    asset: new Int32Array(size),
    local: new Int32Array(size),
    day: new Int32Array(size),
    date: new Array<string>(size),
    price: new Float64Array(size),
    dividend: new Float64Array(size),
    adjust: new Float64Array(size),
    shares: new Float64Array(size),
    line: new Int32Array(size),
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
  private readonly assetNames = new Map<number, string>();
  /** Assets that had rows before this import (their checks re-read the stored history). */
  readonly preexisting = new Set<number>();
  private readonly seriesIds = new Map<string, number>();

  /** Pending observations; starts small and doubles up to CHUNK rows. */
  private chunk = newChunk(4096);
  private chunkFile = '';
  /** Dense index per asset id (for the counting sort): localOf[id], -1 when not seen. */
  private localOf = new Int32Array(1024).fill(-1);
  private locals = 0;
  /**
   * Sees every queued observation once, grouped by asset and in file order within an asset,
   * when its chunk is written (the import checks run here: one asset's state at a time).
   */
  rowHook: ((assetId: number, date: string, day: number, price: number, dividend: number, adjust: number, line: number, file: string) => void) | null = null;
  private order = new Int32Array(4096);
  private readonly params: (string | number | null)[] = new Array(BATCH * OBS_COLS);
  private readonly serBuf: (string | number)[] = [];
  private readonly serLines: number[] = [];
  private readonly serNames: string[] = [];
  private readonly retBuf: (string | number | null)[] = [];
  private readonly retLines: number[] = [];
  rowsStored = 0;
  /**
   * Replace mode: a row whose (asset or series, date) is stored from an earlier import
   * takes that row's place instead of failing the import (rows repeated within this
   * import's own files still fail). `replaced` counts the rows each earlier import lost.
   */
  replace = false;
  readonly replaced = new Map<number, number>();

  private readonly st: ReturnType<typeof sessionStatements>;

  constructor(store: Store) {
    this.store = store;
    this.db = store.db;
    this.st = sessionStatements(this.db);
  }

  /** Opens the transaction and writes the log entry; returns its id. */
  begin(draft: LogDraft): number {
    if (this.db.inTransaction) throw new DeflatorError('CONFLICT', 'another write is in progress on this database connection', 'wait for it to finish');
    this.db.pragma(`cache_size = ${IMPORT_CACHE_KIB}`);
    try {
      this.st.begin.run();
    } catch (e) {
      // SQLite retried for the busy timeout already: say which lock, and what to do
      if (isBusy(e)) throw lockedError(this.store.path, Number(this.db.pragma('busy_timeout', { simple: true })));
      throw e;
    }
    this.open = true;
    // the packs' triggers out for this transaction: this session drops the packs it touches (store/packs.ts)
    this.restoreTriggers = suspendTriggers(this.db);
    this.importId = this.addLog(draft);
    return this.importId;
  }

  private restoreTriggers: (() => void) | null = null;

  /** A further log entry in the same transaction (e.g. a wide dividends file). */
  addLog(draft: LogDraft): number {
    const id = Number(this.st.logInsert.run(draft.fileName, draft.sha256, draft.kind, JSON.stringify(draft.options)).lastInsertRowid);
    this.logIds.push(id);
    return id;
  }

  assetId(name: string): number {
    let id = this.assetIds.get(name);
    if (id !== undefined) return id;
    const found = this.st.assetGet.get(name) as AssetMeta | undefined;
    if (found !== undefined) {
      id = found.id;
      if (found.form !== null) {
        if (this.st.assetHasReturns.get(id) !== undefined) {
          throw new DeflatorError(
            'CONFLICT',
            `asset "${name}" is stored as returns (${found.form}, ${found.units ?? 'decimal'}${found.excess ? ', excess' : ''}); this file gives it prices`,
            'an asset holds either prices or returns: rename the column or asset, or take the returns import out first (`deflator info --db DB` lists the imports)',
          );
        }
        this.st.returnAssetSet.run(null, null, null, id);
      }
      if (this.st.assetHasRows.get(id) !== undefined) this.preexisting.add(id);
      this.store.packs.drop('asset', id); // its rows change in this transaction (store/packs.ts)
    } else {
      id = Number(this.st.assetInsert.run(name).lastInsertRowid);
    }
    this.assetIds.set(name, id);
    this.assetNames.set(id, name);
    return id;
  }

  assetName(id: number): string {
    return this.assetNames.get(id) ?? String(id);
  }

  /**
   * Queues one observation. Rows wait in a chunk of typed arrays; a full chunk is put in
   * asset order (a stable counting sort, so each asset's rows keep their file order) and
   * written in multi-row batches. Files sorted by date would otherwise insert into a
   * different asset's part of the (asset, date) key on every row, several times slower.
   */
  observation(assetId: number, date: string, day: number, price: number, dividend: number, adjust: number, shares: number | null, file: string, line: number): void {
    if (this.chunk.n === this.chunk.price.length) this.growChunk();
    const c = this.chunk;
    const k = c.n;
    if (assetId >= this.localOf.length) {
      const bigger = new Int32Array(Math.max(assetId + 1, this.localOf.length * 2)).fill(-1);
      bigger.set(this.localOf);
      this.localOf = bigger;
    }
    let local = this.localOf[assetId];
    if (local < 0) {
      local = this.locals++;
      this.localOf[assetId] = local;
    }
    c.asset[k] = assetId;
    c.local[k] = local;
    c.day[k] = day;
    c.date[k] = date;
    c.price[k] = price;
    c.dividend[k] = dividend;
    c.adjust[k] = adjust;
    c.shares[k] = shares === null ? NaN : shares;
    c.line[k] = line;
    this.chunkFile = file;
    c.n = k + 1;
    if (c.n === CHUNK) this.flushObservations();
  }

  private growChunk(): void {
    const old = this.chunk;
    const next = newChunk(old.price.length * 2);
    next.n = old.n;
    next.asset.set(old.asset);
    next.local.set(old.local);
    next.day.set(old.day);
    for (let i = 0; i < old.n; i++) next.date[i] = old.date[i];
    next.price.set(old.price);
    next.dividend.set(old.dividend);
    next.adjust.set(old.adjust);
    next.shares.set(old.shares);
    next.line.set(old.line);
    this.chunk = next;
    this.order = new Int32Array(next.price.length);
  }

  flushObservations(): void {
    const c = this.chunk;
    const n = c.n;
    if (n === 0) return;
    // stable counting sort by asset
    const groups = this.locals;
    const start = new Int32Array(groups + 1);
    for (let i = 0; i < n; i++) start[c.local[i] + 1]++;
    for (let g = 0; g < groups; g++) start[g + 1] += start[g];
    const order = this.order;
    for (let i = 0; i < n; i++) order[start[c.local[i]]++] = i;
    const hook = this.rowHook;
    if (hook) {
      for (let r = 0; r < n; r++) {
        const i = order[r];
        hook(c.asset[i], c.date[i], c.day[i], c.price[i], c.dividend[i], c.adjust[i], c.line[i], this.chunkFile);
      }
    }
    const params = this.params;
    const put = (slot: number, i: number) => {
      const o = slot * OBS_COLS;
      params[o] = c.asset[i];
      params[o + 1] = c.date[i];
      params[o + 2] = c.price[i];
      params[o + 3] = c.dividend[i];
      params[o + 4] = c.adjust[i];
      params[o + 5] = Number.isNaN(c.shares[i]) ? null : c.shares[i];
      params[o + 6] = this.importId;
    };
    let r = 0;
    for (; r + BATCH <= n; r += BATCH) {
      for (let j = 0; j < BATCH; j++) put(j, order[r + j]);
      try {
        this.st.obsMany.run(params);
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        // the statement was undone as a whole: go on row by row to name the clash
        break;
      }
      this.rowsStored += BATCH;
    }
    // the rest row by row; on a clash, find the earliest clashing line of the chunk
    let clash: { i: number; owner: number } | null = null;
    for (; r < n; r++) {
      const i = order[r];
      put(0, i);
      const row = params.slice(0, OBS_COLS);
      try {
        this.st.obsOne.run(row);
        this.rowsStored++;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        const owner = this.st.obsOwner.get(c.asset[i], c.date[i]) as number;
        if (this.replace && !this.logIds.includes(owner)) {
          this.st.obsDelete.run(c.asset[i], c.date[i]);
          this.st.obsOne.run(row);
          this.rowsStored++;
          this.replaced.set(owner, (this.replaced.get(owner) ?? 0) + 1);
        } else if (!clash || c.line[i] < c.line[clash.i]) clash = { i, owner };
      }
    }
    c.n = 0;
    if (clash) this.clash('asset', this.assetName(c.asset[clash.i]), c.date[clash.i], clash.owner, { file: this.chunkFile, line: c.line[clash.i] });
  }

  private clash(what: 'asset' | 'series', name: string, date: string, owner: number, origin: RowOrigin): never {
    if (this.logIds.includes(owner)) {
      throw new DeflatorError('INPUT_INVALID', `${origin.file}, line ${origin.line}: duplicate (${what}, date) = (${name}, ${date}): that ${what} and date appear earlier in the same file`, 'keep one row per asset and date; remove the repeated row');
    }
    const earlier = this.store.importById(owner);
    throw new DeflatorError(
      'CONFLICT',
      `${origin.file}, line ${origin.line}: (${what}, date) = (${name}, ${date}) is already stored, from ${earlier ? `${earlier.fileName} (imported ${earlier.importedAt})` : `import ${owner}`}`,
      `nothing from this file was stored; to bring in a corrected file, import it again with --replace (its rows replace the stored ones), or take the earlier import out first with \`deflator import remove ${owner} --db DB\` (\`deflator info --db DB\` lists the imports); or import only dates that are not stored yet`,
    );
  }

  /**
   * Replace mode, before commit: one warning per earlier import that lost rows, and the
   * log entries of those left with no rows at all taken out (with a wide dividends file
   * logged with them), so importing their bytes again is not mistaken for a repeat.
   */
  settleReplaced(): { warnings: ImportWarning[]; replaced: { importId: number; fileName: string; rows: number; removed: boolean }[] } {
    const warnings: ImportWarning[] = [];
    const replaced: { importId: number; fileName: string; rows: number; removed: boolean }[] = [];
    for (const [owner, rows] of [...this.replaced].sort((a, b) => a[0] - b[0])) {
      const entry = this.store.importById(owner);
      const name = entry ? entry.fileName : `import ${owner}`;
      const empty = this.st.importHasRows.get({ id: owner }) === 0;
      if (empty && entry) {
        const next = this.store.importById(owner + 1);
        if (next && next.kind === 'dividends' && next.options.prices === entry.fileName && entry.options.dividends === next.fileName) this.st.logDelete.run(next.id);
        this.st.logDelete.run(owner);
      }
      replaced.push({ importId: owner, fileName: name, rows, removed: empty });
      warnings.push({
        kind: 'replaced',
        subject: '',
        message: `replaced ${rows} stored row${rows === 1 ? '' : 's'} from import ${owner} (${name})${empty ? `; that import has no rows left and was taken out of the import log` : ''}`,
      });
    }
    return { warnings, replaced };
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
      this.store.packs.drop('series', id); // its rows change in this transaction (store/packs.ts)
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
        const owner = this.st.serOwner.get(id, date) as number;
        if (!this.replace || this.logIds.includes(owner)) this.clash('series', this.serNames[r], date, owner, { file, line: this.serLines[r] });
        this.st.serDelete.run(id, date);
        this.st.serOne.run(row);
        this.rowsStored++;
        this.replaced.set(owner, (this.replaced.get(owner) ?? 0) + 1);
      }
    }
    this.clearSeries();
  }

  private clearSeries(): void {
    this.serBuf.length = 0;
    this.serLines.length = 0;
    this.serNames.length = 0;
  }

  /**
   * Id of an asset stored as returns, created if new. An asset already stored must hold
   * returns of the same form, units and excess flag (new dates are appended); an asset
   * holding prices is a conflict.
   */
  returnAssetId(name: string, meta: ReturnMeta, origin: RowOrigin & { column?: number }): number {
    let id = this.assetIds.get(name);
    if (id !== undefined) return id;
    const found = this.st.assetGet.get(name) as AssetMeta | undefined;
    const where = `${origin.file}, line ${origin.line}${origin.column ? `, column ${origin.column}` : ''}`;
    const says = `${meta.form}, ${meta.units}${meta.excess ? ', excess' : ''}`;
    if (found) {
      id = found.id;
      const hasPrices = this.st.assetHasRows.get(id) !== undefined;
      const hasReturns = this.st.assetHasReturns.get(id) !== undefined;
      if (hasPrices) {
        throw new DeflatorError(
          'CONFLICT',
          `${where}: asset "${name}" is stored as prices; this file gives it returns (${says})`,
          'an asset holds either prices or returns: rename the column or asset, or take the price import out first (`deflator info --db DB` lists the imports)',
        );
      }
      if (hasReturns && (found.form !== meta.form || (found.units ?? 'decimal') !== meta.units || (found.excess === 1) !== meta.excess)) {
        throw new DeflatorError(
          'CONFLICT',
          `${where}: asset "${name}" is stored as ${found.form} returns (${found.units ?? 'decimal'}${found.excess ? ', excess' : ''}); this import says ${says}`,
          'import it with the same --form/--units/--excess, or rename the column',
        );
      }
      if (hasReturns) this.preexisting.add(id);
      else this.st.returnAssetSet.run(meta.form, meta.units, meta.excess ? 1 : 0, id);
      this.store.packs.drop('asset', id);
    } else {
      id = Number(this.st.returnAssetInsert.run(name, meta.form, meta.units, meta.excess ? 1 : 0).lastInsertRowid);
    }
    this.assetIds.set(name, id);
    this.assetNames.set(id, name);
    return id;
  }

  /** Queues one stored return (null: a missing-value code, a gap). */
  returnValue(assetId: number, date: string, value: number | null, origin: RowOrigin): void {
    this.retBuf.push(assetId, date, value, this.importId);
    this.retLines.push(origin.line);
    if (this.retLines.length === BATCH) this.flushReturns(origin.file);
  }

  flushReturns(file: string): void {
    const n = this.retLines.length;
    if (n === 0) return;
    if (n === BATCH) {
      try {
        this.st.retMany.run(this.retBuf);
        this.rowsStored += n;
        this.retBuf.length = 0;
        this.retLines.length = 0;
        return;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
      }
    }
    for (let r = 0; r < n; r++) {
      const row = this.retBuf.slice(r * SERIES_COLS, (r + 1) * SERIES_COLS);
      try {
        this.st.retOne.run(row);
        this.rowsStored++;
      } catch (e) {
        if (!isPrimaryKeyClash(e)) throw e;
        const id = row[0] as number;
        const date = row[1] as string;
        const owner = this.st.retOwner.get(id, date) as number;
        if (!this.replace || this.logIds.includes(owner)) this.clash('asset', this.assetName(id), date, owner, { file, line: this.retLines[r] });
        this.st.retDelete.run(id, date);
        this.st.retOne.run(row);
        this.rowsStored++;
        this.replaced.set(owner, (this.replaced.get(owner) ?? 0) + 1);
      }
    }
    this.retBuf.length = 0;
    this.retLines.length = 0;
  }

  /**
   * After the last return row: missing values before an asset's first return or after its
   * last are dropped (a column that starts later is not a gap); assets this import created
   * that are left with no rows are taken out again. Returns their names and the rows dropped.
   */
  trimReturns(file: string): { dropped: number; emptyAssets: string[] } {
    this.flushReturns(file);
    const dropped = this.st.retTrim.run(this.importId).changes;
    this.rowsStored -= dropped;
    const emptyAssets: string[] = [];
    for (const [name, id] of this.assetIds) {
      if (this.st.assetHasReturns.get(id) !== undefined || this.st.assetHasRows.get(id) !== undefined) continue;
      this.st.assetDelete.run(id);
      emptyAssets.push(name);
    }
    return { dropped, emptyAssets };
  }

  /** Records the SHA-256 of an entry's file (known once the file has been read). */
  setLogHash(id: number, sha256: string): void {
    this.st.logHash.run(sha256, id);
  }

  /** Writes the counts and warnings of one log entry. */
  finishLog(id: number, counts: { read: number; stored: number; rejected: number }, warnings: ImportWarning[]): void {
    this.st.logFinish.run(counts.read, counts.stored, counts.rejected, JSON.stringify(warnings), id);
  }

  commit(): void {
    if (!this.open) return;
    this.restoreTriggers?.();
    this.restoreTriggers = null;
    this.st.commit.run();
    this.open = false;
    this.db.pragma(`cache_size = ${DEFAULT_CACHE_KIB}`);
  }

  /** Undoes everything this session wrote (safe to call twice, or after a failed COMMIT). */
  rollback(): void {
    if (!this.open) return;
    this.open = false;
    if (this.db.inTransaction) this.st.rollback.run();
    this.db.pragma(`cache_size = ${DEFAULT_CACHE_KIB}`);
  }
}
