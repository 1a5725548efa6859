/** Errors as the screens show them: a message, a hint, and the form fields they point at. */
import { BridgeError } from '../../../shared/bridge/client.js';
import { isDeflatorError } from '../../../shared/errors.js';

export interface UiError {
  code: string;
  message: string;
  hint?: string;
  /** Spec key (e.g. "model.factors", "estimator.lags") -> the problem with it. */
  fields: Record<string, string>;
}

/** "fit.spec.model.factors: needs ..." or "spec.model.factors: ..." -> { "model.factors": "needs ..." }. */
export function fieldsOf(message: string): Record<string, string> {
  const out: Record<string, string> = {};
  const add = (key: string, text: string) => {
    out[key] = out[key] ? `${out[key]}; ${text}` : text;
  };
  for (const line of message.split('\n')) {
    const m = /^\s*(?:[A-Za-z]+\.)?spec(?:\.compare\.\d+)?\.([A-Za-z0-9_.]+):\s*(.+)$/.exec(line);
    if (m) {
      add(m[1], m[2]);
      continue;
    }
    // engine messages name the key in passing: 'factor series "x" (spec.model.factors) is not stored'
    const inner = /\((?:[A-Za-z]+\.)?spec(?:\.compare\.\d+)?\.([A-Za-z0-9_.]+)\)/.exec(line);
    if (inner) add(inner[1], line.trim());
  }
  return out;
}

export function toUiError(e: unknown): UiError {
  if (e instanceof BridgeError || isDeflatorError(e)) {
    const err = e as { code: string; message: string; hint?: string };
    const u: UiError = { code: err.code, message: err.message, fields: fieldsOf(err.message) };
    if (err.hint) u.hint = err.hint;
    return u;
  }
  const message = e instanceof Error ? e.message : String(e);
  return { code: 'INTERNAL', message, fields: {} };
}

/** The first field error whose key starts with one of the prefixes. */
export function fieldError(err: UiError | null | undefined, ...prefixes: string[]): string | undefined {
  if (!err) return undefined;
  for (const [k, v] of Object.entries(err.fields)) if (prefixes.some((p) => k === p || k.startsWith(`${p}.`))) return v;
  return undefined;
}
