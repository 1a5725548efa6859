/** Pieces every importer shares: file hashing, header matching, the report it returns. */
import { createHash } from 'node:crypto';
import { createReadStream, statSync } from 'node:fs';
import path from 'node:path';
import type { Frequency } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { codePointAt, controlCharAt } from '../../shared/text.js';
import type { ImportLogEntry, ImportWarning, Store } from '../store/store.js';
import { DELIMITERS, type CsvRow, type DelimiterName } from './csv.js';
import { THOUSANDS_SEPARATORS, type ThousandsName } from './fields.js';

/**
 * Size of a file to import; NOT_FOUND names it when it cannot be read. A file name (the
 * base name, which the import log keeps and `info` and the app show) holding a control
 * character is refused, as names inside files are.
 */
export function fileSize(file: string): number {
  const base = path.basename(file);
  const control = controlCharAt(base);
  if (control >= 0) {
    throw new DeflatorError('INPUT_INVALID', `the file name ${JSON.stringify(base)} holds the control character ${codePointAt(base, control)}`, 'file names may not hold control characters (a terminal would act on them): rename the file');
  }
  try {
    const st = statSync(file);
    if (!st.isFile()) throw new DeflatorError('INPUT_INVALID', `${file} is not a file`, 'name a CSV file');
    return st.size;
  } catch (e) {
    if (e instanceof DeflatorError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw new DeflatorError('NOT_FOUND', `cannot read ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message}`, 'check the file name and path');
  }
}

/** SHA-256 of the file's bytes (hex). */
export async function sha256File(file: string): Promise<string> {
  const h = createHash('sha256');
  await new Promise<void>((resolve, reject) => {
    createReadStream(file, { highWaterMark: 1 << 20 })
      .on('data', (b) => h.update(b))
      .on('end', () => resolve())
      .on('error', (e: NodeJS.ErrnoException) =>
        reject(new DeflatorError('NOT_FOUND', `cannot read ${file}: ${e.code === 'ENOENT' ? 'no such file' : e.message}`, 'check the file name and path')),
      );
  });
  return h.digest('hex');
}

export interface ImportReport {
  /** 'imported', or 'already-imported' when a file with the same bytes was imported before (nothing changed). */
  status: 'imported' | 'already-imported';
  file: string;
  sha256: string;
  kind: ImportLogEntry['kind'];
  /** The new log entry, or the earlier one for 'already-imported'. */
  importId: number;
  importedAt?: string;
  rowsRead: number;
  rowsStored: number;
  rowsRejected: number;
  /** Assets or series the file holds. */
  subjects: string[];
  frequency: Frequency | null;
  first: string | null;
  last: string | null;
  warnings: ImportWarning[];
  /** With the replace option: the earlier imports whose rows this one replaced (removed: left with no rows, so taken out of the log). */
  replaced?: { importId: number; fileName: string; rows: number; removed: boolean }[];
  seconds: number;
}

export type ProgressCallback = (bytesRead: number, totalBytes: number) => void;

/** The thousands separator's byte (0 = none). */
export function thousandsByte(name: ThousandsName | undefined): number {
  if (name === undefined) return 0;
  const ch = THOUSANDS_SEPARATORS[name];
  if (ch === undefined) throw new DeflatorError('INPUT_INVALID', `unknown thousands separator "${name}"`, `use one of ${Object.keys(THOUSANDS_SEPARATORS).join(', ')}`);
  return ch.charCodeAt(0);
}

/**
 * Where a name holds a control character (C0 other than tab and line breaks, DEL, C1), or
 * -1. Names reach terminals (info, reports), where an escape sequence would act.
 */
export const controlInName = controlCharAt;

/** "U+001B" for the character at i. */
export const codePoint = codePointAt;

/** Header names as written (trimmed), with a lower-case index; duplicates and blanks are errors. */
export function readHeader(row: CsvRow, file: string, delimiter: DelimiterName = 'comma'): { names: string[]; index: Map<string, number> } {
  const names: string[] = [];
  const index = new Map<string, number>();
  if (row.count === 1) {
    // one column holding another delimiter: a file separated by another character
    const only = row.text(0);
    const others = (Object.keys(DELIMITERS) as DelimiterName[]).filter((d) => d !== delimiter);
    let at = -1;
    let found: DelimiterName = 'comma';
    for (const d of others) {
      const k = only.indexOf(DELIMITERS[d]);
      if (k >= 0 && (at < 0 || k < at)) {
        at = k;
        found = d;
      }
    }
    if (at >= 0) {
      const words: Record<DelimiterName, string> = { comma: 'commas', semicolon: 'semicolons', tab: 'tabs', bar: 'vertical bars' };
      throw new DeflatorError(
        'INPUT_INVALID',
        `${file}, line ${row.line}, column ${at + 1}: the header is one column separated by ${words[found]}, not ${words[delimiter]}`,
        `name the file's delimiter: --delimiter ${found} (or save the file as CSV with commas, CSV UTF-8)`,
      );
    }
  }
  for (let i = 0; i < row.count; i++) {
    const name = row.text(i).trim();
    if (name === '') {
      throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}, column ${i + 1}: the header has an empty column name`, 'the first line must name every column');
    }
    const control = controlInName(name);
    if (control >= 0) {
      throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}, column ${i + 1}: the column name holds the control character ${codePoint(name, control)}`, 'names may not hold control characters (a terminal would act on them): remove it from the header');
    }
    const key = name.toLowerCase();
    if (index.has(key)) {
      throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}, column ${i + 1}: column "${name}" appears twice in the header (also column ${(index.get(key) ?? 0) + 1})`, 'give every column its own name');
    }
    index.set(key, i);
    names.push(name);
  }
  return { names, index };
}

/** The file name the log records (the base name; the messages use the path as given). */
export const logName = (file: string) => path.basename(file);

/**
 * The parts of an import's recorded options that decide which rows its bytes give, with
 * defaults filled in (so entries written before an option existed compare equal to an
 * import that leaves it out). Thresholds, reject limits and --replace are not among them.
 */
export function readingKey(kind: ImportLogEntry['kind'], o: Record<string, unknown>): Record<string, unknown> {
  const base: Record<string, unknown> = {
    'data kind': kind,
    'date format': o.dateFormat ?? 'YYYY-MM-DD',
    delimiter: o.delimiter ?? 'comma',
    'decimal mark': o.decimal ?? 'point',
    'thousands separator': o.thousands ?? 'none',
    'missing-value codes': Array.isArray(o.missing) && o.missing.length ? o.missing.join(',') : 'none',
  };
  const columns = (c: unknown) => (c && typeof c === 'object' && Object.keys(c).length ? JSON.stringify(c) : 'default');
  if (kind === 'prices') return { ...base, layout: o.layout ?? 'long', columns: columns(o.columns) };
  if (kind === 'series') return { ...base, 'series kind': o.kind, units: o.units ?? 'decimal', 'risk-free form': o.rfForm ?? 'none', 'date column': o.dateColumn ?? 'date' };
  return { ...base, layout: o.layout ?? 'wide', columns: columns(o.columns), form: o.form ?? 'net', units: o.units ?? 'decimal', excess: o.excess === true ? 'yes' : 'no' };
}

/** The differences between two reading keys, in words ("units: percent now, decimal then"). */
export function readingDifferences(then: Record<string, unknown>, now: Record<string, unknown>): string[] {
  const keys = [...new Set([...Object.keys(now), ...Object.keys(then)])];
  return keys.filter((k) => String(then[k] ?? '(not used)') !== String(now[k] ?? '(not used)')).map((k) => `${k}: ${String(now[k] ?? '(not used)')} now, ${String(then[k] ?? '(not used)')} then`);
}

export interface EarlierImports {
  /** An earlier import of these bytes read the same way: this import is not needed. */
  same?: ImportLogEntry;
  /** Earlier imports of these bytes read another way (another kind, units, form, layout ...). */
  differing: { entry: ImportLogEntry; differences: string[] }[];
}

/** Earlier imports of the same bytes, split into those read the same way and the others. */
export function earlierImports(store: Store, sha256: string, kind: ImportLogEntry['kind'], recorded: Record<string, unknown>): EarlierImports {
  const now = readingKey(kind, recorded);
  const out: EarlierImports = { differing: [] };
  for (const entry of store.findImports(sha256)) {
    const differences = readingDifferences(readingKey(entry.kind, entry.options), now);
    if (differences.length === 0) out.same ??= entry;
    else out.differing.push({ entry, differences });
  }
  return out;
}

/**
 * The refusal for bytes imported before with other options: says what differs and how to
 * bring the file in read this way.
 */
export function readDifferentlyError(file: string, differing: EarlierImports['differing']): DeflatorError {
  const { entry, differences } = differing[0];
  const ids = differing.map((d) => d.entry.id);
  return new DeflatorError(
    'CONFLICT',
    `${file}: these bytes were imported before (import ${entry.id}, ${entry.fileName}, ${entry.importedAt}) and read another way: ${differences.join('; ')}`,
    `to bring the file in read this way, import it again with --replace (the earlier import of these bytes is taken out in the same transaction), or take it out first: ${ids.map((id) => `\`deflator import remove ${id} --db DB\``).join(', ')}`,
  );
}

/** The report of an import skipped because the same bytes were imported before, read the same way. */
export function alreadyImported(file: string, sha256: string, before: ImportLogEntry, started: number): ImportReport {
  return {
    status: 'already-imported', file, sha256, kind: before.kind, importId: before.id, importedAt: before.importedAt, rowsRead: before.rowsRead, rowsStored: before.rowsStored,
    rowsRejected: before.rowsRejected, subjects: [], frequency: null, first: null, last: null, warnings: [], seconds: (performance.now() - started) / 1000,
  };
}

/**
 * The import log's view of a file about to be read. `earlier(sha256, refuseDiffering)`:
 * the report of an earlier import of these bytes read the same way (nothing to do), a
 * refusal for bytes read another way (unless refuseDiffering is false), or undefined.
 * With replace, the file is hashed first: read the same way before, `done` is that report;
 * otherwise `differing` lists the earlier imports the new one takes out in its transaction.
 */
export async function importLogCheck(
  store: Store,
  file: string,
  kind: ImportLogEntry['kind'],
  recorded: Record<string, unknown>,
  started: number,
  replace: boolean,
): Promise<{ earlier: (sha256: string, refuseDiffering: boolean) => ImportReport | undefined; done?: ImportReport; differing: EarlierImports['differing'] }> {
  const earlier = (sha256: string, refuseDiffering: boolean): ImportReport | undefined => {
    const e = earlierImports(store, sha256, kind, recorded);
    if (e.same) return alreadyImported(file, sha256, e.same, started);
    if (refuseDiffering && e.differing.length) throw readDifferentlyError(file, e.differing);
    return undefined;
  };
  if (!replace) return { earlier, differing: [] };
  const e = earlierImports(store, await sha256File(file), kind, recorded);
  if (e.same) return { earlier, done: alreadyImported(file, e.same.sha256, e.same, started), differing: [] };
  return { earlier, differing: e.differing };
}

/**
 * Replace mode, right after the session began: earlier imports of the same bytes read
 * another way are taken out in this import's transaction (so a file imported with the
 * wrong kind, units or form can be brought in again). Returns what was taken out, for
 * the report and a warning each.
 */
export function takeOutDiffering(store: Store, differing: EarlierImports['differing']): { replaced: NonNullable<ImportReport['replaced']>; warnings: ImportWarning[] } {
  const replaced: NonNullable<ImportReport['replaced']> = [];
  const warnings: ImportWarning[] = [];
  for (const d of differing) {
    const removed = store.removeImport(d.entry.id);
    replaced.push({ importId: d.entry.id, fileName: d.entry.fileName, rows: removed.rows, removed: true });
    warnings.push({ kind: 'replaced', subject: '', message: `took out import ${d.entry.id} (${d.entry.fileName}: the same bytes read another way: ${d.differences.join('; ')}), ${removed.rows} row${removed.rows === 1 ? '' : 's'}` });
  }
  return { replaced, warnings };
}
