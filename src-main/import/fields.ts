/**
 * Field parsers working on byte ranges: decimal numbers (a point as the decimal mark, or
 * a comma when asked for; thousands separators only when asked for) and dates (ISO 8601
 * YYYY-MM-DD by default; other orders, and period keys such as YYYYMM or YYYYQn, only
 * when the user names the format).
 */
import { DATE_FORMATS, DAY_FORMATS, PERIOD_FORMATS, type DecimalName as SharedDecimal } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { dayNumber, daysInMonth } from '../data/calendar.js';

const SPACE = 0x20;
const TAB = 0x09;
const ZERO = 0x30;
const NINE = 0x39;
const DOT = 0x2e;
const COMMA = 0x2c;
const PLUS = 0x2b;
const MINUS = 0x2d;

/** Exactly representable powers of ten (10^0 .. 10^22). */
const POW10 = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
const TWO53 = 2 ** 53;

/** Separators the thousands option accepts ('point' only with a comma as the decimal mark). */
export const THOUSANDS_SEPARATORS = { comma: ',', space: ' ', apostrophe: "'", underscore: '_', point: '.' } as const;
export type ThousandsName = keyof typeof THOUSANDS_SEPARATORS;

/** Decimal marks: a point (default) or a comma (1,5: files written with a comma as the decimal mark, separated by ; or tabs). */
export const DECIMAL_MARKS = { point: '.', comma: ',' } as const satisfies Record<SharedDecimal, string>;
export type DecimalName = keyof typeof DECIMAL_MARKS;

/**
 * Parses a decimal number in buf[s, e), spaces around it allowed; NaN if the text is not
 * one. `sep` is the thousands separator's byte (0: none allowed), `dec` the decimal
 * mark's (a point by default). The result is the correctly rounded double: small cases
 * by Clinger's exact fast path (an integer below 2^53 times or divided by an exact power
 * of ten), the rest by Number().
 */
export function parseNumber(buf: Uint8Array, s: number, e: number, sep = 0, dec = DOT): number {
  while (s < e && (buf[s] === SPACE || buf[s] === TAB)) s++;
  while (e > s && (buf[e - 1] === SPACE || buf[e - 1] === TAB)) e--;
  if (s === e) return NaN;
  let i = s;
  let negative = false;
  if (buf[i] === MINUS || buf[i] === PLUS) {
    negative = buf[i] === MINUS;
    i++;
  }
  let mant = 0;
  let digits = 0;
  let frac = 0;
  let exact = true;
  let groupLen = 0;
  let sawSep = false;
  // integer part
  for (; i < e; i++) {
    const c = buf[i];
    if (c >= ZERO && c <= NINE) {
      mant = mant * 10 + (c - ZERO);
      digits++;
      groupLen++;
    } else if (sep !== 0 && c === sep) {
      if (digits === 0 || (sawSep ? groupLen !== 3 : groupLen > 3)) return NaN;
      sawSep = true;
      groupLen = 0;
    } else break;
  }
  if (sawSep && groupLen !== 3) return NaN;
  if (i < e && buf[i] === dec) {
    i++;
    for (; i < e; i++) {
      const c = buf[i];
      if (c < ZERO || c > NINE) break;
      mant = mant * 10 + (c - ZERO);
      digits++;
      frac++;
    }
  }
  if (digits === 0) return NaN;
  if (mant >= TWO53) exact = false;
  let exp = 0;
  if (i < e && (buf[i] === 0x65 || buf[i] === 0x45)) {
    i++;
    let expNegative = false;
    if (i < e && (buf[i] === MINUS || buf[i] === PLUS)) {
      expNegative = buf[i] === MINUS;
      i++;
    }
    const at = i;
    for (; i < e; i++) {
      const c = buf[i];
      if (c < ZERO || c > NINE) break;
      if (exp < 100000) exp = exp * 10 + (c - ZERO);
    }
    if (i === at) return NaN;
    if (expNegative) exp = -exp;
  }
  if (i !== e) return NaN;
  const p = exp - frac;
  let v: number;
  if (exact && p >= -22 && p <= 22) v = p < 0 ? mant / POW10[-p] : mant * POW10[p];
  else {
    // the bytes are ASCII here (checked above): decode them at once, not char by char
    // (a 64 MB field built by += took 11 s and 2.4 GB)
    let bytes = sep === 0 ? buf.subarray(s, e) : buf.subarray(s, e).filter((c) => c !== sep);
    if (dec !== DOT) bytes = bytes.map((c) => (c === dec ? DOT : c === DOT ? COMMA : c));
    const text = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length).toString('latin1');
    v = Math.abs(Number(text));
    if (Number.isNaN(v)) return NaN;
  }
  if (!Number.isFinite(v)) return NaN;
  return negative ? -v : v;
}

/** What is wrong with a field parseNumber refused: a decimal beyond a double's range, or not a number at all. */
export function numberProblem(text: string, dec: DecimalName = 'point'): string {
  const t = dec === 'comma' ? text.trim().replace(/\./g, '#').replace(',', '.') : text.trim();
  const decimal = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t);
  return decimal && !Number.isFinite(Number(t)) ? 'is beyond the range of a double (magnitude above 1.8e308)' : 'is not a number';
}

/** A date layout: the order of year, month and day and the separator between them, or a period key. */
export interface DateFormat {
  name: string;
  order: ('Y' | 'M' | 'D')[];
  /** Separator byte, 0 for none (YYYYMMDD). */
  sep: number;
  /** Period keys (METHODS 8): the date read is the period's last calendar day. */
  period?: 'month' | 'quarter' | 'year';
}

export const ISO_DATE: DateFormat = { name: 'YYYY-MM-DD', order: ['Y', 'M', 'D'], sep: MINUS };

/** Layouts the --date-format option accepts (one list, in shared/data.ts). */
export { DAY_FORMATS, PERIOD_FORMATS, DATE_FORMATS };

const PERIOD_LAYOUTS: Record<(typeof PERIOD_FORMATS)[number], DateFormat> = {
  YYYYMM: { name: 'YYYYMM', order: ['Y', 'M'], sep: 0, period: 'month' },
  'YYYY-MM': { name: 'YYYY-MM', order: ['Y', 'M'], sep: MINUS, period: 'month' },
  YYYYQn: { name: 'YYYYQn', order: ['Y'], sep: 0, period: 'quarter' },
  'YYYY-Qn': { name: 'YYYY-Qn', order: ['Y'], sep: MINUS, period: 'quarter' },
  YYYY: { name: 'YYYY', order: ['Y'], sep: 0, period: 'year' },
};

export function dateFormat(name: string): DateFormat {
  const upper = name.toUpperCase();
  const known = DATE_FORMATS.find((f) => f.toUpperCase() === upper);
  if (known === undefined) {
    throw new DeflatorError('INPUT_INVALID', `unknown date format "${name}"`, `use one of ${DATE_FORMATS.join(', ')} (YYYYQn reads 2024Q1)`);
  }
  if (known in PERIOD_LAYOUTS) return PERIOD_LAYOUTS[known as keyof typeof PERIOD_LAYOUTS];
  const sepChar = upper.replace(/[YMD]/g, '')[0];
  const order = upper.replace(/[^YMD]/g, '').replace(/(.)\1+/g, '$1').split('') as DateFormat['order'];
  return { name: upper, order, sep: sepChar ? sepChar.charCodeAt(0) : 0 };
}

const pad2 = (n: number) => (n < 10 ? `0${n}` : String(n));

/**
 * Parses dates of one layout from byte ranges, remembering the ISO text of each day seen
 * (a price file repeats a few thousand dates millions of times).
 */
export class DateParser {
  readonly format: DateFormat;
  private readonly iso = new Map<number, string>();
  private readonly isIso: boolean;
  private readonly parts = [0, 0, 0, 0];
  private readonly widths = [0, 0, 0, 0];
  private readonly bad: string;
  /** The bytes of the last date parsed and its day (a long file repeats each date once per asset). */
  private readonly lastBytes = new Uint8Array(16);
  private lastLen = -1;
  private lastDay = 0;

  constructor(format: DateFormat = ISO_DATE) {
    this.format = format;
    this.isIso = format.name === 'YYYY-MM-DD';
    this.bad = `expected ${format.name}`;
  }

  /** ISO text of a day number this parser returned. */
  text(day: number): string {
    return this.iso.get(day) ?? '';
  }

  /**
   * The day number of the date in buf[s, e), or a string saying what is wrong. ISO needs
   * exactly YYYY-MM-DD; named layouts accept one- or two-digit days and months.
   */
  parse(buf: Uint8Array, s: number, e: number): number | string {
    while (s < e && (buf[s] === SPACE || buf[s] === TAB)) s++;
    while (e > s && (buf[e - 1] === SPACE || buf[e - 1] === TAB)) e--;
    const len = e - s;
    if (len === this.lastLen) {
      let same = true;
      for (let k = 0; k < len; k++) {
        if (buf[s + k] !== this.lastBytes[k]) {
          same = false;
          break;
        }
      }
      if (same) return this.lastDay;
    }
    const day = this.parseNew(buf, s, e);
    if (typeof day === 'number' && len <= 16) {
      this.lastBytes.set(buf.subarray(s, e));
      this.lastLen = len;
      this.lastDay = day;
    }
    return day;
  }

  private parseNew(buf: Uint8Array, s: number, e: number): number | string {
    const fmt = this.format;
    const bad = this.bad;
    let y = 0;
    let m = 0;
    let d = 0;
    const digit = (k: number) => {
      const c = buf[k] - ZERO;
      return c >= 0 && c <= 9 ? c : -1000;
    };
    if (fmt.period) {
      // YYYYMM, YYYY-MM, YYYYQn, YYYY-Qn, YYYY: the period's last calendar day
      const o = fmt.sep === 0 ? 0 : 1;
      const len = fmt.period === 'year' ? 4 : 6 + o;
      if (e - s !== len) return bad;
      y = digit(s) * 1000 + digit(s + 1) * 100 + digit(s + 2) * 10 + digit(s + 3);
      if (y < 0 || (o === 1 && buf[s + 4] !== fmt.sep)) return bad;
      if (fmt.period === 'month') {
        m = digit(s + 4 + o) * 10 + digit(s + 5 + o);
        if (m < 0) return bad;
      } else if (fmt.period === 'quarter') {
        if ((buf[s + 4 + o] | 0x20) !== 0x71) return bad; // Q or q
        const q = digit(s + 5 + o);
        if (q < 0) return bad;
        if (q < 1 || q > 4) return `quarter ${q} does not exist`;
        m = q * 3;
      } else m = 12;
      if (y < 1) return 'there is no year 0000; years start at 0001';
      if (m < 1 || m > 12) return `month ${m} does not exist`;
      d = daysInMonth(y, m);
      const day = dayNumber(y, m, d);
      if (!this.iso.has(day)) this.iso.set(day, `${String(y).padStart(4, '0')}-${pad2(m)}-${pad2(d)}`);
      return day;
    }
    if (this.isIso || fmt.sep === 0) {
      const len = fmt.sep === 0 ? 8 : 10;

      if (e - s !== len) return bad;
      if (fmt.sep !== 0 && (buf[s + 4] !== fmt.sep || buf[s + 7] !== fmt.sep)) return bad;
      const o = fmt.sep === 0 ? 0 : 1;
      y = digit(s) * 1000 + digit(s + 1) * 100 + digit(s + 2) * 10 + digit(s + 3);
      m = digit(s + 4 + o) * 10 + digit(s + 5 + o);
      d = digit(s + 6 + 2 * o) * 10 + digit(s + 7 + 2 * o);
      if (y < 0 || m < 0 || d < 0) return bad;
    } else {
      const parts = this.parts;
      const widths = this.widths;
      let n = 0;
      let v = 0;
      let w = 0;
      for (let k = s; k <= e; k++) {
        if (k === e || buf[k] === fmt.sep) {
          if (w === 0 || n === 3) return bad;
          parts[n] = v;
          widths[n] = w;
          n++;
          v = 0;
          w = 0;
          continue;
        }
        const c = digit(k);
        if (c < 0) return bad;
        v = v * 10 + c;
        w++;
      }
      if (n !== 3) return bad;
      for (let k = 0; k < 3; k++) {
        const want = fmt.order[k];
        if (want === 'Y' ? widths[k] !== 4 : widths[k] > 2) return bad;
        if (want === 'Y') y = parts[k];
        else if (want === 'M') m = parts[k];
        else d = parts[k];
      }
    }
    if (y < 1) return 'there is no year 0000; years start at 0001';
    if (m < 1 || m > 12) return `month ${m} does not exist`;
    if (d < 1 || d > daysInMonth(y, m)) return `${y}-${pad2(m)} has no day ${d}`;
    const day = dayNumber(y, m, d);
    if (!this.iso.has(day)) this.iso.set(day, `${String(y).padStart(4, '0')}-${pad2(m)}-${pad2(d)}`);
    return day;
  }
}

/** Layouts (other than `fmt`) that read `text` as a valid date. */
export function layoutsReading(text: string, fmt: DateFormat): string[] {
  const b = Buffer.from(text.trim(), 'utf8');
  return DATE_FORMATS.filter((name) => name !== fmt.name && typeof new DateParser(dateFormat(name)).parse(b, 0, b.length) === 'number');
}

/** A hint for a date that failed to parse in the layout given (or the default ISO one). */
export function dateHint(text: string, fmt: DateFormat): string {
  if (fmt.name === 'YYYY-MM-DD' && /^\s*\d{1,2}[/.-]\d{1,2}[/.-]\d{4}\s*$/.test(text)) {
    return 'this looks like a day-first or month-first date; deflator never guesses which: name the layout with --date-format (e.g. DD/MM/YYYY or MM/DD/YYYY)';
  }
  const others = layoutsReading(text, fmt);
  if (others.length) return `the date reads as ${others.join(' or ')}: name that layout with --date-format ${others[0]}${fmt.name === 'YYYY-MM-DD' ? '' : ` (this import expects ${fmt.name})`}`;
  return `write dates as ${fmt.name}${fmt.name === 'YYYY-MM-DD' ? ' (ISO 8601), or name another layout with --date-format' : ''}`;
}
