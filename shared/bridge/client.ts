/**
 * The renderer's typed client, generated from the call table over any transport
 * (Electron IPC through the preload, or fetch + Server-Sent Events to the loopback
 * server). One method per call; task calls get a task id, progress callbacks and
 * cancellation through an AbortSignal.
 */
import { CALL_NAMES, CALLS } from './calls.js';
import type { CallName, ReplyOf, RequestOf } from './calls.js';
import { isEnvelope } from './envelope.js';
import type { BridgeErrorCode } from './envelope.js';
import type { BridgeEvent, TaskProgress } from './types.js';

/** How replies travel; returns the raw envelope (untrusted JSON). */
export interface Transport {
  invoke(name: CallName, request: unknown, taskId?: string): Promise<unknown>;
  /** Receives every event the main side sends; returns an unsubscribe function. */
  subscribe(listener: (event: BridgeEvent) => void): () => void;
}

/** The part of an AbortSignal the client uses (shared/ compiles without DOM or Node typings). */
export interface AbortSignalLike {
  readonly aborted: boolean;
  addEventListener(type: 'abort', listener: () => void, options?: { once?: boolean }): void;
  removeEventListener(type: 'abort', listener: () => void): void;
}

export interface CallOptions {
  onProgress?: (p: TaskProgress) => void;
  /** Aborting sends `cancel` for the task. */
  signal?: AbortSignalLike;
  taskId?: string;
}

export class BridgeError extends Error {
  readonly code: BridgeErrorCode;
  readonly hint?: string;
  constructor(code: BridgeErrorCode, message: string, hint?: string) {
    super(message);
    this.name = 'BridgeError';
    this.code = code;
    if (hint !== undefined) this.hint = hint;
  }
}

export type BridgeMethods = { [K in CallName]: (request: RequestOf<K>, options?: CallOptions) => Promise<ReplyOf<K>> };

export interface BridgeClient extends BridgeMethods {
  /** Listen to events not tied to one call (menus, project changes). */
  onEvent(listener: (event: BridgeEvent) => void): () => void;
}

let counter = 0;
function newTaskId(): string {
  counter += 1;
  return `t${Date.now().toString(36)}${counter.toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}`;
}

export function createClient(transport: Transport): BridgeClient {
  const progressListeners = new Map<string, (p: TaskProgress) => void>();
  transport.subscribe((event) => {
    if (event.type === 'progress') progressListeners.get(event.taskId)?.(event);
  });

  async function invoke(name: CallName, request: unknown, options: CallOptions = {}): Promise<unknown> {
    const isTask = CALLS[name].task;
    const taskId = isTask ? (options.taskId ?? newTaskId()) : undefined;
    if (options.signal?.aborted) throw new BridgeError('CANCELLED', `${name} was cancelled before it started`);
    let onAbort: (() => void) | undefined;
    if (taskId !== undefined) {
      if (options.onProgress) progressListeners.set(taskId, options.onProgress);
      if (options.signal) {
        onAbort = () => {
          void transport.invoke('cancel', { taskId }).catch(() => undefined);
        };
        options.signal.addEventListener('abort', onAbort, { once: true });
      }
    }
    try {
      let raw: unknown;
      try {
        raw = await transport.invoke(name, request, taskId);
      } catch (e) {
        throw new BridgeError('INTERNAL', `${name}: the app's main side did not answer (${e instanceof Error ? e.message : String(e)})`, 'restart the app');
      }
      if (!isEnvelope(raw)) throw new BridgeError('INTERNAL', `${name}: malformed reply from the main side`, 'restart the app');
      if (raw.ok) return raw.value;
      throw new BridgeError(raw.error.code, raw.error.message, raw.error.hint);
    } finally {
      if (taskId !== undefined) progressListeners.delete(taskId);
      if (onAbort && options.signal) options.signal.removeEventListener('abort', onAbort);
    }
  }

  const methods = {} as Record<CallName, (request: unknown, options?: CallOptions) => Promise<unknown>>;
  for (const name of CALL_NAMES) methods[name] = (request, options) => invoke(name, request, options);
  const client = methods as unknown as BridgeMethods;
  return Object.assign(client, { onEvent: (listener: (event: BridgeEvent) => void) => transport.subscribe(listener) });
}
