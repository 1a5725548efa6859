/**
 * A computed result whose run record could not be written (the database busy, read-only,
 * full or damaged) is not lost: it is saved to a file, every number exactly
 * (shared/records/exact-json.ts), and `deflator runs --record FILE --db DB` records it
 * later, after checking that the data it was computed on are still what the database
 * holds (the panel fingerprints must match; otherwise the analysis is to be run again).
 */
import { writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import { parseExact, stringifyExact } from '../../shared/records/exact-json.js';
import { fingerprintPanel } from '../../shared/records/panel-encoding.js';
import type { RunRecord } from '../../shared/records/run-record.js';
import type { RunResult } from '../../shared/results.js';
import { parseDriftSpec, parseFitSpec, parsePresentValueSpec, type CompareSpec } from '../../shared/spec.js';
import { compareAnalysis, loadAnalysisData, recordedData, type Analysis, type AnalysisData } from '../services/analysis.js';
import type { Store } from '../store/store.js';
import { VERSION } from '../version.js';
import { recordRun } from './runs.js';
import type { BacktestEngine } from '../../shared/backtest/index.js';

export const UNRECORDED_FORMAT = 'deflator unrecorded run';

interface UnrecordedFile {
  format: typeof UNRECORDED_FORMAT;
  formatVersion: 1;
  version: string;
  createdAt: string;
  /** The database it was meant for (information: it may be recorded in a copy). */
  database: string;
  kind: Analysis['kind'];
  spec: unknown;
  engine?: string;
  threads?: number;
  /** SHA-256 fingerprints of the data it was computed on (returns panels, or yearly values), in order. */
  panels: string[];
  result: RunResult;
}

/**
 * Saves the result beside the database (`<db>.unrecorded-<time>-<kind>.json`), else in the
 * current folder, else in the temporary folder, whichever may be written first; returns
 * the file, or undefined when none could be written.
 */
export function saveUnrecorded(dbPath: string, a: Analysis, result: RunResult, data: AnalysisData, threads?: number, folders?: string[]): string | undefined {
  const { runId: _id, unrecorded: _u, ...plain } = result as RunResult & { runId?: number; unrecorded?: unknown };
  const body: UnrecordedFile = {
    format: UNRECORDED_FORMAT,
    formatVersion: 1,
    version: VERSION,
    createdAt: new Date().toISOString(),
    database: path.basename(dbPath),
    kind: a.kind,
    spec: a.spec,
    ...(a.kind === 'backtest' && a.engine && a.engine !== 'auto' ? { engine: a.engine } : {}),
    ...(threads !== undefined ? { threads } : {}),
    panels: dataFingerprints(a, data),
    result: plain as RunResult,
  };
  const text = `${stringifyExact(body, 1)}\n`;
  const stamp = body.createdAt.replace(/[-:]/g, '').replace(/\..*$/, '');
  const name = `${path.basename(dbPath)}.unrecorded-${stamp}-${a.kind}.json`;
  for (const dir of folders ?? [path.dirname(path.resolve(dbPath)), process.cwd(), tmpdir()]) {
    const file = path.join(dir, name);
    try {
      writeFileSync(file, text, { flag: 'wx' });
      return file;
    } catch {
      // the next place
    }
  }
  return undefined;
}

/** SHA-256 fingerprints of the data an analysis read, as its run record keeps them. */
function dataFingerprints(a: Analysis, data: AnalysisData): string[] {
  const d = recordedData(a, data);
  return (Array.isArray(d) ? d : [d]).map((x) => ('returns' in x ? fingerprintPanel(x).sha256 : x.sha256));
}

/** The analysis a saved file describes, its spec parsed again (defaults filled in). */
function savedAnalysis(saved: UnrecordedFile): Analysis {
  switch (saved.kind) {
    case 'compare':
      return compareAnalysis(saved.spec as CompareSpec);
    case 'backtest':
      return { kind: 'backtest', spec: parseFitSpec(saved.spec), ...(saved.engine ? { engine: saved.engine as BacktestEngine } : {}) };
    case 'present-value':
      return { kind: 'present-value', spec: parsePresentValueSpec(saved.spec) };
    case 'drift':
      return { kind: 'drift', spec: parseDriftSpec(saved.spec) };
    default:
      return { kind: 'fit', spec: parseFitSpec(saved.spec) };
  }
}

/** Records a saved result (see the file comment); its recording time is when it was computed. */
export function recordSaved(store: Store, file: string): RunRecord {
  let saved: UnrecordedFile;
  try {
    saved = parseExact<UnrecordedFile>(readFileSync(file, 'utf8'));
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new DeflatorError(code === 'ENOENT' ? 'NOT_FOUND' : 'INPUT_INVALID', `${file}: ${code === 'ENOENT' ? 'no such file' : `not a saved result (${(e as Error).message})`}`, 'give the file named when the result could not be recorded');
  }
  if (saved?.format !== UNRECORDED_FORMAT || saved.formatVersion !== 1 || !saved.result || !Array.isArray(saved.panels)) {
    throw new DeflatorError('INPUT_INVALID', `${file} is not a saved result of deflator`, 'give the file named when the result could not be recorded');
  }
  const a = savedAnalysis(saved);
  const data = loadAnalysisData(store, a, { digests: true });
  const now = dataFingerprints(a, data);
  if (now.length !== saved.panels.length || now.some((s, i) => s !== saved.panels[i])) {
    throw new DeflatorError(
      'CONFLICT',
      `${file} was computed on other data than ${store.path} now holds (panel fingerprint ${saved.panels[0]?.slice(0, 12)}..., now ${now[0]?.slice(0, 12)}...)`,
      'run the analysis again on the current data (its spec is in the file under "spec")',
    );
  }
  return recordRun(store, {
    spec: a.spec,
    result: saved.result,
    panel: recordedData(a, data),
    createdAt: new Date(saved.createdAt),
    ...(saved.threads !== undefined ? { threads: saved.threads } : {}),
    ...(data.subjects ? { subjects: data.subjects } : {}),
    ...(saved.engine ? { engine: saved.engine } : {}),
  });
}
