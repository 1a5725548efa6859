import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { CAUTION, type AnyResult } from '../../../shared/results.js';
import { resultTables } from '../../../shared/report/tables.js';
import { cellFormat } from '../../../shared/present/format.js';
import { resultToXlsx, sheetName, XLSX_NUMBER_FORMATS } from '../../../src-main/export/xlsx.js';
import { sampleBacktest, sampleCompare, sampleFit, sampleRecord } from '../../shared/report/sample-results.js';

async function readBack(buf: Buffer): Promise<ExcelJS.Workbook> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buf as unknown as ArrayBuffer);
  return wb;
}

/** A spreadsheet has no negative zero: -0 is compared as 0, every other double bit for bit. */
const same = (got: unknown, stored: number) => (Object.is(stored, -0) ? got === 0 : Object.is(got, stored));

describe('XLSX export read back by exceljs, cell by cell', () => {
  it.each([['fit', sampleFit()], ['backtest', sampleBacktest()], ['compare', sampleCompare()]] as [string, AnyResult][])(
    '%s: a sheet per table with the stored doubles, then Sample and Record sheets',
    async (_k, r) => {
      const wb = await readBack(await resultToXlsx(r, sampleRecord()));
      const tables = resultTables(r);
      expect(wb.worksheets.map((w) => w.name)).toEqual([...tables.map((t) => t.sheet), 'About', 'Record']);
      for (const w of wb.worksheets) expect(w.name.length).toBeLessThanOrEqual(31);
      tables.forEach((t, k) => {
        const ws = wb.worksheets[k];
        expect((ws.getRow(1).values as unknown[]).slice(1, t.columns.length + 1)).toEqual(t.columns.map((c) => c.header));
        expect(ws.actualRowCount).toBe(t.rows.length + 1);
        t.rows.forEach((row, i) => {
          row.forEach((v, j) => {
            const cell = ws.getCell(i + 2, j + 1);
            const where = `${ws.name}!${cell.address}`;
            if (v === null) expect(cell.value, where).toBeNull();
            else if (typeof v === 'number') {
              expect(typeof cell.value, where).toBe('number');
              expect(same(cell.value, v), `${where}: ${String(cell.value)} vs stored ${v}, tolerance 0`).toBe(true);
              expect(cell.numFmt ?? 'General').toBe(XLSX_NUMBER_FORMATS[cellFormat(t, i, j) ?? 'value']);
            } else expect(cell.value, where).toBe(v);
          });
        });
      });
      const about = wb.getWorksheet('About')!;
      expect(about.getCell('A2').value).toBe(CAUTION);
      const rec = wb.getWorksheet('Record')!;
      const recText = JSON.stringify(rec.getSheetValues());
      expect(recText).toContain('ab'.repeat(32));
      expect(recText).toContain('cd'.repeat(32));
      const specCell = (rec.getSheetValues() as unknown[][]).flat().find((v) => typeof v === 'string' && v.startsWith('{')) as string;
      expect(JSON.parse(specCell)).toEqual(sampleRecord().spec);
    },
  );

  it('checks the fit numbers straight against the result, not only the table model', async () => {
    const r = sampleFit();
    const wb = await readBack(await resultToXlsx(r));
    const pe = wb.getWorksheet('Pricing errors')!;
    expect(pe.getCell(1, 2).value).toBe('alpha (% per month)');
    r.pricingErrors.forEach((e, i) => {
      expect(pe.getCell(i + 2, 1).value).toBe(e.asset);
      expect(Object.is(pe.getCell(i + 2, 2).value, 100 * e.alpha), `alpha ${e.asset}`).toBe(true);
      expect(Object.is(pe.getCell(i + 2, 8).value, 100 * e.predicted)).toBe(true);
    });
    expect(wb.getWorksheet('Record')).toBeUndefined();
  });

  it('sheet names obey the 31-character, no []:*?/\\ rule and stay unique', () => {
    const taken = new Set<string>();
    expect(sheetName('a/b:c*d?[e]', taken)).toBe('a b c d e');
    const long = 'x'.repeat(40);
    expect(sheetName(long, taken)).toBe('x'.repeat(31));
    expect(sheetName(long, taken)).toBe(`${'x'.repeat(29)} 2`);
  });

  // Second reader: openpyxl 3.0 (Debian python3-openpyxl), data_only load, values as Python floats.
  const py = '/usr/bin/python3';
  const openpyxl = existsSync(py) && (() => { try { execFileSync(py, ['-c', 'import openpyxl'], { stdio: 'ignore' }); return true; } catch { return false; } })();
  it.skipIf(!openpyxl)(`reads back identically in openpyxl${openpyxl ? '' : ' (skipped: /usr/bin/python3 with openpyxl not found)'}`, () => {
    const r = sampleFit();
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-xlsx-'));
    const f = path.join(dir, 'fit.xlsx');
    return resultToXlsx(r, sampleRecord()).then((buf) => {
      writeFileSync(f, buf);
      const script = [
        'import sys, json, openpyxl',
        'wb = openpyxl.load_workbook(sys.argv[1], data_only=True)',
        "ws = wb['Parameters']",
        "rows = [[c.value if not isinstance(c.value, float) else repr(c.value) for c in r] for r in ws.iter_rows(min_row=2)]",
        "print(json.dumps({'sheets': wb.sheetnames, 'rows': rows, 'fmt': ws.cell(2, 2).number_format}))",
      ].join('\n');
      const out = JSON.parse(execFileSync(py, ['-c', script, f], { encoding: 'utf8' })) as { sheets: string[]; rows: unknown[][]; fmt: string };
      expect(out.sheets).toContain('Record');
      expect(out.fmt).toBe(XLSX_NUMBER_FORMATS.value); // openpyxl reports 'General' for the default format
      r.params.forEach((p, i) => {
        expect(out.rows[i][0]).toBe(p.name);
        expect(Object.is(Number(out.rows[i][1]), p.estimate), `openpyxl ${p.name}: ${String(out.rows[i][1])} vs ${p.estimate}`).toBe(true);
        expect(Object.is(Number(out.rows[i][2]), p.se)).toBe(true);
      });
    });
  });
});
