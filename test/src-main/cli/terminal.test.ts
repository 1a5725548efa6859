/** The command line's gate to the terminal (src-main/cli/terminal.ts). ECMA-48 controls. */
import { describe, expect, it } from 'vitest';
import { terminalText } from '../../../src-main/cli/terminal.js';

const HOSTILE = '\u001b]0;owned\u0007\u001b[2J\u001b[31mred\u009b0m';

describe('terminal gate', () => {
  it('the terminal gate keeps CRLF line ends and the progress bar moves, escapes the rest', () => {
    expect(terminalText('a,b\r\n1,2\r\n')).toBe('a,b\r\n1,2\r\n');
    expect(terminalText('\rwindows [##..] 2/4\u001b[K')).toBe('\rwindows [##..] 2/4\u001b[K');
    expect(terminalText(`label ${HOSTILE}\n`)).toBe('label \\u001b]0;owned\\u0007\\u001b[2J\\u001b[31mred\\u009b0m\n');
    expect(terminalText('hidden\rshown')).toBe('hidden\\u000dshown');
  });
});
