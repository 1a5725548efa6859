/**
 * `deflator batch plan`: expands a grid spec into tasks, builds the returns panel each
 * task needs from the project database (once per distinct panel), and writes the batch
 * folder (folder.ts) from which shards run without the database.
 */
import { existsSync, mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';
import { DEFAULT_MAX_TASKS, checkGridSize, expandGrid, gridAxes, gridLabel, panelKey, parseGridSpec, type GridSpec, type GridTask } from '../../shared/batch/grid.js';
import { SnapshotWriter, dataFingerprint } from '../../shared/batch/snapshot.js';
import { stringifyExact } from '../../shared/records/exact-json.js';
import { fingerprintPanel } from '../../shared/records/panel-encoding.js';
import type { PanelFingerprint } from '../../shared/records/run-record.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { FitSpec } from '../../shared/spec.js';
import { loadPanel } from '../data/panel.js';
import type { Store } from '../store/store.js';
import { VERSION } from '../version.js';
import { FOLDER_VERSION, MANIFEST_FORMAT, planId, readManifest, sha256, specFile, writeAtomic, type Manifest, type ManifestTask } from './folder.js';

export interface PlanOptions {
  maxTasks?: number;
  /** Called as distinct panels are built: (done, total). */
  onProgress?: (done: number, total: number, stage: string) => void;
}

export interface PlanReport {
  dir: string;
  plan: string;
  tasks: number;
  panels: number;
  backtests: number;
  dataSha256: string;
  snapshotBytes: number;
  /** The folder already held this very plan: nothing was written. */
  unchanged: boolean;
  axes: { axis: string; count: number }[];
}

/**
 * Builds one panel per distinct panel key of the tasks. A task whose panel cannot be built
 * (a name not in the database, a window without data) stops the plan, naming the task.
 */
export function taskPanels(store: Store, tasks: { task: number; label: string; spec: FitSpec }[], onProgress?: PlanOptions['onProgress']): { byTask: PanelFingerprint[]; panels: Map<string, ReturnsPanel> } {
  const keys = new Map<string, { spec: FitSpec; task: number; label: string }>();
  for (const t of tasks) {
    const k = panelKey(t.spec);
    if (!keys.has(k)) keys.set(k, t);
  }
  const byKey = new Map<string, { fp: PanelFingerprint; panel: ReturnsPanel }>();
  const panels = new Map<string, ReturnsPanel>();
  let done = 0;
  for (const [k, t] of keys) {
    let panel: ReturnsPanel;
    try {
      panel = loadPanel(store, t.spec);
    } catch (e) {
      if (!isDeflatorError(e)) throw e;
      throw new DeflatorError(e.code, `task ${t.task} (${t.label}): ${e.message}`, e.hint);
    }
    const fp = fingerprintPanel(panel);
    byKey.set(k, { fp, panel });
    if (!panels.has(fp.sha256)) panels.set(fp.sha256, panel);
    onProgress?.(++done, keys.size, 'panels');
  }
  return { byTask: tasks.map((t) => byKey.get(panelKey(t.spec))!.fp), panels };
}

/** Reads a grid spec file's JSON. */
export function parseGridInput(json: unknown, maxTasks = DEFAULT_MAX_TASKS): { grid: GridSpec; tasks: GridTask[] } {
  const grid = parseGridSpec(json);
  checkGridSize(grid, maxTasks);
  return { grid, tasks: expandGrid(grid, { maxTasks }) };
}

export function planBatch(store: Store, json: unknown, dir: string, opts: PlanOptions = {}): PlanReport {
  const { grid, tasks } = parseGridInput(json, opts.maxTasks ?? DEFAULT_MAX_TASKS);
  const { byTask, panels } = taskPanels(store, tasks, opts.onProgress);
  const writer = new SnapshotWriter();
  for (const fp of byTask) writer.add(panels.get(fp.sha256)!, fp);
  const { index: indexText, columns } = writer.finish();
  const distinct: PanelFingerprint[] = [];
  for (const fp of byTask) if (!distinct.some((d) => d.sha256 === fp.sha256)) distinct.push(fp);
  const specs = tasks.map((t) => stringifyExact(t.spec));
  const mTasks: ManifestTask[] = tasks.map((t, i) => ({
    task: t.task,
    label: t.label,
    settings: t.settings,
    file: specFile(t.task),
    spec: sha256(specs[i]),
    panel: byTask[i].sha256,
    backtest: t.spec.backtest !== undefined,
  }));
  const core = {
    grid,
    tasks: mTasks,
    data: { sha256: dataFingerprint(distinct.map((d) => d.sha256)), panels: distinct, database: path.basename(store.path) },
    snapshot: { index: 'data/panels.json', indexSha256: sha256(indexText), columns: 'data/columns.f64', columnsSha256: sha256(columns), bytes: columns.length + Buffer.byteLength(indexText) },
  };
  const manifest: Manifest = {
    format: MANIFEST_FORMAT,
    version: FOLDER_VERSION,
    plan: planId(core),
    createdAt: new Date().toISOString(),
    deflator: VERSION,
    label: gridLabel(grid),
    axes: gridAxes(grid),
    ...core,
  };
  const report: PlanReport = {
    dir,
    plan: manifest.plan,
    tasks: tasks.length,
    panels: distinct.length,
    backtests: mTasks.filter((t) => t.backtest).length,
    dataSha256: manifest.data.sha256,
    snapshotBytes: manifest.snapshot.bytes,
    unchanged: false,
    axes: manifest.axes,
  };
  if (existsSync(dir) && readdirSync(dir).length > 0) {
    let existing: Manifest | undefined;
    try {
      existing = readManifest(dir);
    } catch {
      existing = undefined;
    }
    if (existing?.plan === manifest.plan) return { ...report, unchanged: true };
    throw new DeflatorError(
      'CONFLICT',
      existing ? `${dir} holds another batch plan (${existing.plan.slice(0, 12)}: ${existing.label}, ${existing.tasks.length} tasks)` : `${dir} is not empty and holds no batch plan`,
      'plan into a new or empty folder (--out DIR)',
    );
  }
  mkdirSync(path.join(dir, 'tasks'), { recursive: true });
  mkdirSync(path.join(dir, 'data'), { recursive: true });
  mkdirSync(path.join(dir, 'results'), { recursive: true });
  tasks.forEach((t, i) => writeFileSync(path.join(dir, mTasks[i].file), `${JSON.stringify(t.spec, null, 2)}\n`));
  writeFileSync(path.join(dir, core.snapshot.index), indexText);
  writeFileSync(path.join(dir, core.snapshot.columns), columns);
  // the manifest last, atomically: a folder with a manifest is a complete plan
  writeAtomic(path.join(dir, 'manifest.json'), `${stringifyExact(manifest, 1)}\n`, path.join(dir, '.partial'));
  return report;
}
