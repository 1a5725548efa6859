/**
 * The shipped preload (dist/preload.cjs, built by the test setup) run with a stand-in for
 * `electron`: a sandboxed preload may require only electron, so that is all it gets.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import path from 'node:path';

const h = {
  exposed: new Map<string, unknown>(),
  invoked: [] as unknown[][],
  listeners: new Map<string, ((...a: unknown[]) => void)[]>(),
  required: [] as string[],
};

const electron = {
  contextBridge: { exposeInMainWorld: (k: string, v: unknown) => h.exposed.set(k, v) },
  ipcRenderer: {
    invoke: async (...a: unknown[]) => {
      h.invoked.push(a);
      return { ok: true, value: 1 };
    },
    on: (ch: string, fn: (...a: unknown[]) => void) => h.listeners.set(ch, [...(h.listeners.get(ch) ?? []), fn]),
    removeListener: (ch: string, fn: (...a: unknown[]) => void) => h.listeners.set(ch, (h.listeners.get(ch) ?? []).filter((f) => f !== fn)),
  },
};

const code = readFileSync(path.resolve(import.meta.dirname, '../../../dist/preload.cjs'), 'utf8');
const fakeRequire = (id: string) => {
  h.required.push(id);
  if (id === 'electron') return electron;
  throw new Error(`a sandboxed preload cannot require ${id}`);
};
const mod = { exports: {} };
new Function('require', 'module', 'exports', code)(fakeRequire, mod, mod.exports);
import type { PreloadApi } from '../../../shared/bridge/preload-api.js';
import { IPC_EVENT_CHANNEL, ipcChannel } from '../../../shared/bridge/preload-api.js';

describe('preload', () => {
  const api = h.exposed.get('deflator') as PreloadApi;

  it('requires nothing but electron', () => {
    expect([...new Set(h.required)]).toEqual(['electron']);
  });

  it('exposes exactly one object on the page', () => {
    expect([...h.exposed.keys()]).toEqual(['deflator']);
    expect(Object.keys(api).sort()).toEqual(['invoke', 'onEvent']);
  });

  it('invokes the channel of the named call with the request and task id', async () => {
    await api.invoke('fit', { spec: {} }, 't1');
    expect(h.invoked[0]).toEqual([ipcChannel('fit'), { spec: {} }, 't1']);
  });

  it('refuses names that are not call names without touching IPC', async () => {
    const before = h.invoked.length;
    await expect(api.invoke('../event', {})).resolves.toMatchObject({ ok: false, error: { code: 'UNKNOWN_CALL' } });
    await expect(api.invoke('event:x', {})).resolves.toMatchObject({ ok: false });
    expect(h.invoked.length).toBe(before);
  });

  it('delivers events and unsubscribes', () => {
    const seen: unknown[] = [];
    const off = api.onEvent((e) => seen.push(e));
    for (const fn of h.listeners.get(IPC_EVENT_CHANNEL) ?? []) fn({}, { type: 'project', database: 'x.db' });
    off();
    for (const fn of h.listeners.get(IPC_EVENT_CHANNEL) ?? []) fn({}, { type: 'project', database: 'y.db' });
    expect(seen).toEqual([{ type: 'project', database: 'x.db' }]);
  });
});
