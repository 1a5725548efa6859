/** Pieces every importer shares: file hashing, header matching, the report it returns. */
import { createHash } from 'node:crypto';
import { createReadStream, statSync } from 'node:fs';
import path from 'node:path';
import type { Frequency } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { codePointAt, controlCharAt } from '../../shared/text.js';
import type { ImportLogEntry, ImportWarning } from '../store/store.js';
import type { CsvRow } from './csv.js';
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
export function readHeader(row: CsvRow, file: string): { names: string[]; index: Map<string, number> } {
  const names: string[] = [];
  const index = new Map<string, number>();
  if (row.count === 1) {
    // one column holding semicolons or tabs: a file separated by another character
    const only = row.text(0);
    const at = only.search(/[;\t|]/);
    if (at >= 0) {
      const what = only[at] === ';' ? 'semicolons' : only[at] === '|' ? 'vertical bars' : 'tabs';
      throw new DeflatorError('INPUT_INVALID', `${file}, line ${row.line}, column ${at + 1}: the header is one column separated by ${what}, not commas`, 'deflator reads comma-separated files (RFC 4180): save the file as CSV with commas (CSV UTF-8)');
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
