/**
 * XLSX export (exceljs): one workbook, one sheet per table of the presentation model
 * (shared/present): row 1 the column headings with their units (as the CSV header row),
 * data from row 2, numbers stored as numbers at full precision with a display format by
 * role, best cells bold, "best in" and "warnings" columns where the CSV has them. An
 * About sheet carries the caution, the header, the warnings and every table's notes; a
 * Record sheet the run id, version, fingerprints and the spec. Sheet names are chosen to
 * fit 31 characters and to be unique. A spreadsheet has no negative zero: a stored -0
 * reads back as 0.
 */
import ExcelJS from 'exceljs';
import type { RunResult } from '../../shared/results.js';
import { stringifyExact } from '../../shared/records/exact-json.js';
import { present, type NumberFormat, type PresentedTable } from '../../shared/present/index.js';
import { cellFormat, plainText } from '../../shared/present/format.js';
import { exportGrid, aboutLines } from '../../shared/report/csv.js';
import { recordLines, type ExportRecord } from '../../shared/report/header.js';

/** Excel number formats by column role (display only; the cell keeps the full double). */
export const XLSX_NUMBER_FORMATS: Record<NumberFormat, string> = {
  value: 'General',
  percent: '0.000',
  stat: '0.000',
  p: '0.0000',
  ratio: '0.0000',
  integer: '0',
};

/** Most characters Excel allows in a sheet name. */
export const SHEET_NAME_MAX = 31;

/** Sheet names: at most 31 characters, none of []:*?/\ , unique in the workbook (case-insensitive). */
export function sheetName(title: string, taken: Set<string>): string {
  const base = title.replace(/[[\]:*?/\\]/g, ' ').replace(/\s+/g, ' ').trim().slice(0, SHEET_NAME_MAX).trim() || 'Sheet';
  let name = base;
  for (let i = 2; taken.has(name.toLowerCase()); i++) name = `${base.slice(0, SHEET_NAME_MAX - 1 - String(i).length).trim()} ${i}`;
  taken.add(name.toLowerCase());
  return name;
}

function addTableSheet(wb: ExcelJS.Workbook, t: PresentedTable, taken: Set<string>): void {
  const ws = wb.addWorksheet(sheetName(t.sheet, taken), { views: [{ state: 'frozen', ySplit: 1 }] });
  const g = exportGrid(t);
  ws.addRow(g.header);
  ws.getRow(1).font = { bold: true };
  for (const row of g.rows) ws.addRow(row.map((v) => (v === null ? null : v)));
  t.columns.forEach((c, j) => {
    const col = ws.getColumn(j + 1);
    if (c.type === 'number' && !t.rowFormats) col.numFmt = XLSX_NUMBER_FORMATS[c.format ?? 'value'];
    const widest = Math.max(c.header.length, ...t.rows.map((r) => (typeof r[j] === 'string' ? (r[j] as string).length : 12)));
    col.width = Math.min(60, Math.max(8, widest + 2));
    if (c.note) ws.getCell(1, j + 1).note = c.note;
  });
  t.rows.forEach((row, i) =>
    row.forEach((v, j) => {
      const cell = ws.getCell(i + 2, j + 1);
      if (typeof v === 'number' && t.rowFormats) cell.numFmt = XLSX_NUMBER_FORMATS[cellFormat(t, i, j) ?? 'value'];
      if ((t.marks[t.columns[j].key] ?? []).includes(i)) {
        cell.font = { bold: true };
        cell.fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFE6F2E6' } };
      }
    }),
  );
  for (let j = t.columns.length; j < g.header.length; j++) ws.getColumn(j + 1).width = 30;
}

/** The workbook for a result (and its run record, when there is one). */
export function resultToWorkbook(result: RunResult, record?: ExportRecord): ExcelJS.Workbook {
  const p = present(result);
  const wb = new ExcelJS.Workbook();
  wb.creator = 'deflator';
  wb.title = p.title;
  wb.description = p.caution;
  // Fixed times keep the output a function of the result alone.
  const stamp = record ? new Date(record.createdAt) : new Date(0);
  wb.created = stamp;
  wb.modified = stamp;
  const taken = new Set<string>();
  for (const t of p.tables) addTableSheet(wb, t, taken);

  const about = wb.addWorksheet(sheetName('About', taken));
  about.addRow([p.title]).font = { bold: true };
  about.addRow([p.caution]).font = { italic: true };
  about.addRow([]);
  for (const l of aboutLines(p).slice(2)) {
    const k = l.indexOf(': ');
    about.addRow([l.slice(0, k), l.slice(k + 2)]);
  }
  for (const t of p.tables) {
    about.addRow([]);
    about.addRow([`table: ${t.title}`, `sheet "${wb.worksheets[p.tables.indexOf(t)].name}"`]).font = { bold: true };
    for (const c of t.columns) if (c.note) about.addRow([`column ${c.header}`, c.note]);
    for (const n of t.notes) about.addRow(['note', plainText(n)]);
    for (const w of t.warnings) about.addRow(['warning', `${w.code}${w.model ? ` (${w.model})` : ''}${w.rows ? `, rows ${w.rows.map((r) => r + 2).join(', ')}` : ''}: ${w.message}`]);
  }
  about.getColumn(1).width = 22;
  about.getColumn(2).width = 100;

  if (record) {
    const rec = wb.addWorksheet(sheetName('Record', taken));
    rec.addRow(['deflator run record']).font = { bold: true };
    rec.addRow([p.caution]).font = { italic: true };
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

export async function resultToXlsx(result: RunResult, record?: ExportRecord): Promise<Buffer> {
  const data = await resultToWorkbook(result, record).xlsx.writeBuffer();
  return Buffer.from(data as ArrayBuffer);
}
