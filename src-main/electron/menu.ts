/**
 * The native menus: open or create a project database, import prices or series, save and
 * load a spec, export the results on screen, quit. Items call the actions they are given,
 * so the template is testable without Electron.
 */
import type { MenuItemConstructorOptions } from 'electron';

export interface MenuActions {
  openDatabase(): void;
  newDatabase(): void;
  importPrices(): void;
  importSeries(): void;
  saveSpec(): void;
  loadSpec(): void;
  exportResults(): void;
  openInBrowser?(): void;
}

export function menuTemplate(actions: MenuActions, platform: NodeJS.Platform = process.platform): MenuItemConstructorOptions[] {
  const mac = platform === 'darwin';
  const file: MenuItemConstructorOptions = {
    label: 'File',
    submenu: [
      { id: 'open-database', label: 'Open Project Database…', accelerator: 'CmdOrCtrl+O', click: () => actions.openDatabase() },
      { id: 'new-database', label: 'New Project Database…', accelerator: 'CmdOrCtrl+Shift+N', click: () => actions.newDatabase() },
      { type: 'separator' },
      { id: 'import-prices', label: 'Import Prices and Dividends…', accelerator: 'CmdOrCtrl+I', click: () => actions.importPrices() },
      { id: 'import-series', label: 'Import Series…', accelerator: 'CmdOrCtrl+Shift+I', click: () => actions.importSeries() },
      { type: 'separator' },
      { id: 'load-spec', label: 'Load Model Spec…', click: () => actions.loadSpec() },
      { id: 'save-spec', label: 'Save Model Spec…', accelerator: 'CmdOrCtrl+S', click: () => actions.saveSpec() },
      { id: 'export', label: 'Export Results on Screen…', accelerator: 'CmdOrCtrl+E', click: () => actions.exportResults() },
      { type: 'separator' },
      mac ? { role: 'close' } : { role: 'quit', label: 'Quit' },
    ],
  };
  const template: MenuItemConstructorOptions[] = [];
  if (mac) template.push({ label: 'deflator', submenu: [{ role: 'about' }, { type: 'separator' }, { role: 'hide' }, { role: 'hideOthers' }, { type: 'separator' }, { role: 'quit' }] });
  template.push(
    file,
    { label: 'Edit', submenu: [{ role: 'undo' }, { role: 'redo' }, { type: 'separator' }, { role: 'cut' }, { role: 'copy' }, { role: 'paste' }, { role: 'selectAll' }] },
    { label: 'View', submenu: [{ role: 'resetZoom' }, { role: 'zoomIn' }, { role: 'zoomOut' }, { type: 'separator' }, { role: 'togglefullscreen' }] },
  );
  return template;
}
