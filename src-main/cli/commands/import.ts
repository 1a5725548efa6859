/**
 * `deflator import prices FILE --db DB` and `deflator import series FILE --db DB --kind K`:
 * streaming CSV import, one transaction per file (a failed import stores nothing). A file
 * whose bytes were imported before is reported and skipped (exit 0). Progress goes to
 * stderr when it is a terminal; --json prints the import report on stdout. --replace lets a
 * corrected file's rows take the place of the stored ones; `deflator import remove ID`
 * takes one import back out (and says which recorded runs that makes stale).
 */
import type { Command } from 'commander';
import { RF_FORMS, SERIES_KINDS, type RiskfreeForm, type SeriesKind } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { formatImportReport } from '../../data/summary.js';
import { DATE_FORMATS, DEFAULT_THRESHOLDS, THOUSANDS_SEPARATORS, importPrices, importSeries, type ImportReport, type PriceColumn, type ThousandsName, type Units } from '../../import/index.js';
import { listRuns } from '../../runs/runs.js';
import { Store, type RemovedImport } from '../../store/store.js';

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
  if (!process.stderr.isTTY) return { done: () => {} };
  let last = -1;
  return {
    onProgress: (read, total) => {
      const pct = total ? Math.floor((100 * read) / total) : 100;
      if (pct === last) return;
      last = pct;
      const width = 30;
      const fill = Math.round((width * pct) / 100);
      process.stderr.write(`\r${label} [${'#'.repeat(fill)}${'.'.repeat(width - fill)}] ${String(pct).padStart(3)}% of ${(total / 1e6).toFixed(1)} MB`);
    },
    done: () => {
      if (last >= 0) process.stderr.write('\r\u001b[K');
    },
  };
}

function report(r: ImportReport, json: boolean | undefined): void {
  process.stdout.write(json ? `${JSON.stringify(r, null, 2)}\n` : `${formatImportReport(r)}\n`);
}

interface PriceFlags {
  db: string;
  layout: 'long' | 'wide';
  dividends?: string;
  dateFormat?: string;
  thousands?: ThousandsName;
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

interface SeriesFlags {
  db: string;
  kind: SeriesKind;
  units: Units;
  rfForm?: RiskfreeForm;
  dateColumn?: string;
  dateFormat?: string;
  thousands?: ThousandsName;
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
  const what = main.kind === 'series' ? 'series value' : 'price observation';
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

export function register(program: Command): void {
  const imp = program.command('import').description('import price/dividend histories or named series (factors, risk-free, consumption) from CSV into a database');

  imp
    .command('prices')
    .description('import prices and dividends (long: date,asset,price[,dividend,adjust,shares]; wide: date + one price column per asset)')
    .argument('<file>', 'CSV file (UTF-8, RFC 4180)')
    .requiredOption('--db <path>', 'database file (created on first import)')
    .option('--layout <layout>', 'long (one row per date and asset) or wide (one column per asset)', oneOf('--layout', ['long', 'wide'] as const), 'long')
    .option('--dividends <file>', 'wide layout: a second wide file of dividends per share (same columns as the prices)')
    .option('--date-format <format>', `date layout when not ISO YYYY-MM-DD: ${DATE_FORMATS.join(', ')}`)
    .option('--thousands <separator>', `allow thousands separators in numbers: ${thousandsNames.join(', ')} (off by default)`, oneOf('--thousands', thousandsNames))
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
      const bar = progressBar(`importing ${file}`);
      const store = new Store(o.db);
      try {
        const r = await importPrices(store, file, {
          layout: o.layout,
          ...(o.dividends ? { dividends: o.dividends } : {}),
          ...(Object.keys(columns).length ? { columns } : {}),
          ...(o.dateFormat ? { dateFormat: o.dateFormat } : {}),
          ...(o.thousands ? { thousands: o.thousands } : {}),
          thresholds: { maxReturn: o.maxReturn, maxDividendYield: o.maxDividendYield, stalePeriods: o.stalePeriods },
          maxRejects: o.maxRejects,
          ...(o.replace ? { replace: true } : {}),
          ...(bar.onProgress ? { onProgress: bar.onProgress } : {}),
        });
        bar.done();
        report(r, o.json);
      } finally {
        bar.done();
        store.close();
      }
    });

  imp
    .command('series')
    .description('import named series from a wide CSV (date + one column per series; each keeps its column name)')
    .argument('<file>', 'CSV file (UTF-8, RFC 4180)')
    .requiredOption('--db <path>', 'database file (created on first import)')
    .requiredOption('--kind <kind>', `what the series are: ${SERIES_KINDS.join(', ')}`, oneOf('--kind', SERIES_KINDS))
    .option('--units <units>', 'decimal, or percent (divided by 100 on import)', oneOf('--units', ['decimal', 'percent'] as const), 'decimal')
    .option('--rf-form <form>', `risk-free only: how it is quoted: ${RF_FORMS.join(', ')} (default rate = per-period rate)`, oneOf('--rf-form', RF_FORMS))
    .option('--date-column <name>', 'name of the date column (default date)')
    .option('--date-format <format>', `date layout when not ISO YYYY-MM-DD: ${DATE_FORMATS.join(', ')}`)
    .option('--thousands <separator>', `allow thousands separators in numbers: ${thousandsNames.join(', ')}`, oneOf('--thousands', thousandsNames))
    .option('--replace', 'values whose (series, date) is already stored replace the stored values (a corrected file), in the same transaction')
    .option('--json', 'print the import report as JSON')
    .action(async (file: string, o: SeriesFlags) => {
      const bar = progressBar(`importing ${file}`);
      const store = new Store(o.db);
      try {
        const r = await importSeries(store, file, {
          kind: o.kind,
          units: o.units,
          ...(o.rfForm ? { rfForm: o.rfForm } : {}),
          ...(o.dateColumn ? { dateColumn: o.dateColumn } : {}),
          ...(o.dateFormat ? { dateFormat: o.dateFormat } : {}),
          ...(o.thousands ? { thousands: o.thousands } : {}),
          ...(o.replace ? { replace: true } : {}),
          ...(bar.onProgress ? { onProgress: bar.onProgress } : {}),
        });
        bar.done();
        report(r, o.json);
      } finally {
        bar.done();
        store.close();
      }
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
        process.stdout.write(
          o.json ? `${JSON.stringify({ ...removed, nowStale: nowStale.map((r) => r.id), alreadyStale: stillStale }, null, 2)}\n` : `${formatRemoved(removed, nowStale, stillStale)}\n`,
        );
      } finally {
        store.close();
      }
    });
}
