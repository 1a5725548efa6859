/**
 * The worker thread's entry (compiled by scripts/build.mjs to dist/worker.js): piscina
 * calls the default export with a TaskEnvelope and sends back its TaskReply.
 */
import { isDeflatorError } from '../../shared/errors.js';
import type { TaskEnvelope, TaskKind, TaskReply, WorkerError } from './protocol.js';
import { Reporter } from './reporter.js';
import { handlers, type TaskContext } from './tasks.js';

function toWorkerError(e: unknown): WorkerError {
  if (isDeflatorError(e)) {
    const out: WorkerError = { name: 'DeflatorError', code: e.code, message: e.message };
    if (e.hint) out.hint = e.hint;
    return out;
  }
  if (e instanceof Error) return { name: e.name, message: e.message, ...(e.stack ? { stack: e.stack } : {}) };
  return { name: 'Error', message: String(e) };
}

export default function runEnvelope<K extends TaskKind>(envelope: TaskEnvelope<K>): TaskReply<K> {
  const reporter = new Reporter(envelope.port, envelope.cancel);
  try {
    const handler = handlers[envelope.kind] as unknown as (payload: unknown, ctx: TaskContext) => TaskReply<K> & { ok: true } extends { result: infer R } ? R : never;
    const result = handler(envelope.payload, { progress: reporter.progress, signal: reporter.signal });
    return { ok: true, result };
  } catch (e) {
    return { ok: false, error: toWorkerError(e) };
  } finally {
    reporter.end();
  }
}
