/**
 * The hostile CSV corpus (test/robustness/corpus, written by make_corpus.mjs), one table
 * row per file: each file either ends in an error naming the file, the line and (where
 * one field is at fault) the column, or is a documented acceptance (README, Robustness).
 *
 * Every import runs on a copy of a seeded database. A rejected import must leave the
 * whole database content unchanged (digest over every table and the import log, see
 * helpers.ts) and PRAGMA integrity_check = ok. An accepted file's stored rows are
 * compared with an independent reading of the same bytes by csv-parse (an RFC 4180
 * parser from npm) and JavaScript's Number() (ECMA-262 StringToNumber, correctly rounded).
 *
 * Line and column numbers in the table were counted by hand from the bytes that
 * make_corpus.mjs writes. Row-level errors (field counts, repeated keys) name the line;
 * value errors name the field's column number and header name; reader errors (quoting,
 * encoding, separators) name the character column.
 */
import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isDeflatorError } from '../../shared/errors.js';
import { importPrices, importSeries, type PriceImportOptions, type SeriesImportOptions } from '../../src-main/import/index.js';
import { Store } from '../../src-main/store/store.js';
import { CORPUS, cleanTempDirs, databaseState, runCli, seedDatabase, stopwatch, tempDir } from './helpers.js';

type Target = { prices: PriceImportOptions } | { series: SeriesImportOptions };
interface Rejected {
  file: string;
  target?: Target;
  code?: string;
  /** What the message must say after "<file>, " (a regular expression source, matched from there). */
  expect: RegExp;
}
interface Accepted {
  file: string;
  target?: Target;
  /** Rows stored and asset names, as counted by hand. */
  rows: number;
  assets: string[];
  /** A warning kind the report must carry. */
  warning?: string;
}

const wide: Target = { prices: { layout: 'wide' } };
const factor: Target = { series: { kind: 'factor' } };

// Expected message tails. The importer's own wording; line/column counted by hand.
const REJECTED: Rejected[] = [
  // truncation and shape
  { file: 'truncated_row.csv', expect: /^line 4: 2 fields, but the header has 3/ },
  { file: 'truncated_quote.csv', expect: /^line 4, column 12: a quoted field is never closed/ },
  { file: 'truncated_mid_date.csv', expect: /^line 4: 1 fields, but the header has 3/ },
  { file: 'decimal_comma.csv', expect: /^line 4: 4 fields, but the header has 3/ },
  { file: 'missing_column.csv', expect: /^line 1: no "price" column in the header \(date, asset, value\)/ },
  { file: 'empty.csv', expect: /is empty$/ },
  { file: 'header_only.csv', expect: /has a header but no data rows/ },
  { file: 'only_blank_lines.csv', expect: /has no header line/ },
  // delimiters other than the comma (RFC 4180 uses the comma)
  { file: 'semicolon.csv', expect: /^line 1, column 5: the header is one column separated by semicolons, not commas/ },
  { file: 'tab.csv', expect: /^line 1, column 5: the header is one column separated by tabs, not commas/ },
  { file: 'pipe.csv', expect: /^line 1, column 5: the header is one column separated by vertical bars, not commas/ },
  // quoting (RFC 4180 section 2, rules 5-7)
  { file: 'quote_in_unquoted.csv', expect: /^line 2, column 19: a double quote inside an unquoted field/ },
  { file: 'text_after_quote.csv', expect: /^line 2, column 27: unexpected text after a closing double quote/ },
  { file: 'embedded_newline_then_error.csv', expect: /^line 7, column 3 \(price\): "twelve" is not a number/ },
  { file: 'embedded_newline_in_number.csv', expect: /^line 2, column 3 \(price\): "12\.\n50" is not a number/ },
  // encodings (UTF-8 per RFC 3629: no overlong forms, no surrogates; NUL is not text)
  { file: 'latin1.csv', expect: /^line 4, column 15: byte 0xe9 is not valid UTF-8/ },
  { file: 'utf16le_bom.csv', expect: /^line 1, column 1: the file is UTF-16 encoded, not UTF-8/ },
  { file: 'utf16be_bom.csv', expect: /^line 1, column 1: the file is UTF-16 encoded, not UTF-8/ },
  { file: 'utf16le_nobom.csv', expect: /^line 1, column 2: byte 0x00 \(NUL\) is not text/ },
  { file: 'nul_byte.csv', expect: /^line 2, column 19: byte 0x00 \(NUL\) is not text/ },
  { file: 'overlong_utf8.csv', expect: /^line 2, column 19: byte 0xc0 is not valid UTF-8/ },
  { file: 'surrogate_utf8.csv', expect: /^line 2, column 19: byte 0xed is not valid UTF-8/ },
  { file: 'binary_garbage.csv', expect: /^line \d+, column \d+: byte 0x[0-9a-f]{2} (is not valid UTF-8|\(NUL\) is not text)/ },
  // numbers (IEEE 754 binary64: the largest finite magnitude is about 1.798e308)
  { file: 'huge_exponent.csv', expect: /^line 4, column 3 \(price\): "1e400" is beyond the range of a double/ },
  { file: 'huge_integer.csv', expect: /^line 4, column 3 \(price\): "7{40}\.\.\." is beyond the range of a double/ },
  { file: 'huge_negative.csv', expect: /^line 4, column 3 \(price\): "-1\.5e999" is beyond the range of a double/ },
  { file: 'tiny_exponent.csv', expect: /^line 4, column 3 \(price\): price 0 is not positive/ },
  { file: 'nan.csv', expect: /^line 4, column 3 \(price\): "NaN" is not a number/ },
  { file: 'nan_lower.csv', expect: /^line 4, column 3 \(price\): "nan" is not a number/ },
  { file: 'inf.csv', expect: /^line 4, column 3 \(price\): "inf" is not a number/ },
  { file: 'neg_infinity.csv', expect: /^line 4, column 3 \(price\): "-Infinity" is not a number/ },
  { file: 'na_spreadsheet.csv', expect: /^line 4, column 3 \(price\): "#N\/A" is not a number/ },
  { file: 'hex_number.csv', expect: /^line 4, column 3 \(price\): "0x1A" is not a number/ },
  { file: 'thousands_unasked.csv', expect: /^line 2, column 3 \(price\): "1,250\.00" is not a number/ },
  { file: 'zero_price.csv', expect: /^line 4, column 3 \(price\): price 0 is not positive/ },
  { file: 'negative_price.csv', expect: /^line 4, column 3 \(price\): price -12\.5 is not positive/ },
  { file: 'negative_dividend.csv', expect: /^line 3, column 4 \(dividend\): dividend -0\.1 is negative/ },
  // dates (ISO 8601 calendar dates, Gregorian leap-year rule)
  { file: 'date_feb30.csv', expect: /^line 4, column 1 \(date\): "2023-02-30" is not a calendar date \(2023-02 has no day 30\)/ },
  { file: 'date_month13.csv', expect: /^line 4, column 1 \(date\): "2023-13-01" is not a calendar date \(month 13 does not exist\)/ },
  { file: 'date_year0.csv', expect: /^line 2, column 1 \(date\): "0000-01-01" is not a calendar date \(there is no year 0000/ },
  { file: 'date_feb29_2023.csv', expect: /^line 2, column 1 \(date\): "2023-02-29" is not a calendar date \(2023-02 has no day 29\)/ },
  { file: 'date_feb29_1900.csv', expect: /^line 2, column 1 \(date\): "1900-02-29" is not a calendar date \(1900-02 has no day 29\)/ },
  { file: 'date_dayfirst.csv', expect: /^line 2, column 1 \(date\): "31\/01\/2023" is not a date: expected YYYY-MM-DD/ },
  { file: 'date_day00.csv', expect: /^line 2, column 1 \(date\): "2023-01-00" is not a calendar date \(2023-01 has no day 0\)/ },
  // headers and keys
  { file: 'duplicate_header.csv', expect: /^line 1, column 4: column "price" appears twice in the header \(also column 3\)/ },
  { file: 'duplicate_header_case.csv', expect: /^line 1, column 4: column "DATE" appears twice in the header \(also column 1\)/ },
  { file: 'empty_header_name.csv', expect: /^line 1, column 2: the header has an empty column name/ },
  { file: 'duplicate_row.csv', expect: /^line 4: duplicate \(asset, date\) = \(kestrel-mills, 2023-01-31\)/ },
  { file: 'empty_asset.csv', expect: /^line 4, column 2 \(asset\): the asset name is empty/ },
  { file: 'control_char_name.csv', expect: /^line 2, column 2 \(asset\): the asset name holds the control character U\+001B/ },
  { file: 'control_char_header.csv', expect: /^line 1, column 4: the column name holds the control character U\+0007/ },
  { file: 'escape_in_price.csv', expect: /^line 2, column 3 \(price\): "(\u001b|\\u001b)\[31m12\.50" is not a number/ },
  { file: 'conflict_with_stored.csv', code: 'CONFLICT', expect: /^line 2: \(asset, date\) = \(alder-hollow, 2020-02-28\) is already stored, from seed\.db\.prices\.csv/ },
  // wide layout
  { file: 'wide_10000.csv', target: wide, expect: /^line 4, column 10000 \(w9999\): "x" is not a number \(expected the price of w9999\)/ },
  { file: 'wide_out_of_order.csv', target: wide, expect: /^line 3, column 1 \(date\): date 2023-01-31 comes after 2023-02-28: dates are out of order/ },
  { file: 'wide_no_assets.csv', target: wide, expect: /^line 1: the header has no asset columns/ },
  // named series
  { file: 'series_nan.csv', target: factor, expect: /^line 3, column 2 \(harbour_factor\): "NaN" is not a number/ },
  { file: 'series_duplicate_date.csv', target: factor, expect: /^line 3, column 1 \(date\): date 2023-01-31 appears twice/ },
  { file: 'series_out_of_order.csv', target: factor, expect: /^line 3, column 1 \(date\): date 2023-01-31 comes after 2023-02-28/ },
  { file: 'series_rate_below_minus_one.csv', target: { series: { kind: 'riskfree' } }, expect: /^line 3, column 2 \(tbill\): a risk-free rate or yield of -1\.5 \(decimal\) would lose all the money/ },
  { file: 'series_kind_clash.csv', target: { series: { kind: 'riskfree' } }, code: 'CONFLICT', expect: /^line 1: series "gale_factor" is already stored as kind factor/ },
];

const ACCEPTED: Accepted[] = [
  { file: 'bom_utf8.csv', rows: 2, assets: ['kestrel-mills'] },
  { file: 'crlf_ok.csv', rows: 2, assets: ['kestrel-mills'] },
  { file: 'lone_cr_ok.csv', rows: 2, assets: ['kestrel-mills'] },
  { file: 'no_final_newline_ok.csv', rows: 2, assets: ['kestrel-mills'] },
  { file: 'blank_lines_ok.csv', rows: 2, assets: ['kestrel-mills'] },
  { file: 'extra_columns_ok.csv', rows: 2, assets: ['kestrel-mills'], warning: 'ignored-columns' },
  { file: 'mixed_quoting_ok.csv', rows: 4, assets: ['kestrel-mills', 'tern "north" yard'] },
  // RFC 4180: a quoted field keeps its line break as written, so LF and CRLF make two names
  { file: 'embedded_newline_ok.csv', rows: 3, assets: ['heron\nquay', 'heron\r\nquay'] },
  { file: 'unicode_names_ok.csv', rows: 6, assets: ['ærøby-væveri', 'šumperk-ořechy', '水門倉庫'] },
  { file: 'number_forms_ok.csv', rows: 6, assets: ['plover-works'] },
  { file: 'huge_finite_ok.csv', rows: 2, assets: ['plover-works'] },
  { file: 'leap_days_ok.csv', rows: 3, assets: ['plover-works'] },
];

let dir: string;
let seed: string;
let seedState: ReturnType<typeof databaseState>;
let done: () => number;

beforeAll(async () => {
  done = stopwatch('corpus');
  dir = tempDir();
  seed = await seedDatabase(dir);
  seedState = databaseState(seed);
});
afterAll(() => {
  done();
  cleanTempDirs();
});

let copies = 0;
function copyOfSeed(): string {
  const db = path.join(dir, `case-${++copies}.db`);
  copyFileSync(seed, db);
  return db;
}

async function runImport(db: string, file: string, target: Target | undefined) {
  const store = new Store(db);
  try {
    const t = target ?? { prices: {} };
    return 'prices' in t ? await importPrices(store, file, t.prices) : await importSeries(store, file, t.series);
  } finally {
    store.close();
  }
}

function cliArgs(file: string, db: string, target: Target | undefined): string[] {
  const t = target ?? { prices: {} };
  if ('prices' in t) return ['import', 'prices', file, '--db', db, ...(t.prices.layout ? ['--layout', t.prices.layout] : [])];
  return ['import', 'series', file, '--db', db, '--kind', t.series.kind];
}

describe('hostile CSV corpus: rejected files', () => {
  it.each(REJECTED)('$file is refused with file, line and column, and the database is unchanged', async (row) => {
    const file = path.join(CORPUS, row.file);
    const db = copyOfSeed();
    const before = databaseState(db);
    expect(before.digest).toBe(seedState.digest);
    let error: unknown;
    try {
      await runImport(db, file, row.target);
    } catch (e) {
      error = e;
    }
    expect(isDeflatorError(error), `${row.file}: expected a DeflatorError, got ${String(error)}`).toBe(true);
    const e = error as { code: string; message: string; hint?: string };
    expect(e.code).toBe(row.code ?? 'INPUT_INVALID');
    // the message starts with the path as given, then ", line ..." (or " is empty" and the like)
    expect(e.message.startsWith(file), `message: ${e.message}`).toBe(true);
    const tail = e.message.slice(file.length).replace(/^, /, '').replace(/^ /, '');
    expect(tail, `message tail: ${JSON.stringify(tail)}\nexpected: ${row.expect}`).toMatch(row.expect);
    expect(e.hint ?? '', 'every error says what to do next').not.toBe('');
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.digest, `database changed by the rejected import of ${row.file}`).toBe(before.digest);
  });

  // one file per family (a CLI start costs 0.5-1.5 s on a busy 2-core machine)
  const THROUGH_CLI = ['truncated_quote.csv', 'semicolon.csv', 'embedded_newline_then_error.csv', 'utf16le_nobom.csv', 'latin1.csv', 'huge_integer.csv', 'na_spreadsheet.csv', 'date_feb30.csv', 'duplicate_header.csv', 'conflict_with_stored.csv', 'wide_10000.csv', 'series_kind_clash.csv', 'control_char_name.csv', 'escape_in_price.csv'];

  it('the CLI refuses one file of each family with exit 1 and the same message, the database unchanged', () => {
    const db = copyOfSeed();
    const before = databaseState(db);
    for (const row of REJECTED.filter((r) => THROUGH_CLI.includes(r.file))) {
      const file = path.join(CORPUS, row.file);
      const r = runCli(cliArgs(file, db, row.target));
      expect(r.status, `${row.file}: exit ${r.status}, stderr ${r.stderr}`).toBe(1);
      expect(r.stderr.startsWith(`deflator: ${file}`), r.stderr).toBe(true);
      expect(r.stderr.slice(`deflator: ${file}`.length).replace(/^, /, ''), r.stderr).toMatch(row.expect);
      expect(r.stderr, 'the hint follows on its own line').toMatch(/\n {2}-> \S/);
      expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
      expect(r.stderr, 'control characters reach the terminal').not.toMatch(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/);
      expect(databaseState(db).digest, row.file).toBe(before.digest);
    }
    console.log(`[robustness] corpus: ${THROUGH_CLI.length} rejected files through the CLI, exit 1 each, database digest unchanged`);
  }, 120_000);

  it('a single 64 MB line (generated here, not committed) is refused with line and column, in bounded time', async () => {
    const file = path.join(dir, 'one_line_64mb.csv');
    writeFileSync(file, `date,asset,price\n2023-01-31,kestrel-mills,${'9'.repeat(64 * 1024 * 1024)}\n`);
    const db = copyOfSeed();
    const before = databaseState(db);
    const t0 = performance.now();
    const r = runCli(['import', 'prices', file, '--db', db], { env: { ...process.env, NODE_OPTIONS: '--max-old-space-size=1024' }, measure: true });
    const seconds = (performance.now() - t0) / 1000;
    console.log(`[robustness] 64 MB line refused in ${seconds.toFixed(1)} s, peak RSS ${r.rssMb === undefined ? 'not measured' : `${r.rssMb.toFixed(0)} MB`} (child process, heap capped at 1 GB)`);
    if (r.rssMb !== undefined) expect(r.rssMb).toBeLessThan(1024);
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toContain(`${file}, line 2, column 3 (price): "${'9'.repeat(40)}..." is beyond the range of a double`);
    expect(seconds).toBeLessThan(30);
    expect(databaseState(db).digest).toBe(before.digest);
  });
});

type Parsed = string[][];

/** The same bytes read by csv-parse: header, then data records (blank lines skipped). */
function reference(file: string): Parsed {
  return parse(readFileSync(file), { bom: true, skip_empty_lines: true, relax_column_count: false }) as Parsed;
}

describe('hostile CSV corpus: documented acceptances', () => {
  it.each(ACCEPTED)('$file is accepted and stored exactly as csv-parse and Number() read it', async (row) => {
    const file = path.join(CORPUS, row.file);
    const db = copyOfSeed();
    const report = await runImport(db, file, row.target);
    expect(report.status).toBe('imported');
    expect(report.rowsStored).toBe(row.rows);
    expect(report.subjects).toEqual([...row.assets].sort());
    if (row.warning) expect(report.warnings.map((w) => w.kind)).toContain(row.warning);

    const records = reference(file);
    const header = records[0].map((h) => h.trim().toLowerCase());
    const [di, ai, pi] = ['date', 'asset', 'price'].map((c) => header.indexOf(c));
    const data = records.slice(1);
    expect(data.length, 'csv-parse counts the same data rows').toBe(row.rows);

    const store = new Store(db, { readonly: true });
    try {
      const stored = store.db
        .prepare('SELECT a.name AS asset, o.date, o.price FROM observation o JOIN asset a ON a.id = o.asset_id WHERE o.import_id = ? ORDER BY a.name, o.date')
        .all(report.importId) as { asset: string; date: string; price: number }[];
      const expected = data
        .map((r) => ({ asset: r[ai].trim(), date: r[di].trim(), price: Number(r[pi]) }))
        .sort((x, y) => (x.asset === y.asset ? (x.date < y.date ? -1 : 1) : x.asset < y.asset ? -1 : 1));
      expect(stored).toEqual(expected);
    } finally {
      store.close();
    }
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.rows.observation).toBe(seedState.rows.observation + row.rows);
    expect(after.rows.import_log).toBe(seedState.rows.import_log + 1);
  });

  it('the 10,000-column wide file with its bad cell corrected stores 9,999 assets x 3 dates', async () => {
    const text = readFileSync(path.join(CORPUS, 'wide_10000.csv'), 'utf8');
    const fixed = path.join(dir, 'wide_10000_fixed.csv');
    expect(text.endsWith(',x\n')).toBe(true);
    writeFileSync(fixed, `${text.slice(0, -2)}17\n`);
    const db = copyOfSeed();
    const report = await runImport(db, fixed, wide);
    expect(report.rowsStored).toBe(9999 * 3);
    expect(report.subjects.length).toBe(9999);
    const header = reference(fixed)[0];
    expect(header.length).toBe(10_000); // csv-parse agrees on the width
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.rows.asset).toBe(seedState.rows.asset + 9999);
  });

  it('an accepted import leaves the earlier rows bit for bit as they were', async () => {
    const db = copyOfSeed();
    const read = (q: string) => {
      const s = new Store(db, { readonly: true });
      try {
        return JSON.stringify(s.db.prepare(q).raw().all());
      } finally {
        s.close();
      }
    };
    const q = 'SELECT * FROM observation WHERE import_id IN (SELECT id FROM import_log WHERE file_name LIKE ?) ORDER BY asset_id, date';
    const seedRows = read(q.replace('?', "'seed.db.%'"));
    const seedLog = read("SELECT * FROM import_log WHERE file_name LIKE 'seed.db.%' ORDER BY id");
    await runImport(db, path.join(CORPUS, 'mixed_quoting_ok.csv'), undefined);
    expect(read(q.replace('?', "'seed.db.%'"))).toBe(seedRows);
    expect(read("SELECT * FROM import_log WHERE file_name LIKE 'seed.db.%' ORDER BY id")).toBe(seedLog);
  });

  it('the table covers every file of the corpus, once', () => {
    const listed = [...REJECTED, ...ACCEPTED].map((r) => r.file).sort();
    const files = parseFileList();
    expect(new Set(listed).size).toBe(listed.length);
    expect(listed).toEqual(files);
    console.log(`[robustness] corpus: ${REJECTED.length} rejected + ${ACCEPTED.length} accepted files (+ the generated 64 MB line and the corrected wide file)`);
  });
});

function parseFileList(): string[] {
  const src = readFileSync(path.join(CORPUS, 'make_corpus.mjs'), 'utf8');
  return [...src.matchAll(/put\('([^']+\.csv)'/g)].map((m) => m[1]).sort();
}
