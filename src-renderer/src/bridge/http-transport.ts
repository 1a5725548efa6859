/** The loopback HTTP transport: POST /api/<call>, events over Server-Sent Events. */
import type { CallName, Transport } from '../../../shared/bridge/index.js';
import type { BridgeEvent } from '../../../shared/bridge/index.js';

export function httpTransport(base = './api/'): Transport {
  const listeners = new Set<(e: BridgeEvent) => void>();
  let ready: Promise<void> = Promise.resolve();
  if (typeof EventSource !== 'undefined') {
    const es = new EventSource(`${base}events`);
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
      const headers: Record<string, string> = { 'content-type': 'application/json' };
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
