/**
 * A progress bar on stderr, drawn only when stderr is a terminal (never in pipes, files
 * or CI logs, so --json output and redirected reports stay clean):
 *
 *   windows [##########..........] 240/480  50%  0:03
 *
 * Redrawn at most ten times a second; cleared when the task ends.
 */
import { stderrStream } from './terminal.js';
export interface ProgressBar {
  update(done: number, total: number, stage?: string): void;
  finish(): void;
}

interface Tty {
  isTTY?: boolean;
  columns?: number;
  write(s: string): boolean;
}

export function formatBar(label: string, done: number, total: number, elapsedMs: number, width = 24): string {
  const frac = total > 0 ? Math.min(1, Math.max(0, done / total)) : 0;
  const filled = Math.round(frac * width);
  const secs = Math.floor(elapsedMs / 1000);
  const clock = `${Math.floor(secs / 60)}:${String(secs % 60).padStart(2, '0')}`;
  return `${label} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${done}/${total} ${String(Math.round(frac * 100)).padStart(3)}%  ${clock}`;
}

export function progressBar(label: string, stream: Tty = stderrStream(), now: () => number = Date.now): ProgressBar {
  if (!stream.isTTY) return { update: () => {}, finish: () => {} };
  const started = now();
  let last = Number.NEGATIVE_INFINITY;
  let drawn = false;
  return {
    update(done, total, stage) {
      const t = now();
      if (done < total && t - last < 100) return;
      last = t;
      const line = formatBar(stage ?? label, done, total, t - started);
      const cols = stream.columns ?? 80;
      stream.write(`\r${line.slice(0, cols - 1).padEnd(Math.min(cols - 1, line.length))}\x1b[K`);
      drawn = true;
    },
    finish() {
      if (drawn) stream.write('\r\x1b[K');
      drawn = false;
    },
  };
}
