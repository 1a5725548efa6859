/**
 * The one error type the domain core throws. `code` is stable (scripts and the app
 * branch on it); `message` names the cause; `hint` says what to do next.
 */
export type ErrorCode =
  | 'SPEC_INVALID'
  | 'INPUT_INVALID'
  | 'DATA_MISSING'
  | 'SAMPLE_TOO_SHORT'
  | 'SINGULAR'
  | 'NOT_POSITIVE_DEFINITE'
  | 'NO_CONVERGENCE'
  | 'UNDERIDENTIFIED'
  | 'CANCELLED'
  | 'NOT_FOUND'
  | 'CONFLICT'
  /** A file or request outside what this session may touch (app file policy, foreign origin). */
  | 'FORBIDDEN'
  /** The project database is locked by another writer beyond the wait (try again when it is done). */
  | 'BUSY'
  /** The project database (or a file to write) may not be written: read-only file, folder or disk, permission, disk full, I/O error. */
  | 'NOT_WRITABLE'
  /** The project database is damaged (malformed pages, not a database). */
  | 'DAMAGED';

export class DeflatorError extends Error {
  readonly code: ErrorCode;
  readonly hint?: string;
  constructor(code: ErrorCode, message: string, hint?: string) {
    super(message);
    this.name = 'DeflatorError';
    this.code = code;
    if (hint !== undefined) this.hint = hint;
  }
}

export function isDeflatorError(e: unknown): e is DeflatorError {
  return e instanceof DeflatorError || (typeof e === 'object' && e !== null && (e as { name?: unknown }).name === 'DeflatorError');
}

/** One line for a terminal or a status bar: message, then the hint. */
export function describeError(e: unknown): string {
  if (isDeflatorError(e)) return e.hint ? `${e.message}\n  -> ${e.hint}` : e.message;
  if (e instanceof Error) return e.message;
  return String(e);
}
