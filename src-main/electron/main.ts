/**
 * Electron entry (dist/main.js): `electron dist/main.js [--db FILE]`. Opens the app on the
 * demo database in the user-data folder unless a database is named.
 */
import { app, dialog } from 'electron';
import path from 'node:path';
import { describeError } from '../../shared/errors.js';
import { createPool } from '../workers/pool.js';
import { registerScheme, startShell } from './shell.js';

const distDir = import.meta.dirname ?? path.dirname(new URL(import.meta.url).pathname);

function argValue(flag: string): string | undefined {
  const i = process.argv.indexOf(flag);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

if (!app.requestSingleInstanceLock()) {
  app.quit();
} else {
  registerScheme();
  // In a package the worker file is unpacked beside the asar archive (worker threads cannot load from inside it).
  const workerFile = path.join(distDir, 'worker.js').replace(`app.asar${path.sep}`, `app.asar.unpacked${path.sep}`);
  const pool = createPool({ workerFile });
  const dbPath = argValue('--db') ?? process.env.DEFLATOR_DB;
  startShell({ distDir, pool, ...(dbPath ? { dbPath: path.resolve(dbPath) } : {}) }).catch((e: unknown) => {
    dialog.showErrorBox('deflator could not start', describeError(e));
    app.exit(1);
  });
}
