/**
 * What went wrong with the project database, said plainly: one mapping from SQLite's
 * result codes (better-sqlite3's SqliteError.code) and the operating system's error codes
 * to a DeflatorError with a hint. Every command and bridge call passes unexpected errors
 * through it, so no raw "database is locked" or "disk I/O error" reaches the user.
 *
 *   BUSY          SQLITE_BUSY*, SQLITE_LOCKED*   another program kept the write lock beyond the wait
 *   NOT_WRITABLE  SQLITE_READONLY*, SQLITE_PERM, SQLITE_FULL, SQLITE_IOERR*, SQLITE_CANTOPEN
 *                 (while writing), ENOSPC, EDQUOT, EROFS, EACCES, EPERM, EIO
 *   DAMAGED       SQLITE_CORRUPT*, SQLITE_NOTADB
 *
 * The command line exits with 5, 6 and 7 for these three (README, "Exit codes").
 */
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';

const code = (e: unknown): string => (typeof e === 'object' && e !== null ? String((e as { code?: unknown }).code ?? '') : '');

/** SQLite gave up waiting for another connection's lock (SQLITE_BUSY, after the busy timeout's retries). */
export const isBusy = (e: unknown): boolean => /^SQLITE_(BUSY|LOCKED)/.test(code(e));

/** The error for a database another process kept write-locked beyond the busy timeout. */
export function lockedError(file: string, waitedMs: number): DeflatorError {
  return new DeflatorError(
    'BUSY',
    `database ${file} is locked: another import or program is writing to it and did not release its write lock within ${waitedMs} ms`,
    'wait for the other import (or the app) to finish, then run this again; nothing was stored',
  );
}

/** The error for a write to a database that may not be written. */
export function notWritableError(file: string, why: string): DeflatorError {
  return new DeflatorError(
    'NOT_WRITABLE',
    `database ${file} may not be written: ${why}`,
    'copy it to a folder you may write and use the copy; commands that only read (info, returns, runs, show, export, replay, fit --no-record) work on it as it is',
  );
}

/**
 * The DeflatorError for a storage failure of `file` (the project database), or undefined
 * when `e` is not one (a DeflatorError passes through unchanged: already said plainly).
 */
export function storageError(e: unknown, file: string, busyMs = 5000): DeflatorError | undefined {
  if (isDeflatorError(e)) return e;
  const c = code(e);
  const raw = e instanceof Error ? e.message : String(e);
  if (isBusy(e)) return lockedError(file, busyMs);
  if (/^SQLITE_FULL/.test(c) || c === 'ENOSPC' || c === 'EDQUOT') {
    return new DeflatorError('NOT_WRITABLE', `the disk holding database ${file} is full (${c})`, 'free some space, then run this again; nothing was stored');
  }
  if (/^SQLITE_READONLY/.test(c) || c === 'EROFS') return notWritableError(file, `the file, its folder or its disk is read-only (${c})`);
  if (c === 'SQLITE_PERM' || c === 'EACCES' || c === 'EPERM') return notWritableError(file, `permission denied (${c})`);
  if (/^SQLITE_CORRUPT/.test(c) || c === 'SQLITE_NOTADB') {
    return new DeflatorError(
      'DAMAGED',
      `database ${file} is damaged (${c}: ${raw})`,
      `restore it from a backup; \`sqlite3 ${file} .recover\` can often save its rows into a new file`,
    );
  }
  if (/^SQLITE_IOERR/.test(c) || c === 'EIO' || c === 'SQLITE_CANTOPEN') {
    return new DeflatorError('NOT_WRITABLE', `database ${file} could not be read or written: ${raw} (${c})`, 'check the disk and that the file and its folder are there and yours; then run this again');
  }
  return undefined;
}
