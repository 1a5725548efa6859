/**
 * A small project database from the invented demo market (sample-data/monthly):
 * prices of all companies, the three factors and the bill yield, imported through the
 * ordinary import pipeline from copies in a temporary folder (so a test can modify them).
 */
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { importPrices, importSeries } from '../../../src-main/import/index.js';
import { Store } from '../../../src-main/store/store.js';

export const SAMPLE = path.resolve(import.meta.dirname, '../../../sample-data/monthly');

export interface Project {
  dir: string;
  dbPath: string;
  store: Store;
  file: (name: string) => string;
}

export async function makeProject(): Promise<Project> {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-runs-'));
  for (const f of ['prices.csv', 'factors.csv', 'bill_yield.csv', 'consumption.csv']) copyFileSync(path.join(SAMPLE, f), path.join(dir, f));
  const dbPath = path.join(dir, 'project.db');
  const store = new Store(dbPath);
  await importPrices(store, path.join(dir, 'prices.csv'), { layout: 'long' });
  await importSeries(store, path.join(dir, 'factors.csv'), { kind: 'factor' });
  await importSeries(store, path.join(dir, 'bill_yield.csv'), { kind: 'riskfree', units: 'percent', rfForm: 'yield-annual' });
  await importSeries(store, path.join(dir, 'consumption.csv'), { kind: 'consumption' });
  return { dir, dbPath, store, file: (name) => path.join(dir, name) };
}

/**
 * Takes every import of a file back out of the store (Store.removeImport: its rows, the
 * assets or series left with none, its log entry): the first half of re-importing a
 * corrected file without --replace.
 */
export function forgetImport(store: Store, fileName: string): void {
  for (const e of store.importLog().filter((x) => x.fileName === fileName && x.kind !== 'dividends')) store.removeImport(e.id);
}

/** Rewrites one price (asset, date) of a long prices file; returns the old value. */
export function editPrice(file: string, asset: string, date: string, factor: number): number {
  const lines = readFileSync(file, 'utf8').split('\n');
  const i = lines.findIndex((l) => l.startsWith(`${date},${asset},`));
  if (i < 0) throw new Error(`no row ${date} ${asset} in ${file}`);
  const cells = lines[i].split(',');
  const old = Number(cells[2]);
  cells[2] = (old * factor).toFixed(2);
  lines[i] = cells.join(',');
  writeFileSync(file, lines.join('\n'));
  return old;
}
