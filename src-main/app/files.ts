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
 */
import { closeSync, fsyncSync, mkdirSync, openSync, realpathSync, statSync, writeSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import type { FilePolicy } from './ports.js';

const EXTENSIONS = new Set(['.csv', '.tsv', '.txt']);
const MAX_BYTES = 2 * 1024 ** 3;

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

  constructor(opts: FilePolicyOptions) {
    this.incomingDir = path.resolve(opts.incomingDir);
    this.roots = opts.roots.map((r) => real(path.resolve(r)) ?? path.resolve(r));
  }

  /** The Electron shell grants each file the user picks in a dialog. */
  grant(file: string): void {
    const r = real(path.resolve(file));
    if (r) this.granted.add(r);
  }

  addRoot(dir: string): void {
    this.roots.push(real(path.resolve(dir)) ?? path.resolve(dir));
  }

  check(p: string): string {
    if (p.includes('\0')) throw new DeflatorError('INPUT_INVALID', 'the file path contains a NUL character', 'pick the file again');
    if (!path.isAbsolute(p)) throw new DeflatorError('INPUT_INVALID', `"${p}" is not an absolute path`, 'give the full path of the CSV file, or drop the file on the window');
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
    if (!allowed) {
      throw new DeflatorError(
        'FORBIDDEN',
        `${p} is outside the folders this session may read`,
        'pick the file with the Import menu, drop it on the window, upload it, or start the server with --files <folder>',
      );
    }
    return target;
  }

  storeUpload(name: string, text: string): string {
    const base = path.basename(name.replace(/\\/g, '/')).replace(/[^A-Za-z0-9._-]/g, '_').replace(/^\.+/, '') || 'upload.csv';
    const ext = path.extname(base).toLowerCase();
    const safe = EXTENSIONS.has(ext) ? base : `${base}.csv`;
    mkdirSync(this.incomingDir, { recursive: true });
    const stamp = new Date().toISOString().replace(/[-:]/g, '').replace(/\..*$/, '');
    const file = path.join(this.incomingDir, `${stamp}-${Math.floor(Math.random() * 1e6)}-${safe}`);
    const fd = openSync(file, 'wx', 0o600);
    try {
      writeSync(fd, text);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    return file;
  }
}
