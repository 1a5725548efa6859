/**
 * One entry point for every bridge call, shared by the Electron IPC handlers and the
 * loopback HTTP routes: validate the request, run the handler (as a cancellable task
 * for long calls, with progress events), and always answer with an envelope.
 */
import { CALLS, TASK_ID } from '../../shared/bridge/calls.js';
import type { CallName, ParsedRequestOf, ReplyOf } from '../../shared/bridge/calls.js';
import { errorReply, okReply, replyFromError } from '../../shared/bridge/envelope.js';
import type { Envelope } from '../../shared/bridge/envelope.js';
import type { BridgeEvent } from '../../shared/bridge/types.js';
import { validateRequest } from '../../shared/bridge/validate.js';
import type { ProgressFn } from './ports.js';
import { TaskRegistry } from './tasks.js';

export interface CallContext {
  /** Set for task calls. */
  taskId?: string;
  signal: AbortSignal;
  onProgress: ProgressFn;
}

export type Handler<K extends CallName> = (request: ParsedRequestOf<K>, ctx: CallContext) => Promise<ReplyOf<K>>;
export type Handlers = { [K in CallName]: Handler<K> };

export interface Dispatcher {
  dispatch(name: unknown, raw: unknown, taskId?: unknown): Promise<Envelope<unknown>>;
  readonly tasks: TaskRegistry;
}

/**
 * `mapError` turns failures the handlers did not put in words (a raw SQLite error of the
 * open database: locked, read-only, disk full, damaged) into DeflatorErrors with hints;
 * whatever it leaves is INTERNAL.
 */
export function createDispatcher(handlers: Handlers, emit: (event: BridgeEvent) => void, tasks = new TaskRegistry(), mapError: (e: unknown) => unknown = (e) => e): Dispatcher {
  async function dispatch(name: unknown, raw: unknown, taskIdRaw?: unknown): Promise<Envelope<unknown>> {
    const v = validateRequest(name, raw);
    if (!v.ok) return v;
    const call = v.name;
    const isTask = CALLS[call].task;
    let taskId: string | undefined;
    if (isTask) {
      if (taskIdRaw !== undefined && (typeof taskIdRaw !== 'string' || !TASK_ID.test(taskIdRaw))) {
        return errorReply('BAD_REQUEST', `${call}: the task id must be 1-64 letters, digits, '_' or '-'`, 'let the client make the id');
      }
      taskId = typeof taskIdRaw === 'string' ? taskIdRaw : `s${Date.now().toString(36)}${Math.floor(Math.random() * 1e9).toString(36)}`;
    }
    let ac: AbortController | undefined;
    if (taskId !== undefined) {
      ac = tasks.start(taskId);
      if (!ac) return errorReply('CONFLICT', `${call}: task ${taskId} is already running`, 'use a new task id');
    }
    const id = taskId;
    let last = 0;
    const onProgress: ProgressFn = (done, total, stage) => {
      if (id === undefined) return;
      const now = Date.now();
      // at most ~20 events a second, but always the final one
      if (done < total && now - last < 50) return;
      last = now;
      const safeTotal = Number.isFinite(total) && total > 0 ? total : 1;
      const safeDone = Number.isFinite(done) ? Math.min(Math.max(done, 0), safeTotal) : 0;
      emit(stage === undefined ? { type: 'progress', taskId: id, done: safeDone, total: safeTotal } : { type: 'progress', taskId: id, done: safeDone, total: safeTotal, stage });
    };
    const ctx: CallContext = { signal: ac?.signal ?? new AbortController().signal, onProgress };
    if (id !== undefined) ctx.taskId = id;
    // Exactly one reply, and exactly one task-end event, per call. A value the handler
    // returned is the reply even when a cancel came in meanwhile: handlers check the
    // signal before they write anything (a recorded run, an import), so a value means
    // the work is done and kept; replying CANCELLED then would hide a stored result.
    let ok = false;
    try {
      const handler = handlers[call] as Handler<CallName>;
      const value = await handler(v.request, ctx);
      ok = true;
      return okReply(value);
    } catch (e) {
      if (ac?.signal.aborted) return errorReply('CANCELLED', `${call} was cancelled`, 'start it again when ready');
      return replyFromError(mapError(e));
    } finally {
      if (id !== undefined) {
        tasks.end(id);
        emit({ type: 'task-end', taskId: id, ok });
      }
    }
  }
  return { dispatch, tasks };
}
