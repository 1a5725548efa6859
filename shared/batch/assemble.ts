/**
 * From task outcomes to one batch result: each fitted task becomes a comparison row
 * (shared/compare outcomeRow) with its task number, grid settings, own sample and the
 * digest of its whole outcome; tasks whose model could not be fitted are listed with
 * the reason. Built one task at a time so a merge never holds every full result.
 */
import { DeflatorError } from '../errors.js';
import { outcomeRow, type ModelOutcome } from '../compare/compare.js';
import { bestPerColumn } from '../present/best.js';
import { stringifyExact } from '../records/exact-json.js';
import type { BatchResult, BatchRow, FitResult, ResultWarning, SampleHeader } from '../results.js';
import type { BatchSetting } from './grid.js';

/** What one task produced: its fit (or the estimation error), and its back-test when it has one. */
export type TaskOutcome = ModelOutcome;

/** The exact text a task's digest is taken over (the digest is SHA-256 of its UTF-8 bytes). */
export function outcomeText(o: TaskOutcome): string {
  return stringifyExact(o);
}

export interface TaskIdentity {
  task: number;
  label: string;
  settings: BatchSetting[];
}

const VARIES = 'varies by task (see each task\'s settings)';
const STRING_FIELDS = ['method', 'model', 'stage', 'weighting', 'lagsRule'] as const;
/** Header fields that cannot hold the "varies" text: a note says when they vary. */
const NOTED_FIELDS = ['frequency', 'returns', 'start', 'end', 'T', 'N', 'K', 'lags', 'centered'] as const;

/** Collects task outcomes in task order and builds the BatchResult. */
export class BatchAssembler {
  private readonly rows: BatchRow[] = [];
  private readonly failures: BatchResult['failures'] = [];
  private header: SampleHeader | undefined;
  private readonly varies = new Set<string>();
  private readonly assets = new Set<string>();
  private readonly factors = new Set<string>();
  private last = -1;

  constructor(
    private readonly label: string,
    private readonly tasks: number,
    private readonly axes: { axis: string; count: number }[],
  ) {}

  add(id: TaskIdentity, o: TaskOutcome, sha256: string): void {
    if (id.task <= this.last) throw new DeflatorError('INPUT_INVALID', `batch task ${id.task} added after task ${this.last}`, 'add tasks in task order');
    this.last = id.task;
    if (!o.fit) {
      this.failures.push({ task: id.task, label: id.label, error: o.error ?? 'not fitted', sha256 });
      return;
    }
    const f: FitResult = o.fit;
    const row = outcomeRow({ ...o, label: id.label }) as BatchRow;
    row.task = id.task;
    row.settings = id.settings.map((s) => ({ axis: s.axis, value: s.value }));
    row.sample = { start: f.sample.start, end: f.sample.end, T: f.sample.T, N: f.sample.N, K: f.sample.K };
    row.sha256 = sha256;
    this.rows.push(row);
    this.note(f.sample);
  }

  private note(s: SampleHeader): void {
    for (const a of s.assets) this.assets.add(a);
    for (const x of s.factors) this.factors.add(x);
    if (!this.header) {
      this.header = s;
      return;
    }
    const h = this.header;
    for (const k of STRING_FIELDS) if (h[k] !== s[k]) this.varies.add(k);
    for (const k of NOTED_FIELDS) if (h[k] !== s[k]) this.varies.add(k);
  }

  finish(data: BatchResult['data']): BatchResult {
    if (this.rows.length + this.failures.length !== this.tasks) {
      throw new DeflatorError('INPUT_INVALID', `the batch has ${this.tasks} tasks but ${this.rows.length + this.failures.length} outcomes were added`, 'add every task once');
    }
    if (!this.header) {
      const shown = this.failures.slice(0, 3).map((f) => `task ${f.task} (${f.label}): ${f.error}`);
      throw new DeflatorError('SINGULAR', `no task of the batch could be fitted; ${shown.join('; ')}`, 'fix the first error named above (spec.base or the grid axis that causes it)');
    }
    const first = this.header;
    const sample: SampleHeader = {
      ...first,
      assets: [...this.assets],
      factors: [...this.factors],
      notes: [...first.notes],
    };
    for (const k of STRING_FIELDS) if (this.varies.has(k)) sample[k] = VARIES;
    sample.model = `batch of ${this.tasks} tasks (${this.axes.map((a) => `${a.axis} ${a.count}`).join(' x ')})`;
    const numeric = NOTED_FIELDS.filter((k) => this.varies.has(k));
    if (numeric.length) sample.notes.unshift(`${numeric.join(', ')} vary by task: this header shows task ${this.rows[0].task}; each task's own sample is in its row`);
    const result: BatchResult = {
      kind: 'batch',
      label: this.label,
      sample,
      tasks: this.tasks,
      axes: this.axes,
      models: this.rows,
      failures: this.failures,
      best: bestPerColumn(this.rows),
      data,
      warnings: taskWarnings(this.rows),
    };
    return result;
  }
}

/** The tasks' warnings, one per code: how many tasks carry it and the first one's message. */
export function taskWarnings(rows: readonly BatchRow[]): ResultWarning[] {
  const byCode = new Map<string, { count: number; first: BatchRow; message: string }>();
  for (const r of rows)
    for (const w of new Map((r.warnings ?? []).map((x) => [x.code, x])).values()) {
      const seen = byCode.get(w.code);
      if (seen) seen.count++;
      else byCode.set(w.code, { count: 1, first: r, message: w.message });
    }
  return [...byCode.entries()].map(([code, v]) => ({ code, message: `${v.count} of ${rows.length} fitted tasks; the first, task ${v.first.task}: ${v.message}` }));
}
