/**
 * The one bridge client of the renderer. Stores call `bridge()`; main.ts installs the
 * client for the transport at hand and tests install a mock.
 */
import { createClient } from '../../../shared/bridge/client.js';
import type { BridgeClient } from '../../../shared/bridge/client.js';
import { httpTransport } from './http-transport.js';
import { ipcTransport } from './ipc-transport.js';

let current: BridgeClient | undefined;

export function setBridge(client: BridgeClient): void {
  current = client;
}

export function bridge(): BridgeClient {
  if (!current) throw new Error('the bridge client is not installed');
  return current;
}

/** Inside Electron the preload provides window.deflator; in a browser the page talks to its own server. */
export function connectBridge(): BridgeClient {
  const client = createClient(window.deflator ? ipcTransport(window.deflator) : httpTransport());
  setBridge(client);
  return client;
}
