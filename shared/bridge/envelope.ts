/**
 * The reply envelope every transport carries: `{ok:true, value}` or
 * `{ok:false, error:{code, message, hint}}`. Errors never escape as crashes.
 */
import type { ErrorCode } from '../errors.js';
import { isDeflatorError } from '../errors.js';

/** The domain's error codes plus the transport's own (UNAUTHORIZED: the loopback server's access key is missing or wrong). */
export type BridgeErrorCode = ErrorCode | 'BAD_REQUEST' | 'UNKNOWN_CALL' | 'INTERNAL' | 'UNAUTHORIZED';

export interface BridgeErrorBody {
  code: BridgeErrorCode;
  message: string;
  hint?: string;
}

export type Envelope<T> = { ok: true; value: T } | { ok: false; error: BridgeErrorBody };

export function okReply<T>(value: T): Envelope<T> {
  return { ok: true, value };
}

export function errorReply(code: BridgeErrorCode, message: string, hint?: string): { ok: false; error: BridgeErrorBody } {
  return hint === undefined ? { ok: false, error: { code, message } } : { ok: false, error: { code, message, hint } };
}

/** Turns anything thrown by a handler into an error reply; unknown errors become INTERNAL. */
export function replyFromError(e: unknown): { ok: false; error: BridgeErrorBody } {
  if (isDeflatorError(e)) return errorReply(e.code, e.message, e.hint);
  if (typeof e === 'object' && e !== null && (e as { name?: unknown }).name === 'AbortError') {
    return errorReply('CANCELLED', 'the task was cancelled', 'start it again when ready');
  }
  const message = e instanceof Error ? e.message : String(e);
  return errorReply('INTERNAL', `unexpected failure: ${message}`, 'this is a defect; the log has details');
}

/** Is this value shaped like an envelope (for clients reading untrusted JSON)? */
export function isEnvelope(v: unknown): v is Envelope<unknown> {
  if (typeof v !== 'object' || v === null) return false;
  const o = v as { ok?: unknown; error?: unknown };
  if (o.ok === true) return 'value' in o;
  if (o.ok === false) {
    const err = o.error as { code?: unknown; message?: unknown } | undefined;
    return typeof err === 'object' && err !== null && typeof err.code === 'string' && typeof err.message === 'string';
  }
  return false;
}
