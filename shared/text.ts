/**
 * The control-character rule for any text that may reach a terminal (names, spec
 * values, file names, labels of stored runs): C0 controls other than tab and line
 * breaks, DEL and the C1 controls make a terminal act (move the cursor, change colours,
 * set the window title, in some terminals run commands). Inputs holding one are refused
 * where they enter (imports, specs); whatever is printed anyway has them shown as \uXXXX.
 */

const CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/;
/** What printing escapes: the same, and a carriage return too (it would overwrite the line). */
const PRINT_CONTROLS = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/g;

/** Where the text holds a control character (C0 other than tab and line breaks, DEL, C1), or -1. */
export function controlCharAt(text: string): number {
  return text.search(CONTROL);
}

/** "U+001B" for the character at i. */
export function codePointAt(text: string, i: number): string {
  return `U+${text.charCodeAt(i).toString(16).toUpperCase().padStart(4, '0')}`;
}

/** The text with every control character, and carriage returns, written as \uXXXX (tab and line feed kept). */
export function escapeControls(text: string): string {
  return text.replace(PRINT_CONTROLS, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/**
 * Every string inside a JSON-like value that holds a control character, as
 * "<path>: holds the control character U+001B" lines (keys are checked too).
 */
export function controlProblems(value: unknown, root: string): string[] {
  const out: string[] = [];
  const seen = new Set<unknown>();
  // `where` is a dotted path of plain keys; below a key that is not plain (spaces, dots,
  // controls) the path stops at its parent and the message quotes the key instead
  const walk = (v: unknown, where: string, under: string, depth: number): void => {
    if (typeof v === 'string') {
      const at = controlCharAt(v);
      if (at >= 0) out.push(`${where}: ${under}holds the control character ${codePointAt(v, at)}`);
      return;
    }
    if (typeof v !== 'object' || v === null || depth > 64 || seen.has(v)) return;
    seen.add(v);
    if (Array.isArray(v)) {
      v.forEach((x, i) => walk(x, under ? where : `${where}.${i}`, under, depth + 1));
      return;
    }
    for (const [k, x] of Object.entries(v)) {
      const at = controlCharAt(k);
      if (at >= 0) out.push(`${where}: the key "${escapeControls(k)}" holds the control character ${codePointAt(k, at)}`);
      const plain = !under && /^[A-Za-z0-9_$-]+$/.test(k);
      walk(x, plain ? `${where}.${k}` : where, plain ? '' : under || `the value under key "${escapeControls(k)}" `, depth + 1);
    }
  };
  walk(value, root, '', 0);
  return out;
}

/**
 * A whole number with commas between groups of three digits ("20,000"), as
 * toLocaleString('en-US') writes it, without loading the locale data (about 15 ms the
 * first time in a command-line process).
 */
export function groupedInteger(n: number): string {
  if (!Number.isSafeInteger(n)) return String(n);
  const digits = String(Math.abs(n));
  let out = '';
  for (let i = 0; i < digits.length; i++) {
    if (i > 0 && (digits.length - i) % 3 === 0) out += ',';
    out += digits[i];
  }
  return n < 0 ? `-${out}` : out;
}
