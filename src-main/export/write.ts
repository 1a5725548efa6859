/**
 * Writing export files so that a failure never leaves a half file: each file is written
 * to a temporary file beside its target (same folder, so the rename cannot cross disks),
 * flushed to disk, then renamed over the target (rename(2) replaces it in one step). All
 * files of an export are written before the first is renamed, so a full disk or a
 * read-only folder found on any file leaves every existing file as it was. The error
 * says what happened (disk full, permission, read-only) and that nothing was replaced.
 */
import { closeSync, fsyncSync, mkdirSync, openSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';

/** The error for a file that could not be written, by its system error code. */
export function writeError(e: unknown, target: string): DeflatorError {
  const code = (e as NodeJS.ErrnoException).code ?? '';
  const where = path.dirname(path.resolve(target));
  const kept = 'nothing was replaced: an existing file there is as it was';
  switch (code) {
    case 'ENOSPC':
    case 'EDQUOT':
      return new DeflatorError('NOT_WRITABLE', `${target} not written: the disk holding ${where} is full (${code}); ${kept}`, 'free some space, or export to another disk (--out)');
    case 'EROFS':
      return new DeflatorError('NOT_WRITABLE', `${target} not written: ${where} is on a read-only disk (${code}); ${kept}`, 'export to a folder you may write (--out)');
    case 'EACCES':
    case 'EPERM':
      return new DeflatorError('NOT_WRITABLE', `${target} not written: permission denied in ${where} (${code}); ${kept}`, 'export to a folder you may write (--out), or fix its permissions');
    case 'EISDIR':
      return new DeflatorError('INPUT_INVALID', `${target} is a folder`, 'give a file name with --out (for CSV, a folder ends in /)');
    case 'ENOTDIR':
    case 'EEXIST':
      return new DeflatorError('INPUT_INVALID', `${target} cannot be written: part of its path is a file, not a folder`, 'check the --out path');
    case 'ENAMETOOLONG':
      return new DeflatorError('INPUT_INVALID', `${target}: the file name is too long for this file system`, 'choose a shorter --out name');
    default:
      return new DeflatorError('NOT_WRITABLE', `${target} not written: ${(e as Error).message ?? code}; ${kept}`, 'check the disk and the --out path, then export again');
  }
}

/** Writes every file (target -> bytes) or none of them: temporary files first, then renames. */
export function writeFilesAtomic(files: { target: string; data: Buffer | string }[]): void {
  const temps: { tmp: string; target: string }[] = [];
  try {
    for (const f of files) {
      const dir = path.dirname(path.resolve(f.target));
      try {
        mkdirSync(dir, { recursive: true });
      } catch (e) {
        throw writeError(e, f.target);
      }
      const tmp = path.join(dir, `.${path.basename(f.target)}.${randomBytes(6).toString('hex')}.tmp`);
      let fd: number | undefined;
      try {
        fd = openSync(tmp, 'wx', 0o666);
        temps.push({ tmp, target: f.target });
        writeFileSync(fd, f.data);
        fsyncSync(fd);
      } catch (e) {
        throw writeError(e, f.target);
      } finally {
        if (fd !== undefined) closeSync(fd);
      }
    }
    for (const t of temps) {
      try {
        renameSync(t.tmp, t.target);
      } catch (e) {
        throw writeError(e, t.target);
      }
    }
  } catch (e) {
    for (const t of temps) rmSync(t.tmp, { force: true });
    throw e;
  }
}

/** One file, written whole or not at all. */
export function writeFileAtomic(target: string, data: Buffer | string): void {
  writeFilesAtomic([{ target, data }]);
}
