/**
 * Request validation, the first thing every transport does with an incoming call.
 * Unknown calls, wrong types, missing fields and extra keys all become an error reply.
 */
import { formatSpecIssues } from '../spec.js';
import { CALLS, isCallName } from './calls.js';
import type { CallName, ParsedRequestOf } from './calls.js';
import { errorReply } from './envelope.js';
import type { BridgeErrorBody } from './envelope.js';

export type Validated<K extends CallName> = { ok: true; name: K; request: ParsedRequestOf<K> } | { ok: false; error: BridgeErrorBody };

export function validateRequest(name: unknown, raw: unknown): Validated<CallName> {
  if (!isCallName(name)) {
    const shown = typeof name === 'string' ? JSON.stringify(name.slice(0, 80)) : typeof name;
    return errorReply('UNKNOWN_CALL', `no bridge call named ${shown}`, `known calls: ${Object.keys(CALLS).join(', ')}`);
  }
  const schema = CALLS[name].request;
  const r = schema.safeParse(raw === undefined ? {} : raw);
  if (!r.success) {
    const allSpec = r.error.issues.every((i) => i.path[0] === 'spec' && i.path.length > 1);
    return errorReply(
      allSpec ? 'SPEC_INVALID' : 'BAD_REQUEST',
      formatSpecIssues(r.error, `${name}`),
      allSpec ? 'fix the spec keys named above; docs/spec.md lists every key' : `the ${name} request is malformed: see the fields named above`,
    );
  }
  return { ok: true, name, request: r.data as ParsedRequestOf<CallName> };
}
