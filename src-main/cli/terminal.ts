/**
 * The command line's one gate to the terminal: every string written to stdout or stderr
 * has its control characters shown as \uXXXX (shared/text.ts), whatever command wrote it
 * and whatever it quotes (a spec label, a stored run's label, a file name, a message
 * quoting file contents). Let through are only CRLF line ends and the progress bars' own
 * moves: a carriage return opening a write, and erase-to-end-of-line (ESC [ K). Bytes (Buffers) pass
 * unchanged: they are file contents a user asked for, not text.
 */
import { writeSync } from 'node:fs';
import { escapeControls } from '../../shared/text.js';

const ERASE_LINE = '\u001b[K';

/** The text as it may reach a terminal. */
export function terminalText(text: string): string {
  if (text.startsWith('\r') && !text.startsWith('\r\n')) return `\r${terminalText(text.slice(1))}`;
  // CRLF line ends (RFC 4180 CSV on stdout) stay; a lone carriage return does not
  return text
    .split('\r\n')
    .map((part) => (part.includes(ERASE_LINE) ? part.split(ERASE_LINE).map(escapeControls).join(ERASE_LINE) : escapeControls(part)))
    .join('\r\n');
}

type Write = NodeJS.WriteStream['write'];

/** Wraps the stream's write so strings pass terminalText first. Idempotent. */
export function guardStream(stream: NodeJS.WriteStream): void {
  const marked = stream as NodeJS.WriteStream & { deflatorGuarded?: boolean };
  if (marked.deflatorGuarded) return;
  marked.deflatorGuarded = true;
  const write = stream.write.bind(stream) as (chunk: unknown, ...rest: unknown[]) => boolean;
  stream.write = ((chunk: unknown, ...rest: unknown[]) => write(typeof chunk === 'string' ? terminalText(chunk) : chunk, ...rest)) as Write;
}

/** A reader that closes the pipe early (`deflator info | head`) is not an error: exit as if done. */
function exitOnClosedPipe(e: NodeJS.ErrnoException): void {
  if (e.code === 'EPIPE') process.exit(process.exitCode === undefined ? 0 : Number(process.exitCode));
  throw e;
}

/**
 * Writes to file descriptor fd at once, all of it (a pipe may take it in parts, and a
 * descriptor another program left non-blocking may ask to try again).
 */
function writeAll(fd: number, bytes: Uint8Array): void {
  let done = 0;
  while (done < bytes.length) {
    try {
      done += writeSync(fd, bytes, done, bytes.length - done);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EAGAIN') return exitOnClosedPipe(e as NodeJS.ErrnoException);
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 1); // the reader is behind: wait a millisecond
    }
  }
}

const put = (fd: number, chunk: string | Uint8Array) => writeAll(fd, typeof chunk === 'string' ? Buffer.from(terminalText(chunk), 'utf8') : chunk);

/**
 * The command line's output: to stdout (out) and stderr (err), written before the call
 * returns, strings through terminalText, bytes as they are. Written straight to the file
 * descriptors: Node's process.stdout and process.stderr load its stream modules (about
 * 3 ms of every command) and are made only where a terminal's properties are needed
 * (stderrStream, for progress bars).
 */
export const out = (chunk: string | Uint8Array): void => put(1, chunk);
export const err = (chunk: string | Uint8Array): void => put(2, chunk);

/** process.stderr, guarded (terminalText) and quiet on a closed pipe: for progress bars, which ask whether it is a terminal and how wide. */
export function stderrStream(): NodeJS.WriteStream {
  const stream = process.stderr;
  if (!(stream as { deflatorGuarded?: boolean }).deflatorGuarded) {
    guardStream(stream);
    stream.on('error', exitOnClosedPipe);
  }
  return stream;
}
