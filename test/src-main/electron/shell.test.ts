/**
 * The Electron main process in plain Node: `electron` is mocked (the binary cannot run
 * here), everything else is the real app on a temporary database.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

type Handler = (event: unknown, ...args: unknown[]) => unknown;

const h = vi.hoisted(() => {
  const state = {
    windows: [] as { options: Record<string, unknown>; contents: FakeContents }[],
    ipc: new Map<string, Handler>(),
    sent: [] as { channel: string; payload: unknown }[],
    menuTemplate: [] as { label?: string; submenu?: { id?: string; click?: () => void }[] }[],
    headerListener: undefined as undefined | ((d: { responseHeaders: Record<string, string[]> }, cb: (r: { responseHeaders: Record<string, string[]> }) => void) => void),
    permissionHandler: undefined as undefined | ((wc: unknown, p: string, cb: (ok: boolean) => void) => void),
    schemes: [] as unknown[],
    protocolHandlers: new Map<string, (r: Request) => Promise<Response>>(),
    openDialogResult: { canceled: false, filePaths: [] as string[] },
    userData: '',
    loaded: '' as string,
    printed: [] as { url: string; options: unknown }[],
    destroyed: 0,
  };
  interface FakeContents {
    id: number;
    listeners: Map<string, ((...a: unknown[]) => void)[]>;
    openHandler?: (d: { url: string }) => { action: string };
    url: string;
    on(ev: string, fn: (...a: unknown[]) => void): void;
    setWindowOpenHandler(fn: (d: { url: string }) => { action: string }): void;
    getURL(): string;
    send(channel: string, payload: unknown): void;
    emit(ev: string, ...a: unknown[]): void;
    loadURL(url: string): Promise<void>;
    printToPDF(options: unknown): Promise<Uint8Array>;
  }
  let nextId = 1;
  function makeContents(): FakeContents {
    const c: FakeContents = {
      id: nextId++,
      listeners: new Map(),
      url: '',
      on(ev, fn) {
        const l = c.listeners.get(ev) ?? [];
        l.push(fn);
        c.listeners.set(ev, l);
      },
      setWindowOpenHandler(fn) {
        c.openHandler = fn;
      },
      getURL: () => c.url,
      send(channel, payload) {
        state.sent.push({ channel, payload });
      },
      emit(ev, ...a) {
        for (const fn of c.listeners.get(ev) ?? []) fn(...a);
      },
      async loadURL(url) {
        c.url = url;
      },
      async printToPDF(options) {
        state.printed.push({ url: c.url, options });
        return new TextEncoder().encode('%PDF-1.4 fake');
      },
    };
    return c;
  }
  return { state, makeContents };
});

vi.mock('electron', () => {
  const { state, makeContents } = h;
  class BrowserWindow {
    webContents = makeContents();
    constructor(options: Record<string, unknown>) {
      state.windows.push({ options, contents: this.webContents });
    }
    once() {}
    show() {}
    isDestroyed() {
      return false;
    }
    setTitle() {}
    destroy() {
      state.destroyed += 1;
    }
    async loadURL(url: string) {
      this.webContents.url = url;
      state.loaded = url;
    }
  }
  return {
    app: {
      whenReady: async () => undefined,
      getPath: () => state.userData,
      on: () => undefined,
      quit: () => undefined,
    },
    BrowserWindow,
    ipcMain: { handle: (channel: string, fn: Handler) => state.ipc.set(channel, fn) },
    dialog: {
      showOpenDialog: async () => state.openDialogResult,
      showSaveDialog: async () => ({ canceled: true }),
      showErrorBox: () => undefined,
    },
    Menu: {
      buildFromTemplate: (t: typeof state.menuTemplate) => {
        state.menuTemplate = t;
        return t;
      },
      setApplicationMenu: () => undefined,
    },
    protocol: {
      registerSchemesAsPrivileged: (s: unknown[]) => state.schemes.push(...s),
      handle: (scheme: string, fn: (r: Request) => Promise<Response>) => state.protocolHandlers.set(scheme, fn),
    },
    session: {
      defaultSession: {
        webRequest: { onHeadersReceived: (fn: typeof state.headerListener) => (state.headerListener = fn) },
        setPermissionRequestHandler: (fn: typeof state.permissionHandler) => (state.permissionHandler = fn),
        setPermissionCheckHandler: () => undefined,
      },
    },
  };
});

import { printPdf, registerScheme, startShell } from '../../../src-main/electron/shell.js';
import { CALL_NAMES } from '../../../shared/bridge/calls.js';
import { CONTENT_SECURITY_POLICY } from '../../../shared/bridge/csp.js';
import { fakeEngine } from '../app/fakes.js';
import type { TaskRunner } from '../../../src-main/app/project.js';

let started: Awaited<ReturnType<typeof startShell>>;
let root: string;

beforeAll(async () => {
  root = mkdtempSync(path.join(os.tmpdir(), 'deflator-shell-'));
  h.state.userData = path.join(root, 'userdata');
  const dist = path.join(root, 'dist');
  mkdirSync(path.join(dist, 'renderer'), { recursive: true });
  writeFileSync(path.join(dist, 'renderer', 'index.html'), '<!doctype html><title>app</title>');
  writeFileSync(path.join(root, 'outside.txt'), 'secret');
  const engine = fakeEngine();
  const pool = {
    runTask: (kind: string, payload: { spec: never }) => (kind === 'fit' ? engine.fit(payload.spec, { onProgress: () => undefined, signal: new AbortController().signal }) : Promise.reject(new Error('unused'))),
    close: async () => undefined,
  } as unknown as TaskRunner & { close(): Promise<void> };
  registerScheme();
  started = await startShell({ distDir: dist, dbPath: path.join(root, 'project.db'), pool });
});
afterAll(() => started?.app.close());

const trustedEvent = () => {
  const c = h.state.windows[0].contents;
  return { sender: { id: c.id }, senderFrame: { url: 'deflator://app/index.html', parent: null } };
};

describe('Electron shell (electron mocked)', () => {
  it('creates the window with context isolation, no Node integration, the sandbox and the preload', () => {
    expect(h.state.windows.length).toBe(1);
    const prefs = h.state.windows[0].options.webPreferences as Record<string, unknown>;
    expect(prefs.contextIsolation).toBe(true);
    expect(prefs.nodeIntegration).toBe(false);
    expect(prefs.sandbox).toBe(true);
    expect(prefs.webSecurity).toBe(true);
    expect(prefs.webviewTag).toBe(false);
    expect(String(prefs.preload)).toMatch(/preload\.cjs$/);
    expect(h.state.loaded).toBe('deflator://app/index.html');
  });

  it('registers the app scheme as standard and secure', () => {
    expect(h.state.schemes).toEqual([{ scheme: 'deflator', privileges: expect.objectContaining({ standard: true, secure: true }) }]);
  });

  it('blocks navigation away from the app and every new window', () => {
    const c = h.state.windows[0].contents;
    let prevented = 0;
    const ev = { preventDefault: () => (prevented += 1) };
    c.emit('will-navigate', ev, 'https://example.org/');
    c.emit('will-navigate', ev, 'file:///etc/passwd');
    c.emit('will-navigate', ev, 'deflator://app/other.html');
    expect(prevented).toBe(3);
    c.emit('will-navigate', ev, 'deflator://app/index.html#fit');
    expect(prevented).toBe(3);
    expect(c.openHandler?.({ url: 'https://example.org' })).toEqual({ action: 'deny' });
    c.emit('will-attach-webview', ev);
    expect(prevented).toBe(4);
  });

  it('sets the Content-Security-Policy on session responses and refuses permissions', () => {
    let headers: Record<string, string[]> = {};
    h.state.headerListener?.({ responseHeaders: { 'X-A': ['1'] } }, (r) => (headers = r.responseHeaders));
    expect(headers['Content-Security-Policy']).toEqual([CONTENT_SECURITY_POLICY]);
    expect(headers['X-A']).toEqual(['1']);
    const answers: boolean[] = [];
    h.state.permissionHandler?.({}, 'geolocation', (ok) => answers.push(ok));
    h.state.permissionHandler?.({}, 'media', (ok) => answers.push(ok));
    h.state.permissionHandler?.({}, 'clipboard-sanitized-write', (ok) => answers.push(ok));
    expect(answers).toEqual([false, false, true]);
  });

  it('handles one IPC channel per bridge call, generated from the table', () => {
    expect([...h.state.ipc.keys()].sort()).toEqual(CALL_NAMES.map((n) => `deflator:${n}`).sort());
  });

  it('validates first and answers with envelopes: bad requests and foreign senders get errors, not crashes', async () => {
    const info = h.state.ipc.get('deflator:info') as Handler;
    await expect(info(trustedEvent(), {})).resolves.toMatchObject({ ok: true, value: { database: 'project.db' } });
    await expect(info(trustedEvent(), { extra: 1 })).resolves.toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
    const fit = h.state.ipc.get('deflator:fit') as Handler;
    await expect(fit(trustedEvent(), { spec: { model: { factors: 'MKT' } } })).resolves.toMatchObject({ ok: false, error: { code: 'SPEC_INVALID' } });
    const foreignFrame = { ...trustedEvent(), senderFrame: { url: 'https://example.org/', parent: null } };
    await expect(info(foreignFrame, {})).resolves.toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
    const otherWindow = { ...trustedEvent(), sender: { id: 9999 } };
    await expect(info(otherWindow, {})).resolves.toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
    const subFrame = { ...trustedEvent(), senderFrame: { url: 'deflator://app/index.html', parent: {} } };
    await expect(info(subFrame, {})).resolves.toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
  });

  it('imports only files picked in the dialog: the menu grants the file and tells the window', async () => {
    const picked = path.join(root, 'picked.csv');
    writeFileSync(picked, 'date,asset,price\n');
    const importFile = h.state.ipc.get('deflator:importFile') as Handler;
    await expect(importFile(trustedEvent(), { kind: 'prices', source: { path: picked } })).resolves.toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
    h.state.openDialogResult = { canceled: false, filePaths: [picked] };
    const file = h.state.menuTemplate.find((m) => m.label === 'File');
    file?.submenu?.find((i) => i.id === 'import-prices')?.click?.();
    await vi.waitFor(() => expect(h.state.sent.some((s) => (s.payload as { action?: string }).action === 'import-prices')).toBe(true));
    expect(h.state.sent.find((s) => (s.payload as { action?: string }).action === 'import-prices')).toEqual({
      channel: 'deflator:event',
      payload: { type: 'menu', action: 'import-prices', path: picked },
    });
    // now allowed past the file policy (the file itself is rejected by the importer: header only, no rows)
    const after = (await importFile(trustedEvent(), { kind: 'prices', source: { path: picked } })) as { ok: boolean; error?: { code: string } };
    expect(after.error?.code).not.toBe('FORBIDDEN');
  });

  it('has menu items for databases, imports, specs, export and quit', () => {
    const ids = h.state.menuTemplate.flatMap((m) => (m.submenu ?? []).map((i) => i.id)).filter(Boolean);
    expect(ids).toEqual(expect.arrayContaining(['open-database', 'new-database', 'import-prices', 'import-series', 'save-spec', 'load-spec', 'export']));
    const file = h.state.menuTemplate.find((m) => m.label === 'File');
    expect(JSON.stringify(file)).toMatch(/"role":"(quit|close)"/);
  });

  it('serves the renderer on the app scheme with the CSP, and nothing outside it', async () => {
    const handler = h.state.protocolHandlers.get('deflator');
    expect(handler).toBeDefined();
    const ok = await handler?.(new Request('deflator://app/index.html'));
    expect(ok?.status).toBe(200);
    expect(ok?.headers.get('content-security-policy')).toBe(CONTENT_SECURITY_POLICY);
    for (const u of ['deflator://app/../outside.txt', 'deflator://app/%2e%2e/%2e%2e/outside.txt', 'deflator://other/index.html', 'deflator://app/missing.js']) {
      const r = await handler?.(new Request(u));
      expect(r?.status, u).toBe(404);
    }
  });
  it('prints PDF exports through Electron in a hidden window with JavaScript off, then destroys it', async () => {
    const before = h.state.windows.length;
    const pdf = await printPdf('<html><body><h1>report</h1></body></html>');
    expect(new TextDecoder().decode(pdf)).toBe('%PDF-1.4 fake');
    const w = h.state.windows[before];
    expect(w.options.show).toBe(false);
    expect((w.options.webPreferences as Record<string, unknown>).javascript).toBe(false);
    expect(h.state.printed.at(-1)?.url).toMatch(/^data:text\/html;charset=utf-8,/);
    expect(h.state.destroyed).toBe(1);
  });
});
