/**
 * Return import (METHODS section 8): test assets (or any asset) that arrive as returns,
 * not prices. Wide layout: a date column and one return column per asset; long layout:
 * one row per (date, asset) with a return column. Each return is stored as written, with
 * the file's form (net, gross, log), units (decimal, percent) and whether the returns are
 * excess returns; a missing-value code or an empty cell is a gap (stored as NULL between
 * an asset's first and last return), never a zero. Dates may be calendar dates or period
 * keys (YYYYMM, YYYY-MM, YYYYQn, YYYY-Qn, YYYY: the period's last calendar day).
 * One transaction: any error stores nothing.
 */
import { createHash, type Hash } from 'node:crypto';
import { RETURN_FORMS, VALUE_UNITS, type ReturnForm, type ValueUnits } from '../../shared/data.js';
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';
import { grossOf, netOf, returnProblem } from '../../shared/returns/stored-returns.js';
import { isoDayNumber } from '../data/calendar.js';
import { ImportSession } from '../store/session.js';
import type { ImportWarning, Store } from '../store/store.js';
import { HistoryChecker, WarningSink, detectFrequency } from './checks.js';
import { codePoint, controlInName, importLogCheck, sha256File, fileSize, logName, readHeader, takeOutDiffering, type ImportReport, type ProgressCallback } from './common.js';
import type { CsvRow } from './csv.js';
import { dateHint } from './fields.js';
import { Reading, type ReadingOptions } from './reading.js';

export const RETURN_COLUMNS = ['date', 'asset', 'return'] as const;
export type ReturnColumn = (typeof RETURN_COLUMNS)[number];

export interface ReturnImportOptions extends ReadingOptions {
  /** wide (default): a date column and one column per asset; long: date, asset, return columns. */
  layout?: 'wide' | 'long';
  /** Column names when they differ from date, asset, return (matched case-insensitively). */
  columns?: Partial<Record<ReturnColumn, string>>;
  /** How each return is written: net r (default), gross R = 1 + r, or log ln R. */
  form?: ReturnForm;
  /** decimal (default) or percent. */
  units?: ValueUnits;
  /** The file holds excess returns R^e = R - R^f already. */
  excess?: boolean;
  /** Warn when a one-period return is beyond this in absolute value (decimal; default 0.5 = 50 %). */
  maxReturn?: number;
  /** Rows with a bad value to skip (each listed as a warning) before the import fails; default 0. */
  maxRejects?: number;
  /** Rows whose (asset, date) is stored from an earlier import replace them, in the same transaction. */
  replace?: boolean;
  onProgress?: ProgressCallback;
}

export const DEFAULT_MAX_RETURN = 0.5;

class RowError extends DeflatorError {}

interface Ctx {
  file: string;
  /** SHA-256 of the file, fed as it is read. */
  hash: Hash;
  reading: Reading;
  session: ImportSession;
  form: ReturnForm;
  units: ValueUnits;
  excess: boolean;
  sink: WarningSink;
  maxRejects: number;
  rejected: number;
  read: number;
  first: number;
  last: number;
  /** Asset ids in the order first seen. */
  assets: Map<number, string>;
}

const clip = (t: string) => (t.length > 40 ? `${t.slice(0, 40)}...` : t);

function fieldError(ctx: Ctx, row: CsvRow, i: number, names: string[], what: string, hint: string): never {
  throw new RowError('INPUT_INVALID', `${ctx.file}, line ${row.fieldLine[i] ?? row.line}, column ${i + 1} (${names[i] ?? '?'}): ${what}`, hint);
}

function checkFieldCount(ctx: Ctx, row: CsvRow, header: number): void {
  if (row.count !== header) {
    throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: ${row.count} fields, but the header has ${header}`, `every line needs one field per header column (quote fields that contain the delimiter)`);
  }
}

function readDate(ctx: Ctx, row: CsvRow, i: number, names: string[]): number {
  const dates = ctx.reading.dates;
  const r = dates.parse(row.buf, row.start[i], row.end[i]);
  if (typeof r === 'string') {
    const text = clip(row.text(i));
    const impossible = !r.startsWith('expected');
    fieldError(ctx, row, i, names, impossible ? `"${text}" is not a calendar date or period (${r})` : `"${text}" is not a date: ${r}`, impossible ? 'correct the date' : dateHint(text, dates.format));
  }
  if (r < ctx.first) ctx.first = r;
  if (r > ctx.last) ctx.last = r;
  return r;
}

/**
 * One return cell: the number as written, or null for a missing value (empty cell or a
 * missing-value code). A value that is not a number, or a return not above -100 %, is an
 * error naming the cell.
 */
function readReturn(ctx: Ctx, row: CsvRow, i: number, names: string[]): number | null {
  const v = ctx.reading.value(row, i);
  if (v === undefined) return null;
  const text = row.text(i);
  if (Number.isNaN(v)) fieldError(ctx, row, i, names, `"${clip(text)}" ${ctx.reading.numberProblem(text)} (expected a return${ctx.reading.missingCodes.length ? `, or a missing-value code: ${ctx.reading.missingCodes.join(', ')}` : ''})`, ctx.reading.numberHint(text));
  const suspect = ctx.reading.suspectedCode(v);
  if (suspect) fieldError(ctx, row, i, names, suspect.what, suspect.hint);
  const problem = returnProblem(v, ctx.form, ctx.units);
  if (problem) {
    const usual = ctx.reading.usualCodeHint(v);
    const percent = ctx.units === 'decimal' && returnProblem(v, ctx.form, 'percent') === null;
    const hint = usual ?? (percent ? `the file looks like percent (${v} % would be a return of ${Number((netOf(v, ctx.form, 'percent') * 100).toPrecision(6))} %): pass --units percent` : 'check the value, and the --form and --units of the file');
    fieldError(ctx, row, i, names, problem, hint);
  }
  return v;
}

/** A bad value either rejects the row (within maxRejects) or ends the import. */
function guarded(ctx: Ctx, fn: () => void): void {
  try {
    fn();
  } catch (e) {
    if (!(e instanceof RowError) || ctx.rejected >= ctx.maxRejects) throw e;
    ctx.rejected++;
    ctx.sink.add({ kind: 'rejected-row', subject: '', message: `row skipped: ${e.message}` });
  }
}

async function importWide(ctx: Ctx, options: ReturnImportOptions, onProgress: ProgressCallback | undefined): Promise<void> {
  const dateName = options.columns?.date ?? 'date';
  const { session, reading } = ctx;
  let names: string[] | null = null;
  let dateCol = -1;
  let cols: { col: number; id: number }[] = [];
  let prevDay = -Infinity;
  let prevText = '';
  const meta = { form: ctx.form, units: ctx.units, excess: ctx.excess };
  await reading.read(
    ctx.file,
    (row) => {
      if (!names) {
        const h = readHeader(row, ctx.file, reading.delimiterName);
        const dc = h.index.get(dateName.toLowerCase());
        if (dc === undefined) {
          throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: no "${dateName}" column in the header (${h.names.join(', ')})`, 'a wide return file needs a date column and one return column per asset; name the date column with --date-column');
        }
        names = h.names;
        dateCol = dc;
        cols = h.names
          .map((_, col) => col)
          .filter((col) => col !== dc)
          .map((col) => {
            const id = session.returnAssetId(h.names[col], meta, { file: ctx.file, line: row.line, column: col + 1 });
            ctx.assets.set(id, h.names[col]);
            return { col, id };
          });
        if (cols.length === 0) throw new DeflatorError('INPUT_INVALID', `${ctx.file}, line ${row.line}: the header has no asset columns`, 'add one return column per asset after the date column');
        return;
      }
      const n = names;
      ctx.read++;
      guarded(ctx, () => {
        checkFieldCount(ctx, row, n.length);
        const day = readDate(ctx, row, dateCol, n);
        if (day <= prevDay) {
          const text = clip(row.text(dateCol));
          fieldError(
            ctx,
            row,
            dateCol,
            n,
            day === prevDay ? `period ${text} (${reading.dates.text(day)}) appears twice (also "${prevText}" on the line before)` : `period ${text} (${reading.dates.text(day)}) comes after ${reading.dates.text(prevDay)}: dates are out of order`,
            'a wide file needs one line per period, dates ascending',
          );
        }
        // validate the whole line before queueing any of it, so a rejected line stores nothing
        const values = cols.map((c) => readReturn(ctx, row, c.col, n));
        prevDay = day;
        prevText = clip(row.text(dateCol));
        const date = reading.dates.text(day);
        for (let k = 0; k < cols.length; k++) session.returnValue(cols[k].id, date, values[k], { file: ctx.file, line: row.line });
      });
    },
    { onProgress, hash: ctx.hash },
  );
  if (!names) throw new DeflatorError('INPUT_INVALID', `${ctx.file} has no header line`, 'the first line must name the columns');
}

async function importLong(ctx: Ctx, options: ReturnImportOptions, onProgress: ProgressCallback | undefined): Promise<void> {
  const want = (c: ReturnColumn) => (options.columns?.[c] ?? c).toLowerCase();
  const { session, reading } = ctx;
  let names: string[] | null = null;
  const col: Record<ReturnColumn, number> = { date: -1, asset: -1, return: -1 };
  const ids = new Map<string, number>();
  const meta = { form: ctx.form, units: ctx.units, excess: ctx.excess };
  await reading.read(
    ctx.file,
    (row) => {
      if (!names) {
        const h = readHeader(row, ctx.file, reading.delimiterName);
        for (const c of RETURN_COLUMNS) {
          const i = h.index.get(want(c));
          if (i === undefined) {
            throw new DeflatorError(
              'INPUT_INVALID',
              `${ctx.file}, line ${row.line}: no "${options.columns?.[c] ?? c}" column in the header (${h.names.join(', ')})`,
              'a long return file needs date, asset and return columns; map other names with --date-column, --asset-column, --return-column',
            );
          }
          col[c] = i;
        }
        const extra = h.names.filter((_, i) => i !== col.date && i !== col.asset && i !== col.return);
        if (extra.length) ctx.sink.add({ kind: 'ignored-columns', subject: '', message: `${ctx.file}: column(s) ${extra.map((x) => `"${x}"`).join(', ')} not used (not a return-file column)` });
        names = h.names;
        return;
      }
      const n = names;
      ctx.read++;
      guarded(ctx, () => {
        checkFieldCount(ctx, row, n.length);
        const day = readDate(ctx, row, col.date, n);
        const name = row.text(col.asset).trim();
        if (name === '') fieldError(ctx, row, col.asset, n, 'the asset name is empty', 'name the asset on every row');
        const control = controlInName(name);
        if (control >= 0) fieldError(ctx, row, col.asset, n, `the asset name holds the control character ${codePoint(name, control)}`, 'names may not hold control characters (a terminal would act on them): remove it');
        const value = readReturn(ctx, row, col.return, n);
        let id = ids.get(name);
        if (id === undefined) {
          id = session.returnAssetId(name, meta, { file: ctx.file, line: row.line, column: col.asset + 1 });
          ids.set(name, id);
          ctx.assets.set(id, name);
        }
        session.returnValue(id, reading.dates.text(day), value, { file: ctx.file, line: row.line });
      });
    },
    { onProgress, hash: ctx.hash },
  );
  if (!names) throw new DeflatorError('INPUT_INVALID', `${ctx.file} has no header line`, 'the first line must name the columns');
}

const pct = (x: number) => `${(x * 100).toFixed(1)} %`;

/**
 * Warnings over the stored rows of every asset this import touched (in date order, the
 * earlier imports' rows included): gaps in the dates, periods with a missing value,
 * returns beyond the threshold, and units that look wrong (common practice, our own
 * thresholds: decimal files whose returns are mostly beyond 20 % look like percent;
 * percent files whose returns are mostly within 0.05 % look like decimals).
 */
function storedChecks(store: Store, ctx: Ctx, maxReturn: number): HistoryChecker[] {
  const rows = store.db.prepare('SELECT date, value, import_id FROM return_observation WHERE asset_id = ? ORDER BY date').raw();
  const checkers: HistoryChecker[] = [];
  let ours = 0;
  let large = 0;
  let tiny = 0;
  for (const [id, name] of ctx.assets) {
    const c = new HistoryChecker(name, null, ctx.sink);
    const missing: string[] = [];
    let prev = '';
    for (const [date, value, importId] of rows.iterate(id) as Iterable<[string, number | null, number]>) {
      if (value === null) {
        missing.push(date);
        continue;
      }
      c.pushDate(date, isoDayNumber(date));
      const r = netOf(value, ctx.form, ctx.units);
      if (importId === ctx.session.importId) {
        ours++;
        if (Math.abs(r) > 0.2) large++;
        if (Math.abs(r) < 0.0005) tiny++;
      }
      if (Math.abs(grossOf(value, ctx.form, ctx.units) - 1) > maxReturn) {
        ctx.sink.add({ kind: 'large-return', subject: name, from: prev || date, to: date, message: `${name}: return ${pct(r)} in the period ending ${date} (beyond ${pct(maxReturn)}; check the units and form)` });
      }
      prev = date;
    }
    if (missing.length) {
      const shown = missing.slice(0, 8).join(', ');
      ctx.sink.add({ kind: 'missing', subject: name, from: missing[0], to: missing[missing.length - 1], message: `${name}: ${missing.length} period${missing.length === 1 ? '' : 's'} without a return (missing values, kept as gaps, not zeros): ${shown}${missing.length > 8 ? ', ...' : ''}` });
    }
    checkers.push(c);
  }
  if (ours >= 10 && ctx.units === 'decimal' && large > ours / 2) {
    ctx.sink.add({ kind: 'small-returns', subject: '', message: `${ctx.file}: ${large} of ${ours} returns are beyond 20 % in absolute value: the file looks like percent; if so, import it again with --units percent --replace` });
  }
  if (ours >= 10 && ctx.units === 'percent' && tiny > ours / 2) {
    ctx.sink.add({ kind: 'small-returns', subject: '', message: `${ctx.file}: ${tiny} of ${ours} returns are within 0.05 % in absolute value: the file looks like decimals; if so, import it again with --units decimal --replace` });
  }
  return checkers;
}

/**
 * Imports a return file into the store. Returns 'already-imported' without touching
 * anything when the same bytes were imported before and read the same way; the same
 * bytes read another way are refused, or with `replace` taken out first.
 */
export async function importReturns(store: Store, file: string, options: ReturnImportOptions = {}): Promise<ImportReport> {
  const started = performance.now();
  const layout = options.layout ?? 'wide';
  if (layout !== 'long' && layout !== 'wide') throw new DeflatorError('INPUT_INVALID', `unknown layout "${String(layout)}"`, 'use wide or long');
  const form = options.form ?? 'net';
  if (!(RETURN_FORMS as readonly string[]).includes(form)) throw new DeflatorError('INPUT_INVALID', `unknown return form "${String(form)}"`, `use one of ${RETURN_FORMS.join(', ')}`);
  const units = options.units ?? 'decimal';
  if (!(VALUE_UNITS as readonly string[]).includes(units)) throw new DeflatorError('INPUT_INVALID', `unknown units "${String(units)}"`, `use one of ${VALUE_UNITS.join(', ')}`);
  const maxRejects = options.maxRejects ?? 0;
  if (!(maxRejects >= 0)) throw new DeflatorError('INPUT_INVALID', `maximum rejected rows must be zero or more, not ${maxRejects}`, 'pass a count of rows');
  const maxReturn = options.maxReturn ?? DEFAULT_MAX_RETURN;
  if (!(maxReturn > 0)) throw new DeflatorError('INPUT_INVALID', `the large-return threshold must be positive, not ${maxReturn}`, 'pass a fraction such as 0.5');
  const reading = new Reading(options);
  const excess = options.excess === true;
  const recorded = {
    layout,
    ...(options.columns && Object.keys(options.columns).length ? { columns: options.columns } : {}),
    form,
    units,
    ...(excess ? { excess: true } : {}),
    ...reading.record(),
    maxReturn,
    maxRejects,
    ...(options.replace ? { replace: true } : {}),
  };
  const total = fileSize(file);
  const progress = options.onProgress;
  const onProgress: ProgressCallback | undefined = progress ? (read) => progress(read, total) : undefined;
  const { earlier, done, differing } = await importLogCheck(store, file, 'returns', recorded, started, options.replace === true);
  if (done) return done;

  const session = new ImportSession(store);
  session.replace = options.replace === true;
  const sink = new WarningSink();
  const hash = createHash('sha256');
  const ctx: Ctx = { file, hash, reading, session, form, units, excess, sink, maxRejects, rejected: 0, read: 0, first: Infinity, last: -Infinity, assets: new Map() };
  try {
    const logId = session.begin({ fileName: logName(file), sha256: '', kind: 'returns', options: recorded });
    const takenOut = takeOutDiffering(store, differing);
    if (layout === 'wide') await importWide(ctx, options, onProgress);
    else await importLong(ctx, options, onProgress);
    if (ctx.read === 0) throw new DeflatorError('INPUT_INVALID', `${file} has a header but no data rows`, 'add data rows below the header');
    const trimmed = session.trimReturns(file);
    const sha256 = hash.digest('hex');
    const again = earlier(sha256, true);
    if (again) {
      session.rollback();
      return again;
    }
    session.setLogHash(logId, sha256);
    for (const name of trimmed.emptyAssets) {
      for (const [id, n] of ctx.assets) if (n === name) ctx.assets.delete(id);
      sink.add({ kind: 'ignored-columns', subject: name, message: `${name}: no return in the file (every cell empty or a missing-value code): not stored` });
    }
    if (ctx.assets.size === 0) throw new DeflatorError('INPUT_INVALID', `${file}: no asset has a return (every cell is empty or a missing-value code)`, 'check the file and the --missing codes');
    const checkers = storedChecks(store, ctx, maxReturn);
    const frequency = detectFrequency(checkers);
    for (const c of checkers) c.finish(frequency);
    const settled = session.settleReplaced();
    const warnings: ImportWarning[] = [...takenOut.warnings, ...settled.warnings, ...sink.final()];
    session.finishLog(logId, { read: ctx.read, stored: session.rowsStored, rejected: ctx.rejected }, warnings);
    session.commit();
    return {
      status: 'imported', file, sha256, kind: 'returns', importId: logId, rowsRead: ctx.read, rowsStored: session.rowsStored, rowsRejected: ctx.rejected,
      subjects: [...ctx.assets.values()], frequency,
      first: Number.isFinite(ctx.first) ? reading.dates.text(ctx.first) : null, last: Number.isFinite(ctx.last) ? reading.dates.text(ctx.last) : null, warnings,
      ...(options.replace ? { replaced: [...takenOut.replaced, ...settled.replaced] } : {}), seconds: (performance.now() - started) / 1000,
    };
  } catch (e) {
    session.rollback();
    // bytes imported before usually clash with their own rows: say so instead
    if (isDeflatorError(e)) {
      const sha = await sha256File(file).catch(() => undefined);
      const again = sha === undefined ? undefined : earlier(sha, !options.replace);
      if (again) return again;
    }
    throw e;
  }
}
