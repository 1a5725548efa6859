/**
 * A streaming CSV reader per RFC 4180: fields separated by commas (or another delimiter
 * the user names: semicolon, tab, vertical bar), records by CRLF or LF
 * (a lone CR is accepted too), fields optionally enclosed in double quotes, a quote inside
 * a quoted field written as two quotes, and commas and line breaks allowed inside quotes.
 * Reads the file in fixed-size chunks (memory does not grow with the file), checks that
 * the bytes are UTF-8 (a leading byte-order mark is skipped), and hands each record to a
 * callback as byte ranges into the chunk, so numbers and dates are parsed without
 * building a string per field.
 *
 * Strict where RFC 4180 is: a quote inside an unquoted field, or text after a closing
 * quote, is an error naming the line and column. Empty lines are skipped.
 */
import { open, stat, type FileHandle } from 'node:fs/promises';
import type { BigIntStats } from 'node:fs';
import { isUtf8 } from 'node:buffer';
import type { DelimiterName } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';

const QUOTE = 0x22;
const COMMA = 0x2c;
const CR = 0x0d;
const LF = 0x0a;
/** 1 for the bytes that end an unquoted field (or are not allowed in one), for a delimiter. */
function specialBytes(delimiter: number): Uint8Array {
  const special = new Uint8Array(256);
  special[QUOTE] = special[delimiter] = special[CR] = special[LF] = 1;
  return special;
}

/** Field delimiters a file may use (RFC 4180 says comma; the others are common exports). */
export const DELIMITERS = { comma: ',', semicolon: ';', tab: '\t', bar: '|' } as const satisfies Record<DelimiterName, string>;
export type { DelimiterName };

/** One record. Valid only during the callback: the bytes are reused afterwards. */
export class CsvRow {
  /** Physical line (1-based) where the record starts. */
  line = 0;
  /** Number of fields. */
  count = 0;
  buf: Buffer = Buffer.alloc(0);
  start = new Int32Array(16);
  end = new Int32Array(16);
  /** 0 unquoted, 1 quoted, 2 quoted with doubled quotes inside. */
  quoted = new Uint8Array(16);
  /** Physical line where the record's last field ends. */
  endLine = 0;
  /** Physical line where each field starts (differs from `line` after an embedded line break). */
  fieldLine = new Int32Array(16);

  grow(): void {
    const n = this.start.length * 2;
    const s = new Int32Array(n);
    s.set(this.start);
    this.start = s;
    const e = new Int32Array(n);
    e.set(this.end);
    this.end = e;
    const q = new Uint8Array(n);
    q.set(this.quoted);
    this.quoted = q;
    const l = new Int32Array(n);
    l.set(this.fieldLine);
    this.fieldLine = l;
  }

  /** The field as text (quotes removed, doubled quotes undone). */
  text(i: number): string {
    if (i >= this.count) return '';
    const s = this.buf.toString('utf8', this.start[i], this.end[i]);
    return this.quoted[i] === 2 ? s.replaceAll('""', '"') : s;
  }

  /** True when the field is empty or only spaces/tabs. */
  blank(i: number): boolean {
    if (i >= this.count) return true;
    for (let k = this.start[i]; k < this.end[i]; k++) {
      const c = this.buf[k];
      if (c !== 0x20 && c !== 0x09) return false;
    }
    return true;
  }
}

export interface CsvReadOptions {
  /** Called after each chunk with the bytes read so far and the file size. */
  onProgress?: (bytesRead: number, totalBytes: number) => void;
  /** Bytes per read (default 1 MiB). */
  chunkSize?: number;
  /** Fed every byte of the file as it is read (e.g. a SHA-256 of the file). */
  hash?: { update(data: Uint8Array): unknown };
  /** The field delimiter's byte (default a comma). */
  delimiter?: number;
  /** Stop after this many records (a preview); the rest of the file is not read. */
  maxRecords?: number;
}

export interface CsvReadSummary {
  bytes: number;
  records: number;
  lines: number;
}

/** Position of the first byte that is not valid UTF-8 in buf[from, to) (-1 when none). */
function firstInvalidUtf8(buf: Buffer, from: number, to: number): number {
  let i = from;
  while (i < to) {
    const c = buf[i];
    if (c < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let min: number;
    if (c >= 0xc2 && c <= 0xdf) (need = 1), (min = 0x80);
    else if (c >= 0xe0 && c <= 0xef) (need = 2), (min = 0x800);
    else if (c >= 0xf0 && c <= 0xf4) (need = 3), (min = 0x10000);
    else return i;
    let cp = c & (need === 1 ? 0x1f : need === 2 ? 0x0f : 0x07);
    for (let k = 1; k <= need; k++) {
      const b = buf[i + k];
      if (i + k >= to || (b & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (b & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return -1;
}

/** End of the last complete UTF-8 sequence in buf[from, to): bytes after it wait for the next chunk. */
function completeUtf8End(buf: Buffer, from: number, to: number): number {
  for (let k = 1; k <= 3 && to - k >= from; k++) {
    const c = buf[to - k];
    if ((c & 0xc0) === 0x80) continue; // continuation byte: keep looking for the lead
    const len = c >= 0xf0 ? 4 : c >= 0xe0 ? 3 : c >= 0xc0 ? 2 : 1;
    return len > k ? to - k : to;
  }
  return to;
}

/**
 * A file that changed while it was read is refused: its bytes are not one version of it
 * (a file cut short while it was imported was stored as a prefix, its last number cut).
 * Compared with the start: the bytes read and the size, the size now, the modification
 * time, and that the path still names the same file (not one saved over it by rename).
 */
async function unchangedSince(fh: FileHandle, file: string, began: BigIntStats, bytesRead: number | undefined): Promise<void> {
  const now = await fh.stat({ bigint: true });
  const atPath = await stat(file, { bigint: true }).catch(() => undefined);
  const startBytes = Number(began.size);
  let what: string | undefined;
  if (now.size !== began.size) what = `it had ${startBytes} bytes when the import began and has ${now.size} now`;
  else if (bytesRead !== undefined && bytesRead !== startBytes) what = `it had ${startBytes} bytes when the import began, ${bytesRead} were read`;
  else if (now.mtimeNs !== began.mtimeNs) what = 'it was written to while it was read (its modification time changed)';
  else if (!atPath || atPath.ino !== began.ino || atPath.dev !== began.dev) what = atPath ? 'another file was saved in its place while it was read' : 'it was deleted or moved while it was read';
  if (what) throw new DeflatorError('INPUT_INVALID', `${file} changed while it was being imported: ${what}`, 'import it again once nothing is writing to it (a download, copy or export still running?); nothing was stored');
}

/**
 * Reads `file` record by record. `onRow` runs synchronously for each record; a thrown
 * error stops the read and propagates.
 */
export async function readCsv(file: string, onRow: (row: CsvRow) => void, options: CsvReadOptions = {}): Promise<CsvReadSummary> {
  const chunk = options.chunkSize ?? 1 << 20;
  const DELIM = options.delimiter ?? COMMA;
  if (DELIM === QUOTE || DELIM === CR || DELIM === LF || DELIM > 0x7f) throw new DeflatorError('INPUT_INVALID', 'the field delimiter must be an ASCII character other than a double quote or a line break', 'use a comma, semicolon, tab or vertical bar');
  const SPECIAL = specialBytes(DELIM);
  const maxRecords = options.maxRecords ?? Number.POSITIVE_INFINITY;
  const fh = await open(file, 'r').catch((e: NodeJS.ErrnoException) => {
    throw new DeflatorError('NOT_FOUND', `cannot read ${file}: ${e.code === 'ENOENT' ? 'no such file' : e.message}`, 'check the file name and path');
  });
  let began: BigIntStats | undefined;
  try {
    // the file as it is when the read begins: its size and identity (device, inode,
    // modification time to the nanosecond), checked again when the read reaches its end
    began = await fh.stat({ bigint: true });
    const size = Number(began.size);
    if (size === 0) throw new DeflatorError('INPUT_INVALID', `${file} is empty`, 'choose a CSV file with a header line and data rows');
    let buf = Buffer.allocUnsafe(Math.max(chunk * 2, 1024));
    let len = 0; // bytes in buf
    let pos = 0; // start of the unparsed rest (a record boundary)
    let checked = 0; // bytes validated as UTF-8
    let line = 1; // line number at pos
    let bytesRead = 0;
    let records = 0;
    let first = true;
    const row = new CsvRow();

    const fail = (at: number, atLine: number, what: string, hint: string): never => {
      // column in characters from the start of the physical line
      let ls = at;
      while (ls > 0 && buf[ls - 1] !== LF && buf[ls - 1] !== CR) ls--;
      if (ls < pos) ls = pos;
      const col = buf.toString('utf8', ls, at).length + 1;
      throw new DeflatorError('INPUT_INVALID', `${file}, line ${atLine}, column ${col}: ${what}`, hint);
    };

    const linesBetween = (from: number, to: number): number => {
      let n = 0;
      let k = buf.indexOf(LF, from);
      while (k !== -1 && k < to) {
        n++;
        k = buf.indexOf(LF, k + 1);
      }
      return n;
    };

    /** Parses one record at p; returns the position after it, or -1 if it needs more bytes. */
    const parseRecord = (p: number, eof: boolean): number => {
      let i = p;
      let f = 0;
      let ln = line;
      row.line = line;
      for (;;) {
        if (f === row.start.length) row.grow();
        row.fieldLine[f] = ln;
        if (i < len && buf[i] === QUOTE) {
          let j = i + 1;
          let escaped = false;
          let k: number;
          for (;;) {
            k = buf.indexOf(QUOTE, j);
            if (k === -1 || k >= len) {
              if (!eof) return -1;
              fail(i, ln, 'a quoted field is never closed (missing closing double quote)', 'close the quote, or write a quote inside a quoted field as two quotes ("")');
            }
            if (k + 1 >= len && !eof) return -1;
            if (k + 1 < len && buf[k + 1] === QUOTE) {
              escaped = true;
              j = k + 2;
              continue;
            }
            break;
          }
          row.start[f] = i + 1;
          row.end[f] = k;
          row.quoted[f] = escaped ? 2 : 1;
          ln += linesBetween(i + 1, k);
          i = k + 1;
          if (i < len) {
            const c = buf[i];
            if (c !== DELIM && c !== LF && c !== CR) fail(i, ln, 'unexpected text after a closing double quote', `a quoted field must be followed by ${DELIM === COMMA ? 'a comma' : 'the delimiter'} or the end of the line (RFC 4180)`);
          }
        } else {
          let j = i;
          while (j < len && SPECIAL[buf[j]] === 0) j++;
          if (j >= len && !eof) return -1;
          if (j < len && buf[j] === QUOTE) fail(j, ln, 'a double quote inside an unquoted field', 'enclose the whole field in double quotes and write the quote as two quotes ("") (RFC 4180)');
          row.start[f] = i;
          row.end[f] = j;
          row.quoted[f] = 0;
          i = j;
        }
        f++;
        if (i >= len) {
          // end of file without a final line break
          row.count = f;
          row.endLine = ln;
          return i;
        }
        const c = buf[i];
        if (c === DELIM) {
          i++;
          continue;
        }
        if (c === CR) {
          if (i + 1 >= len && !eof) return -1;
          i += i + 1 < len && buf[i + 1] === LF ? 2 : 1;
        } else i++; // LF
        row.count = f;
        row.endLine = ln;
        return i;
      }
    };

    for (;;) {
      // keep the unparsed rest at the front, then read the next chunk behind it
      if (pos > 0) {
        buf.copy(buf, 0, pos, len);
        len -= pos;
        checked -= pos;
        pos = 0;
      }
      // a record longer than a chunk is parsed again from its start after every read: read
      // as many bytes as are pending, so a 64 MB line is re-parsed a few times, not 64
      const want = Math.max(chunk, len);
      if (len + want > buf.length) {
        const bigger = Buffer.allocUnsafe(Math.max(buf.length * 2, len + want));
        buf.copy(bigger, 0, 0, len);
        buf = bigger;
      }
      const { bytesRead: n } = await fh.read(buf, len, want, null);
      const eof = n === 0;
      if (n > 0) options.hash?.update(buf.subarray(len, len + n));
      len += n;
      bytesRead += n;
      if (first) {
        // the byte-order marks need the first three bytes: read on until there are three
        if (len < 3 && !eof) continue;
        first = false;
        if (len >= 2 && ((buf[0] === 0xff && buf[1] === 0xfe) || (buf[0] === 0xfe && buf[1] === 0xff))) {
          throw new DeflatorError('INPUT_INVALID', `${file}, line 1, column 1: the file is UTF-16 encoded, not UTF-8`, 'save the file as UTF-8 (CSV UTF-8) and import it again');
        }
        if (len >= 3 && buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) pos = checked = 3;
      }
      const upto = eof ? len : completeUtf8End(buf, checked, len);
      if (upto > checked) {
        if (!isUtf8(buf.subarray(checked, upto))) {
          const bad = firstInvalidUtf8(buf, checked, upto);
          const at = bad === -1 ? checked : bad;
          fail(at, line + linesBetween(pos, at), `byte 0x${buf[at].toString(16).padStart(2, '0')} is not valid UTF-8`, 'save the file as UTF-8 (CSV UTF-8) and import it again');
        }
        // NUL is valid UTF-8 but never in a text file: UTF-16 without a byte-order mark, or binary
        const nul = buf.subarray(checked, upto).indexOf(0);
        if (nul !== -1) {
          const at = checked + nul;
          fail(at, line + linesBetween(pos, at), 'byte 0x00 (NUL) is not text: the file looks UTF-16 encoded (without a byte-order mark) or binary', 'save the file as UTF-8 (CSV UTF-8) and import it again');
        }
        checked = upto;
      }
      // parse the complete records in [pos, checked) (at the end of the file, everything)
      const limit = eof ? len : checked;
      const realLen = len;
      len = limit;
      while (pos < len) {
        const next = parseRecord(pos, eof);
        if (next === -1) break;
        row.buf = buf;
        const empty = row.count === 1 && row.quoted[0] === 0 && row.end[0] === row.start[0];
        if (!empty) {
          records++;
          onRow(row);
        }
        line = row.endLine + 1;
        pos = next;
        if (records >= maxRecords) return { bytes: bytesRead, records, lines: line - 1 };
      }
      len = realLen;
      options.onProgress?.(bytesRead, size);
      if (eof) break;
    }
    await unchangedSince(fh, file, began, bytesRead);
    return { bytes: bytesRead, records, lines: line - 1 };
  } catch (e) {
    // a file cut or grown mid-read fails on its broken last row: say the real cause
    if (began) await unchangedSince(fh, file, began, undefined);
    throw e;
  } finally {
    await fh.close();
  }
}
