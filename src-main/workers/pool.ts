/**
 * The worker pool every heavy computation runs in: the CLI, the desktop app and the
 * tests all use this module and the same compiled dist/worker.js.
 *
 *   const pool = createPool();
 *   const res = await pool.runTask('backtest', { spec, panel }, { onProgress, signal });
 *   await pool.close();
 *
 * Progress: piscina does not stream, so each task carries a MessagePort (transferred)
 * on which the worker posts {done, total}; runTask resolves only after the worker's
 * closing message, so every progress event arrives before the result. Cancel: the
 * AbortSignal sets a shared flag the worker checks between windows and replications,
 * and piscina stops the thread; runTask then rejects with DeflatorError CANCELLED.
 * Nothing is written by a task: callers save results only after runTask resolves, so a
 * cancelled run leaves nothing half-written; a cancel that arrives after the worker
 * finished but before runTask returns still rejects with CANCELLED, so a caller never
 * records a run whose caller was told it was cancelled.
 *
 * Queueing is ours, not piscina's: at most `threads` tasks are handed to piscina at a
 * time, the rest wait in a first-in first-out queue here (`TaskSlots`). piscina stops the
 * thread of an aborted running task and, with minThreads 0, starts no replacement until
 * its next `run` call, so a task queued inside piscina behind an aborted one waited for
 * some unrelated later call (tens to hundreds of seconds under load). Here the next
 * waiting task is handed over as soon as a slot frees, and that hand-over starts the
 * replacement thread.
 *
 * 'backtest' and 'compare' are split across the threads (orchestrate.ts) when the pool
 * has more than one: back-test windows in chunks, a comparison's fits side by side and
 * its bootstrap replications in chunks. The numbers are the same bits either way, for
 * any thread count: a back-test's chunks of windows are fixed by its spec
 * (shared/backtest windowChunks), and each bootstrap replication has its own stream.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import { MessageChannel } from 'node:worker_threads';
import { Piscina } from 'piscina';
import { DeflatorError } from '../../shared/errors.js';
import { backtestInPool, compareInPool } from './orchestrate.js';
import { defaultThreads } from '../services/compute.js';
import type { ProgressMessage, TaskEnvelope, TaskKind, TaskMap, TaskReply } from './protocol.js';

export interface RunTaskOptions {
  onProgress?: (done: number, total: number, stage?: string) => void;
  signal?: AbortSignal;
}

export interface PoolOptions {
  /** Worker threads (default: the number of cores). */
  threads?: number;
  /** The compiled worker (default: dist/worker.js next to the bundle, or in the repository). */
  workerFile?: string;
}

export interface DeflatorPool {
  readonly threads: number;
  runTask<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], opts?: RunTaskOptions): Promise<TaskMap[K]['result']>;
  close(): Promise<void>;
}

/** dist/worker.js: beside this file (or its chunk folder) when bundled into dist/, else under the repository's dist/. */
export function resolveWorkerFile(): string {
  const here = path.dirname(fileURLToPath(import.meta.url));
  const candidates = [path.join(here, 'worker.js'), path.resolve(here, '../../dist/worker.js')];
  // bundled: this module sits in dist/ or in a code-split chunk under dist/chunks/
  const bundled = path.basename(here) === 'dist' ? candidates[0] : path.basename(here) === 'chunks' && path.basename(path.dirname(here)) === 'dist' ? path.join(here, '..', 'worker.js') : null;
  const file = bundled ?? candidates.find((c) => existsSync(c) && c.endsWith(path.join('dist', 'worker.js')));
  if (!file || !existsSync(file)) {
    throw new DeflatorError('NOT_FOUND', `the compiled worker (dist/worker.js) was not found near ${here}`, 'run `node scripts/build.mjs` (or `npm run prepare`) first');
  }
  return file;
}

export { defaultThreads };

function cancelledError(): DeflatorError {
  return new DeflatorError('CANCELLED', 'the task was cancelled', 'nothing was saved; run it again to get results');
}

/**
 * A counting semaphore with a first-in first-out queue: `acquire` resolves with a
 * release function once one of `size` slots is free, or rejects with CANCELLED when the
 * signal aborts while waiting (the waiter leaves the queue; it never took a slot).
 */
export class TaskSlots {
  private free: number;
  private readonly waiting: { grant: () => void; fail: (e: Error) => void }[] = [];
  constructor(size: number) {
    this.free = Math.max(1, size);
  }

  get queued(): number {
    return this.waiting.length;
  }

  acquire(signal?: AbortSignal): Promise<() => void> {
    if (signal?.aborted) return Promise.reject(cancelledError());
    return new Promise((resolve, reject) => {
      let released = false;
      const release = (): void => {
        if (released) return;
        released = true;
        const next = this.waiting.shift();
        if (next) next.grant();
        else this.free++;
      };
      if (this.free > 0) {
        this.free--;
        resolve(release);
        return;
      }
      const onAbort = (): void => {
        const i = this.waiting.indexOf(waiter);
        if (i >= 0) this.waiting.splice(i, 1);
        reject(cancelledError());
      };
      const waiter = {
        grant: () => {
          signal?.removeEventListener('abort', onAbort);
          resolve(release);
        },
        fail: (e: Error) => {
          signal?.removeEventListener('abort', onAbort);
          reject(e);
        },
      };
      signal?.addEventListener('abort', onAbort, { once: true });
      this.waiting.push(waiter);
    });
  }

  /** Rejects every waiter (the pool is closing). */
  failAll(e: Error): void {
    for (const w of this.waiting.splice(0)) w.fail(e);
  }
}

function fromReply<K extends TaskKind>(reply: TaskReply<K>): TaskMap[K]['result'] {
  if (reply.ok) return reply.result;
  const e = reply.error;
  if (e.code) {
    const err = new DeflatorError(e.code, e.message, e.hint);
    if (e.stack) err.stack = e.stack;
    throw err;
  }
  const err = new Error(e.message);
  err.name = e.name;
  if (e.stack) err.stack = e.stack;
  throw err;
}

export function createPool(opts: PoolOptions = {}): DeflatorPool {
  const threads = Math.max(1, opts.threads ?? defaultThreads());
  const piscina = new Piscina({
    filename: opts.workerFile ?? resolveWorkerFile(),
    minThreads: 0,
    maxThreads: threads,
    idleTimeout: 2_000,
  });
  let closed = false;
  const slots = new TaskSlots(threads);

  async function runTask<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], o: RunTaskOptions = {}): Promise<TaskMap[K]['result']> {
    if (threads > 1 && kind === 'backtest') {
      return (await backtestInPool(rawRun, threads, payload as TaskMap['backtest']['payload'], o)) as TaskMap[K]['result'];
    }
    if (threads > 1 && kind === 'compare') {
      return (await compareInPool(rawRun, threads, payload as TaskMap['compare']['payload'], o)) as TaskMap[K]['result'];
    }
    return rawRun(kind, payload, o);
  }

  async function rawRun<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], o: RunTaskOptions = {}): Promise<TaskMap[K]['result']> {
    if (closed) throw new DeflatorError('CANCELLED', 'the worker pool is closed', 'start a new pool');
    const release = await slots.acquire(o.signal);
    try {
      return await runInThread(kind, payload, o);
    } finally {
      release();
    }
  }

  async function runInThread<K extends TaskKind>(kind: K, payload: TaskMap[K]['payload'], o: RunTaskOptions): Promise<TaskMap[K]['result']> {
    if (closed) throw new DeflatorError('CANCELLED', 'the worker pool is closed', 'start a new pool');
    if (o.signal?.aborted) throw cancelledError();
    const channel = new MessageChannel();
    const cancel = new Int32Array(new SharedArrayBuffer(4));
    let resolveEnd: () => void = () => {};
    const ended = new Promise<void>((resolve) => {
      resolveEnd = resolve;
    });
    channel.port1.on('message', (m: ProgressMessage) => {
      if (m.type === 'end') resolveEnd();
      else o.onProgress?.(m.done, m.total, m.stage);
    });
    channel.port1.on('close', () => resolveEnd());
    const onAbort = (): void => {
      Atomics.store(cancel, 0, 1);
    };
    o.signal?.addEventListener('abort', onAbort, { once: true });
    const envelope: TaskEnvelope<K> = { kind, payload, port: channel.port2, cancel };
    try {
      const reply = (await piscina.run(envelope, { transferList: [channel.port2], signal: o.signal ?? null })) as TaskReply<K>;
      const result = fromReply(reply);
      await ended;
      // a cancel that came while the last progress messages drained still counts
      if (o.signal?.aborted) throw cancelledError();
      return result;
    } catch (e) {
      if (o.signal?.aborted || (e instanceof Error && e.name === 'AbortError')) throw cancelledError();
      throw e;
    } finally {
      o.signal?.removeEventListener('abort', onAbort);
      channel.port1.close();
    }
  }

  return {
    threads,
    runTask,
    async close() {
      if (closed) return;
      closed = true;
      slots.failAll(new DeflatorError('CANCELLED', 'the worker pool is closed', 'start a new pool'));
      await piscina.close();
    },
  };
}

/** Runs fn with a fresh pool and closes it afterwards (the CLI's pattern). */
export async function withPool<T>(fn: (pool: DeflatorPool) => Promise<T>, opts: PoolOptions = {}): Promise<T> {
  const pool = createPool(opts);
  try {
    return await fn(pool);
  } finally {
    await pool.close();
  }
}
