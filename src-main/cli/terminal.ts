/**
 * The command line's one gate to the terminal: every string written to stdout or stderr
 * has its control characters shown as \uXXXX (shared/text.ts), whatever command wrote it
 * and whatever it quotes (a spec label, a stored run's label, a file name, a message
 * quoting file contents). Let through are only CRLF line ends and the progress bars' own
 * moves: a carriage return opening a write, and erase-to-end-of-line (ESC [ K). Bytes (Buffers) pass
 * unchanged: they are file contents a user asked for, not text.
 */
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

export function guardTerminal(): void {
  guardStream(process.stdout);
  guardStream(process.stderr);
}
