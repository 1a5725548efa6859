/**
 * Run records in the project database: record after every successful fit, back-test or
 * comparison (CLI and app), list, read, delete, and tell whether a run's data changed
 * since (stale). Tables: src-main/runs/migration.ts.
 */
import type { ReturnsPanel } from '../../shared/panel.js';
import type { RunResult } from '../../shared/results.js';
import { DeflatorError } from '../../shared/errors.js';
import { windowsPerChunk } from '../../shared/backtest/windows.js';
import { decodeColumns, encodeColumns, parseExact, parseExactColumns, stringifyExact, stringifyExactColumns } from '../../shared/records/exact-json.js';
import { fingerprintPanel } from '../../shared/records/panel-encoding.js';
import type { DataFileFingerprint, PanelFingerprint, RunKind, RunRecord, RunSummary, RunTag, StaleItem, SubjectFingerprint } from '../../shared/records/run-record.js';
import type { Store } from '../store/store.js';
import { VERSION } from '../version.js';
import { kernelIdentity } from '../../shared/linalg/identity.js';
import { nodeSha256 } from '../store/digest.js';
import { DataFingerprinter, runSubjects } from './dependencies.js';
import { knownFingerprint } from '../data/panel-cache.js';

export interface RecordRunInput {
  /** The spec as parsed (defaults filled in): what replay runs again. */
  spec: unknown;
  result: RunResult;
  /**
   * The returns panel the result was computed on, or its fingerprint
   * (shared/records/panel-encoding.ts fingerprintPanel, e.g. computed inside a worker).
   * A comparison whose models used different panels passes them all.
   */
  panel: ReturnsPanel | PanelFingerprint | (ReturnsPanel | PanelFingerprint)[];
  /** Defaults to now. */
  createdAt?: Date;
  /** Worker threads of the pool that computed it (information only; see RunRecord.compute). */
  threads?: number;
  /** Back-tests: the engine asked for, when not 'auto' (e.g. 'fit'). */
  engine?: string;
  /**
   * Digests of subjects the caller already read (src-main/services: the panel load's own
   * rows, `loadedDigests`), so that the store is not read again for them.
   */
  subjects?: readonly SubjectFingerprint[];
}

interface RunRow {
  id: number;
  kind: RunKind;
  label: string;
  models: string;
  created_at: string;
  version: string;
  spec: string;
  result: string;
  result_columns: Uint8Array | null;
  panel: string;
  panel_sha256: string;
  panels: string | null;
  files: string;
  subjects: string;
  compute: string | null;
}

const isPanel = (p: ReturnsPanel | PanelFingerprint): p is ReturnsPanel => 'returns' in p && Array.isArray((p as ReturnsPanel).returns);

function requireRunTables(store: Store): void {
  const ok = store.db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'run'").pluck().get();
  if (ok === undefined) {
    throw new DeflatorError('CONFLICT', `database ${store.path} has no run-record tables`, 'open it once with this version of deflator (without read-only) so that it is migrated');
  }
}

/** Labels and kinds of the models in a run, for filtering. */
export function runModels(spec: unknown, result: RunResult): string[] {
  const out = new Set<string>();
  const s = (spec ?? {}) as { model?: { kind?: unknown }; compare?: { model?: { kind?: unknown } }[] };
  if (result.kind === 'compare') {
    for (const m of result.models) out.add(m.label);
    for (const e of s.compare ?? []) if (typeof e.model?.kind === 'string') out.add(e.model.kind);
  } else if (result.kind === 'batch') {
    // a batch has up to thousands of models: its label and the model kinds, not every task
    out.add(result.label);
    const kinds = (spec as { base?: { model?: { kind?: unknown } }; grid?: Record<string, unknown> }) ?? {};
    if (typeof kinds.base?.model?.kind === 'string') out.add(kinds.base.model.kind);
    const axis = kinds.grid?.['model.kind'];
    if (Array.isArray(axis)) for (const k of axis) if (typeof k === 'string') out.add(k);
  } else if (result.kind === 'present-value' || result.kind === 'drift') {
    out.add(result.label);
    out.add(result.kind);
  } else {
    out.add(result.label);
    if (typeof s.model?.kind === 'string') out.add(s.model.kind);
  }
  return [...out];
}

export function runLabel(result: RunResult): string {
  return result.kind === 'compare' ? result.models.map((m) => m.label).join(' vs ') : result.label;
}

/** Stores a run; returns its record (with the new id). */
export function recordRun(store: Store, input: RecordRunInput): RunRecord {
  requireRunTables(store);
  const given = Array.isArray(input.panel) ? input.panel : [input.panel];
  if (!given.length) throw new DeflatorError('INPUT_INVALID', 'recordRun: no panel given', 'pass the returns panel the result was computed on');
  const panels: PanelFingerprint[] = [];
  for (const p of given) {
    const fp = isPanel(p) ? (knownFingerprint(p) ?? fingerprintPanel(p, nodeSha256)) : p;
    if (!panels.some((q) => q.sha256 === fp.sha256)) panels.push(fp);
  }
  const data = new DataFingerprinter(store, input.subjects);
  const refs = runSubjects(store, input.spec, given.filter(isPanel), input.subjects);
  const subjects = refs.map((r) => data.subject(r)).filter((s): s is SubjectFingerprint => s !== null);
  const files = data.files(refs);
  const createdAt = (input.createdAt ?? new Date()).toISOString();
  const label = runLabel(input.result);
  const models = runModels(input.spec, input.result);
  if (input.threads !== undefined && !(Number.isInteger(input.threads) && input.threads >= 1)) {
    throw new DeflatorError('INPUT_INVALID', `recordRun: threads ${input.threads} is not a whole number of at least 1`, 'pass the pool\'s thread count');
  }
  const chunkWindows = recordedChunkWindows(input.spec, input.result);
  const compute = {
    ...(input.threads !== undefined ? { threads: input.threads } : {}),
    ...(input.engine !== undefined ? { engine: input.engine } : {}),
    ...(chunkWindows !== undefined ? { chunkWindows } : {}),
    kernels: kernelIdentity(),
  };
  const insert = store.db.prepare(
    'INSERT INTO run (kind, label, models, created_at, version, spec, result, result_columns, panel, panel_sha256, panels, files, subjects, compute) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
  );
  // long number series as float64 columns beside the JSON (migration 9)
  const stored = stringifyExactColumns(untagged(input.result));
  const insertSubject = store.db.prepare('INSERT INTO run_subject (run_id, kind, name, sha256) VALUES (?, ?, ?, ?)');
  const id = store.db.transaction(() => {
    const runId = Number(
      insert.run(
        input.result.kind,
        label,
        JSON.stringify(models),
        createdAt,
        VERSION,
        stringifyExact(input.spec),
        stored.text,
        stored.columns.length ? encodeColumns(stored.columns) : null,
        JSON.stringify(panels[0]),
        panels[0].sha256,
        panels.length > 1 ? JSON.stringify(panels) : null,
        JSON.stringify(files),
        JSON.stringify(subjects),
        JSON.stringify(compute),
      ).lastInsertRowid,
    );
    for (const s of subjects) insertSubject.run(runId, s.kind, s.name, s.sha256);
    return runId;
  })();
  // The record as stored, without reading the result back (getRun would parse it again:
  // a quarter of a second for a large back-test); the spec is read back as stored.
  const rec: RunRecord = {
    id,
    kind: input.result.kind,
    label,
    models,
    createdAt,
    version: VERSION,
    spec: parseExact(stringifyExact(input.spec)),
    result: untagged(input.result),
    panel: panels[0],
    files,
    subjects,
    compute,
  };
  if (panels.length > 1) rec.panels = panels;
  return rec;
}

/** Windows per chunk of the back-test in a back-test or a comparison with a "backtest" block (RunRecord.compute). */
export function recordedChunkWindows(spec: unknown, result: RunResult): number | undefined {
  if (result.kind !== 'backtest' && result.kind !== 'compare') return undefined;
  const bt = (spec ?? {}) as { backtest?: { window?: unknown; step?: unknown } };
  if (typeof bt.backtest?.window !== 'number' || typeof bt.backtest.step !== 'number') return undefined;
  return windowsPerChunk({ window: bt.backtest.window, step: bt.backtest.step });
}

function untagged(result: RunResult & RunTag): RunResult {
  if (!('runId' in result)) return result;
  const { runId: _drop, ...rest } = result;
  return rest as RunResult;
}

/**
 * Records the run and returns the same result tagged with its run id: the one-line
 * addition after a fit, back-test or comparison, e.g.
 * `.then((result) => keepRun(store, { spec, result, panel }))`.
 */
export function keepRun<R extends RunResult>(store: Store, input: RecordRunInput & { result: R }): R & RunTag {
  const rec = recordRun(store, input);
  return Object.assign(input.result, { runId: rec.id });
}

function toRecord(r: RunRow): RunRecord {
  const rec: RunRecord = {
    id: r.id,
    kind: r.kind,
    label: r.label,
    models: JSON.parse(r.models) as string[],
    createdAt: r.created_at,
    version: r.version,
    spec: parseExact(r.spec),
    result: r.result_columns ? parseExactColumns<RunResult>(r.result, decodeColumns(r.result_columns)) : parseExact<RunResult>(r.result),
    panel: JSON.parse(r.panel) as PanelFingerprint,
    files: JSON.parse(r.files) as DataFileFingerprint[],
    subjects: JSON.parse(r.subjects) as SubjectFingerprint[],
  };
  if (r.panels) rec.panels = JSON.parse(r.panels) as PanelFingerprint[];
  if (r.compute) rec.compute = JSON.parse(r.compute) as NonNullable<RunRecord['compute']>;
  return rec;
}

/** Accepts 7, "7" or "run7"/"#7"; anything else is INPUT_INVALID. */
export function parseRunId(text: string | number): number {
  const m = /^(?:run|#)?\s*(\d{1,15})$/i.exec(String(text).trim());
  if (!m || Number(m[1]) < 1) throw new DeflatorError('INPUT_INVALID', `"${text}" is not a run id`, 'give the number shown by `deflator runs --db DB`');
  return Number(m[1]);
}

export function getRun(store: Store, id: number): RunRecord {
  requireRunTables(store);
  const row = store.db.prepare('SELECT * FROM run WHERE id = ?').get(id) as RunRow | undefined;
  if (!row) throw new DeflatorError('NOT_FOUND', `run ${id} is not in ${store.path}`, 'run `deflator runs --db DB` to list the recorded runs');
  return toRecord(row);
}

export function deleteRun(store: Store, id: number): void {
  requireRunTables(store);
  const n = store.db.prepare('DELETE FROM run WHERE id = ?').run(id).changes;
  if (!n) throw new DeflatorError('NOT_FOUND', `run ${id} is not in ${store.path}`, 'run `deflator runs --db DB` to list the recorded runs');
}

/**
 * What changed in a run's data since it was recorded: each subject whose stored rows
 * differ or are gone, and each recorded file that no longer feeds its subjects (they
 * were re-imported from another file, or deleted). Empty: the run's data is as it was.
 */
export function staleItems(store: Store, record: Pick<RunRecord, 'files' | 'subjects'>, fp = new DataFingerprinter(store)): StaleItem[] {
  const items: StaleItem[] = [];
  for (const s of record.subjects) {
    const now = fp.subject(s);
    if (!now) items.push({ what: `${s.kind} ${s.name}`, recorded: s.sha256, current: null, reason: 'no longer in the store (deleted)' });
    else if (now.sha256 !== s.sha256) {
      items.push({ what: `${s.kind} ${s.name}`, recorded: s.sha256, current: now.sha256, reason: `stored rows changed since the run (${s.rows} rows then, ${now.rows} now)` });
    }
  }
  for (const f of record.files) {
    const refs = record.subjects.filter((s) => s.kind !== 'portfolio' && f.subjects.includes(s.name));
    const current = fp.files(refs);
    // the same import, or the same bytes imported again (after `deflator import remove`) feeding the same subjects
    if (current.some((c) => c.sha256 === f.sha256 && (c.importId === f.importId || f.subjects.every((x) => c.subjects.includes(x))))) continue;
    const replacement = current.filter((c) => c.subjects.some((x) => f.subjects.includes(x)));
    items.push({
      what: `file ${f.file}`,
      recorded: f.sha256,
      current: replacement.length === 1 ? replacement[0].sha256 : null,
      reason: replacement.length
        ? `no longer feeds ${f.subjects.join(', ')}: now from ${replacement.map((r) => `${r.file} (${r.sha256.slice(0, 12)})`).join(', ')}`
        : `its data for ${f.subjects.join(', ')} is no longer in the store`,
    });
  }
  return items;
}

export interface RunFilter {
  /** Substring of a model label or kind (case-insensitive). */
  model?: string;
  kind?: RunKind;
  /** Recorded on or after this date (YYYY-MM-DD or an ISO time). */
  from?: string;
  /** Recorded on or before this date (YYYY-MM-DD: the whole day). */
  to?: string;
}

/** Runs, newest first, with their stale flags. */
export function listRuns(store: Store, filter: RunFilter = {}): RunSummary[] {
  requireRunTables(store);
  // the summary's columns only: not every run's result
  const rows = store.db.prepare('SELECT id, kind, label, models, created_at, version, panel, panel_sha256, panels, files, subjects FROM run ORDER BY id DESC').all() as Pick<
    RunRow,
    'id' | 'kind' | 'label' | 'models' | 'created_at' | 'version' | 'panel' | 'panel_sha256' | 'panels' | 'files' | 'subjects'
  >[];
  const fp = new DataFingerprinter(store);
  const to = filter.to && /^\d{4}-\d{2}-\d{2}$/.test(filter.to) ? `${filter.to}T23:59:59.999Z` : filter.to;
  const needle = filter.model?.toLowerCase();
  const out: RunSummary[] = [];
  for (const row of rows) {
    const models = JSON.parse(row.models) as string[];
    if (filter.kind && row.kind !== filter.kind) continue;
    if (filter.from && row.created_at < filter.from) continue;
    if (to && row.created_at > to) continue;
    if (needle && !models.some((m) => m.toLowerCase().includes(needle)) && !row.label.toLowerCase().includes(needle)) continue;
    const panel = JSON.parse(row.panel) as PanelFingerprint;
    const stale = staleItems(store, { files: JSON.parse(row.files) as DataFileFingerprint[], subjects: JSON.parse(row.subjects) as SubjectFingerprint[] }, fp);
    out.push({
      id: row.id,
      kind: row.kind,
      label: row.label,
      models,
      createdAt: row.created_at,
      version: row.version,
      start: panel.start,
      end: panel.end,
      T: panel.T,
      N: panel.N,
      K: panel.K,
      ...(row.panels ? { factorCounts: (JSON.parse(row.panels) as PanelFingerprint[]).map((p) => p.K) } : {}),
      panelSha256: row.panel_sha256,
      stale: stale.length > 0,
      staleItems: stale,
    });
  }
  return out;
}
