/**
 * How a file's bytes are read, shared by every importer (prices, series, returns) and the
 * import preview: the field delimiter, the date layout, the decimal mark and thousands
 * separator, and the missing-value codes. One `Reading` per import; `read()` is the one
 * path through which every importer reads its file, so checks on the file as a whole
 * belong there.
 */
import { DeflatorError } from '../../shared/errors.js';
import { readCsv, DELIMITERS, type CsvReadOptions, type CsvReadSummary, type CsvRow, type DelimiterName } from './csv.js';
import { DECIMAL_MARKS, DateParser, ISO_DATE, THOUSANDS_SEPARATORS, dateFormat, numberProblem, parseNumber, type DecimalName, type ThousandsName } from './fields.js';

export interface ReadingOptions {
  /** A named date layout (fields.ts DATE_FORMATS); ISO YYYY-MM-DD when absent. */
  dateFormat?: string;
  /** Field delimiter (default comma). */
  delimiter?: DelimiterName;
  /** Decimal mark (default point). */
  decimal?: DecimalName;
  thousands?: ThousandsName;
  /**
   * Missing-value codes, e.g. ["-99.99", "-999", "NA"]: a cell holding one is "no value"
   * (a gap, never a zero). A numeric code matches any cell with the same number (-99.990
   * too); a text code matches case-insensitively. An empty cell is always missing.
   */
  missing?: string[];
  /** Read only this many data rows (the import preview: the first rows, as the import would read them). */
  maxDataRows?: number;
}

/** What the import log records of a Reading (defaults left out, so older entries compare equal). */
export interface ReadingRecord {
  dateFormat: string;
  delimiter?: DelimiterName;
  decimal?: DecimalName;
  thousands?: ThousandsName;
  missing?: string[];
}

/** Codes that often stand for "no value" in downloaded files (common practice, not a standard): a refused number equal to one gets a hint. */
const USUAL_CODES = [-99.99, -999, -99, -9999, -999.99, -99.999, -99.9, -999.9];

/** Splits a comma-separated list of missing-value codes ("-99.99,-999,NA"); blanks are dropped. */
export function missingCodeList(text: string): string[] {
  return text
    .split(',')
    .map((c) => c.trim())
    .filter((c) => c !== '');
}

export class Reading {
  readonly dates: DateParser;
  readonly delimiterName: DelimiterName;
  readonly delimiter: number;
  readonly decimalName: DecimalName;
  readonly decimal: number;
  readonly thousandsName: ThousandsName | undefined;
  /** Thousands separator byte, 0 for none. */
  readonly thousands: number;
  readonly missingCodes: string[];
  /** Data rows to read at most (a preview), or undefined for the whole file. */
  readonly maxDataRows: number | undefined;
  /** The user named the missing-value codes (even none): no value is then suspected of being one. */
  readonly missingDeclared: boolean;
  private readonly numericCodes = new Set<number>();
  private readonly textCodes = new Set<string>();

  constructor(o: ReadingOptions = {}) {
    this.dates = new DateParser(o.dateFormat ? dateFormat(o.dateFormat) : ISO_DATE);
    this.delimiterName = o.delimiter ?? 'comma';
    const d = DELIMITERS[this.delimiterName];
    if (d === undefined) throw new DeflatorError('INPUT_INVALID', `unknown delimiter "${String(o.delimiter)}"`, `use one of ${Object.keys(DELIMITERS).join(', ')}`);
    this.delimiter = d.charCodeAt(0);
    this.decimalName = o.decimal ?? 'point';
    const m = DECIMAL_MARKS[this.decimalName];
    if (m === undefined) throw new DeflatorError('INPUT_INVALID', `unknown decimal mark "${String(o.decimal)}"`, `use one of ${Object.keys(DECIMAL_MARKS).join(', ')}`);
    this.decimal = m.charCodeAt(0);
    this.thousandsName = o.thousands;
    if (o.thousands !== undefined) {
      const t = THOUSANDS_SEPARATORS[o.thousands];
      if (t === undefined) throw new DeflatorError('INPUT_INVALID', `unknown thousands separator "${String(o.thousands)}"`, `use one of ${Object.keys(THOUSANDS_SEPARATORS).join(', ')}`);
      this.thousands = t.charCodeAt(0);
    } else this.thousands = 0;
    if (this.decimal === this.delimiter) {
      throw new DeflatorError('INPUT_INVALID', `a ${this.decimalName} cannot be both the decimal mark and the field delimiter`, 'files that write 1,5 separate fields with semicolons or tabs: pass --delimiter semicolon (or tab) with --decimal comma');
    }
    // (a thousands separator equal to the delimiter is fine in quoted fields: "1,234.5")
    if (this.thousands !== 0 && this.thousands === this.decimal) {
      throw new DeflatorError('INPUT_INVALID', `the thousands separator "${o.thousands}" is also the decimal mark`, 'choose another thousands separator (with --decimal comma: point, space or apostrophe)');
    }
    this.missingDeclared = o.missing !== undefined;
    this.maxDataRows = o.maxDataRows;
    this.missingCodes = [...new Set((o.missing ?? []).map((c) => c.trim()).filter((c) => c !== ''))];
    for (const code of this.missingCodes) {
      const b = Buffer.from(code, 'utf8');
      let v = parseNumber(b, 0, b.length, this.thousands, this.decimal);
      if (Number.isNaN(v) && /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(code)) v = Number(code);
      if (Number.isNaN(v)) this.textCodes.add(code.toLowerCase());
      else this.numericCodes.add(v);
    }
  }

  /**
   * The number in a cell; undefined when the cell is empty or holds a missing-value code;
   * NaN when it is not a number (numberHint says why).
   */
  value(row: CsvRow, i: number): number | undefined {
    if (row.blank(i)) return undefined;
    const v = parseNumber(row.buf, row.start[i], row.end[i], this.thousands, this.decimal);
    if (Number.isNaN(v)) {
      if (this.textCodes.size > 0 && this.textCodes.has(row.text(i).trim().toLowerCase())) return undefined;
      return Number.NaN;
    }
    if (this.numericCodes.size > 0 && this.numericCodes.has(v)) return undefined;
    return v;
  }

  /** Why a cell's text is not a number, for an error message. */
  numberProblem(text: string): string {
    return numberProblem(text, this.decimalName);
  }

  /** What to do about a cell that is not a number. */
  numberHint(text: string): string {
    const t = text.trim();
    const mark = this.decimalName === 'comma' ? 'a comma' : 'a point';
    if (/^[A-Za-z./#*-]{1,12}$/.test(t) && !/^[+-]?(inf|infinity|nan)$/i.test(t)) {
      return `if "${t}" marks a missing value, list it with --missing (e.g. --missing ${JSON.stringify([...this.missingCodes, t].join(','))}); otherwise write a number with ${mark} as the decimal mark`;
    }
    if (this.decimalName === 'point' && /^[+-]?\d+,\d+$/.test(t)) return 'this looks like a comma as the decimal mark: pass --decimal comma (with --delimiter semicolon or tab)';
    return `write numbers with ${mark} as the decimal mark${this.thousands ? '' : ' and no thousands separators (or pass the thousands-separator option)'}; leave the cell empty where there is no value`;
  }

  /** A hint for a refused value that equals a code often used for "missing" (-99.99, -999, ...). */
  usualCodeHint(v: number): string | null {
    if (!USUAL_CODES.includes(v) || this.numericCodes.has(v)) return null;
    return `if ${v} marks a missing value, pass --missing ${[...this.missingCodes, String(v)].join(',')}`;
  }

  /**
   * A value equal to a code often used for "missing" (-99.99, -999, ...) while the user named
   * no missing-value codes: the refusal's text, or null. Returns and factors use it: read as
   * a number, such a cell becomes a return near -100 % (or below) instead of a gap.
   */
  suspectedCode(v: number): { what: string; hint: string } | null {
    if (this.missingDeclared || !USUAL_CODES.includes(v)) return null;
    return {
      what: `${v} is a code often used for a missing value, and no missing-value codes were named`,
      hint: `if ${v} marks a missing value, pass --missing ${v} (several: --missing "${v},-999,NA"); if it is a real value, pass --missing "" (no codes) to read it as a number`,
    };
  }

  /** What the import log records (defaults left out). */
  record(): ReadingRecord {
    return {
      dateFormat: this.dates.format.name,
      ...(this.delimiterName !== 'comma' ? { delimiter: this.delimiterName } : {}),
      ...(this.decimalName !== 'point' ? { decimal: this.decimalName } : {}),
      ...(this.thousandsName ? { thousands: this.thousandsName } : {}),
      ...(this.missingCodes.length ? { missing: this.missingCodes } : {}),
    };
  }

  /** Reads a file record by record with this reading's delimiter (the one path every importer and the preview take). */
  read(file: string, onRow: (row: CsvRow) => void, options: Omit<CsvReadOptions, 'delimiter'> = {}): Promise<CsvReadSummary> {
    return readCsv(file, onRow, { ...options, delimiter: this.delimiter, ...(this.maxDataRows !== undefined ? { maxRecords: this.maxDataRows + 1 } : {}) });
  }
}
