/**
 * The control-character rule (shared/text.ts). The characters are those ECMA-48 (ISO/IEC
 * 6429) defines as controls: C0 (U+0000-U+001F), DEL (U+007F) and C1 (U+0080-U+009F);
 * tab and line breaks are kept in names, carriage returns are escaped when printed.
 */
import { describe, expect, it } from 'vitest';
import { codePointAt, controlCharAt, controlProblems, escapeControls, groupedInteger } from '../../shared/text.js';

describe('control characters', () => {
  it('finds C0 (but tab and line breaks), DEL and C1', () => {
    expect(controlCharAt('plain name')).toBe(-1);
    expect(controlCharAt('tab\there\nand\r\nbreaks')).toBe(-1);
    for (const c of ['\u0000', '\u0007', '\u001b', '\u007f', '\u0085', '\u009b']) expect(controlCharAt(`a${c}b`), codePointAt(c, 0)).toBe(1);
    expect(codePointAt('x\u001b', 1)).toBe('U+001B');
  });

  it('escapes what printing must not pass: the same, and lone carriage returns', () => {
    expect(escapeControls('\u001b]0;title\u0007 red \u001b[31m')).toBe('\\u001b]0;title\\u0007 red \\u001b[31m');
    expect(escapeControls('over\rwrite')).toBe('over\\u000dwrite');
    expect(escapeControls('keep\ttab\nline')).toBe('keep\ttab\nline');
    expect(escapeControls('csi \u009b2J')).toBe('csi \\u009b2J');
  });

  it('names every string and key of a JSON value holding one, by its path', () => {
    const spec = { label: 'ok\u001b[2J', model: { factors: ['a', 'b\u0007'] }, compare: [{ label: 'x' }, { label: '\u009bclear' }], ['k\u001b']: 1, 'odd key': { deep: ['\u0000'] } };
    expect(controlProblems(spec, 'spec')).toEqual([
      'spec.label: holds the control character U+001B',
      'spec.model.factors.1: holds the control character U+0007',
      'spec.compare.1.label: holds the control character U+009B',
      'spec: the key "k\\u001b" holds the control character U+001B',
      'spec: the value under key "odd key" holds the control character U+0000',
    ]);
    expect(controlProblems({ label: 'fine', n: 3, list: [null, true] }, 'spec')).toEqual([]);
  });
});

describe('grouped integers', () => {
  it("writes what ECMA-402's toLocaleString('en-US') writes for whole numbers", () => {
    for (const n of [0, 7, 999, 1000, 20_000, 123_456, 1_234_567, -1_234_567, 1e15, Number.MAX_SAFE_INTEGER, -Number.MAX_SAFE_INTEGER]) {
      expect(groupedInteger(n), String(n)).toBe(n.toLocaleString('en-US'));
    }
  });
});
