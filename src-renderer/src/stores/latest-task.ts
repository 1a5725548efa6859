/**
 * The bookkeeping every long-running screen store shares: a new run aborts the one before
 * it, and only the latest run may write its result or error, or clear `running`.
 */
import { toUiError } from '../lib/errors.js';
import type { UiError } from '../lib/errors.js';

export interface TaskHolder {
  running: boolean;
  controller: AbortController | null;
}

export async function runLatest<R>(
  holder: TaskHolder,
  call: (signal: AbortSignal) => Promise<R>,
  on: { result: (r: R) => void; error: (e: UiError) => void },
): Promise<R | undefined> {
  holder.controller?.abort();
  const ac = new AbortController();
  holder.controller = ac;
  holder.running = true;
  try {
    const result = await call(ac.signal);
    if (holder.controller !== ac) return undefined;
    on.result(result);
    return result;
  } catch (e) {
    if (holder.controller === ac) on.error(toUiError(e));
    return undefined;
  } finally {
    if (holder.controller === ac) {
      holder.running = false;
      holder.controller = null;
    }
  }
}
