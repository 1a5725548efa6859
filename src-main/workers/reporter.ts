/**
 * The worker side of progress and cancel: posts {done, total} on the task's port at
 * most every 50 ms (and always the last one), and reads the shared cancel flag.
 */
import type { MessagePort } from 'node:worker_threads';
import type { ProgressMessage } from './protocol.js';
import type { CancelToken } from '../../shared/backtest/index.js';

export class Reporter {
  private last = 0;
  private lastStage: string | undefined;
  constructor(
    private readonly port: MessagePort | undefined,
    private readonly flag: Int32Array | undefined,
  ) {}

  progress = (done: number, total: number, stage?: string): void => {
    if (!this.port) return;
    const now = Date.now();
    if (done < total && stage === this.lastStage && now - this.last < 50) return;
    this.last = now;
    this.lastStage = stage;
    const m: ProgressMessage = stage === undefined ? { type: 'progress', done, total } : { type: 'progress', done, total, stage };
    this.port.postMessage(m);
  };

  get signal(): CancelToken {
    return cancelToken(this.flag);
  }

  end(): void {
    if (!this.port) return;
    const m: ProgressMessage = { type: 'end' };
    this.port.postMessage(m);
    this.port.close();
  }
}

/** A cancel token over the shared flag. */
export function cancelToken(flag: Int32Array | undefined): CancelToken {
  return {
    get aborted(): boolean {
      return flag !== undefined && Atomics.load(flag, 0) === 1;
    },
  };
}
