/**
 * The composition root: opens a project database and builds every service the bridge
 * calls need, with plain constructor arguments. The loopback server and the Electron
 * shell both start here.
 */
import { existsSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import { buildDemo } from '../data/demo.js';
import { storageError } from '../store/errors.js';
import { Store } from '../store/store.js';
import { VERSION } from '../version.js';
import { composeApp } from './compose.js';
import type { AppCore } from './compose.js';
import { ImportFilePolicy } from './files.js';
import { PoolEngine, StoreProject } from './project.js';
import type { TaskRunner } from './project.js';
import { poolRecompute } from '../runs/replay.js';
import { RunService } from '../runs/service.js';

export interface OpenOptions {
  /** The project database; created empty when missing (or as the demo, see `demo`). */
  dbPath: string;
  /** Build the demo database from sample-data/ when dbPath does not exist yet. */
  demo?: boolean;
  /** The app's own folder (uploads land in <dir>/incoming). */
  dataDir: string;
  /** Folders whose files an import may read (see files.ts). */
  fileRoots?: string[];
  pool: TaskRunner;
  /** HTML -> PDF for run exports (Electron: pdfFromHtmlWithWebContents); default headless Chromium. */
  pdf?: (html: string) => Promise<Buffer>;
}

export interface OpenedApp extends AppCore {
  files: ImportFilePolicy;
  readonly databasePath: string;
  /** Switch to another project database (Electron's Open menu); emits a `project` event. */
  openDatabase(dbPath: string): Promise<void>;
  close(): void;
}

export async function openApp(opts: OpenOptions): Promise<OpenedApp> {
  mkdirSync(opts.dataDir, { recursive: true });
  let dbPath = path.resolve(opts.dbPath);
  if (!existsSync(dbPath)) {
    mkdirSync(path.dirname(dbPath), { recursive: true });
    if (opts.demo) await buildDemo(dbPath);
  }
  let store = new Store(dbPath, { access: 'read' });
  let project = new StoreProject(store);
  const files = new ImportFilePolicy({ roots: opts.fileRoots ?? [], incomingDir: path.join(opts.dataDir, 'incoming') });
  const core = composeApp({
    version: VERSION,
    project: () => project,
    importer: () => project,
    engine: new PoolEngine(opts.pool, () => store, path.join(opts.dataDir, 'unrecorded')),
    files,
    runs: new RunService(() => store, poolRecompute(opts.pool), opts.pdf, opts.pool.threads),
    mapError: (e) => storageError(e, path.basename(store.path)) ?? e,
  });
  return {
    ...core,
    files,
    get databasePath() {
      return dbPath;
    },
    async openDatabase(next: string) {
      const target = path.resolve(next);
      if (core.tasks.size > 0) throw new DeflatorError('CONFLICT', 'a task is still running on the open database', 'wait for it to finish or cancel it, then open the other database');
      const opened = new Store(target, { access: 'read' });
      store.close();
      store = opened;
      project = new StoreProject(store);
      dbPath = target;
      core.hub.emit({ type: 'project', database: path.basename(target) });
    },
    close() {
      core.tasks.cancelAll();
      store.close();
    },
  };
}
