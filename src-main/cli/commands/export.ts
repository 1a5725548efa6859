/**
 * `deflator export RUN --db DB --format csv|xlsx|latex|html|pdf --out FILE`: writes a
 * recorded run's tables and record. CSV writes one file per table (header row and data
 * only) and an about.txt with the record, notes and warnings: --out is a folder
 * (existing, or ending in /) for `<folder>/<table>.csv`, otherwise a prefix for
 * `<prefix>-<table>.csv`.
 */
import type { Command } from 'commander';
import { EXPORT_FORMATS, exportRunToPath, parseExportFormat } from '../../export/run-export.js';
import { getRun, parseRunId } from '../../runs/runs.js';
import { Store } from '../../store/store.js';
import { out } from '../terminal.js';

interface ExportOptions {
  db: string;
  format: string;
  out: string;
  json?: boolean;
  csvComments?: boolean;
  appendix?: boolean;
}

export function register(program: Command): void {
  program
    .command('export')
    .description('write a recorded run as CSV tables, an XLSX workbook, LaTeX tables, a self-contained HTML report or a PDF')
    .argument('<run>', 'run id (see `deflator runs`)')
    .requiredOption('--db <path>', 'project database')
    .requiredOption('--format <format>', EXPORT_FORMATS.join(' | '))
    .requiredOption('--out <path>', 'output file (csv: a folder, or a file-name prefix)')
    .option('--csv-comments', 'csv: the run record, header, notes and warnings as # lines above each table (default: a sidecar about.txt)')
    .option('--appendix', 'pdf: add the long listings (m_t series, parameter paths, windows) as appendix tables (html has them always)')
    .option('--json', 'print the written paths as JSON')
    .action(async (run: string, opts: ExportOptions) => {
      const format = parseExportFormat(opts.format);
      const store = new Store(opts.db, { mustExist: true, access: 'read' });
      let record;
      try {
        record = getRun(store, parseRunId(run));
      } finally {
        store.close();
      }
      const written = await exportRunToPath(record, format, opts.out, { csvComments: opts.csvComments, ...(opts.appendix ? { appendix: true } : {}) });
      out(opts.json ? `${JSON.stringify({ run: record.id, format, files: written })}\n` : `${written.map((w) => `wrote ${w}`).join('\n')}\n`);
    });
}
