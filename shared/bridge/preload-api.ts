/**
 * What the Electron preload exposes on `window.deflator` (contextBridge): a generic invoke
 * over one IPC channel per call, and an event subscription. The renderer wraps it in the
 * same typed client as the HTTP transport.
 */
import type { BridgeEvent } from './types.js';

export interface PreloadApi {
  invoke(name: string, request: unknown, taskId?: string): Promise<unknown>;
  onEvent(listener: (event: BridgeEvent) => void): () => void;
}

/** IPC channel of a bridge call, and of the event stream. */
export const ipcChannel = (name: string): string => `deflator:${name}`;
export const IPC_EVENT_CHANNEL = 'deflator:event';
