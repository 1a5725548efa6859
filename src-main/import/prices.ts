/**
 * Price and dividend import. Long layout: one row per (date, asset) with price and
 * optional dividend, split/adjustment factor and shares outstanding. Wide layout: a date
 * column and one price column per asset, with an optional second wide file of dividends.
 * The whole import is one transaction: any error stores nothing.
 */
import { createHash, type Hash } from 'node:crypto';
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';
import { ImportSession } from '../store/session.js';
import type { ImportWarning, Store } from '../store/store.js';
import { DEFAULT_THRESHOLDS, HistoryChecker, WarningSink, detectFrequency, type CheckThresholds } from './checks.js';
import { alreadyImported, codePoint, controlInName, earlierImports, fileSize, logName, readDifferentlyError, readHeader, sha256File, takeOutDiffering, type ImportReport, type ProgressCallback } from './common.js';
import type { CsvRow } from './csv.js';
import { dateHint, type DateParser } from './fields.js';
import { Reading, type ReadingOptions } from './reading.js';

export const PRICE_COLUMNS = ['date', 'asset', 'price', 'dividend', 'adjust', 'shares'] as const;
export type PriceColumn = (typeof PRICE_COLUMNS)[number];

export interface PriceImportOptions extends ReadingOptions {
  layout?: 'long' | 'wide';
  /** Wide layout only: a second wide file of dividends per share (same date column, asset columns). */
  dividends?: string;
  /** Column names when they differ from date, asset, price, dividend, adjust, shares (matched case-insensitively). */
  columns?: Partial<Record<PriceColumn, string>>;
  thresholds?: Partial<CheckThresholds>;
  /** Rows with a bad value to skip (each listed as a warning) before the import fails; default 0. */
  maxRejects?: number;
  /**
   * Rows whose (asset, date) is stored from an earlier import replace those rows, in the
   * same transaction (a corrected file); without it such a row fails the import.
   */
  replace?: boolean;
  onProgress?: ProgressCallback;
}

interface Ctx {
  file: string;
  /** SHA-256 of the file, fed as it is read. */
  hash: Hash;
  session: ImportSession;
  reading: Reading;
  dates: DateParser;
  thresholds: CheckThresholds;
  sink: WarningSink;
  checkers: Map<number, HistoryChecker>;
  maxRejects: number;
  rejected: number;
  read: number;
  first: number;
  last: number;
}

class RowError extends DeflatorError {}

/**
 * Asset names seen in a long file, looked up by their bytes so a row costs no string
 * unless its name is new. Names live in one small byte arena; each name remembers which
 * name followed it last time, so a file sorted by date (the same asset order on every
 * date) is matched with one byte compare per row, without touching the hash table.
 */
class NameTable {
  private arena = new Uint8Array(4096);
  private used = 0;
  private off = new Int32Array(256);
  private len = new Int32Array(256);
  private quoted = new Uint8Array(256);
  private next = new Int32Array(256).fill(-1);
  /** Value stored with each name (the asset id). */
  ids = new Int32Array(256);
  count = 0;
  private last = -1;
  private readonly buckets = new Map<number, number[]>();

  private static hash(buf: Uint8Array, s: number, e: number): number {
    let h = 0x811c9dc5;
    for (let k = s; k < e; k++) h = Math.imul(h ^ buf[k], 0x01000193);
    return h >>> 0;
  }

  private matches(i: number, buf: Uint8Array, s: number, e: number, q: number): boolean {
    const n = e - s;
    if (this.len[i] !== n || this.quoted[i] !== q) return false;
    const o = this.off[i];
    const a = this.arena;
    for (let k = 0; k < n; k++) if (a[o + k] !== buf[s + k]) return false;
    return true;
  }

  /** Index of the name in buf[s, e), or -1. */
  find(buf: Uint8Array, s: number, e: number, q: number): number {
    const guess = this.last >= 0 ? this.next[this.last] : -1;
    let i = -1;
    if (guess >= 0 && this.matches(guess, buf, s, e, q)) i = guess;
    else {
      const list = this.buckets.get(NameTable.hash(buf, s, e));
      if (list) for (const j of list) if (this.matches(j, buf, s, e, q)) i = j;
      if (i >= 0 && this.last >= 0) this.next[this.last] = i;
    }
    if (i >= 0) this.last = i;
    return i;
  }

  add(buf: Uint8Array, s: number, e: number, q: number, id: number): number {
    const i = this.count++;
    if (i === this.off.length) {
      const grow = <A extends Int32Array | Uint8Array>(x: A, fill = 0): A => {
        const y = new (x.constructor as new (n: number) => A)(x.length * 2);
        y.fill(fill);
        y.set(x);
        return y;
      };
      this.off = grow(this.off);
      this.len = grow(this.len);
      this.quoted = grow(this.quoted);
      this.next = grow(this.next, -1);
      this.ids = grow(this.ids);
    }
    const n = e - s;
    if (this.used + n > this.arena.length) {
      const bigger = new Uint8Array(Math.max(this.arena.length * 2, this.used + n));
      bigger.set(this.arena);
      this.arena = bigger;
    }
    this.arena.set(buf.subarray(s, e), this.used);
    this.off[i] = this.used;
    this.len[i] = n;
    this.quoted[i] = q;
    this.ids[i] = id;
    this.used += n;
    const h = NameTable.hash(buf, s, e);
    const list = this.buckets.get(h);
    if (list) list.push(i);
    else this.buckets.set(h, [i]);
    if (this.last >= 0) this.next[this.last] = i;
    this.last = i;
    return i;
  }
}

function fieldError(ctx: Ctx, row: CsvRow, i: number, names: string[], what: string, hint: string): never {
  throw new RowError('INPUT_INVALID', `${ctx.file}, line ${row.fieldLine[i] ?? row.line}, column ${i + 1} (${names[i] ?? '?'}): ${what}`, hint);
}

function textOf(row: CsvRow, i: number): string {
  const t = row.text(i);
  return t.length > 40 ? `${t.slice(0, 40)}...` : t;
}

function readDate(ctx: Ctx, row: CsvRow, i: number, names: string[]): number {
  const r = ctx.dates.parse(row.buf, row.start[i], row.end[i]);
  if (typeof r === 'string') {
    const text = textOf(row, i);
    const impossible = !r.startsWith('expected');
    fieldError(ctx, row, i, names, impossible ? `"${text}" is not a calendar date (${r})` : `"${text}" is not a date: ${r}`, impossible ? 'correct the date' : dateHint(text, ctx.dates.format));
  }
  if (r < ctx.first) ctx.first = r;
  if (r > ctx.last) ctx.last = r;
  return r;
}

/** The number in a cell; undefined where the cell is empty or a missing-value code. */
function readNumber(ctx: Ctx, row: CsvRow, i: number, names: string[], what: string): number | undefined {
  const v = ctx.reading.value(row, i);
  if (v !== undefined && Number.isNaN(v)) {
    fieldError(ctx, row, i, names, `"${textOf(row, i)}" ${ctx.reading.numberProblem(row.text(i))} (expected the ${what})`, ctx.reading.numberHint(row.text(i)));
  }
  return v;
}

function checkFieldCount(ctx: Ctx, row: CsvRow, header: number): void {
  if (row.count !== header) {
    throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: ${row.count} fields, but the header has ${header}`, 'every line needs one field per header column (quote fields that contain commas)');
  }
}

/** A bad value either rejects the row (within maxRejects) or ends the import. */
function rejectOrThrow(ctx: Ctx, e: unknown): void {
  if (!(e instanceof RowError) || ctx.rejected >= ctx.maxRejects) throw e;
  ctx.rejected++;
  ctx.sink.add({ kind: 'rejected-row', subject: '', message: `row skipped: ${e.message}` });
}

/** Runs one row; a bad value either rejects the row (within maxRejects) or ends the import. */
function guarded(ctx: Ctx, fn: () => void): void {
  try {
    fn();
  } catch (e) {
    rejectOrThrow(ctx, e);
  }
}

function checker(ctx: Ctx, id: number, name: string): HistoryChecker {
  let c = ctx.checkers.get(id);
  if (!c) {
    c = new HistoryChecker(name, ctx.thresholds, ctx.sink);
    ctx.checkers.set(id, c);
  }
  return c;
}

function ignoredColumns(ctx: Ctx, names: string[], used: Set<number>): void {
  const extra = names.filter((_, i) => !used.has(i));
  if (extra.length) ctx.sink.add({ kind: 'ignored-columns', subject: '', message: `${ctx.file}: column(s) ${extra.map((n) => `"${n}"`).join(', ')} not used (not a price-file column)` });
}

async function importLong(ctx: Ctx, options: PriceImportOptions, onProgress: ProgressCallback | undefined): Promise<void> {
  const want = (c: PriceColumn) => (options.columns?.[c] ?? c).toLowerCase();
  let names: string[] = [];
  let col: Record<PriceColumn, number> = { date: -1, asset: -1, price: -1, dividend: -1, adjust: -1, shares: -1 };
  let header = true;
  const seen = new NameTable();
  const { session } = ctx;
  /** One data row (a named function, not a closure per row: this runs millions of times). */
  const handle = (row: CsvRow): void => {
    checkFieldCount(ctx, row, names.length);
    const day = readDate(ctx, row, col.date, names);
    const a = col.asset;
    const slot = seen.find(row.buf, row.start[a], row.end[a], row.quoted[a]);
    const name = slot >= 0 ? '' : row.text(a).trim();
    if (slot < 0 && name === '') fieldError(ctx, row, a, names, 'the asset name is empty', 'name the asset on every row');
    if (slot < 0 && controlInName(name) >= 0) fieldError(ctx, row, a, names, `the asset name holds the control character ${codePoint(name, controlInName(name))}`, 'names may not hold control characters (a terminal would act on them): remove it');
    const price = readNumber(ctx, row, col.price, names, 'price');
    if (price === undefined) {
      // a missing-value code where the price stands: no observation on this row
      if (!row.blank(col.price)) return;
      fieldError(ctx, row, col.price, names, `"" is not a number (expected the price)`, 'every row of a long file needs a price; leave the row out when there is no price');
    }
    if (!(price > 0)) fieldError(ctx, row, col.price, names, `price ${price} is not positive`, 'prices must be greater than zero; leave the row out when there is no price');
    let dividend = 0;
    if (col.dividend >= 0) {
      const d = readNumber(ctx, row, col.dividend, names, 'dividend');
      if (d !== undefined) {
        dividend = d;
        if (dividend < 0) fieldError(ctx, row, col.dividend, names, `dividend ${dividend} is negative`, 'dividends are cash paid per share: zero or more');
        if (Object.is(dividend, -0)) dividend = 0;
      }
    }
    let adjust = 1;
    if (col.adjust >= 0) {
      const a = readNumber(ctx, row, col.adjust, names, 'adjustment factor');
      if (a !== undefined) {
        adjust = a;
        if (!(adjust > 0)) fieldError(ctx, row, col.adjust, names, `adjustment factor ${adjust} is not positive`, 'a 2-for-1 split has factor 2; leave the cell empty (or 1) where there is none');
      }
    }
    let shares: number | null = null;
    if (col.shares >= 0) {
      const sh = readNumber(ctx, row, col.shares, names, 'shares outstanding');
      if (sh !== undefined) {
        shares = sh;
        if (shares < 0) fieldError(ctx, row, col.shares, names, `shares outstanding ${shares} is negative`, 'shares outstanding must be zero or more');
      }
    }
    let id: number;
    if (slot >= 0) id = seen.ids[slot];
    else {
      id = session.assetId(name);
      checker(ctx, id, name);
      seen.add(row.buf, row.start[a], row.end[a], row.quoted[a], id);
    }
    const date = ctx.dates.text(day);
    session.observation(id, date, day, price, dividend, adjust, shares, ctx.file, row.line);
  };
  await ctx.reading.read(
    ctx.file,
    (row) => {
      if (header) {
        header = false;
        const h = readHeader(row, ctx.file, ctx.reading.delimiterName);
        names = h.names;
        const used = new Set<number>();
        for (const c of PRICE_COLUMNS) {
          const i = h.index.get(want(c));
          if (i === undefined) {
            if (c === 'date' || c === 'asset' || c === 'price' || options.columns?.[c]) {
              throw new DeflatorError(
                'INPUT_INVALID',
                `${ctx.file}, line ${row.line}: no "${options.columns?.[c] ?? c}" column in the header (${names.join(', ')})`,
                `a long price file needs date, asset and price columns (dividend, adjust, shares optional); map other names with the column options`,
              );
            }
          } else {
            col[c] = i;
            used.add(i);
          }
        }
        ignoredColumns(ctx, names, used);
        return;
      }
      ctx.read++;
      try {
        handle(row);
      } catch (e) {
        rejectOrThrow(ctx, e);
      }
    },
    { onProgress, hash: ctx.hash },
  );
  if (header) throw new DeflatorError('INPUT_INVALID', `${ctx.file} has no header line`, 'the first line must name the columns');
  session.flushObservations();
}

interface WideColumns {
  names: string[];
  dateCol: number;
  assets: { col: number; id: number; name: string }[];
}

function wideHeader(ctx: Ctx, row: CsvRow, dateName: string, what: string): { names: string[]; dateCol: number; assetCols: number[] } {
  const h = readHeader(row, ctx.file, ctx.reading.delimiterName);
  const dateCol = h.index.get(dateName.toLowerCase());
  if (dateCol === undefined) {
    throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: no "${dateName}" column in the header (${h.names.join(', ')})`, `a wide ${what} file needs a date column and one column per asset; map the date column's name with the date-column option`);
  }
  const assetCols = h.names.map((_, i) => i).filter((i) => i !== dateCol);
  if (assetCols.length === 0) throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: the header has no asset columns`, `add one ${what} column per asset after the date column`);
  return { names: h.names, dateCol, assetCols };
}

function orderCheck(ctx: Ctx, row: CsvRow, col: number, names: string[], day: number, prevDay: number): void {
  if (prevDay === -Infinity || day > prevDay) return;
  const what = day === prevDay ? `date ${ctx.dates.text(day)} appears twice` : `date ${ctx.dates.text(day)} comes after ${ctx.dates.text(prevDay)}: dates are out of order`;
  fieldError(ctx, row, col, names, what, 'a wide file needs one line per date, dates ascending');
}

async function importWide(ctx: Ctx, options: PriceImportOptions, onProgress: ProgressCallback | undefined): Promise<void> {
  const dateName = options.columns?.date ?? 'date';
  const { session } = ctx;
  let cols: WideColumns | null = null;
  let prevDay = -Infinity;
  await ctx.reading.read(
    ctx.file,
    (row) => {
      if (!cols) {
        const h = wideHeader(ctx, row, dateName, 'price');
        cols = { names: h.names, dateCol: h.dateCol, assets: h.assetCols.map((col) => ({ col, name: h.names[col], id: session.assetId(h.names[col]) })) };
        return;
      }
      const c = cols;
      ctx.read++;
      guarded(ctx, () => {
        checkFieldCount(ctx, row, c.names.length);
        const day = readDate(ctx, row, c.dateCol, c.names);
        orderCheck(ctx, row, c.dateCol, c.names, day, prevDay);
        prevDay = day;
        const date = ctx.dates.text(day);
        // validate the whole line before queueing any of it, so a rejected line stores nothing
        const prices: number[] = [];
        for (const a of c.assets) {
          const price = readNumber(ctx, row, a.col, c.names, `price of ${a.name}`);
          if (price === undefined) {
            prices.push(NaN);
            continue;
          }
          if (!(price > 0)) fieldError(ctx, row, a.col, c.names, `price ${price} is not positive`, 'prices must be greater than zero; leave the cell empty when there is no price');
          prices.push(price);
        }
        c.assets.forEach((a, k) => {
          const price = prices[k];
          if (Number.isNaN(price)) return;
          session.observation(a.id, date, day, price, 0, 1, null, ctx.file, row.line);
        });
      });
    },
    { onProgress, hash: ctx.hash },
  );
  if (!cols) throw new DeflatorError('INPUT_INVALID', `${ctx.file} has no header line`, 'the first line must name the columns');
  session.flushObservations();
}

/** Applies a wide dividends file to the rows this import stored. */
async function importWideDividends(ctx: Ctx, file: string, divHash: Hash, options: PriceImportOptions, onProgress: ProgressCallback | undefined): Promise<{ read: number; stored: number }> {
  const dateName = options.columns?.date ?? 'date';
  const { session } = ctx;
  const dctx: Ctx = { ...ctx, file, read: 0, hash: divHash };
  let cols: WideColumns | null = null;
  let prevDay = -Infinity;
  let stored = 0;
  await ctx.reading.read(
    file,
    (row) => {
      if (!cols) {
        const h = wideHeader(dctx, row, dateName, 'dividend');
        const assets = h.assetCols.map((col) => {
          const name = h.names[col];
          if (!ctx.checkers.has(session.assetId(name))) {
            throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}, column ${col + 1}: dividend column "${name}" has no price column in ${ctx.file}`, 'the dividends file may only have columns of assets in the prices file');
          }
          return { col, name, id: session.assetId(name) };
        });
        cols = { names: h.names, dateCol: h.dateCol, assets };
        return;
      }
      const c = cols;
      dctx.read++;
      guarded(dctx, () => {
        checkFieldCount(dctx, row, c.names.length);
        const day = readDate(dctx, row, c.dateCol, c.names);
        orderCheck(dctx, row, c.dateCol, c.names, day, prevDay);
        prevDay = day;
        const date = dctx.dates.text(day);
        for (const a of c.assets) {
          const d = readNumber(dctx, row, a.col, c.names, `dividend of ${a.name}`);
          if (d === undefined) continue;
          if (d < 0) fieldError(dctx, row, a.col, c.names, `dividend ${d} is negative`, 'dividends are cash paid per share: zero or more');
          if (d === 0) continue;
          if (!session.setDividend(a.id, date, d)) {
            fieldError(dctx, row, a.col, c.names, `a dividend of ${a.name} on ${date}, but ${ctx.file} has no price for ${a.name} on that date`, 'a dividend needs a price on its ex-date in the prices file');
          }
          stored++;
        }
      });
    },
    { onProgress, hash: dctx.hash },
  );
  if (!cols) throw new DeflatorError('INPUT_INVALID', `${file} has no header line`, 'the first line must name the columns');
  ctx.rejected = dctx.rejected;
  return { read: dctx.read, stored };
}

/**
 * Imports a price file (and, for the wide layout, its dividends file) into the store.
 * Returns 'already-imported' without touching anything when a file with the same bytes
 * was imported before.
 */
export async function importPrices(store: Store, file: string, options: PriceImportOptions = {}): Promise<ImportReport> {
  const started = performance.now();
  const layout = options.layout ?? 'long';
  if (layout !== 'long' && layout !== 'wide') throw new DeflatorError('INPUT_INVALID', `unknown layout "${String(layout)}"`, 'use long or wide');
  if (options.dividends && layout !== 'wide') throw new DeflatorError('INPUT_INVALID', 'a separate dividends file goes with the wide layout only', 'use --layout wide, or put a dividend column in the long file');
  const reading = new Reading(options);
  const dates = reading.dates;
  const thresholds: CheckThresholds = { ...DEFAULT_THRESHOLDS, ...options.thresholds };
  const maxRejects = options.maxRejects ?? 0;
  if (!(maxRejects >= 0)) throw new DeflatorError('INPUT_INVALID', `maximum rejected rows must be zero or more, not ${maxRejects}`, 'pass a count of rows');

  const total = fileSize(file) + (options.dividends ? fileSize(options.dividends) : 0);
  let done = 0;
  const progress = options.onProgress;
  const onProgress: ProgressCallback | undefined = progress ? (read) => progress(done + read, total) : undefined;

  const session = new ImportSession(store);
  session.replace = options.replace === true;
  const sink = new WarningSink();
  const ctx: Ctx = { file, hash: createHash('sha256'), session, reading, dates, thresholds, sink, checkers: new Map(), maxRejects, rejected: 0, read: 0, first: Infinity, last: -Infinity };
  const divHash = createHash('sha256');
  /**
   * The earlier import of these same bytes read the same way, if any (then this import is
   * not needed); bytes read another way are refused (or, with replace, taken out first).
   */
  const earlier = (sha256: string, divSha: string | undefined, refuseDiffering: boolean): ImportReport | undefined => {
    const e = earlierImports(store, sha256, 'prices', recorded);
    const before = e.same;
    if (!before) {
      if (refuseDiffering && e.differing.length) throw readDifferentlyError(file, e.differing);
      return undefined;
    }
    if (divSha && !store.findImport(divSha, 'dividends')) {
      throw new DeflatorError('CONFLICT', `${file} was already imported (${before.importedAt}) with another dividends file than ${options.dividends}`, `take the earlier import out with \`deflator import remove ${before.id} --db DB\`, then import both files again`);
    }
    return alreadyImported(file, sha256, before, started);
  };
  // the checks see each asset's rows in file order as the session writes them
  let hookId = -1;
  let hookChecker: HistoryChecker | null = null;
  session.rowHook = (id, date, day, price, dividend, adjust, line, file) => {
    if (id !== hookId || !hookChecker) {
      hookChecker = checker(ctx, id, session.assetName(id));
      hookId = id;
    }
    hookChecker.push(date, day, price, dividend, adjust, { file, line });
  };
  const recorded = {
    layout,
    ...(options.columns ? { columns: options.columns } : {}),
    ...reading.record(),
    thresholds,
    maxRejects,
    ...(options.dividends ? { dividends: logName(options.dividends) } : {}),
    ...(options.replace ? { replace: true } : {}),
  };
  // replace mode: the same bytes imported before are found first (read the same way:
  // nothing to do; read another way: taken out in this import's transaction)
  let differing: ReturnType<typeof earlierImports>['differing'] = [];
  if (options.replace) {
    const e = earlierImports(store, await sha256File(file), 'prices', recorded);
    if (e.same) {
      const again = earlier(e.same.sha256, options.dividends ? await sha256File(options.dividends) : undefined, false);
      if (again) return again;
    }
    differing = e.differing;
  }
  try {
    // the file's SHA-256 is computed as it is read; the log entry gets it at the end
    const logId = session.begin({ fileName: logName(file), sha256: '', kind: 'prices', options: recorded });
    const takenOut = takeOutDiffering(store, differing);
    if (layout === 'long') await importLong(ctx, options, onProgress);
    else await importWide(ctx, options, onProgress);
    if (ctx.read === 0) throw new DeflatorError('INPUT_INVALID', `${file} has a header but no data rows`, 'add data rows below the header');
    const priceRows = session.rowsStored;
    const priceRejected = ctx.rejected;
    let divLog = 0;
    let divRead = 0;
    let divStored = 0;
    if (options.dividends) {
      done = fileSize(file);
      divLog = session.addLog({ fileName: logName(options.dividends), sha256: '', kind: 'dividends', options: { layout: 'wide', prices: logName(file) } });
      const d = await importWideDividends(ctx, options.dividends, divHash, options, onProgress);
      divRead = d.read;
      divStored = d.stored;
    }
    const sha256 = ctx.hash.digest('hex');
    const divSha = options.dividends ? divHash.digest('hex') : undefined;
    const again = earlier(sha256, divSha, true);
    if (again) {
      session.rollback();
      return again;
    }
    session.setLogHash(logId, sha256);
    if (divLog && divSha) session.setLogHash(divLog, divSha);
    // checks: re-read the stored rows of assets whose rows came out of order, that had rows
    // before this import, or that got dividends from a second file
    for (const [id, c] of ctx.checkers) {
      if (c.unordered || session.preexisting.has(id) || options.dividends) {
        const fresh = new HistoryChecker(c.subject, thresholds, sink);
        for (const r of session.storedHistory(id)) fresh.push(r[0], r[1], r[2], r[3], r[4]);
        ctx.checkers.set(id, fresh);
      }
    }
    const frequency = detectFrequency(ctx.checkers.values());
    for (const c of ctx.checkers.values()) c.finish(frequency);
    const settled = session.settleReplaced();
    const warnings: ImportWarning[] = [...takenOut.warnings, ...settled.warnings, ...sink.final()];
    session.finishLog(logId, { read: ctx.read, stored: priceRows, rejected: priceRejected }, warnings);
    if (divLog) session.finishLog(divLog, { read: divRead, stored: divStored, rejected: ctx.rejected - priceRejected }, []);
    session.commit();
    const subjects = [...ctx.checkers.values()].map((c) => c.subject).sort();
    return {
      status: 'imported', file, sha256, kind: 'prices', importId: logId, rowsRead: ctx.read, rowsStored: priceRows, rowsRejected: ctx.rejected, subjects, frequency,
      first: Number.isFinite(ctx.first) ? dates.text(ctx.first) : null, last: Number.isFinite(ctx.last) ? dates.text(ctx.last) : null, warnings,
      ...(options.replace ? { replaced: [...takenOut.replaced, ...settled.replaced] } : {}), seconds: (performance.now() - started) / 1000,
    };
  } catch (e) {
    session.rollback();
    // bytes imported before usually clash with their own rows: say "already imported" instead
    if (isDeflatorError(e)) {
      const hashes = await Promise.all([sha256File(file), options.dividends ? sha256File(options.dividends) : undefined]).catch(() => null);
      const again = hashes && earlier(hashes[0], hashes[1], !options.replace);
      if (again) return again;
    }
    throw e;
  }
}
