/** The Electron transport: the preload's window.deflator, one IPC channel per call. */
import type { PreloadApi, Transport } from '../../../shared/bridge/index.js';

export function ipcTransport(api: PreloadApi): Transport {
  return {
    invoke: (name, request, taskId) => api.invoke(name, request, taskId),
    subscribe: (listener) => api.onEvent(listener),
  };
}
