/**
 * `deflator import prices FILE --db DB`, `deflator import returns FILE --db DB` and
 * `deflator import series FILE --db DB --kind K`: streaming CSV import, one transaction per
 * file (a failed import stores nothing). A file whose bytes were imported before, read the
 * same way, is reported and skipped (exit 0); read another way (other kind, units, form,
 * layout ...) it is refused with what differs, or replaced with --replace. Progress goes to
 * stderr when it is a terminal; --json prints the import report on stdout. --replace lets a
 * corrected file's rows take the place of the stored ones; `deflator import remove ID`
 * takes one import back out (and says which recorded runs that makes stale).
 */
import type { Command } from 'commander';
import { RETURN_FORMS, RF_FORMS, SERIES_KINDS, VALUE_UNITS, type ReturnForm, type RiskfreeForm, type SeriesKind, type ValueUnits } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { formatImportReport } from '../../data/summary.js';
import {
  DATE_FORMATS,
  DECIMAL_MARKS,
  DEFAULT_MAX_RETURN,
  DEFAULT_THRESHOLDS,
  DELIMITERS,
  THOUSANDS_SEPARATORS,
  importPrices,
  importReturns,
  importSeries,
  missingCodeList,
  type DecimalName,
  type DelimiterName,
  type ImportReport,
  type PriceColumn,
  type ReadingOptions,
  type ReturnColumn,
  type ThousandsName,
  type Units,
} from '../../import/index.js';
import { listRuns } from '../../runs/runs.js';
import { Store, type RemovedImport } from '../../store/store.js';
import { out, err, stderrStream } from '../terminal.js';

/** "0.5", "50%" -> 0.5 */
function fraction(flag: string) {
  return (text: string): number => {
    const pct = text.trim().endsWith('%');
    const v = Number(pct ? text.trim().slice(0, -1) : text);
    if (!Number.isFinite(v) || v <= 0) throw new DeflatorError('INPUT_INVALID', `${flag}: "${text}" is not a positive number`, `write it as a decimal (0.5) or a percentage (50%)`);
    return pct ? v / 100 : v;
  };
}

function count(flag: string) {
  return (text: string): number => {
    const v = Number(text);
    if (!Number.isInteger(v) || v < 0) throw new DeflatorError('INPUT_INVALID', `${flag}: "${text}" is not a whole number`, 'write a count such as 0, 5 or 100');
    return v;
  };
}

function oneOf<T extends string>(flag: string, allowed: readonly T[]) {
  return (text: string): T => {
    if (!(allowed as readonly string[]).includes(text)) throw new DeflatorError('INPUT_INVALID', `${flag}: "${text}" is not one of ${allowed.join(', ')}`, `pass ${flag} ${allowed.join('|')}`);
    return text as T;
  };
}

/** A progress line on stderr, only when stderr is a terminal. */
function progressBar(label: string): { onProgress?: (read: number, total: number) => void; done: () => void } {
  if (!stderrStream().isTTY) return { done: () => {} };
  let last = -1;
  return {
    onProgress: (read, total) => {
      const pct = total ? Math.floor((100 * read) / total) : 100;
      if (pct === last) return;
      last = pct;
      const width = 30;
      const fill = Math.round((width * pct) / 100);
      err(`\r${label} [${'#'.repeat(fill)}${'.'.repeat(width - fill)}] ${String(pct).padStart(3)}% of ${(total / 1e6).toFixed(1)} MB`);
    },
    done: () => {
      if (last >= 0) err('\r\u001b[K');
    },
  };
}

/** One import from the command line: a progress bar on a terminal, the store opened and closed, the report printed. */
async function runImport(
  file: string,
  o: { db: string; json?: boolean },
  run: (store: Store, onProgress: ((read: number, total: number) => void) | undefined) => Promise<ImportReport>,
): Promise<void> {
  const bar = progressBar(`importing ${file}`);
  const store = new Store(o.db);
  try {
    const r = await run(store, bar.onProgress);
    bar.done();
    report(r, o.json);
  } finally {
    bar.done();
    store.close();
  }
}

function report(r: ImportReport, json: boolean | undefined): void {
  out(json ? `${JSON.stringify(r, null, 2)}\n` : `${formatImportReport(r)}\n`);
}

/** How the file's bytes are read: the options every import command takes. */
interface ReadingFlags {
  dateFormat?: string;
  thousands?: ThousandsName;
  delimiter?: DelimiterName;
  decimal?: DecimalName;
  missing?: string;
}

function readingOptions(o: ReadingFlags): ReadingOptions {
  return {
    ...(o.dateFormat ? { dateFormat: o.dateFormat } : {}),
    ...(o.thousands ? { thousands: o.thousands } : {}),
    ...(o.delimiter ? { delimiter: o.delimiter } : {}),
    ...(o.decimal ? { decimal: o.decimal } : {}),
    ...(o.missing !== undefined ? { missing: missingCodeList(o.missing) } : {}),
  };
}

/** "semicolon", ";", "tab", "\t" -> the delimiter's name. */
function delimiterName(text: string): DelimiterName {
  const t = text === '\\t' ? '\t' : text;
  const byName = (Object.keys(DELIMITERS) as DelimiterName[]).find((n) => n === t.toLowerCase() || DELIMITERS[n] === t);
  if (!byName) throw new DeflatorError('INPUT_INVALID', `--delimiter: "${text}" is not one of ${Object.keys(DELIMITERS).join(', ')}`, 'pass --delimiter comma|semicolon|tab|bar (or the character itself, quoted)');
  return byName;
}

interface PriceFlags extends ReadingFlags {
  db: string;
  layout: 'long' | 'wide';
  dividends?: string;
  dateColumn?: string;
  assetColumn?: string;
  priceColumn?: string;
  dividendColumn?: string;
  adjustColumn?: string;
  sharesColumn?: string;
  maxReturn: number;
  maxDividendYield: number;
  stalePeriods: number;
  maxRejects: number;
  replace?: boolean;
  json?: boolean;
}

interface SeriesFlags extends ReadingFlags {
  db: string;
  kind: SeriesKind;
  units: Units;
  rfForm?: RiskfreeForm;
  dateColumn?: string;
  replace?: boolean;
  json?: boolean;
}

interface ReturnFlags extends ReadingFlags {
  db: string;
  layout: 'wide' | 'long';
  form: ReturnForm;
  units: ValueUnits;
  excess?: boolean;
  dateColumn?: string;
  assetColumn?: string;
  returnColumn?: string;
  maxReturn: number;
  maxRejects: number;
  replace?: boolean;
  json?: boolean;
}

/** "7" or "#7" -> 7 */
function importId(text: string): number {
  const m = /^#?\s*(\d{1,15})$/.exec(text.trim());
  if (!m || Number(m[1]) < 1) throw new DeflatorError('INPUT_INVALID', `"${text}" is not an import id`, '`deflator info --db DB` lists the imports with their ids (the # column)');
  return Number(m[1]);
}

function formatRemoved(r: RemovedImport, nowStale: { id: number; label: string }[], stillStale: number[]): string {
  const [main, ...rest] = r.entries;
  const what = main.kind === 'series' ? 'series value' : main.kind === 'returns' ? 'stored return' : 'price observation';
  const lines = [
    `removed import ${main.id} (${main.fileName}, ${main.kind}, imported ${main.importedAt}): ${r.rows} ${what}${r.rows === 1 ? '' : 's'} deleted`,
  ];
  for (const e of rest) lines.push(`  with it: import ${e.id} (${e.fileName}, ${e.kind})`);
  const noun = main.kind === 'series' ? 'series' : 'asset';
  if (r.subjects.length) lines.push(`  ${r.subjects.length} ${noun}${r.subjects.length === 1 || noun === 'series' ? '' : 's'} touched: ${r.subjects.join(', ')}`);
  if (r.subjectsRemoved.length) lines.push(`  left with no rows, so removed: ${r.subjectsRemoved.join(', ')}`);
  if (nowStale.length) {
    lines.push(`  recorded runs now stale (their data changed): ${nowStale.map((s) => `${s.id} (${s.label})`).join(', ')}`);
    lines.push('  `deflator runs --db DB` lists them; `deflator replay ID --db DB` shows what changed');
  } else lines.push('  no recorded run became stale');
  if (stillStale.length) lines.push(`  already stale before: ${stillStale.join(', ')}`);
  return lines.join('\n');
}

const thousandsNames = Object.keys(THOUSANDS_SEPARATORS) as ThousandsName[];
const decimalNames = Object.keys(DECIMAL_MARKS) as DecimalName[];

/** The reading options (delimiter, decimal mark, missing codes, date layout, thousands) of every import command. */
function withReadingOptions(cmd: Command): Command {
  return cmd
    .option('--date-format <format>', `date layout when not ISO YYYY-MM-DD: ${DATE_FORMATS.join(', ')} (period keys read as the period's last day)`)
    .option('--delimiter <d>', `field delimiter: ${Object.keys(DELIMITERS).join(', ')} (default comma)`, delimiterName)
    .option('--decimal <mark>', `decimal mark: ${decimalNames.join(', ')} (comma: 1,5; with --delimiter semicolon or tab)`, oneOf('--decimal', decimalNames))
    .option('--thousands <separator>', `allow thousands separators in numbers: ${thousandsNames.join(', ')} (off by default)`, oneOf('--thousands', thousandsNames))
    .option('--missing <codes>', 'comma-separated missing-value codes, e.g. "-99.99,-999,NA" (an empty cell is always missing): no value for that period, a gap, never a zero');
}

export function register(program: Command): void {
  const imp = program.command('import').description('import price/dividend histories, return histories or named series (factors, risk-free, consumption) from CSV into a database');

  withReadingOptions(
    imp
      .command('prices')
      .description('import prices and dividends (long: date,asset,price[,dividend,adjust,shares]; wide: date + one price column per asset)')
      .argument('<file>', 'CSV file (UTF-8, RFC 4180)')
      .requiredOption('--db <path>', 'database file (created on first import)')
      .option('--layout <layout>', 'long (one row per date and asset) or wide (one column per asset)', oneOf('--layout', ['long', 'wide'] as const), 'long')
      .option('--dividends <file>', 'wide layout: a second wide file of dividends per share (same columns as the prices)'),
  )
    .option('--date-column <name>', 'name of the date column (default date)')
    .option('--asset-column <name>', 'long layout: name of the asset column (default asset)')
    .option('--price-column <name>', 'long layout: name of the price column (default price)')
    .option('--dividend-column <name>', 'long layout: name of the dividend column (default dividend)')
    .option('--adjust-column <name>', 'long layout: name of the split/adjustment factor column (default adjust)')
    .option('--shares-column <name>', 'long layout: name of the shares-outstanding column (default shares)')
    .option('--max-return <fraction>', 'warn about one-period returns beyond this, e.g. 0.5 or 50%', fraction('--max-return'), DEFAULT_THRESHOLDS.maxReturn)
    .option('--max-dividend-yield <fraction>', 'warn about dividends above this fraction of the price, e.g. 0.25 or 25%', fraction('--max-dividend-yield'), DEFAULT_THRESHOLDS.maxDividendYield)
    .option('--stale-periods <n>', 'warn when a price stays unchanged for this many periods', count('--stale-periods'), DEFAULT_THRESHOLDS.stalePeriods)
    .option('--max-rejects <n>', 'skip up to this many rows with a bad value (each listed as a warning) instead of failing', count('--max-rejects'), 0)
    .option('--replace', 'rows whose (asset, date) is already stored replace the stored rows (a corrected file), in the same transaction')
    .option('--json', 'print the import report as JSON')
    .action(async (file: string, o: PriceFlags) => {
      const columns: Partial<Record<PriceColumn, string>> = {};
      if (o.dateColumn) columns.date = o.dateColumn;
      if (o.assetColumn) columns.asset = o.assetColumn;
      if (o.priceColumn) columns.price = o.priceColumn;
      if (o.dividendColumn) columns.dividend = o.dividendColumn;
      if (o.adjustColumn) columns.adjust = o.adjustColumn;
      if (o.sharesColumn) columns.shares = o.sharesColumn;
      await runImport(file, o, (store, onProgress) =>
        importPrices(store, file, {
          layout: o.layout,
          ...(o.dividends ? { dividends: o.dividends } : {}),
          ...(Object.keys(columns).length ? { columns } : {}),
          ...readingOptions(o),
          thresholds: { maxReturn: o.maxReturn, maxDividendYield: o.maxDividendYield, stalePeriods: o.stalePeriods },
          maxRejects: o.maxRejects,
          ...(o.replace ? { replace: true } : {}),
          ...(onProgress ? { onProgress } : {}),
        }),
      );
    });

  withReadingOptions(
    imp
      .command('series')
      .description('import named series from a wide CSV (date + one column per series; each keeps its column name)')
      .argument('<file>', 'CSV file (UTF-8, RFC 4180)')
      .requiredOption('--db <path>', 'database file (created on first import)')
      .requiredOption('--kind <kind>', `what the series are: ${SERIES_KINDS.join(', ')}`, oneOf('--kind', SERIES_KINDS))
      .option('--units <units>', 'decimal, or percent (divided by 100 on import)', oneOf('--units', ['decimal', 'percent'] as const), 'decimal')
      .option('--rf-form <form>', `risk-free only: how it is quoted: ${RF_FORMS.join(', ')} (default rate = per-period rate)`, oneOf('--rf-form', RF_FORMS))
      .option('--date-column <name>', 'name of the date column (default date)'),
  )
    .option('--replace', 'values whose (series, date) is already stored replace the stored values (a corrected file), in the same transaction')
    .option('--json', 'print the import report as JSON')
    .action(async (file: string, o: SeriesFlags) => {
      await runImport(file, o, (store, onProgress) =>
        importSeries(store, file, {
          kind: o.kind,
          units: o.units,
          ...(o.rfForm ? { rfForm: o.rfForm } : {}),
          ...(o.dateColumn ? { dateColumn: o.dateColumn } : {}),
          ...readingOptions(o),
          ...(o.replace ? { replace: true } : {}),
          ...(onProgress ? { onProgress } : {}),
        }),
      );
    });

  withReadingOptions(
    imp
      .command('returns')
      .description('import assets that arrive as returns (wide: date + one return column per asset; long: date,asset,return), e.g. portfolio or fund returns')
      .argument('<file>', 'CSV file (UTF-8, RFC 4180)')
      .requiredOption('--db <path>', 'database file (created on first import)')
      .option('--layout <layout>', 'wide (a date column and one column per asset) or long (one row per date and asset)', oneOf('--layout', ['wide', 'long'] as const), 'wide')
      .option('--form <form>', `how each return is written: ${RETURN_FORMS.join(', ')} (net r, gross R = 1 + r, log ln R)`, oneOf('--form', RETURN_FORMS), 'net')
      .option('--units <units>', `${VALUE_UNITS.join(' or ')} (percent: 1.25 means 1.25 %)`, oneOf('--units', VALUE_UNITS), 'decimal')
      .option('--excess', 'the file holds excess returns (R - R^f) already: excess-return specs need no risk-free series for these assets'),
  )
    .option('--date-column <name>', 'name of the date column (default date)')
    .option('--asset-column <name>', 'long layout: name of the asset column (default asset)')
    .option('--return-column <name>', 'long layout: name of the return column (default return)')
    .option('--max-return <fraction>', 'warn about one-period returns beyond this, e.g. 0.5 or 50%', fraction('--max-return'), DEFAULT_MAX_RETURN)
    .option('--max-rejects <n>', 'skip up to this many rows with a bad value (each listed as a warning) instead of failing', count('--max-rejects'), 0)
    .option('--replace', 'rows whose (asset, date) is already stored replace the stored rows, and the same bytes imported before with other options are taken out, in the same transaction')
    .option('--json', 'print the import report as JSON')
    .action(async (file: string, o: ReturnFlags) => {
      const columns: Partial<Record<ReturnColumn, string>> = {};
      if (o.dateColumn) columns.date = o.dateColumn;
      if (o.assetColumn) columns.asset = o.assetColumn;
      if (o.returnColumn) columns.return = o.returnColumn;
      await runImport(file, o, (store, onProgress) =>
        importReturns(store, file, {
          layout: o.layout,
          form: o.form,
          units: o.units,
          ...(o.excess ? { excess: true } : {}),
          ...(Object.keys(columns).length ? { columns } : {}),
          ...readingOptions(o),
          maxReturn: o.maxReturn,
          maxRejects: o.maxRejects,
          ...(o.replace ? { replace: true } : {}),
          ...(onProgress ? { onProgress } : {}),
        }),
      );
    });

  imp
    .command('remove')
    .description('take one import back out of a database: the rows it stored, assets/series left empty, its log entry')
    .argument('<id>', 'import id (the # column of `deflator info --db DB`)')
    .requiredOption('--db <path>', 'database file')
    .option('--json', 'print what was removed as JSON')
    .action((id: string, o: { db: string; json?: boolean }) => {
      const n = importId(id);
      const store = new Store(o.db, { mustExist: true });
      try {
        const before = new Map(listRuns(store).map((r) => [r.id, r.stale]));
        const removed = store.removeImport(n);
        const after = listRuns(store).filter((r) => r.stale);
        const nowStale = after.filter((r) => before.get(r.id) === false).map((r) => ({ id: r.id, label: r.label }));
        const stillStale = after.filter((r) => before.get(r.id) === true).map((r) => r.id);
        out(
          o.json ? `${JSON.stringify({ ...removed, nowStale: nowStale.map((r) => r.id), alreadyStale: stillStale }, null, 2)}\n` : `${formatRemoved(removed, nowStale, stillStale)}\n`,
        );
      } finally {
        store.close();
      }
    });
}
