/**
 * Which files an import may read.
 *
 * The rule: a path must be absolute, and its real path (symbolic links resolved) must be
 * an existing regular file with a .csv, .tsv or .txt name that is either
 *   - a file the user picked in a native dialog or dropped on the window (granted one
 *     by one by the Electron shell), or
 *   - inside one of the folders the user named when starting the server
 *     (`deflator serve --files DIR`, repeatable; default: none, plus the bundled
 *     sample-data folder), or
 *   - inside the app's own incoming folder, where uploaded file contents are stored.
 * `..` segments are resolved before the check, so a path cannot climb out of an allowed
 * folder, and a link inside one that points elsewhere is judged by its target.
 *
 * A path outside every allowed place is FORBIDDEN before the file system is asked
 * anything about it: the answer is the same whether it exists, is a folder or a device,
 * so a caller learns nothing about the rest of the machine. Only then is the real path
 * looked up, and checked again (a link inside may point outside).
 */
import { closeSync, fsyncSync, mkdirSync, openSync, realpathSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import type { FilePolicy } from './ports.js';

const EXTENSIONS = new Set(['.csv', '.tsv', '.txt']);
const MAX_BYTES = 2 * 1024 ** 3;
/** Characters kept of an uploaded file's name: with the time stamp and counter in front, the stored name stays far below the 255 bytes file systems allow. */
export const UPLOAD_NAME_CHARS = 120;

export interface FilePolicyOptions {
  /** Folders whose files may be imported. */
  roots: string[];
  /** The app-owned folder for uploaded contents (created on first use). */
  incomingDir: string;
}

function real(p: string): string | undefined {
  try {
    return realpathSync(p);
  } catch {
    return undefined;
  }
}

function inside(child: string, root: string): boolean {
  const rel = path.relative(root, child);
  return rel === '' ? false : !rel.startsWith('..') && !path.isAbsolute(rel);
}

export class ImportFilePolicy implements FilePolicy {
  private readonly roots: string[];
  private readonly granted = new Set<string>();
  readonly incomingDir: string;

  /** The allowed folders as given (resolved, links not followed): for the check before any look-up. */
  private readonly lexicalRoots: string[];

  constructor(opts: FilePolicyOptions) {
    this.incomingDir = path.resolve(opts.incomingDir);
    this.roots = opts.roots.map((r) => real(path.resolve(r)) ?? path.resolve(r));
    this.lexicalRoots = opts.roots.map((r) => path.resolve(r));
  }

  /** The Electron shell grants each file the user picks in a dialog. */
  grant(file: string): void {
    const r = real(path.resolve(file));
    if (r) {
      this.granted.add(r);
      this.granted.add(path.resolve(file));
    }
  }

  addRoot(dir: string): void {
    this.roots.push(real(path.resolve(dir)) ?? path.resolve(dir));
    this.lexicalRoots.push(path.resolve(dir));
  }

  private forbidden(p: string): DeflatorError {
    return new DeflatorError('FORBIDDEN', `${p} is outside the folders this session may read`, 'pick the file with the Import menu, drop it on the window, upload it, or start the server with --files <folder>');
  }

  check(p: string): string {
    if (p.includes('\0')) throw new DeflatorError('INPUT_INVALID', 'the file path contains a NUL character', 'pick the file again');
    if (!path.isAbsolute(p)) throw new DeflatorError('INPUT_INVALID', `"${p}" is not an absolute path`, 'give the full path of the CSV file, or drop the file on the window');
    // first by the path alone, without asking the file system anything
    const given = path.resolve(p);
    const places = [...this.lexicalRoots, ...this.roots, this.incomingDir];
    if (!this.granted.has(given) && !places.some((r) => inside(given, r))) throw this.forbidden(p);
    const target = real(p);
    if (target === undefined) throw new DeflatorError('NOT_FOUND', `no file at ${p}`, 'check the path; the file may have been moved');
    const st = statSync(target);
    if (!st.isFile()) throw new DeflatorError('INPUT_INVALID', `${p} is not a regular file`, 'pick a CSV file, not a folder or a device');
    if (!EXTENSIONS.has(path.extname(target).toLowerCase())) {
      throw new DeflatorError('INPUT_INVALID', `${path.basename(target)} is not a .csv, .tsv or .txt file`, 'export the data as CSV first');
    }
    if (st.size > MAX_BYTES) throw new DeflatorError('INPUT_INVALID', `${path.basename(target)} is larger than 2 GB`, 'split the file by asset');
    const incoming = real(this.incomingDir) ?? this.incomingDir;
    const allowed = this.granted.has(target) || inside(target, incoming) || this.roots.some((r) => inside(target, r));
    if (!allowed) throw this.forbidden(p);
    return target;
  }

  /**
   * Stores uploaded text as a new owner-only file in the incoming folder. The name keeps
   * letters, digits, '.', '_' and '-' of the upload's own name, at most UPLOAD_NAME_CHARS
   * of them (the extension kept). A failure to write says what happened (disk full, no
   * permission) without the folder's path; a half-written file is removed.
   */
  storeUpload(name: string, text: string): string {
    let base = path.basename(name.replace(/\\/g, '/')).replace(/[^A-Za-z0-9._-]/g, '_').replace(/^\.+/, '') || 'upload.csv';
    let ext = path.extname(base).toLowerCase();
    if (!EXTENSIONS.has(ext)) {
      base = `${base}.csv`;
      ext = '.csv';
    }
    if (base.length > UPLOAD_NAME_CHARS) base = `${base.slice(0, UPLOAD_NAME_CHARS - ext.length)}${ext}`;
    const stamp = new Date().toISOString().replace(/[-:]/g, '').replace(/\..*$/, '');
    const file = path.join(this.incomingDir, `${stamp}-${Math.floor(Math.random() * 1e6)}-${base}`);
    let fd: number | undefined;
    try {
      mkdirSync(this.incomingDir, { recursive: true });
      fd = openSync(file, 'wx', 0o600);
      // not writeSync, which may write part of the text and return (a disk filling up):
      // writeFileSync on the descriptor writes until all is down or an error comes
      writeFileSync(fd, text);
      fsyncSync(fd);
    } catch (e) {
      if (fd !== undefined) rmSync(file, { force: true });
      throw uploadError(e);
    } finally {
      if (fd !== undefined) closeSync(fd);
    }
    return file;
  }
}

/** A failed upload, said plainly: the cause by its error code, never the app folder's path. */
function uploadError(e: unknown): DeflatorError {
  const code = (e as NodeJS.ErrnoException).code ?? '';
  const what: Record<string, [string, string]> = {
    ENOSPC: ['the disk holding the app folder is full', 'free some space, then upload the file again'],
    EDQUOT: ['the disk quota of the app folder is used up', 'free some space, then upload the file again'],
    EACCES: ['the app folder may not be written (permission denied)', 'check the permissions of the app folder (DEFLATOR_HOME)'],
    EPERM: ['the app folder may not be written (operation not permitted)', 'check the permissions of the app folder (DEFLATOR_HOME)'],
    EROFS: ['the app folder is on a read-only file system', 'start deflator with DEFLATOR_HOME on a writable disk'],
    ENAMETOOLONG: ['the file name is too long for this file system', 'rename the file to something shorter and upload it again'],
  };
  const [message, hint] = what[code] ?? [`the file could not be stored (${code || 'unknown error'})`, 'try again; if it keeps failing, import the file by path'];
  return new DeflatorError('INPUT_INVALID', `upload not stored: ${message}`, hint);
}
