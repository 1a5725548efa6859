/**
 * The preload (sandboxed, CommonJS): exposes one object, window.deflator, with a generic
 * invoke over the bridge's IPC channels and an event subscription. It holds no logic;
 * the main side validates every request.
 */
import { contextBridge, ipcRenderer } from 'electron';
import type { IpcRendererEvent } from 'electron';

const EVENT_CHANNEL = 'deflator:event';
const NAME = /^[a-z][A-Za-z]{1,40}$/;

const api = {
  invoke(name: string, request: unknown, taskId?: string): Promise<unknown> {
    if (typeof name !== 'string' || !NAME.test(name)) {
      return Promise.resolve({ ok: false, error: { code: 'UNKNOWN_CALL', message: `no bridge call named ${JSON.stringify(String(name))}` } });
    }
    return ipcRenderer.invoke(`deflator:${name}`, request, taskId);
  },
  onEvent(listener: (event: unknown) => void): () => void {
    const wrapped = (_e: IpcRendererEvent, payload: unknown) => listener(payload);
    ipcRenderer.on(EVENT_CHANNEL, wrapped);
    return () => {
      ipcRenderer.removeListener(EVENT_CHANNEL, wrapped);
    };
  },
};

contextBridge.exposeInMainWorld('deflator', api);
