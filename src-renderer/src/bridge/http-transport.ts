/**
 * The loopback HTTP transport: POST /api/<call>, events over Server-Sent Events. Every
 * request carries the server's access key (src-main/server/http.ts): it arrives once in
 * the address `deflator serve` printed (`#key=...`, a fragment the browser never sends),
 * is kept in this tab's sessionStorage, and is removed from the address bar.
 */
import type { CallName, Transport } from '../../../shared/bridge/index.js';
import type { BridgeEvent } from '../../../shared/bridge/index.js';

const KEY_ITEM = 'deflator.key';

/** The access key: from `#key=` in the address (then stored and removed from it), else from this tab's storage. */
export function accessKey(loc: Pick<Location, 'hash' | 'pathname' | 'search'> | undefined = globalThis.location): string {
  let stored = '';
  try {
    stored = globalThis.sessionStorage?.getItem(KEY_ITEM) ?? '';
  } catch {
    stored = '';
  }
  const m = loc ? /(?:^#|&)key=([A-Za-z0-9_-]{16,128})(?:&|$)/.exec(loc.hash) : null;
  if (!m) return stored;
  try {
    globalThis.sessionStorage?.setItem(KEY_ITEM, m[1]);
    globalThis.history?.replaceState(null, '', `${loc?.pathname ?? '/'}${loc?.search ?? ''}`);
  } catch {
    // storage or history unavailable: the key still serves this page
  }
  return m[1];
}

export function httpTransport(base = './api/', key = accessKey()): Transport {
  const listeners = new Set<(e: BridgeEvent) => void>();
  let ready: Promise<void> = Promise.resolve();
  if (typeof EventSource !== 'undefined') {
    const es = new EventSource(`${base}events?key=${encodeURIComponent(key)}`);
    ready = new Promise<void>((resolve) => {
      es.addEventListener('open', () => resolve(), { once: true });
      setTimeout(resolve, 1500);
    });
    es.onmessage = (m: MessageEvent<string>) => {
      let event: BridgeEvent;
      try {
        event = JSON.parse(m.data) as BridgeEvent;
      } catch {
        return;
      }
      for (const l of listeners) l(event);
    };
  }
  return {
    async invoke(name: CallName, request: unknown, taskId?: string) {
      if (taskId !== undefined) await ready; // progress events must find an open stream
      const headers: Record<string, string> = { 'content-type': 'application/json', authorization: `Bearer ${key}` };
      if (taskId !== undefined) headers['x-deflator-task'] = taskId;
      const res = await fetch(`${base}${name}`, { method: 'POST', headers, body: JSON.stringify(request ?? {}) });
      return res.json() as Promise<unknown>;
    },
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
  };
}
