/**
 * The demo database: imports the invented scenario in sample-data/ (listed in its
 * manifest.json) through the ordinary import pipeline into a fresh database file.
 */
import { openSqlite } from '../store/sqlite.js';
import { existsSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { ReturnForm, RiskfreeForm, SeriesKind, ValueUnits } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import { importPrices, importReturns, importSeries, type ImportReport, type Units } from '../import/index.js';
import { Store } from '../store/store.js';

export const DEMO_SETS = ['monthly', 'daily', 'returns'] as const;
export type DemoSet = (typeof DEMO_SETS)[number];

export interface ManifestEntry {
  file: string;
  import: 'prices' | 'series' | 'returns';
  layout?: 'long' | 'wide';
  dividends?: string;
  kind?: SeriesKind;
  units?: Units;
  rfForm?: RiskfreeForm;
  /** Date layout (e.g. YYYYMM) when not ISO. */
  dateFormat?: string;
  /** Missing-value codes. */
  missing?: string[];
  /** Return files: form and whether they hold excess returns. */
  form?: ReturnForm;
  excess?: boolean;
}

export interface Manifest {
  sets: Record<DemoSet, ManifestEntry[]>;
}

/**
 * The sample-data folder: $DEFLATOR_SAMPLE_DATA, else the nearest sample-data/ above this
 * module (dist/cli.js in the build, src-main/data when run from sources).
 */
export function findSampleData(): string {
  const env = process.env.DEFLATOR_SAMPLE_DATA;
  if (env) return env;
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const candidate = path.join(dir, 'sample-data');
    if (existsSync(path.join(candidate, 'manifest.json'))) return candidate;
    const up = path.dirname(dir);
    if (up === dir) break;
    dir = up;
  }
  throw new DeflatorError('NOT_FOUND', 'cannot find the sample-data folder (with manifest.json) of this installation', 'set DEFLATOR_SAMPLE_DATA to the folder, or run from the project folder');
}

export function readManifest(dir: string): Manifest {
  const file = path.join(dir, 'manifest.json');
  try {
    return JSON.parse(readFileSync(file, 'utf8')) as Manifest;
  } catch (e) {
    throw new DeflatorError('INPUT_INVALID', `cannot read ${file}: ${(e as Error).message}`, 'restore sample-data/manifest.json from the project');
  }
}

/** Deletes a database file (and its WAL files) only if it is a deflator database. */
function replaceable(dbPath: string): void {
  if (!existsSync(dbPath)) return;
  let ok = false;
  try {
    const db = openSqlite(dbPath, { readonly: true, fileMustExist: true });
    try {
      const version = Number(db.pragma('user_version', { simple: true }));
      const hasLog = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'import_log'").get() !== undefined;
      ok = version >= 1 && hasLog;
    } finally {
      db.close();
    }
  } catch {
    ok = false;
  }
  if (!ok) throw new DeflatorError('CONFLICT', `${dbPath} exists and is not a deflator database; the demo will not replace it`, 'pass another path with --db');
  for (const suffix of ['', '-wal', '-shm']) rmSync(dbPath + suffix, { force: true });
}

export interface DemoBuild {
  dbPath: string;
  set: DemoSet;
  reports: ImportReport[];
}

/** Builds (or rebuilds) the demo database at dbPath from one set of the sample data. */
export async function buildDemo(dbPath: string, options: { set?: DemoSet; sampleDir?: string } = {}): Promise<DemoBuild> {
  const set = options.set ?? 'monthly';
  const dir = options.sampleDir ?? findSampleData();
  const entries = readManifest(dir).sets[set];
  if (!entries) throw new DeflatorError('INPUT_INVALID', `no demo set "${set}"`, `use one of ${DEMO_SETS.join(', ')}`);
  replaceable(dbPath);
  const store = new Store(dbPath);
  const reports: ImportReport[] = [];
  try {
    for (const e of entries) {
      const file = path.join(dir, e.file);
      const reading = { ...(e.dateFormat ? { dateFormat: e.dateFormat } : {}), ...(e.missing ? { missing: e.missing } : {}) };
      if (e.import === 'prices') {
        reports.push(await importPrices(store, file, { layout: e.layout ?? 'long', ...(e.dividends ? { dividends: path.join(dir, e.dividends) } : {}), ...reading }));
      } else if (e.import === 'returns') {
        const units: ValueUnits = e.units ?? 'decimal';
        reports.push(await importReturns(store, file, { layout: e.layout ?? 'wide', form: e.form ?? 'net', units, ...(e.excess ? { excess: true } : {}), ...reading }));
      } else {
        reports.push(await importSeries(store, file, { kind: e.kind ?? 'other', units: e.units ?? 'decimal', ...(e.rfForm ? { rfForm: e.rfForm } : {}), ...reading }));
      }
    }
  } finally {
    store.close();
  }
  return { dbPath, set, reports };
}
