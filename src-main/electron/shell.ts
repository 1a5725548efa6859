/**
 * The Electron main process: one window on the app:// scheme, the bridge over IPC, native
 * menus and file dialogs, the same app services as the loopback server. The only folder
 * that imports `electron` is this one.
 */
import { app, BrowserWindow, dialog, ipcMain, Menu, protocol, session } from 'electron';
import type { IpcMain } from 'electron';
import path from 'node:path';
import { CONTENT_SECURITY_POLICY } from '../../shared/bridge/csp.js';
import { IPC_EVENT_CHANNEL } from '../../shared/bridge/preload-api.js';
import type { BridgeEvent, MenuAction } from '../../shared/bridge/types.js';
import { describeError } from '../../shared/errors.js';
import { openApp } from '../app/open.js';
import type { OpenedApp } from '../app/open.js';
import { demoDatabasePath } from '../app/paths.js';
import type { TaskRunner } from '../app/project.js';
import { pdfFromHtmlWithWebContents } from '../export/pdf.js';
import { makeSenderCheck, registerBridgeHandlers } from './ipc.js';
import { menuTemplate } from './menu.js';
import { appProtocolHandler } from './protocol.js';
import { ALLOWED_PERMISSIONS, APP_SCHEME, APP_URL, hardenContents, windowOptions } from './security.js';

export interface ShellOptions {
  /** dist/ (main.js, preload.cjs, worker.js, renderer/). */
  distDir: string;
  /** Opens this database instead of the demo. */
  dbPath?: string;
  pool: TaskRunner & { close(): Promise<void> };
}

/** Must run before app 'ready': the app scheme is standard and secure, so 'self' in the CSP means the app. */
export function registerScheme(): void {
  protocol.registerSchemesAsPrivileged([{ scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true } }]);
}

export function createMainWindow(distDir: string): BrowserWindow {
  const win = new BrowserWindow(windowOptions(path.join(distDir, 'preload.cjs')));
  hardenContents(win.webContents);
  win.once('ready-to-show', () => win.show());
  return win;
}

/** The CSP on every response of the session (the app scheme sets it too, and index.html has the meta tag). */
export function applySessionPolicy(): void {
  const ses = session.defaultSession;
  ses.webRequest.onHeadersReceived((details, callback) => {
    callback({ responseHeaders: { ...details.responseHeaders, 'Content-Security-Policy': [CONTENT_SECURITY_POLICY] } });
  });
  ses.setPermissionRequestHandler((_wc, permission, callback) => callback(ALLOWED_PERMISSIONS.includes(permission)));
  ses.setPermissionCheckHandler((_wc, permission) => ALLOWED_PERMISSIONS.includes(permission));
}

/** PDF exports through Electron's own printer: a hidden window with JavaScript off, one per export. */
export async function printPdf(html: string): Promise<Buffer> {
  const printer = new BrowserWindow({ show: false, webPreferences: { javascript: false, sandbox: true, contextIsolation: true, nodeIntegration: false } });
  try {
    return await pdfFromHtmlWithWebContents(html, printer);
  } finally {
    printer.destroy();
  }
}

export async function startShell(opts: ShellOptions, ipc: IpcMain = ipcMain): Promise<{ app: OpenedApp; window: BrowserWindow }> {
  await app.whenReady();
  applySessionPolicy();
  protocol.handle(APP_SCHEME, appProtocolHandler(path.join(opts.distDir, 'renderer')));
  const dataDir = app.getPath('userData');
  const opened = await openApp({
    dbPath: opts.dbPath ?? demoDatabasePath(dataDir),
    demo: opts.dbPath === undefined,
    dataDir,
    pool: opts.pool,
    pdf: printPdf,
  });
  const win = createMainWindow(opts.distDir);
  const send = (e: BridgeEvent) => {
    if (!win.isDestroyed()) win.webContents.send(IPC_EVENT_CHANNEL, e);
  };
  opened.hub.subscribe(send);
  registerBridgeHandlers(ipc, () => opened.dispatcher, makeSenderCheck(() => (win.isDestroyed() ? [] : [win.webContents.id])));

  const menuEvent = (action: MenuAction, p?: string) => send(p === undefined ? { type: 'menu', action } : { type: 'menu', action, path: p });
  const pickImport = async (action: 'import-prices' | 'import-series') => {
    const r = await dialog.showOpenDialog(win, {
      title: action === 'import-prices' ? 'Import prices and dividends' : 'Import series',
      properties: ['openFile', 'multiSelections'],
      filters: [{ name: 'CSV', extensions: ['csv', 'tsv', 'txt'] }],
    });
    if (r.canceled) return;
    for (const f of r.filePaths) {
      opened.files.grant(f); // the user picked it: the import may read it
      menuEvent(action, f);
    }
  };
  const pickDatabase = async (create: boolean) => {
    const filters = [{ name: 'deflator project', extensions: ['db', 'sqlite'] }];
    const file = create
      ? (await dialog.showSaveDialog(win, { title: 'New project database', defaultPath: 'project.db', filters })).filePath
      : (await dialog.showOpenDialog(win, { title: 'Open project database', properties: ['openFile'], filters })).filePaths[0];
    if (!file) return;
    try {
      await opened.openDatabase(file);
      win.setTitle(`deflator — ${path.basename(file)}`);
    } catch (e) {
      dialog.showErrorBox('Could not open the database', describeError(e));
    }
  };
  Menu.setApplicationMenu(
    Menu.buildFromTemplate(
      menuTemplate({
        openDatabase: () => void pickDatabase(false),
        newDatabase: () => void pickDatabase(true),
        importPrices: () => void pickImport('import-prices'),
        importSeries: () => void pickImport('import-series'),
        saveSpec: () => menuEvent('save-spec'),
        loadSpec: () => menuEvent('load-spec'),
        exportResults: () => menuEvent('export'),
      }),
    ),
  );

  app.on('window-all-closed', () => {
    opened.close();
    void opts.pool.close().finally(() => app.quit());
  });
  app.on('web-contents-created', (_e, contents) => hardenContents(contents));
  win.setTitle(`deflator — ${path.basename(opened.databasePath)}`);
  await win.loadURL(APP_URL);
  return { app: opened, window: win };
}
