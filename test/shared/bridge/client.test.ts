import { describe, expect, it, vi } from 'vitest';
import { BridgeError, createClient } from '../../../shared/bridge/index.js';
import type { BridgeEvent, Transport } from '../../../shared/bridge/index.js';

function fakeTransport(reply: (name: string, req: unknown, taskId?: string) => unknown) {
  const listeners = new Set<(e: BridgeEvent) => void>();
  const calls: { name: string; req: unknown; taskId?: string }[] = [];
  const transport: Transport = {
    invoke: async (name, req, taskId) => {
      calls.push({ name, req, taskId });
      return reply(name, req, taskId);
    },
    subscribe: (l) => {
      listeners.add(l);
      return () => listeners.delete(l);
    },
  };
  return { transport, calls, emit: (e: BridgeEvent) => listeners.forEach((l) => l(e)) };
}

describe('bridge client', () => {
  it('unwraps ok replies and throws BridgeError with code and hint on error replies', async () => {
    const { transport } = fakeTransport((name) =>
      name === 'info' ? { ok: true, value: { version: '1' } } : { ok: false, error: { code: 'NOT_FOUND', message: 'no asset X', hint: 'import it' } },
    );
    const client = createClient(transport);
    await expect(client.info({})).resolves.toEqual({ version: '1' });
    const err = await client.history({ asset: 'X' }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(BridgeError);
    expect((err as BridgeError).code).toBe('NOT_FOUND');
    expect((err as BridgeError).hint).toBe('import it');
  });

  it('rejects a reply that is not an envelope', async () => {
    const { transport } = fakeTransport(() => ({ value: 3 }));
    const err = await createClient(transport).coverage({}).catch((e: unknown) => e);
    expect((err as BridgeError).code).toBe('INTERNAL');
  });

  it('gives task calls an id, routes progress to the caller and sends cancel on abort', async () => {
    let release: (v: unknown) => void = () => undefined;
    const h = fakeTransport((name) => (name === 'cancel' ? { ok: true, value: { cancelled: true } } : new Promise((r) => (release = r))));
    const client = createClient(h.transport);
    const seen: number[] = [];
    const ac = new AbortController();
    const p = client.backtest({ spec: { riskfree: 'RF', model: { factors: ['M'] } } }, { onProgress: (e) => seen.push(e.done), signal: ac.signal });
    await vi.waitFor(() => expect(h.calls.length).toBe(1));
    const taskId = h.calls[0].taskId as string;
    expect(taskId).toMatch(/^[A-Za-z0-9_-]{1,64}$/);
    h.emit({ type: 'progress', taskId, done: 1, total: 4 });
    h.emit({ type: 'progress', taskId: 'other', done: 3, total: 4 });
    h.emit({ type: 'progress', taskId, done: 2, total: 4 });
    ac.abort();
    await vi.waitFor(() => expect(h.calls.some((c) => c.name === 'cancel')).toBe(true));
    expect(h.calls.find((c) => c.name === 'cancel')?.req).toEqual({ taskId });
    release({ ok: false, error: { code: 'CANCELLED', message: 'cancelled' } });
    await expect(p).rejects.toMatchObject({ code: 'CANCELLED' });
    expect(seen).toEqual([1, 2]);
    // after the call ends, late progress is ignored
    h.emit({ type: 'progress', taskId, done: 4, total: 4 });
    expect(seen).toEqual([1, 2]);
  });

  it('does not give plain calls a task id', async () => {
    const h = fakeTransport(() => ({ ok: true, value: {} }));
    await createClient(h.transport).coverage({});
    expect(h.calls[0].taskId).toBeUndefined();
  });

  it('turns a transport failure into a readable error', async () => {
    const transport: Transport = { invoke: async () => Promise.reject(new Error('socket hang up')), subscribe: () => () => undefined };
    const err = await createClient(transport).info({}).catch((e: unknown) => e);
    expect((err as BridgeError).message).toContain('socket hang up');
  });
});
