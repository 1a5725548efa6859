/**
 * `deflator serve`: the app for any browser on this machine, on 127.0.0.1 only. Opens the
 * demo database in the user-data folder (built from sample-data/ on first start) unless
 * --db names another; prints the address and runs until Ctrl+C.
 */
import type { Command } from 'commander';
import { closeSync, constants, existsSync, fchmodSync, fstatSync, openSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { DeflatorError } from '../../../shared/errors.js';
import { CAUTION } from '../../../shared/results.js';
import { openApp } from '../../app/open.js';
import { demoDatabasePath, userDataDir } from '../../app/paths.js';
import { findSampleData } from '../../data/demo.js';
import { startServer } from '../../server/http.js';
import { threadsFlag } from '../compute.js';
import { out, err } from '../terminal.js';

interface ServeOptions {
  db?: string;
  port?: string;
  files: string[];
  threads?: string;
  keyFile?: string;
}

/**
 * Writes the address with its access key to `file`, readable and writable by the owner
 * only (0600, also when the file existed with wider permissions); refuses a symbolic link
 * or anything but a regular file there.
 */
export function writeKeyFile(file: string, text: string): void {
  let fd: number;
  try {
    fd = openSync(file, constants.O_WRONLY | constants.O_CREAT | constants.O_TRUNC | (constants.O_NOFOLLOW ?? 0), 0o600);
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new DeflatorError('INPUT_INVALID', `--key-file ${file}: ${code === 'ELOOP' ? 'is a symbolic link' : code ?? String(e)}`, 'name a new file in a folder of your own');
  }
  try {
    if (!fstatSync(fd).isFile()) throw new DeflatorError('INPUT_INVALID', `--key-file ${file} is not a regular file`, 'name a new file in a folder of your own');
    fchmodSync(fd, 0o600);
    writeFileSync(fd, text);
  } finally {
    closeSync(fd);
  }
}

/** dist/renderer beside the bundle (dist/cli.js), or in the repository when run from sources. */
export function rendererDir(): string | undefined {
  const here = path.dirname(fileURLToPath(import.meta.url));
  const candidates = [path.join(here, 'renderer'), path.resolve(here, '../../../dist/renderer')];
  return candidates.find((c) => existsSync(path.join(c, 'index.html')));
}

function portOf(s: string | undefined): number {
  if (s === undefined) return 0;
  const n = Number(s);
  if (!Number.isInteger(n) || n < 0 || n > 65535) throw new DeflatorError('INPUT_INVALID', `--port ${s} is not a port number (0-65535)`, 'give a free port, or leave --port out for any free one');
  return n;
}

function sampleFolder(): string[] {
  try {
    return [findSampleData()];
  } catch {
    return [];
  }
}

export function register(program: Command): void {
  program
    .command('serve')
    .description('serve the desktop interface on 127.0.0.1 for a browser on this machine (no Electron needed)')
    .option('--db <file>', 'project database to open (created empty if missing); default: the demo database in the user-data folder')
    .option('--port <n>', 'port to listen on (default: any free port)')
    .option('--files <dir>', 'a folder whose CSV files the app may import by path (repeatable)', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--threads <n>', 'worker threads for estimation (default: the number of cores)')
    .option('--key-file <file>', 'also write the address with its access key to this file (owner-only, 0600; removed on stop), for scripts')
    .action(async (opts: ServeOptions) => {
      const port = portOf(opts.port);
      const dataDir = userDataDir();
      const dbPath = opts.db ? path.resolve(opts.db) : demoDatabasePath(dataDir);
      const threads = opts.threads === undefined ? undefined : threadsFlag(opts.threads);
      const web = rendererDir();
      if (!web) err('deflator: dist/renderer is missing, so only the API is served; run `npm run build` for the screens\n');
      const { createPool } = await import('../../workers/pool.js'); // loaded by the commands that start a pool only
      const pool = createPool(threads === undefined ? {} : { threads });
      const firstStart = !opts.db && !existsSync(dbPath);
      if (firstStart) out(`deflator: building the demo database at ${dbPath} (first start)\n`);
      const opened = await openApp({
        dbPath,
        demo: !opts.db,
        dataDir,
        fileRoots: [...sampleFolder(), ...opts.files.map((f) => path.resolve(f))],
        pool,
      });
      let server;
      try {
        server = await startServer({ dispatcher: opened.dispatcher, subscribe: opened.hub.subscribe, ...(web ? { staticDir: web } : {}), port });
      } catch (e) {
        opened.close();
        await pool.close();
        const code = (e as { code?: string }).code;
        if (code === 'EADDRINUSE') throw new DeflatorError('CONFLICT', `port ${port} on 127.0.0.1 is in use`, 'pick another with --port, or leave it out for a free one');
        throw e;
      }
      const keyFile = opts.keyFile ? path.resolve(opts.keyFile) : undefined;
      if (keyFile) {
        try {
          writeKeyFile(keyFile, `${server.openUrl}\n`);
        } catch (e) {
          await server.close();
          opened.close();
          await pool.close();
          throw e;
        }
      }
      out(`deflator: serving ${path.basename(dbPath)} at ${server.openUrl}  (Ctrl+C to stop)\n`);
      out('  the part after #key= is this start\'s access key: keep the address to yourself\n');
      out(`  ${CAUTION}\n`);
      await new Promise<void>((resolve) => {
        const stop = () => resolve();
        process.once('SIGINT', stop);
        process.once('SIGTERM', stop);
      });
      if (keyFile) rmSync(keyFile, { force: true });
      await server.close();
      opened.close();
      await pool.close();
    });
}
