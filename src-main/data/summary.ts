/** Plain-text views of what the store holds and of an import, for the terminal. */
import { assetSourceText } from '../../shared/data.js';
import type { ImportReport } from '../import/index.js';
import type { ImportWarning, StoreInfo } from '../store/store.js';

/** Left-aligned text columns (numbers right-aligned). */
export function textTable(header: string[], rows: (string | number)[][]): string {
  const cells = [header, ...rows.map((r) => r.map((c) => String(c)))];
  const widths = header.map((_, j) => Math.max(...cells.map((r) => (r[j] ?? '').length)));
  const numeric = header.map((_, j) => rows.length > 0 && rows.every((r) => typeof r[j] === 'number'));
  const line = (r: string[]) =>
    r
      .map((c, j) => (numeric[j] ? c.padStart(widths[j]) : c.padEnd(widths[j])))
      .join('  ')
      .trimEnd();
  return [line(cells[0]), line(widths.map((w) => '-'.repeat(w))), ...cells.slice(1).map(line)].join('\n');
}

/** The warnings of an import, at most `limit` listed. */
export function formatWarnings(warnings: ImportWarning[], limit = 20): string {
  if (warnings.length === 0) return '';
  const shown = warnings.slice(0, limit).map((w) => `  warning: ${w.message}`);
  if (warnings.length > limit) shown.push(`  ... ${warnings.length - limit} more (all are in the import log: deflator info --db DB --json)`);
  return shown.join('\n');
}

export function formatImportReport(r: ImportReport): string {
  if (r.status === 'already-imported') {
    return `${r.file}: already imported (same SHA-256 ${r.sha256.slice(0, 12)}..., import #${r.importId} at ${r.importedAt ?? '?'}); nothing changed`;
  }
  const what = r.kind === 'series' ? `series ${r.subjects.join(', ')}` : `${r.subjects.length} asset${r.subjects.length === 1 ? '' : 's'}${r.kind === 'returns' ? ' as returns' : ''}`;
  const lines = [
    `${r.file}: imported ${r.rowsStored} ${r.kind === 'series' ? 'values' : r.kind === 'returns' ? 'returns' : 'observations'} from ${r.rowsRead} rows (${what}; ${r.first ?? '?'} to ${r.last ?? '?'}, ${r.frequency ?? 'frequency unknown'})` +
      `${r.rowsRejected ? `; ${r.rowsRejected} rows rejected` : ''} in ${r.seconds.toFixed(2)} s`,
  ];
  const w = formatWarnings(r.warnings);
  if (w) lines.push(w);
  return lines.join('\n');
}

export function formatInfo(info: StoreInfo): string {
  const out: string[] = [`${info.path} (schema version ${info.schemaVersion})`, ''];
  out.push(`Assets: ${info.assets.length}`);
  if (info.assets.length) {
    out.push(
      textTable(
        ['asset', 'first', 'last', 'count', 'frequency', 'gaps', 'dividends', 'splits', 'missing', 'data'],
        info.assets.map((a) => [a.name, a.first ?? '', a.last ?? '', a.count, a.frequency ?? '', a.gaps.length, a.dividends, a.splits, a.missing ?? 0, assetSourceText(a)]),
      ),
    );
  }
  out.push('', `Series: ${info.series.length}`);
  if (info.series.length) {
    out.push(
      textTable(
        ['series', 'kind', 'units', 'rf form', 'first', 'last', 'count', 'frequency', 'gaps'],
        info.series.map((s) => [s.name, s.kind, s.units, s.rfForm ?? '', s.first ?? '', s.last ?? '', s.count, s.frequency ?? '', s.gaps.length]),
      ),
    );
  }
  if (info.portfolios.length) {
    out.push('', `Portfolios: ${info.portfolios.length}`);
    out.push(textTable(['portfolio', 'frequency', 'first', 'last', 'count', 'rules'], info.portfolios.map((p) => [p.name, p.frequency, p.first ?? '', p.last ?? '', p.count, p.rules ?? ''])));
  }
  out.push('', `Imports: ${info.imports.length}`);
  if (info.imports.length) {
    out.push(
      textTable(
        ['#', 'file', 'kind', 'read', 'stored', 'rejected', 'warnings', 'sha256', 'imported at'],
        info.imports.map((i) => [i.id, i.fileName, i.kind, i.rowsRead, i.rowsStored, i.rowsRejected, i.warnings.length, i.sha256.slice(0, 12), i.importedAt]),
      ),
    );
  }
  return out.join('\n');
}
