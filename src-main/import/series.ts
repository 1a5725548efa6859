/**
 * Named-series import: a wide CSV (a date column, then one column per series) of factor,
 * risk-free, consumption or other series. Percent units are divided by 100 on the way in;
 * the risk-free form (per-period rate, annualized yield of some compounding, account
 * level, flow) is stored with the series so the returns engine converts it (METHODS 1).
 * One transaction: any error stores nothing.
 */
import { createHash } from 'node:crypto';
import { RF_FORMS, SERIES_KINDS, type RiskfreeForm, type SeriesKind } from '../../shared/data.js';
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';
import { ImportSession } from '../store/session.js';
import type { Store } from '../store/store.js';
import { HistoryChecker, WarningSink, detectFrequency } from './checks.js';
import { importLogCheck, sha256File, fileSize, logName, readHeader, takeOutDiffering, type ImportReport, type ProgressCallback } from './common.js';
import { dateHint } from './fields.js';
import { Reading, type ReadingOptions } from './reading.js';

export const UNITS = ['decimal', 'percent'] as const;
export type Units = (typeof UNITS)[number];

export interface SeriesImportOptions extends ReadingOptions {
  kind: SeriesKind;
  units?: Units;
  /** Risk-free series only; default 'rate' (a per-period rate). */
  rfForm?: RiskfreeForm;
  /** Name of the date column (default "date", matched case-insensitively). */
  dateColumn?: string;
  /** Values whose (series, date) is stored from an earlier import replace them, in the same transaction (a corrected file). */
  replace?: boolean;
  onProgress?: ProgressCallback;
}

/** Which values make sense for a series of this kind and form (in decimals). */
/** A consumption level's plausible magnitude (common practice, not a standard): indices near 100, amounts per person, national totals up to about 1e14 in any currency. */
const PLAUSIBLE_LEVEL = [1e-6, 1e15] as const;
/** Warn when consumption changes by more than this in one period (decimal). */
const MAX_LEVEL_CHANGE = 0.5;

interface LevelState {
  last: number;
  lastDate: string;
  flagged: boolean;
}

function valueProblem(kind: SeriesKind, rfForm: RiskfreeForm | null, v: number): string | null {
  if (kind === 'consumption' && !(v > 0)) return `a consumption level must be positive, not ${v}`;
  if (kind === 'riskfree' && rfForm === 'account' && !(v > 0)) return `an account level must be positive, not ${v}`;
  if (kind === 'riskfree' && rfForm !== 'account' && !(v > -1)) return `a risk-free rate or yield of ${v} (decimal) would lose all the money; check the units`;
  return null;
}

export async function importSeries(store: Store, file: string, options: SeriesImportOptions): Promise<ImportReport> {
  const started = performance.now();
  const kind = options.kind;
  if (!(SERIES_KINDS as readonly string[]).includes(kind)) throw new DeflatorError('INPUT_INVALID', `unknown series kind "${String(kind)}"`, `use one of ${SERIES_KINDS.join(', ')}`);
  const units: Units = options.units ?? 'decimal';
  if (!(UNITS as readonly string[]).includes(units)) throw new DeflatorError('INPUT_INVALID', `unknown units "${String(units)}"`, 'use decimal or percent');
  if (options.rfForm !== undefined && kind !== 'riskfree') throw new DeflatorError('INPUT_INVALID', `a risk-free form was given for a ${kind} series`, 'the risk-free form applies to --kind riskfree only');
  const rfForm: RiskfreeForm | null = kind === 'riskfree' ? (options.rfForm ?? 'rate') : null;
  if (rfForm !== null && !(RF_FORMS as readonly string[]).includes(rfForm)) throw new DeflatorError('INPUT_INVALID', `unknown risk-free form "${rfForm}"`, `use one of ${RF_FORMS.join(', ')}`);
  const reading = new Reading(options);
  const dates = reading.dates;
  const dateName = (options.dateColumn ?? 'date').toLowerCase();
  const recorded = {
    kind,
    units,
    ...(rfForm ? { rfForm } : {}),
    ...(options.dateColumn ? { dateColumn: options.dateColumn } : {}),
    ...reading.record(),
    ...(options.replace ? { replace: true } : {}),
  };

  const { earlier, done, differing } = await importLogCheck(store, file, 'series', recorded, started, options.replace === true);
  if (done) return done;
  const hash = createHash('sha256');
  const total = fileSize(file);
  const progress = options.onProgress;
  const session = new ImportSession(store);
  session.replace = options.replace === true;
  const sink = new WarningSink();
  const checkers: HistoryChecker[] = [];
  let names: string[] = [];
  let dateCol = -1;
  let columns: ({ col: number; id: number; checker: HistoryChecker } & LevelState)[] = [];
  let header = true;
  let read = 0;
  let prevDay = -Infinity;
  let first = Infinity;
  let last = -Infinity;
  const scale = units === 'percent' ? 100 : 1;
  // levels (consumption, a risk-free account): what matters is the growth from one date to the next
  const levels = kind === 'consumption' || rfForm === 'account';
  const levelCheck = (c: LevelState & { col: number }, name: string, v: number, date: string, where: (col: number) => string): void => {
    if (c.last > 0) {
      const g = v / c.last;
      if (!(Number.isFinite(g) && g > 0)) {
        throw new DeflatorError('INPUT_INVALID', `${where(c.col)}: ${name} goes from ${c.last} on ${c.lastDate} to ${v}, a growth factor of ${g}: beyond the range of a double`, 'check the values: their units or scale changed, or a value is misplaced by many powers of ten');
      }
      if (kind === 'consumption' && Math.abs(g - 1) > MAX_LEVEL_CHANGE) {
        sink.add({ kind: 'large-return', subject: name, from: c.lastDate, to: date, message: `${name}: consumption changes by ${((g - 1) * 100).toFixed(1)}% from ${c.lastDate} to ${date} (beyond ${MAX_LEVEL_CHANGE * 100}% in one period; did the units change?)` });
      }
    }
    if (kind === 'consumption' && !c.flagged && (v < PLAUSIBLE_LEVEL[0] || v > PLAUSIBLE_LEVEL[1])) {
      c.flagged = true;
      sink.add({ kind: 'implausible-level', subject: name, from: date, to: date, message: `${name}: a consumption level of ${v} on ${date} is outside ${PLAUSIBLE_LEVEL[0].toExponential()} to ${PLAUSIBLE_LEVEL[1].toExponential()} (an index, an amount per person or a national total is inside); check the units and the column` });
    }
    c.last = v;
    c.lastDate = date;
  };
  try {
    const logId = session.begin({ fileName: logName(file), sha256: '', kind: 'series', options: recorded });
    const takenOut = takeOutDiffering(store, differing);
    await reading.read(
      file,
      (row) => {
        const where = (i: number) => `${file}, line ${row.fieldLine[i] ?? row.line}, column ${i + 1} (${names[i] ?? '?'})`;
        if (header) {
          header = false;
          const h = readHeader(row, file, reading.delimiterName);
          names = h.names;
          const dc = h.index.get(dateName);
          if (dc === undefined) {
            throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}: no "${options.dateColumn ?? 'date'}" column in the header (${names.join(', ')})`, 'a series file needs a date column and one column per series; name the date column with the date-column option');
          }
          dateCol = dc;
          columns = names
            .map((name, col) => ({ name, col }))
            .filter((c) => c.col !== dateCol)
            .map((c) => {
              const checker = new HistoryChecker(c.name, null, sink);
              checkers.push(checker);
              return { col: c.col, id: session.seriesId(c.name, kind, units, rfForm, { file, line: row.line }), checker, last: NaN, lastDate: '', flagged: false };
            });
          if (columns.length === 0) throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}: the header has no series columns`, 'add one column per series after the date column');
          return;
        }
        read++;
        if (row.count !== names.length) {
          throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}: ${row.count} fields, but the header has ${names.length}`, 'every line needs one field per header column (quote fields that contain commas)');
        }
        const day = dates.parse(row.buf, row.start[dateCol], row.end[dateCol]);
        if (typeof day === 'string') {
          const text = row.text(dateCol);
          const impossible = !day.startsWith('expected');
          throw new DeflatorError('INPUT_INVALID', `${where(dateCol)}: "${text}" is not ${impossible ? `a calendar date (${day})` : `a date: ${day}`}`, impossible ? 'correct the date' : dateHint(text, dates.format));
        }
        if (day <= prevDay) {
          throw new DeflatorError(
            'INPUT_INVALID',
            `${where(dateCol)}: ${day === prevDay ? `date ${dates.text(day)} appears twice` : `date ${dates.text(day)} comes after ${dates.text(prevDay)}: dates are out of order`}`,
            'a series file needs one line per date, dates ascending',
          );
        }
        prevDay = day;
        if (day < first) first = day;
        if (day > last) last = day;
        const date = dates.text(day);
        for (const c of columns) {
          const raw = reading.value(row, c.col);
          if (raw === undefined) continue;
          if (Number.isNaN(raw)) {
            const text = row.text(c.col);
            throw new DeflatorError('INPUT_INVALID', `${where(c.col)}: "${text.length > 40 ? `${text.slice(0, 40)}...` : text}" ${reading.numberProblem(text)}`, reading.numberHint(text));
          }
          const suspect = reading.suspectedCode(raw);
          if (suspect) throw new DeflatorError('INPUT_INVALID', `${where(c.col)}: ${suspect.what}`, suspect.hint);
          const v = raw / scale;
          const problem = valueProblem(kind, rfForm, v);
          if (problem) throw new DeflatorError('INPUT_INVALID', `${where(c.col)}: ${problem}`, reading.usualCodeHint(raw) ?? 'check the value and the --kind/--units/--rf-form options');
          if (levels) levelCheck(c, names[c.col], v, date, where);
          session.seriesValue(c.id, names[c.col], date, v, { file, line: row.line });
          c.checker.pushDate(date, day);
        }
      },
      { onProgress: progress ? (n) => progress(n, total) : undefined, hash },
    );
    if (header) throw new DeflatorError('INPUT_INVALID', `${file} has no header line`, 'the first line must name the columns');
    if (read === 0) throw new DeflatorError('INPUT_INVALID', `${file} has a header but no data rows`, 'add data rows below the header');
    session.flushSeries(file);
    const sha256 = hash.digest('hex');
    const again = earlier(sha256, true);
    if (again) {
      session.rollback();
      return again;
    }
    session.setLogHash(logId, sha256);
    const frequency = detectFrequency(checkers);
    for (const c of checkers) c.finish(frequency);
    const settled = session.settleReplaced();
    const warnings = [...takenOut.warnings, ...settled.warnings, ...sink.final()];
    session.finishLog(logId, { read, stored: session.rowsStored, rejected: 0 }, warnings);
    session.commit();
    return {
      status: 'imported', file, sha256, kind: 'series', importId: logId, rowsRead: read, rowsStored: session.rowsStored, rowsRejected: 0, subjects: columns.map((c) => names[c.col]),
      frequency, first: Number.isFinite(first) ? dates.text(first) : null, last: Number.isFinite(last) ? dates.text(last) : null, warnings,
      ...(options.replace ? { replaced: [...takenOut.replaced, ...settled.replaced] } : {}), seconds: (performance.now() - started) / 1000,
    };
  } catch (e) {
    session.rollback();
    // bytes imported before usually clash with their own rows: say "already imported" instead
    if (isDeflatorError(e)) {
      const sha = await sha256File(file).catch(() => undefined);
      const again = sha === undefined ? undefined : earlier(sha, !options.replace);
      if (again) return again;
    }
    throw e;
  }
}
