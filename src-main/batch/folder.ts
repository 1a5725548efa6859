/**
 * The batch folder: everything shards need, and what they write back.
 *
 *   manifest.json        the plan: grid spec, task list (label, settings, spec digest, panel),
 *                        data fingerprint, digests of the snapshot files, plan id
 *   tasks/000017.json    task 17's complete fit spec (`deflator fit` and `backtest` take it as is)
 *   data/panels.json     returns-panel snapshot: index (shared/batch/snapshot.ts)
 *   data/columns.f64     returns-panel snapshot: the series, float64 little-endian
 *   results/000017.json  task 17's outcome, written once by rename (never half-written)
 *   failed/000017.json   why the last attempt at task 17 could not complete (removed when it does)
 *
 * A result carries the plan id, the task's spec digest, its panel fingerprint, the data
 * fingerprint, and the SHA-256 of its outcome; `checkResult` refuses a result from
 * another plan or other data, and one whose numbers no longer match its digest.
 */
import { createHash, randomBytes } from 'node:crypto';
import { closeSync, existsSync, fsyncSync, mkdirSync, openSync, readFileSync, readdirSync, renameSync, rmSync, writeSync } from 'node:fs';
import { hostname } from 'node:os';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';
import type { GridSpec, BatchSetting } from '../../shared/batch/grid.js';
import { outcomeText, type TaskOutcome } from '../../shared/batch/assemble.js';
import { parseExact, stringifyExact } from '../../shared/records/exact-json.js';
import type { PanelFingerprint } from '../../shared/records/run-record.js';

export const MANIFEST_FORMAT = 'deflator batch plan';
export const RESULT_FORMAT = 'deflator batch result';
export const FOLDER_VERSION = 1;

export interface ManifestTask {
  task: number;
  label: string;
  settings: BatchSetting[];
  /** The spec file, relative to the folder. */
  file: string;
  /** SHA-256 of the parsed spec as exact JSON. */
  spec: string;
  /** Fingerprint (SHA-256) of the task's returns panel. */
  panel: string;
  /** Does the task back-test (its spec has a "backtest" block)? */
  backtest: boolean;
}

export interface Manifest {
  format: typeof MANIFEST_FORMAT;
  version: number;
  /** SHA-256 over the grid, the task digests and panels, the data fingerprint and the snapshot digests. */
  plan: string;
  createdAt: string;
  /** deflator version that planned it (information: results must match `fit` of the merging version). */
  deflator: string;
  /** The grid spec as parsed (defaults filled in). */
  grid: GridSpec;
  label: string;
  axes: { axis: string; count: number }[];
  tasks: ManifestTask[];
  data: {
    /** SHA-256 over the sorted distinct panel fingerprints (shared/batch/snapshot.ts dataFingerprint). */
    sha256: string;
    panels: PanelFingerprint[];
    /** The project database it was planned from (information). */
    database: string;
  };
  snapshot: { index: string; indexSha256: string; columns: string; columnsSha256: string; bytes: number };
}

/**
 * The first line of a result file. The second line is the task's outcome as exact JSON
 * (shared/records/exact-json.ts); `sha256` is the digest of that line's bytes, so a
 * reader checks it without parsing, and the outcome is parsed only by those who need it.
 */
export interface ResultHeader {
  format: typeof RESULT_FORMAT;
  version: number;
  plan: string;
  task: number;
  spec: string;
  panel: string;
  data: string;
  /** SHA-256 of the outcome line (outcomeText(outcome)). */
  sha256: string;
  /** Was the model fitted? (else `error` says why): lets `status` list them without parsing outcomes. */
  fitted: boolean;
  error?: string;
  /** How it was computed (information only: the numbers do not depend on it). */
  computed: { shard: string; threads: number; host: string; pid: number; seconds: number; at: string; deflator: string };
}

export interface ResultFile extends ResultHeader {
  outcome: TaskOutcome;
}

export interface FailedAttempt {
  task: number;
  reason: string;
  shard: string;
  host: string;
  at: string;
}

export const taskName = (task: number): string => String(task).padStart(6, '0');
export const specFile = (task: number): string => `tasks/${taskName(task)}.json`;
export const resultPath = (dir: string, task: number): string => path.join(dir, 'results', `${taskName(task)}.json`);
export const failedPath = (dir: string, task: number): string => path.join(dir, 'failed', `${taskName(task)}.json`);
export const PARTIAL = path.join('results', '.partial');

export function sha256(data: string | Uint8Array): string {
  return createHash('sha256').update(data).digest('hex');
}

/** The plan id: what the plan's results depend on, without its time or place. */
export function planId(m: Pick<Manifest, 'grid' | 'tasks' | 'data' | 'snapshot'>): string {
  return sha256(
    stringifyExact({
      grid: m.grid,
      tasks: m.tasks.map((t) => [t.task, t.spec, t.panel, t.backtest]),
      data: m.data.sha256,
      snapshot: [m.snapshot.indexSha256, m.snapshot.columnsSha256],
    }),
  );
}

/**
 * Writes a file so that readers see the old state or the whole new one: a temporary file
 * in `partialDir` (same file system), then renamed over the target. A killed process
 * leaves at most a temporary file. With `sync` the data are flushed to disk before the
 * rename (survives a power cut too; costs about 9 ms a file on the machines measured);
 * without it, a file cut short by a crash of the machine is caught by its digest and
 * recomputed (shard.ts checks the results it finds).
 */
export function writeAtomic(target: string, data: string | Uint8Array, partialDir = path.join(path.dirname(target), '.partial'), sync = false): void {
  mkdirSync(partialDir, { recursive: true });
  const tmp = path.join(partialDir, `${path.basename(target)}.${hostname()}.${process.pid}.${randomBytes(4).toString('hex')}`);
  const fd = openSync(tmp, 'w', 0o644);
  try {
    const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
    let at = 0;
    while (at < bytes.length) at += writeSync(fd, bytes, at, bytes.length - at);
    if (sync) fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
  renameSync(tmp, target);
}

function notFolder(dir: string, why: string): DeflatorError {
  return new DeflatorError('NOT_FOUND', `${dir} is not a batch folder: ${why}`, 'pass the folder written by `deflator batch plan GRID --db DB --out DIR`');
}

export function readManifest(dir: string): Manifest {
  const file = path.join(dir, 'manifest.json');
  if (!existsSync(file)) throw notFolder(dir, 'it has no manifest.json');
  let m: Manifest;
  try {
    m = parseExact<Manifest>(readFileSync(file, 'utf8'));
  } catch (e) {
    throw notFolder(dir, `manifest.json is not valid JSON (${(e as Error).message})`);
  }
  if (m.format !== MANIFEST_FORMAT) throw notFolder(dir, `manifest.json is not a batch plan (format "${String(m.format)}")`);
  if (m.version !== FOLDER_VERSION) {
    throw new DeflatorError('CONFLICT', `${dir} was planned with batch folder version ${m.version}; this deflator reads version ${FOLDER_VERSION}`, 'plan the batch again with this version of deflator');
  }
  if (planId(m) !== m.plan) {
    throw new DeflatorError('CONFLICT', `${dir}/manifest.json was changed after planning (its plan id does not match its contents)`, 'plan the batch again (deflator batch plan) rather than editing the manifest');
  }
  return m;
}

/** Reads and checks the snapshot files against the manifest's digests. */
export function readSnapshotFiles(dir: string, m: Manifest): { index: string; columns: Uint8Array } {
  const indexText = readFileSync(path.join(dir, m.snapshot.index));
  const columns = readFileSync(path.join(dir, m.snapshot.columns));
  if (sha256(indexText) !== m.snapshot.indexSha256 || sha256(columns) !== m.snapshot.columnsSha256) {
    throw new DeflatorError('CONFLICT', `the panel snapshot in ${dir}/data differs from the one planned (SHA-256 mismatch)`, 'copy the folder again from where it was planned, or plan it again');
  }
  return { index: indexText.toString('utf8'), columns: new Uint8Array(columns.buffer, columns.byteOffset, columns.byteLength) };
}

/** The task's result file: the header line, then the outcome line. */
export function resultText(m: Manifest, t: ManifestTask, outcome: TaskOutcome, computed: ResultHeader['computed']): string {
  const body = outcomeText(outcome);
  const header: ResultHeader = {
    format: RESULT_FORMAT,
    version: FOLDER_VERSION,
    plan: m.plan,
    task: t.task,
    spec: t.spec,
    panel: t.panel,
    data: m.data.sha256,
    sha256: sha256(body),
    fitted: outcome.fit !== undefined,
    ...(outcome.error !== undefined ? { error: outcome.error } : {}),
    computed,
  };
  return `${JSON.stringify(header)}\n${body}\n`;
}

/** Parses an outcome line: plain JSON.parse unless the text holds an exact-JSON tag (-0, a typed array). */
function parseOutcome(body: string): TaskOutcome {
  return body.includes('"$') ? parseExact<TaskOutcome>(body) : (JSON.parse(body) as TaskOutcome);
}

/** Splits a result file into its header and outcome line (no checks). */
export function splitResult(text: string): { header: ResultHeader; body: string } {
  const cut = text.indexOf('\n');
  if (cut < 0) throw new Error('it has no outcome line');
  const header = JSON.parse(text.slice(0, cut)) as ResultHeader;
  const body = text.slice(cut + 1).replace(/\n$/, '');
  return { header, body };
}

/** Reads a result file whole (the tests and tools use it; merge goes through checkResult). */
export function readResultFile(file: string): ResultFile {
  const { header, body } = splitResult(readFileSync(file, 'utf8'));
  return { ...header, outcome: parseOutcome(body) };
}

export type ResultCheck = { ok: true; file: ResultHeader & { outcome?: TaskOutcome } } | { ok: false; missing: boolean; reason: string };

/**
 * Reads task t's result and checks that it belongs to this plan, its data and its spec,
 * and that its outcome line matches its digest; parses the outcome when `outcome` is set
 * (merge) and checks the header's summary against it.
 */
export function checkResult(dir: string, m: Manifest, t: ManifestTask, opts: { outcome?: boolean } = {}): ResultCheck {
  const p = resultPath(dir, t.task);
  let text: string;
  try {
    text = readFileSync(p, 'utf8');
  } catch (e) {
    if ((e as { code?: string }).code === 'ENOENT') return { ok: false, missing: true, reason: 'not run yet' };
    return { ok: false, missing: false, reason: `unreadable: ${(e as Error).message}` };
  }
  let f: ResultHeader;
  let body: string;
  try {
    ({ header: f, body } = splitResult(text));
  } catch (e) {
    return { ok: false, missing: false, reason: `not a result file (${(e as Error).message})` };
  }
  if (f.format !== RESULT_FORMAT || f.version !== FOLDER_VERSION) return { ok: false, missing: false, reason: `not a batch result of version ${FOLDER_VERSION}` };
  if (f.task !== t.task) return { ok: false, missing: false, reason: `the file holds task ${f.task}` };
  if (f.data !== m.data.sha256) return { ok: false, missing: false, reason: `computed from other data (data fingerprint ${String(f.data).slice(0, 12)}, the plan's is ${m.data.sha256.slice(0, 12)})` };
  if (f.panel !== t.panel) return { ok: false, missing: false, reason: `computed on another returns panel (${String(f.panel).slice(0, 12)}, the plan's is ${t.panel.slice(0, 12)})` };
  if (f.spec !== t.spec) return { ok: false, missing: false, reason: 'computed from another spec than the plan\'s task' };
  if (f.plan !== m.plan) return { ok: false, missing: false, reason: `from another plan (${String(f.plan).slice(0, 12)}, this folder's is ${m.plan.slice(0, 12)})` };
  const digest = sha256(body);
  if (digest !== f.sha256) return { ok: false, missing: false, reason: `its numbers were changed after it was written (SHA-256 ${digest.slice(0, 12)}, recorded ${String(f.sha256).slice(0, 12)})` };
  if (!opts.outcome) return { ok: true, file: f };
  let outcome: TaskOutcome;
  try {
    outcome = parseOutcome(body);
  } catch (e) {
    return { ok: false, missing: false, reason: `its outcome is not valid JSON (${(e as Error).message})` };
  }
  if ((outcome.fit !== undefined) !== f.fitted || outcome.error !== f.error) return { ok: false, missing: false, reason: 'its header does not describe its outcome' };
  return { ok: true, file: { ...f, outcome } };
}

/** The files of `sub` named for a task (000017.json), as task numbers and file names. */
function taskFiles(dir: string, sub: string): { task: number; name: string }[] {
  let names: string[];
  try {
    names = readdirSync(path.join(dir, sub));
  } catch {
    return [];
  }
  return names.flatMap((name) => {
    const m = /^(\d{6,})\.json$/.exec(name);
    return m ? [{ task: Number(m[1]), name }] : [];
  });
}

/** Which tasks have a result file (by name; not checked). */
export function resultNames(dir: string): Set<number> {
  return new Set(taskFiles(dir, 'results').map((f) => f.task));
}

export function readFailed(dir: string): Map<number, FailedAttempt> {
  const out = new Map<number, FailedAttempt>();
  for (const { name } of taskFiles(dir, 'failed')) {
    try {
      const f = JSON.parse(readFileSync(path.join(dir, 'failed', name), 'utf8')) as FailedAttempt;
      out.set(f.task, f);
    } catch {
      // a half-written note of a failure is no failure record; the task is still remaining
    }
  }
  return out;
}

export function removeFailed(dir: string, task: number): void {
  rmSync(failedPath(dir, task), { force: true });
}

/** Temporary files left by killed shards (safe to delete when no shard runs). */
export function partialFiles(dir: string): string[] {
  try {
    return readdirSync(path.join(dir, PARTIAL));
  } catch {
    return [];
  }
}
