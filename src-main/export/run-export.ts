/**
 * Export of a recorded run to files: CSV (one file per table), XLSX, LaTeX, HTML, PDF.
 * Every format is computed from the stored result and its record, so the numbers in an
 * export are the stored ones.
 */
import { existsSync, statSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import type { RunRecord } from '../../shared/records/run-record.js';
import { resultToCsv } from '../../shared/report/csv.js';
import { EXPORT_EXTENSIONS, EXPORT_FORMATS, type ExportFormat } from '../../shared/report/formats.js';
import { resultToHtml } from '../../shared/report/html.js';
import { resultToLatex } from '../../shared/report/latex.js';
import { htmlToPdf } from './pdf.js';
import { writeFilesAtomic } from './write.js';

export { EXPORT_FORMATS, EXPORT_EXTENSIONS, type ExportFormat };

export interface ExportFile {
  /** File name without folder: `<table>.csv` (and `about.txt`) for CSV, `run-<id>.<ext>` otherwise. */
  name: string;
  data: Buffer;
}

export function parseExportFormat(s: string): ExportFormat {
  const f = s.toLowerCase() === 'tex' ? 'latex' : s.toLowerCase();
  if (!(EXPORT_FORMATS as readonly string[]).includes(f)) {
    throw new DeflatorError('INPUT_INVALID', `unknown export format "${s}"`, `use one of ${EXPORT_FORMATS.join(', ')}`);
  }
  return f as ExportFormat;
}

export interface ExportOptions {
  /** CSV: the run's metadata in `#` lines above each table instead of the sidecar about.txt. */
  csvComments?: boolean;
  /** HTML and PDF: the long listings (m_t series, parameter paths, windows) as appendix tables (default: HTML yes, PDF no). */
  appendix?: boolean;
}

/** The export's bytes, in memory (the app saves them where the user chooses). */
export async function renderExport(record: RunRecord, format: ExportFormat, pdf: (html: string) => Promise<Buffer> = htmlToPdf, options: ExportOptions = {}): Promise<ExportFile[]> {
  const single = (data: Buffer): ExportFile[] => [{ name: `run-${record.id}.${EXPORT_EXTENSIONS[format]}`, data }];
  switch (format) {
    case 'csv':
      return resultToCsv(record.result, record, { comments: options.csvComments }).map((f) => ({ name: `${f.table}.${f.ext}`, data: Buffer.from(f.text, 'utf8') }));
    case 'xlsx':
      // loaded on demand: exceljs takes about 0.2 s to load, which no other command should pay
      return single(await (await import('./xlsx.js')).resultToXlsx(record.result, record));
    case 'latex':
      return single(Buffer.from(resultToLatex(record.result, record), 'utf8'));
    case 'html':
      return single(Buffer.from(resultToHtml(record.result, record, { appendix: options.appendix ?? true }), 'utf8'));
    case 'pdf':
      return single(await pdf(resultToHtml(record.result, record, { appendix: options.appendix ?? false, print: true })));
  }
}

/**
 * Where CSV files go for an --out value: an existing folder, or one written with a
 * trailing slash, gets `<folder>/<table>.csv`; anything else is a prefix,
 * `<prefix>-<table>.csv` (a trailing `.csv` on the prefix is dropped).
 */
export function csvTargets(out: string, files: string[]): string[] {
  const isDir = /[\\/]$/.test(out) || (existsSync(out) && statSync(out).isDirectory());
  if (isDir) return files.map((f) => path.join(out, f));
  const prefix = out.replace(/\.csv$/i, '');
  return files.map((f) => `${prefix}-${f}`);
}

/** Writes the export and returns the paths written. */
export async function exportRunToPath(record: RunRecord, format: ExportFormat, out: string, options: ExportOptions = {}): Promise<string[]> {
  const files = await renderExport(record, format, htmlToPdf, options);
  const targets = format === 'csv' ? csvTargets(out, files.map((f) => f.name)) : [out];
  // each file to a temporary file beside it, then renamed into place: a failure leaves old files whole
  writeFilesAtomic(targets.map((target, i) => ({ target, data: files[i].data })));
  return targets;
}
