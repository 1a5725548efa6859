/**
 * A run record: everything needed to show, export and replay one fit, back-test or
 * comparison. Stored by src-main/runs in the project database; read by the CLI
 * (`deflator runs|show|replay|export`), the run-history screen and every export.
 * JSON keys are a contract: add keys, never rename.
 */
import type { RunResult } from '../results.js';

export const RUN_KINDS = ['fit', 'backtest', 'compare', 'batch', 'present-value', 'drift'] as const;
export type RunKind = (typeof RUN_KINDS)[number];

/** One imported file a run depends on, as the import log knew it when the run was recorded. */
export interface DataFileFingerprint {
  /** The file as it was imported (path or name recorded by the import log). */
  file: string;
  /** SHA-256 (hex) of the file's bytes at import. */
  sha256: string;
  /** The import-log entry it came from, when the store has one. */
  importId?: number;
  /** Assets and series of the run that this file fed. */
  subjects: string[];
}

/** One asset, series or portfolio a run read, with a digest of its stored rows then. */
export interface SubjectFingerprint {
  kind: 'asset' | 'series' | 'portfolio';
  name: string;
  /** SHA-256 (hex) over the subject's stored rows in date order (docs/methods.md, "Run records"). */
  sha256: string;
  rows: number;
}

/** What the run's returns panel looked like: enough to recognise it without the data. */
export interface PanelFingerprint {
  /** SHA-256 (hex) of the canonical encoding (shared/records/panel-encoding.ts). */
  sha256: string;
  /** PANEL_ENCODING_VERSION used. */
  encoding: number;
  frequency: string;
  start: string;
  end: string;
  T: number;
  N: number;
  K: number;
}

export interface RunRecord {
  /** Run id (1, 2, ...), unique within one project database. */
  id: number;
  kind: RunKind;
  /** The result's label (fit, back-test, batch) or the models' labels joined (compare). */
  label: string;
  /** Model kinds and labels, for filtering (e.g. ["linear", "linear(MKT,SIZE)"]). */
  models: string[];
  /** ISO 8601 time the run was recorded (UTC). */
  createdAt: string;
  /** Software version that computed it (src-main/version.ts). */
  version: string;
  /** The spec as parsed (defaults filled in): the input replay runs again. */
  spec: unknown;
  result: RunResult;
  panel: PanelFingerprint;
  /** A comparison whose models use different return panels (excess and gross) lists each; panel is the first. */
  panels?: PanelFingerprint[];
  files: DataFileFingerprint[];
  subjects: SubjectFingerprint[];
  /**
   * How it was computed: the worker threads (information only: the numbers do not
   * depend on them), the back-test engine asked for ('auto' when absent; replay uses
   * it), and, for a run with a back-test, the windows per chunk its rolling sums
   * restarted at (shared/backtest windowsPerChunk). Runs recorded before the chunks
   * were fixed by the spec have no chunkWindows: their chunks followed the threads.
   * `kernels`: the numerical kernel layer's identity (shared/linalg/identity.ts); absent
   * on runs recorded before it was recorded.
   */
  compute?: { threads?: number; engine?: string; chunkWindows?: number; kernels?: { revision: string; products: string } };
}

/** A data file or stored subject whose current state differs from what the run recorded. */
export interface StaleItem {
  /** e.g. `file prices.csv` or `asset Alder Works`. */
  what: string;
  recorded: string;
  /** Current SHA-256, or null when the data is no longer in the store. */
  current: string | null;
  reason: string;
}

/** One line of `deflator runs` / the run-history list. */
export interface RunSummary {
  id: number;
  kind: RunKind;
  label: string;
  models: string[];
  createdAt: string;
  version: string;
  start: string;
  end: string;
  T: number;
  N: number;
  /** Factor series in the (first) panel. */
  K: number;
  /**
   * Each panel's factor count, in the order of the run's panels, when the run used more than
   * one (a comparison of models with different factors): K alone would show the first model's.
   */
  factorCounts?: number[];
  panelSha256: string;
  stale: boolean;
  staleItems: StaleItem[];
}

/** A reply that was recorded as a run carries its id (never part of the stored result). */
export interface RunTag {
  runId?: number;
  /**
   * The result could not be recorded (the database busy, read-only, full or damaged): why,
   * what to do, and the file the result was saved to so that it can be recorded later
   * (`deflator runs --record FILE --db DB`).
   */
  unrecorded?: { code: string; message: string; hint?: string; savedTo?: string };
}

/** Is this parsed JSON a run record's kind? */
export function isRunKind(x: unknown): x is RunKind {
  return typeof x === 'string' && (RUN_KINDS as readonly string[]).includes(x);
}

/** The K of a run list row: the factor count, or each compared model's ("1, 3, 0") when they differ. */
export function factorCountText(r: Pick<RunSummary, 'K' | 'factorCounts'>): string {
  const ks = r.factorCounts;
  return ks && ks.some((k) => k !== ks[0]) ? ks.join(', ') : String(r.K);
}
