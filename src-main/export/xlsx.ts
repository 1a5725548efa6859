/**
 * XLSX export (exceljs): one workbook, one sheet per result table (row 1 the column
 * labels, data from row 2, numbers as numbers with a display format by column role),
 * a Sample sheet with the sample header and the caution, and a Record sheet with the
 * run id, version, fingerprints and the spec. Cells hold the stored doubles at full
 * precision (the number format only changes what is displayed). A spreadsheet has no
 * negative zero: a stored -0 reads back as 0.
 */
import ExcelJS from 'exceljs';
import type { AnyResult } from '../../shared/results.js';
import { CAUTION } from '../../shared/results.js';
import { stringifyExact } from '../../shared/records/exact-json.js';
import { recordLines, sampleHeaderLines, type ExportRecord } from '../../shared/report/header.js';
import type { NumberFormat } from '../../shared/report/numbers.js';
import { resultTables, resultTitle, type ReportTable } from '../../shared/report/tables.js';

/** Excel number formats by column role (display only). */
export const XLSX_NUMBER_FORMATS: Record<NumberFormat, string> = {
  value: '0.000000',
  stat: '0.000',
  p: '0.0000',
  integer: '0',
};

/** Sheet names: at most 31 characters, none of []:*?/\ , unique in the workbook. */
export function sheetName(title: string, taken: Set<string>): string {
  const base = title.replace(/[[\]:*?/\\]/g, ' ').slice(0, 31).trim() || 'Sheet';
  let name = base;
  for (let i = 2; taken.has(name.toLowerCase()); i++) name = `${base.slice(0, 28)} ${i}`;
  taken.add(name.toLowerCase());
  return name;
}

function addTableSheet(wb: ExcelJS.Workbook, t: ReportTable, taken: Set<string>): void {
  const ws = wb.addWorksheet(sheetName(t.title, taken), { views: [{ state: 'frozen', ySplit: 1 }] });
  ws.addRow(t.columns.map((c) => c.label));
  ws.getRow(1).font = { bold: true };
  for (const row of t.rows) ws.addRow(row.map((v) => (v === null ? null : v)));
  t.columns.forEach((c, j) => {
    const col = ws.getColumn(j + 1);
    if (c.type === 'number') col.numFmt = XLSX_NUMBER_FORMATS[c.format ?? 'value'];
    const widest = Math.max(c.label.length, ...t.rows.map((r) => (typeof r[j] === 'string' ? (r[j] as string).length : 12)));
    col.width = Math.min(60, Math.max(8, widest + 2));
  });
  ws.getCell(1, 1).note = `${t.title}: table "${t.id}"`;
}

/** The workbook for a result (and its run record, when there is one). */
export function resultToWorkbook(result: AnyResult, record?: ExportRecord): ExcelJS.Workbook {
  const wb = new ExcelJS.Workbook();
  wb.creator = 'deflator';
  wb.title = resultTitle(result);
  wb.description = CAUTION;
  // Fixed times keep the output a function of the result alone.
  const stamp = record ? new Date(record.createdAt) : new Date(0);
  wb.created = stamp;
  wb.modified = stamp;
  const taken = new Set<string>();
  for (const t of resultTables(result)) addTableSheet(wb, t, taken);

  const sample = wb.addWorksheet(sheetName('Sample', taken));
  sample.addRow([resultTitle(result)]).font = { bold: true };
  sample.addRow([CAUTION]).font = { italic: true };
  sample.addRow([]);
  for (const l of sampleHeaderLines(result.sample)) sample.addRow([l.key, l.value]);
  sample.getColumn(1).width = 14;
  sample.getColumn(2).width = 90;

  if (record) {
    const rec = wb.addWorksheet(sheetName('Record', taken));
    rec.addRow(['deflator run record']).font = { bold: true };
    rec.addRow([CAUTION]).font = { italic: true };
    rec.addRow([]);
    for (const l of recordLines(record).filter((x) => x.key !== 'file sha256')) rec.addRow([l.key, l.value]);
    rec.addRow([]);
    rec.addRow(['file', 'sha256', 'import id', 'feeds']).font = { bold: true };
    for (const f of record.files) rec.addRow([f.file, f.sha256, f.importId ?? null, f.subjects.join(', ')]);
    rec.addRow([]);
    rec.addRow(['spec (JSON)']).font = { bold: true };
    rec.addRow([stringifyExact(record.spec, 2)]).alignment = { wrapText: true, vertical: 'top' };
    rec.getColumn(1).width = 18;
    rec.getColumn(2).width = 70;
    rec.getColumn(3).width = 10;
    rec.getColumn(4).width = 40;
  }
  return wb;
}

export async function resultToXlsx(result: AnyResult, record?: ExportRecord): Promise<Buffer> {
  const data = await resultToWorkbook(result, record).xlsx.writeBuffer();
  return Buffer.from(data as ArrayBuffer);
}
